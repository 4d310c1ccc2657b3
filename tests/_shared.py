"""Test helpers shared by several test files (not collected: no ``test_`` prefix)."""

from __future__ import annotations

import numpy as np
import pandas as pd

# The per-channel fields of `pick --json` fixed by the command-line contract.
CONTRACT_CHANNEL_FIELDS = (
    "channel",
    "switch",
    "switch_count",
    "heatsink",
    "interface",
    "diode",
    "driver",
    "tj_at_ambient_max",
    "tj_limit",
    "sink_temperature",
    "loss",
    "notes",
)

# Switch columns the loss model reads (inventory contract names, SI values).
LOSS_COLUMNS = [
    "part",
    "kind",
    "v_rating",
    "rds_hot_ratio",
    "vth_max",
    "v_plateau",
    "qg",
    "qgs",
    "qgd",
    "rg_int",
    "t_rise",
    "t_fall",
    "coss",
    "vce_sat",
    "vce_sat_i",
    "e_on",
    "e_off",
    "e_test_v",
    "e_test_i",
]


def loss_switches(*rows: dict) -> pd.DataFrame:
    """A hand-built switch table with every loss column (blank = NaN)."""
    return pd.DataFrame([{c: r.get(c, np.nan) for c in LOSS_COLUMNS} for r in rows])
