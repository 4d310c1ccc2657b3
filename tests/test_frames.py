"""Plain-object columns: text never turns into arrow strings, tuples stay one per cell."""

from __future__ import annotations

import pandas as pd

from selector.frames import object_column


def test_text_stays_plain_objects_in_a_frame():
    """pandas ≥ 3 infers arrow strings from Python text; the helper keeps objects."""
    df = pd.DataFrame({"part": object_column(["A", "B", None])})
    assert df["part"].dtype == object
    assert df["part"].tolist()[:2] == ["A", "B"]


def test_list_of_tuples_gives_one_tuple_per_cell():
    col = object_column([("voltage", "surge"), ("kind_side",)])
    assert len(col) == 2 and col.iloc[0] == ("voltage", "surge")


def test_scalar_is_repeated_per_row_or_per_index_label():
    assert object_column("low", 3).tolist() == ["low"] * 3
    idx = pd.Index([10, 11])
    col = object_column("sink", index=idx)
    assert col.index.equals(idx) and col.tolist() == ["sink", "sink"]
    assert object_column("x", 2, idx).tolist() == ["x", "x"]
