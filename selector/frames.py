"""Small table helpers shared by the engine stages.

pandas ≥ 3 stores text built from Python strings as arrow strings; row selection,
``isin`` and conversion back to objects then cost more than the arithmetic on a large
inventory. The stages keep their text columns as plain objects with these helpers.
"""

from __future__ import annotations

from typing import Any

import numpy as np
import pandas as pd

__all__ = ["object_column"]


def object_column(values: Any, n: int | None = None, index: Any = None) -> pd.Series:
    """A column of plain Python objects (never arrow strings).

    ``values``: an array-like (one cell per item; a list of tuples gives one tuple per
    cell) or a scalar repeated ``n`` times (or once per ``index`` label).
    """
    if isinstance(values, list):
        s = pd.Series(values, dtype=object)
        if index is not None:
            s.index = index
        return s
    v = np.asarray(values, dtype=object)
    if v.ndim == 0 or n is not None:
        size = n if n is not None else len(index)
        v = np.full(size, v.item() if v.ndim == 0 else values, dtype=object)
    return pd.Series(v, index=index, dtype=object)
