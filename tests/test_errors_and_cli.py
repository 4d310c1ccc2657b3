"""Command-line contract and user-facing error messages (overview: exit codes 0/2/3)."""

from __future__ import annotations

import pytest

from selector.cli import main
from selector.errors import InputError, Location, SelectorError


def test_input_error_names_file_sheet_row_and_column_in_one_line():
    err = InputError(
        "not a number: 'abc'",
        Location(file="parts.xlsx", sheet="switches", row=7, column="rth_jc"),
    )
    text = str(err)
    assert text == (
        "parts.xlsx, sheet 'switches', row 7, column 'rth_jc': not a number: 'abc'"
    )
    assert "\n" not in text
    assert isinstance(err, ValueError) and isinstance(err, SelectorError)


def test_usage_error_exits_2(capsys):
    with pytest.raises(SystemExit) as exc:
        main(["pick"])  # missing inventory and --design
    assert exc.value.code == 2


def test_missing_inventory_file_exits_2_with_one_line(tmp_path, capsys):
    missing = tmp_path / "nope.xlsx"
    code = main(["check", str(missing)])
    err = capsys.readouterr().err.strip()
    assert code == 2
    assert "nope.xlsx" in err
    assert len(err.splitlines()) == 1
    assert "Traceback" not in err
