"""Write the demo inventory, the demo design and the blank template.

The demo is an invented scenario: a small greenhouse climate controller on a 24 V supply
(ambient -5 °C to 45 °C) and the parts a small workshop might have in its drawers. Every
part id, price and figure below is made up for the demo; the values are chosen to be
physically plausible for their package and voltage class, nothing more.

Run from anywhere::

    python inventories/build_demo.py

It rewrites, next to this script:

* ``greenhouse_inventory.xlsx``  one sheet per table
* ``greenhouse_csv/<table>.csv`` the same data, one CSV per table (a few cells carry
  their own unit, e.g. ``6.5 mΩ`` or ``60V``, to exercise the reader)
* ``greenhouse.toml``            the design (conditions and channels)
* ``template.xlsx``              a blank workbook, one sheet per table, every header cell
  with a comment that explains the column and its unit (taken from ``selector.schema``)

The key figures of each part are written out by hand; the secondary data (gate charge,
output capacitance, Foster networks, unlisted stock) are derived from them by small rules
with a seeded random jitter, so the output is the same on every run.
"""

from __future__ import annotations

import csv
import datetime as _dt
import random
import sys
from dataclasses import dataclass
from pathlib import Path

import numpy as np
from openpyxl import Workbook
from openpyxl.comments import Comment
from openpyxl.styles import Alignment, Font, PatternFill
from openpyxl.utils import get_column_letter

HERE = Path(__file__).resolve().parent
SEED = 20_240_611
MAKER = "Demo Parts Co."  # invented maker name, carried to the bill of materials
TABLES = ("switches", "heatsinks", "interfaces", "diodes", "drivers")

# A fixed timestamp keeps the workbook metadata the same on every run.
_FIXED_TIME = _dt.datetime(2024, 6, 11, 12, 0, 0)


# --------------------------------------------------------------------------------------
# Columns of each table: (column name as in the inventory contract, unit for the header).
# The unit is the one a person would type in a datasheet-driven sheet; the reader
# converts it to SI. An empty unit means a plain number or text.
# --------------------------------------------------------------------------------------

SWITCH_COLUMNS: list[tuple[str, str]] = [
    ("part", ""),
    ("kind", ""),
    ("package", ""),
    ("price", ""),
    ("stock", ""),
    ("v_rating", "V"),
    ("i_rating", "A"),
    ("tj_max", "°C"),
    ("rth_jc", "K/W"),
    ("rth_ja", "K/W"),
    ("rds_on@10V", "mohm"),
    ("rds_on@4.5V", "mohm"),
    ("rds_on@2.5V", "mohm"),
    ("rds_hot_ratio", ""),
    ("vce_sat", "V"),
    ("vce_sat_i", "A"),
    ("vce_sat_vge", "V"),
    ("vgs_max", "V"),
    ("vth_max", "V"),
    ("tab", ""),
    ("qg", "nC"),
    ("qgs", "nC"),
    ("qgd", "nC"),
    ("v_plateau", "V"),
    ("rg_int", "ohm"),
    ("t_rise", "ns"),
    ("t_fall", "ns"),
    ("coss", "pF"),
    ("e_on", "mJ"),
    ("e_off", "mJ"),
    ("e_test_v", "V"),
    ("e_test_i", "A"),
    ("i_pulse", "A"),
    ("eas", "mJ"),
    *[(f"zth_r{k}", "K/W") for k in range(1, 5)],
    *[(f"zth_tau{k}", "s") for k in range(1, 5)],
    ("manufacturer", ""),
    ("mpn", ""),
    ("notes", ""),
]

HEATSINK_COLUMNS: list[tuple[str, str]] = [
    ("part", ""),
    ("price", ""),
    ("stock", ""),
    ("rth_sa", "K/W"),
    ("rth_sa_rise", "K"),
    ("rth_sa@1m/s", "K/W"),
    ("rth_sa@2m/s", "K/W"),
    ("fits", ""),
    ("positions", ""),
    ("length", "mm"),
    ("width", "mm"),
    ("base_thickness", "mm"),
    ("fin_height", "mm"),
    ("fin_count", ""),
    ("fin_thickness", "mm"),
    ("material", ""),
    ("finish", ""),
    ("manufacturer", ""),
    ("mpn", ""),
    ("notes", ""),
]

INTERFACE_COLUMNS: list[tuple[str, str]] = [
    ("part", ""),
    ("price", ""),
    ("stock", ""),
    ("fits", ""),
    ("rth_cs", "K/W"),
    ("insulating", ""),
    ("isolation_voltage", "V"),
    ("t_max", "°C"),
    ("manufacturer", ""),
    ("mpn", ""),
    ("notes", ""),
]

DIODE_COLUMNS: list[tuple[str, str]] = [
    ("part", ""),
    ("price", ""),
    ("stock", ""),
    ("v_rrm", "V"),
    ("i_avg", "A"),
    ("vf", "V"),
    ("rth_ja", "K/W"),
    ("tj_max", "°C"),
    ("package", ""),
    ("manufacturer", ""),
    ("mpn", ""),
    ("notes", ""),
]

DRIVER_COLUMNS: list[tuple[str, str]] = [
    ("part", ""),
    ("price", ""),
    ("stock", ""),
    ("kind", ""),
    ("v_out", "V"),
    ("i_peak", "A"),
    ("v_supply_max", "V"),
    ("manufacturer", ""),
    ("mpn", ""),
    ("notes", ""),
]

COLUMNS: dict[str, list[tuple[str, str]]] = {
    "switches": SWITCH_COLUMNS,
    "heatsinks": HEATSINK_COLUMNS,
    "interfaces": INTERFACE_COLUMNS,
    "diodes": DIODE_COLUMNS,
    "drivers": DRIVER_COLUMNS,
}


def header(name: str, unit: str) -> str:
    """Header text as written in the sheet: ``name [unit]`` or the bare name."""
    return f"{name} [{unit}]" if unit else name


# --------------------------------------------------------------------------------------
# Switches. One call per part: the hand-picked key figures. Derived figures come from the
# rules in ``_derive_mosfet`` / ``_derive_igbt``.
# --------------------------------------------------------------------------------------

# Junction-to-ambient by package with no heatsink: through-hole parts upright in still
# air (TO-220 62 K/W, TO-247 40 K/W); SMD parts on about 1 in² of 2 oz copper, as their
# datasheets usually state it. Each part gets a small seeded spread around these.
RTH_JA = {
    "SO-8": 80.0,
    "DPAK": 55.0,
    "D2PAK": 42.0,
    "TO-220": 62.0,
    "TO-220F": 65.0,
    "TO-247": 40.0,
}

# Rds(on) at 125 °C over 25 °C by voltage class (low-voltage trench parts heat up less).
HOT_RATIO = {20: 1.45, 30: 1.5, 40: 1.55, 60: 1.65, 100: 1.8, 150: 1.95, 200: 2.05}

# Scale of gate charge [nC·mΩ] and output capacitance [pF·mΩ] per voltage class: for one
# technology both grow roughly with die area, i.e. inversely with Rds(on).
QG_SCALE = {20: 90, 30: 140, 40: 200, 60: 300, 100: 420, 150: 900, 200: 1500}
COSS_SCALE = {
    20: 4000,
    30: 5000,
    40: 6000,
    60: 8000,
    100: 12000,
    150: 16000,
    200: 20000,
}

# Foster time constants [s] junction to case by package, and the share of RθJC per stage.
FOSTER_TAU = {
    "SO-8": (1.0e-5, 1.2e-4, 1.5e-3, 2.0e-2),
    "DPAK": (1.5e-5, 2.0e-4, 2.0e-3, 1.5e-2),
    "D2PAK": (2.0e-5, 3.0e-4, 3.0e-3, 2.5e-2),
    "TO-220": (2.0e-5, 3.0e-4, 3.5e-3, 3.0e-2),
    "TO-220F": (2.0e-5, 3.0e-4, 5.0e-3, 8.0e-2),
    "TO-247": (3.0e-5, 4.0e-4, 5.0e-3, 5.0e-2),
}
FOSTER_SHARE = (0.08, 0.22, 0.42, 0.28)


@dataclass
class Sw:
    """Key figures of one invented MOSFET or IGBT, as typed in by hand."""

    part: str
    kind: str  # nmos | pmos | igbt
    package: str
    v: float  # [V] rating
    i: float  # [A] continuous at 25 °C case
    price: float
    rth_jc: float  # [K/W]
    tj_max: float = 175.0
    r10: float | None = None  # [mΩ] max Rds(on) at Vgs 10 V
    r45: float | None = None  # [mΩ] at 4.5 V
    r25: float | None = None  # [mΩ] at 2.5 V
    vce_sat: float | None = None  # [V] IGBT
    vce_sat_i: float | None = None  # [A]
    e_on: float | None = None  # [mJ]
    e_off: float | None = None  # [mJ]
    e_test_v: float | None = None  # [V]
    vgs_max: float | None = 20.0
    vth_max: float | None = None  # [V] max gate threshold at 25 °C; None = blank
    tab: str | None = "drain"
    gate: str = "none"  # "qg" (gate-charge data) | "t" (rise/fall only) | "none"
    foster: bool = False
    stock: int | str | None = "draw"  # "draw": seeded choice; None: blank (no limit)
    blank: tuple[str, ...] = ()  # columns left blank on purpose (defaults get assumed)
    notes: str = ""


SWITCHES: list[Sw] = [
    # ---- SO-8 N-channel, small loads (valves, LED bar) -----------------------------
    Sw("DEMO-N20-1", "nmos", "SO-8", 20, 9, 0.16, 25, 150, r45=14, r25=19,
       vgs_max=8, vth_max=1.0, tab=None, stock=None, gate="t",
       notes="20 V part, too low for a 24 V rail"),
    Sw("DEMO-N40-2", "nmos", "SO-8", 40, 10, 0.21, 25, 150, r10=11, r45=15, r25=22,
       vgs_max=12, vth_max=1.2, tab=None, stock=4, gate="qg"),
    Sw("DEMO-N40-3", "nmos", "SO-8", 40, 8, 0.24, 24, 150, r10=16, r45=22, r25=34,
       vgs_max=12, vth_max=1.3, tab=None, gate="qg", stock=3,
       notes="cheapest 40 V part that turns on from 2.5 V; only three left"),
    Sw("DEMO-N40-4", "nmos", "SO-8", 40, 12, 0.38, 22, 150, r10=9, r45=12, r25=18,
       vgs_max=12, vth_max=1.4, tab=None, gate="qg", foster=True, stock=6),
    Sw("DEMO-N60-5", "nmos", "SO-8", 60, 6, 0.27, 25, 150, r10=28, r45=38,
       vth_max=2.5, tab=None, stock=5, gate="t"),
    Sw("DEMO-N100-6", "nmos", "SO-8", 100, 4.5, 0.42, 25, 150, r10=52, r45=70,
       vth_max=2.5, tab=None, stock=10, gate="t", blank=("rth_ja",)),
    Sw("DEMO-N25-8", "nmos", "SO-8", 25, 14, 0.55, 20, 150, r10=6.5, r45=8.5, r25=12,
       vgs_max=12, vth_max=1.2, tab=None, gate="qg", stock=2,
       notes="25 V part, too low for a 24 V rail"),
    Sw("DEMO-N20-9", "nmos", "SO-8", 20, 11, 0.25, 22, 150, r45=9, r25=12,
       vgs_max=8, vth_max=1.0, tab=None, stock=None, gate="none"),
    # ---- DPAK N-channel ------------------------------------------------------------
    Sw("DEMO-N40-7", "nmos", "DPAK", 40, 50, 0.64, 1.6, r10=7.5, r45=10.5,
       vth_max=2.5, stock=4, gate="qg", foster=True),
    Sw("DEMO-N40-10", "nmos", "DPAK", 40, 35, 0.52, 2.2, r10=11, r45=15, r25=24,
       vgs_max=12, vth_max=1.5, gate="qg", stock=2),
    Sw("DEMO-N60-11", "nmos", "DPAK", 60, 30, 0.36, 2.5, r10=18, r45=24,
       vth_max=2.5, stock=6, gate="t"),
    Sw("DEMO-N60-12", "nmos", "DPAK", 60, 45, 0.72, 1.8, r10=9.5,
       vth_max=4.0, stock=3, gate="qg"),
    Sw("DEMO-N100-13", "nmos", "DPAK", 100, 25, 0.58, 2.0, r10=32,
       vth_max=4.0, stock=10, gate="t", blank=("vth_max",)),
    Sw("DEMO-N40-14", "nmos", "DPAK", 40, 60, 1.05, 1.4, r10=4.2, r45=5.8, r25=9,
       vgs_max=12, vth_max=1.5, gate="qg", foster=True, stock=3),
    # ---- D2PAK N-channel ------------------------------------------------------------
    Sw("DEMO-N40-15", "nmos", "D2PAK", 40, 120, 1.35, 0.6, r10=2.1, r45=3.0,
       vth_max=2.4, stock=2, gate="qg", foster=True),
    Sw("DEMO-N60-16", "nmos", "D2PAK", 60, 90, 1.10, 0.8, r10=4.8, r45=6.5,
       vth_max=2.5, stock=3, gate="qg"),
    Sw("DEMO-N100-17", "nmos", "D2PAK", 100, 70, 1.45, 0.7, r10=9.0,
       vth_max=4.0, stock=5, gate="qg", blank=("rds_hot_ratio",)),
    Sw("DEMO-N60-18", "nmos", "D2PAK", 60, 55, 0.70, 1.2, r10=12,
       vth_max=4.0, gate="t", stock=4),
    Sw("DEMO-N40-19", "nmos", "D2PAK", 40, 80, 1.25, 0.9, r10=3.6, r45=4.9, r25=7.5,
       vgs_max=12, vth_max=1.5, gate="qg", foster=True, stock=2),
    # ---- TO-220 N-channel -----------------------------------------------------------
    Sw("DEMO-N60-20", "nmos", "TO-220", 60, 30, 0.32, 1.8, r10=40,
       vth_max=4.0, gate="t", notes="old stock, high Rds(on), cheap"),
    Sw("DEMO-N60-21", "nmos", "TO-220", 60, 50, 0.55, 1.3, r10=16, r45=22,
       vth_max=2.5, gate="qg"),
    Sw("DEMO-N100-22", "nmos", "TO-220", 100, 40, 0.60, 1.1, r10=25,
       vth_max=4.0, gate="qg"),
    Sw("DEMO-N40-23", "nmos", "TO-220", 40, 100, 1.60, 0.6, r10=3.2, r45=4.4,
       vth_max=2.5, gate="qg", foster=True),
    Sw("DEMO-N60-24", "nmos", "TO-220", 60, 80, 0.95, 0.8, r10=6.0,
       vth_max=4.0, gate="qg", blank=("rth_ja",)),
    Sw("DEMO-N60-25", "nmos", "TO-220F", 60, 35, 0.85, 3.8, r10=14, r45=19,
       vth_max=2.5, tab="isolated", gate="qg", foster=True, stock=3,
       notes="fully insulated TO-220 body; mounts with grease only"),
    Sw("DEMO-N100-26", "nmos", "TO-220F", 100, 22, 0.78, 4.5, r10=34,
       vth_max=4.0, tab="isolated", gate="t",
       notes="fully insulated TO-220 body"),
    Sw("DEMO-N200-27", "nmos", "TO-220", 200, 18, 0.90, 1.2, r10=120,
       vth_max=4.0, gate="t"),
    Sw("DEMO-N40-28", "nmos", "TO-220", 40, 60, 0.58, 1.5, r10=8, r45=11, r25=18,
       vgs_max=12, vth_max=1.5, tab=None, gate="qg", stock=None,
       notes="tab connection not entered"),
    Sw("DEMO-N150-29", "nmos", "TO-220", 150, 40, 1.05, 0.9, r10=42,
       vth_max=4.0, gate="qg", blank=("vth_max", "vgs_max")),
    # ---- TO-247 N-channel -----------------------------------------------------------
    Sw("DEMO-N100-30", "nmos", "TO-247", 100, 150, 3.40, 0.35, r10=3.5,
       vth_max=4.0, gate="qg", foster=True),
    Sw("DEMO-N200-31", "nmos", "TO-247", 200, 80, 3.10, 0.45, r10=18,
       vth_max=4.0, gate="qg"),
    Sw("DEMO-N60-32", "nmos", "TO-247", 60, 180, 3.90, 0.3, r10=1.9, r45=2.6,
       vth_max=2.5, gate="qg", foster=True, stock=1),
    # ---- P-channel (high-side switches) ---------------------------------------------
    Sw("DEMO-P40-33", "pmos", "SO-8", 40, 8, 0.26, 25, 150, r10=20, r45=32, r25=48,
       vgs_max=12, vth_max=1.3, tab=None, stock=4, gate="qg"),
    Sw("DEMO-P40-34", "pmos", "SO-8", 40, 6, 0.30, 25, 150, r10=38, r45=55,
       vth_max=2.5, tab=None, gate="t", stock=2),
    Sw("DEMO-P40-35", "pmos", "DPAK", 40, 25, 0.55, 2.5, r10=22, r45=33,
       vth_max=2.5, stock=5, gate="qg"),
    Sw("DEMO-P60-36", "pmos", "DPAK", 60, 18, 0.50, 3.0, r10=60, r45=85,
       vth_max=2.5, stock=6, gate="t"),
    Sw("DEMO-P60-37", "pmos", "TO-220", 60, 40, 0.95, 1.2, r10=28,
       vth_max=4.0, gate="qg"),
    Sw("DEMO-P100-38", "pmos", "TO-220", 100, 23, 1.10, 1.4, r10=110,
       vth_max=4.0, gate="t", blank=("rds_hot_ratio", "rth_ja")),
    Sw("DEMO-P40-39", "pmos", "D2PAK", 40, 70, 1.40, 0.8, r10=9, r45=12,
       vth_max=2.5, stock=2, gate="qg", foster=True),
    Sw("DEMO-P40-40", "pmos", "DPAK", 40, 40, 0.65, 1.8, r10=11, r45=16, r25=26,
       vgs_max=12, vth_max=1.4, stock=3, gate="qg"),
    # ---- IGBTs (600-1200 V; they belong to a mains project, poor at 24 V) -----------
    Sw("DEMO-G600-41", "igbt", "TO-220", 600, 20, 0.95, 1.6, vce_sat=2.2, vce_sat_i=10,
       e_on=0.18, e_off=0.22, e_test_v=400, vth_max=6.5, tab="collector", gate="t"),
    Sw("DEMO-G600-42", "igbt", "TO-247", 600, 40, 2.20, 0.8, vce_sat=1.95,
       vce_sat_i=20, e_on=0.45, e_off=0.40, e_test_v=400, vth_max=6.5,
       tab="collector", gate="qg"),
    Sw("DEMO-G650-43", "igbt", "TO-247", 650, 80, 3.60, 0.45, vce_sat=1.7,
       vce_sat_i=40, e_on=1.1, e_off=0.9, e_test_v=400, vth_max=6.5,
       tab="collector", gate="qg", foster=True),
    Sw("DEMO-G1200-44", "igbt", "TO-247", 1200, 50, 5.20, 0.5, vce_sat=2.1,
       vce_sat_i=25, e_on=2.2, e_off=1.6, e_test_v=600, vth_max=6.5,
       tab="collector", gate="qg", stock=2),
    Sw("DEMO-G600-45", "igbt", "D2PAK", 600, 24, 1.30, 1.2, vce_sat=2.05, vce_sat_i=12,
       e_on=0.25, e_off=0.30, e_test_v=400, vth_max=6.5, tab="collector", gate="t"),
    Sw("DEMO-G650-46", "igbt", "TO-220F", 650, 16, 1.15, 3.2, vce_sat=1.85, vce_sat_i=8,
       e_on=0.15, e_off=0.18, e_test_v=400, vth_max=6.5, tab="isolated", gate="t",
       blank=("vce_sat_vge",), notes="fully insulated TO-220 body"),
    Sw("DEMO-G600-47", "igbt", "DPAK", 600, 8, 0.70, 2.5, vce_sat=2.3, vce_sat_i=4,
       e_on=0.08, e_off=0.10, e_test_v=400, vth_max=6.5, tab="collector", gate="none",
       blank=("vth_max",)),
]  # fmt: skip


def _voltage_class(v: float) -> int:
    """The nearest tabulated voltage class at or above v."""
    classes = sorted(HOT_RATIO)
    return next((c for c in classes if c >= v), classes[-1])


def _draw_stock(rng: random.Random) -> int | None:
    """Stock for a part the table leaves open: often no limit, else a drawer's worth."""
    return None if rng.random() < 0.4 else rng.choice((5, 8, 10, 12, 20, 25, 50, 100))


def _jitter(rng: random.Random, value: float, spread: float = 0.08) -> float:
    return value * (1.0 + rng.uniform(-spread, spread))


def _sig(value: float, digits: int = 3) -> float:
    """Round to a few significant digits, as a datasheet would print it."""
    if value == 0:
        return 0.0
    return float(f"{value:.{digits}g}")


def _rth_ja(package: str, rng: random.Random) -> float:
    """Datasheet-style junction-to-ambient: the package value, SMD with some spread."""
    base = RTH_JA[package]
    if package in ("TO-220", "TO-220F", "TO-247"):
        return base
    return float(round(base * rng.uniform(0.9, 1.15)))


def _foster(rth_jc: float, package: str) -> dict[str, float]:
    """A four-stage Foster network whose resistances add up to rth_jc exactly."""
    r = [round(rth_jc * s, 4) for s in FOSTER_SHARE[:-1]]
    r.append(round(rth_jc - sum(r), 4))
    out = {f"zth_r{k + 1}": r[k] for k in range(4)}
    out.update({f"zth_tau{k + 1}": FOSTER_TAU[package][k] for k in range(4)})
    return out


def _derive_mosfet(sw: Sw, rng: random.Random) -> dict[str, object]:
    vc = _voltage_class(sw.v)
    r_ref = sw.r10 or sw.r45 or sw.r25
    row: dict[str, object] = {
        "rds_on@10V": sw.r10,
        "rds_on@4.5V": sw.r45,
        "rds_on@2.5V": sw.r25,
        "rds_hot_ratio": round(_jitter(rng, HOT_RATIO[vc], 0.03), 2),
        "coss": _sig(_jitter(rng, COSS_SCALE[vc] / r_ref), 2),
        "i_pulse": _sig(4 * sw.i, 2),
        "eas": _sig(_jitter(rng, 2.5 * sw.i * (1 + sw.v / 100.0), 0.2), 2),
    }
    logic = sw.r45 is not None
    if sw.gate == "qg":
        qg = _jitter(rng, QG_SCALE[vc] / r_ref, 0.1)
        row.update(
            qg=_sig(qg),
            qgs=_sig(qg * rng.uniform(0.22, 0.32), 2),
            qgd=_sig(qg * rng.uniform(0.22, 0.35), 2),
            v_plateau=round(
                rng.uniform(2.0, 2.4) if sw.r25 else
                rng.uniform(2.8, 3.3) if logic else rng.uniform(4.6, 5.2), 1),
            rg_int=round(rng.uniform(0.8, 2.8), 1),
        )  # fmt: skip
    elif sw.gate == "t":
        row.update(t_rise=round(rng.uniform(8, 45)), t_fall=round(rng.uniform(6, 35)))
    return row


def _derive_igbt(sw: Sw, rng: random.Random) -> dict[str, object]:
    row: dict[str, object] = {
        "vce_sat": sw.vce_sat,
        "vce_sat_i": sw.vce_sat_i,
        "vce_sat_vge": 15.0,
        "e_on": sw.e_on,
        "e_off": sw.e_off,
        "e_test_v": sw.e_test_v,
        "e_test_i": sw.vce_sat_i,
        "i_pulse": _sig(3 * sw.i, 2),
    }
    if sw.gate == "qg":
        qg = _jitter(rng, 2.2 * sw.i, 0.1)
        row.update(
            qg=_sig(qg),
            qgs=_sig(qg * 0.3, 2),
            qgd=_sig(qg * 0.45, 2),
            v_plateau=round(rng.uniform(8.0, 9.5), 1),
            rg_int=round(rng.uniform(0.0, 4.0), 1) or None,
        )
    elif sw.gate == "t":
        row.update(
            t_rise=round(rng.uniform(20, 45)), t_fall=round(rng.uniform(60, 160))
        )
    return row


def switch_rows(rng: random.Random) -> list[dict[str, object]]:
    rows = []
    for sw in SWITCHES:
        row: dict[str, object] = {
            "part": sw.part,
            "kind": sw.kind,
            "package": sw.package,
            "price": sw.price,
            "stock": _draw_stock(rng) if sw.stock == "draw" else sw.stock,
            "v_rating": sw.v,
            "i_rating": sw.i,
            "tj_max": sw.tj_max,
            "rth_jc": sw.rth_jc,
            "rth_ja": _rth_ja(sw.package, rng),
            "vgs_max": sw.vgs_max,
            "vth_max": sw.vth_max,
            "tab": sw.tab,
            "manufacturer": MAKER,
            "mpn": sw.part,
            "notes": sw.notes or None,
        }
        row.update(
            _derive_mosfet(sw, rng) if sw.kind != "igbt" else _derive_igbt(sw, rng)
        )
        if sw.foster:
            row.update(_foster(sw.rth_jc, sw.package))
        for col in sw.blank:
            row[col] = None
        rows.append(row)
    return rows


# --------------------------------------------------------------------------------------
# Heatsinks: from a clip-on TO-220 sink to a large extrusion. rth_sa is natural
# convection at the rise rth_sa_rise; the airflow points are ducted approach velocities.
# --------------------------------------------------------------------------------------

HEATSINKS: list[dict[str, object]] = [
    dict(part="DEMO-HS-CLIP20", price=0.35, rth_sa=20.0, rth_sa_rise=40, fits="TO-220;TO-220F",
         positions=1, notes="clip-on stamped sink"),
    dict(part="DEMO-HS-CLIP13", price=0.55, rth_sa=13.0, rth_sa_rise=50, fits="TO-220;TO-220F",
         positions=1, notes="stamped U-shape, board mount"),
    dict(part="DEMO-HS-TWIN10", price=0.85, stock=3, rth_sa=9.5, rth_sa_rise=50,
         fits="TO-220;TO-220F", positions=2, notes="stamped, two TO-220 side by side"),
    dict(part="DEMO-HS-CLIP247", price=0.90, rth_sa=9.0, rth_sa_rise=50,
         fits="TO-247;TO-220;TO-220F", positions=1, notes="clip-on for TO-247"),
    dict(part="DEMO-HS-FIN25", price=0.95, rth_sa=7.5, rth_sa_rise=60, fits="TO-220;TO-220F",
         positions=1, **{"rth_sa@1m/s": 4.6, "rth_sa@2m/s": 3.5},
         notes="25 mm finned board-mount"),
    dict(part="DEMO-HS-PLATE3", price=0.70, rth_sa=6.5, rth_sa_rise=50,
         fits="TO-220;TO-220F;TO-247", positions=3, notes="flat aluminium plate 80 x 60 x 3 mm"),
    dict(part="DEMO-HS-FIN38", price=1.45, rth_sa=5.2, rth_sa_rise=60,
         fits="TO-220;TO-220F;TO-247", positions=1, **{"rth_sa@1m/s": 3.0, "rth_sa@2m/s": 2.3},
         notes="38 mm finned board-mount"),
    dict(part="DEMO-HS-EXT50", price=1.80, rth_sa=5.9, rth_sa_rise=75,
         fits="TO-220;TO-220F;TO-247", positions=2, **{"rth_sa@1m/s": 3.4, "rth_sa@2m/s": 2.6},
         notes="extrusion 42 mm wide, cut to 50 mm"),
    dict(part="DEMO-HS-EXT75", price=2.60, rth_sa=3.2, rth_sa_rise=75,
         fits="TO-220;TO-220F;TO-247", positions=2, **{"rth_sa@1m/s": 1.8, "rth_sa@2m/s": 1.35},
         notes="extrusion 70 mm wide, cut to 75 mm"),
    dict(part="DEMO-HS-EXT100", price=4.90, stock=2, rth_sa=1.35, rth_sa_rise=75,
         fits="TO-220;TO-220F;TO-247", positions=4, **{"rth_sa@1m/s": 0.74, "rth_sa@2m/s": 0.56},
         notes="extrusion 100 mm wide, cut to 100 mm"),
    dict(part="DEMO-HS-EXT150", price=11.50, stock=1, rth_sa=0.52, rth_sa_rise=75,
         fits="TO-220;TO-220F;TO-247", positions=4, **{"rth_sa@1m/s": 0.25, "rth_sa@2m/s": 0.18},
         notes="extrusion 150 mm wide, cut to 200 mm"),
    dict(part="DEMO-HS-BARE100", price=3.20, stock=2, rth_sa=1.6, rth_sa_rise=75,
         fits="TO-220;TO-220F;TO-247", positions=4, **{"rth_sa@2m/s": 0.58},
         notes="as EXT100 but bare (not anodised)"),
    # Given by geometry only: the tool estimates RθSA from the fins.
    dict(part="DEMO-HS-GEO80", price=1.60, stock=4, fits="TO-220;TO-220F;TO-247", positions=2,
         length=80, width=60, base_thickness=4, fin_height=25, fin_count=8,
         fin_thickness=1.5, material="aluminium 6063", finish="black anodised",
         notes="offcut of an extrusion; no datasheet figure, geometry only"),
]  # fmt: skip


# --------------------------------------------------------------------------------------
# Thermal interfaces: one row per material and package (rth_cs is for that package).
# --------------------------------------------------------------------------------------

INTERFACES: list[dict[str, object]] = [
    dict(part="DEMO-TIM-G220", price=0.04, fits="TO-220;TO-220F", rth_cs=0.5, insulating="no",
         t_max=200, notes="thermal grease, no insulator"),
    dict(part="DEMO-TIM-G247", price=0.06, fits="TO-247", rth_cs=0.24, insulating="no",
         t_max=200, notes="thermal grease, no insulator"),
    dict(part="DEMO-TIM-PC220", price=0.08, fits="TO-220;TO-220F", rth_cs=0.45, insulating="no",
         t_max=125, notes="phase-change pad, not insulating"),
    dict(part="DEMO-TIM-SP220", price=0.10, fits="TO-220;TO-220F", rth_cs=2.2, insulating="yes",
         isolation_voltage=4000, t_max=180, notes="silicone pad, glass-fibre, insulating"),
    dict(part="DEMO-TIM-SP247", price=0.16, fits="TO-247", rth_cs=0.9, insulating="yes",
         isolation_voltage=4000, t_max=180, notes="silicone pad, glass-fibre, insulating"),
    dict(part="DEMO-TIM-HP220", price=0.28, stock=6, fits="TO-220;TO-220F", rth_cs=1.1,
         insulating="yes", isolation_voltage=3000,
         notes="high-performance silicone pad, insulating"),
    dict(part="DEMO-TIM-MICA220", price=0.12, fits="TO-220;TO-220F", rth_cs=1.3,
         insulating="yes", isolation_voltage=2500,
         notes="mica washer with grease; needs an insulating bush for the screw"),
    dict(part="DEMO-TIM-MICA247", price=0.18, fits="TO-247", rth_cs=0.6,
         insulating="yes", isolation_voltage=2500,
         notes="mica washer with grease; needs an insulating bush for the screw"),
]  # fmt: skip


# --------------------------------------------------------------------------------------
# Diodes (freewheel and clamp) and gate drivers.
# --------------------------------------------------------------------------------------

DIODES: list[dict[str, object]] = [
    dict(part="DEMO-DS30-05", price=0.04, v_rrm=30, i_avg=0.5, vf=0.45, rth_ja=200,
         tj_max=125, package="SOD-123", notes="Schottky"),
    dict(part="DEMO-DS40-1", price=0.06, stock=3, v_rrm=40, i_avg=1, vf=0.55, rth_ja=88,
         tj_max=125, package="SMA", notes="Schottky"),
    dict(part="DEMO-DS60-1", price=0.08, v_rrm=60, i_avg=1, vf=0.7, rth_ja=88,
         tj_max=150, package="SMA", notes="Schottky"),
    dict(part="DEMO-DS45-5", price=0.22, v_rrm=45, i_avg=5, vf=0.6, rth_ja=25,
         tj_max=150, package="SMC", notes="Schottky"),
    dict(part="DEMO-DS100-3", price=0.18, v_rrm=100, i_avg=3, vf=0.85, rth_ja=40,
         tj_max=175, package="SMC", notes="Schottky"),
    dict(part="DEMO-DF200-1", price=0.05, v_rrm=200, i_avg=1, vf=1.3, rth_ja=100,
         tj_max=150, package="DO-41", notes="fast recovery"),
    dict(part="DEMO-DF600-1", price=0.07, v_rrm=600, i_avg=1, vf=1.7, rth_ja=100,
         tj_max=150, package="DO-41", notes="fast recovery"),
    dict(part="DEMO-DF200-8", price=0.45, stock=5, v_rrm=200, i_avg=8, vf=1.1, rth_ja=60,
         tj_max=150, package="TO-220", notes="fast recovery"),
]  # fmt: skip

DRIVERS: list[dict[str, object]] = [
    dict(part="DEMO-GD-LS2", price=0.45, kind="low_side", v_out=12, i_peak=2,
         v_supply_max=20, notes="single low-side driver, runs from the 12 V rail"),
    dict(part="DEMO-GD-HS1", price=1.20, stock=4, kind="high_side", v_out=10, i_peak=1,
         v_supply_max=40, notes="high-side driver with charge pump, allows 100 % on"),
    dict(part="DEMO-GD-ISO4", price=2.80, stock=2, kind="isolated", v_out=15, i_peak=4,
         v_supply_max=30, notes="isolated driver with its own floating supply"),
    dict(part="DEMO-GD-LS4", price=0.70, stock=None, kind="low_side", v_out=12,
         i_peak=4, v_supply_max=20, notes="dual low-side driver, one channel used"),
]  # fmt: skip


def _catalogue_rows(rows: list[dict[str, object]], rng: random.Random):
    out = []
    for row in rows:
        r = dict(row)
        if "stock" not in r:
            r["stock"] = _draw_stock(rng)
        r.setdefault("manufacturer", MAKER)
        r.setdefault("mpn", r["part"])
        out.append(r)
    return out


def build_tables(seed: int = SEED) -> dict[str, list[dict[str, object]]]:
    """All demo tables as lists of rows (column name -> value; None = blank cell)."""
    rng = random.Random(seed)
    return {
        "switches": switch_rows(rng),
        "heatsinks": _catalogue_rows(HEATSINKS, rng),
        "interfaces": _catalogue_rows(INTERFACES, rng),
        "diodes": _catalogue_rows(DIODES, rng),
        "drivers": _catalogue_rows(DRIVERS, rng),
    }


# --------------------------------------------------------------------------------------
# Writers
# --------------------------------------------------------------------------------------

# Cells that the CSV form writes with their own unit, to exercise the reader. The value
# is the same quantity as the bare number in the workbook.
CSV_UNIT_CELLS: dict[tuple[str, str, str], str] = {
    ("switches", "DEMO-N25-8", "rds_on@10V"): "6.5 mΩ",
    ("switches", "DEMO-N60-12", "v_rating"): "60V",
    ("switches", "DEMO-N40-23", "rth_jc"): "0.6 °C/W",
    ("switches", "DEMO-N100-30", "tj_max"): "175 °C",
    ("switches", "DEMO-N40-15", "qg"): None,  # filled below: the charge in µC
    ("heatsinks", "DEMO-HS-GEO80", "length"): "8 cm",
    ("interfaces", "DEMO-TIM-SP220", "isolation_voltage"): "4 kV",
}


def _fmt(value: object) -> str:
    """A cell as CSV text: blank for None, shortest plain decimal for numbers."""
    if value is None:
        return ""
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, int):
        return str(value)
    if isinstance(value, float):
        if value.is_integer() and abs(value) < 1e15:
            return str(int(value))
        return np.format_float_positional(value, trim="-")
    return str(value)


def _csv_unit_cells(tables: dict[str, list[dict[str, object]]]) -> dict:
    cells = dict(CSV_UNIT_CELLS)
    qg = next(r["qg"] for r in tables["switches"] if r["part"] == "DEMO-N40-15")
    cells[("switches", "DEMO-N40-15", "qg")] = f"{_fmt(qg / 1000.0)} µC"
    return cells


def write_csv(tables: dict[str, list[dict[str, object]]], folder: Path) -> list[Path]:
    """One UTF-8, comma-separated CSV per table; a few cells carry their own unit."""
    folder.mkdir(parents=True, exist_ok=True)
    unit_cells = _csv_unit_cells(tables)
    paths = []
    for table, rows in tables.items():
        cols = COLUMNS[table]
        path = folder / f"{table}.csv"
        with path.open("w", encoding="utf-8", newline="") as fh:
            w = csv.writer(fh, lineterminator="\n")
            w.writerow([header(n, u) for n, u in cols])
            for row in rows:
                line = []
                for name, _unit in cols:
                    special = unit_cells.get((table, row["part"], name))
                    line.append(special if special else _fmt(row.get(name)))
                w.writerow(line)
        paths.append(path)
    return paths


_HEAD_FONT = Font(bold=True)
_HEAD_FILL = PatternFill("solid", fgColor="DDEBF7")


def _style_header(ws, widths: list[int]) -> None:
    for idx, width in enumerate(widths, start=1):
        ws.column_dimensions[get_column_letter(idx)].width = width
        cell = ws.cell(row=1, column=idx)
        cell.font = _HEAD_FONT
        cell.fill = _HEAD_FILL
        cell.alignment = Alignment(horizontal="center")
    ws.freeze_panes = "B2"


def _new_workbook() -> Workbook:
    wb = Workbook()
    wb.remove(wb.active)
    wb.properties.creator = "selector demo builder"
    wb.properties.created = _FIXED_TIME
    wb.properties.modified = _FIXED_TIME
    return wb


def write_workbook(tables: dict[str, list[dict[str, object]]], path: Path) -> Path:
    """One sheet per table, bare numbers in the header's unit."""
    wb = _new_workbook()
    for table, rows in tables.items():
        ws = wb.create_sheet(table)
        cols = COLUMNS[table]
        heads = [header(n, u) for n, u in cols]
        ws.append(heads)
        for row in rows:
            ws.append([row.get(name) for name, _u in cols])
        _style_header(ws, [max(9, min(30, len(h) + 2)) for h in heads])
    wb.save(path)
    return path


# --------------------------------------------------------------------------------------
# The blank template, built from the reader's schema (selector.schema.TABLES)
# --------------------------------------------------------------------------------------


# Pattern columns get one header per example parameter; the schema gives the first one.
_EXTRA_PATTERN_EXAMPLES = {("switches", "rds_on"): ("4.5V", "2.5V")}
# Header labels for the few pint unit names that read badly in a sheet.
_UNIT_LABEL = {"degC": "°C", "delta_degC": "K"}


def _unit_label(unit: str | None) -> str:
    return _UNIT_LABEL.get(unit or "", unit or "")


def template_columns() -> dict[str, list[tuple[str, str]]]:
    """(header text, comment text) per table, taken from ``selector.schema.TABLES``.

    Every plain column of the schema in its order, then one header per pattern example
    (``rds_on@10V``, ...). The header carries the schema's default unit; the comment is
    the schema's own description of the column (``describe_column``).
    """
    from selector.schema import TABLES as SCHEMA
    from selector.schema import describe_column

    out: dict[str, list[tuple[str, str]]] = {}
    for table, spec in SCHEMA.items():
        pattern_cols: dict[str, list[tuple[str, str]]] = {}
        for pat in spec.patterns:
            stem, _, param = pat.example.partition("@")
            params = (param, *_EXTRA_PATTERN_EXAMPLES.get((table, pat.name), ()))
            # A pattern sits after its plain namesake (rth_sa), else after the last
            # always-required column (rds_on after rth_jc).
            anchor = (
                pat.name if pat.name in spec.column_map else spec.always_required()[-1]
            )
            pattern_cols.setdefault(anchor, []).extend(
                (header(f"{stem}@{v}", _unit_label(pat.unit)),
                 describe_column(table, f"{stem}@{v}"))
                for v in params
            )  # fmt: skip
        cols: list[tuple[str, str]] = []
        for col in spec.columns:
            unit = _unit_label(col.unit) if col.is_quantity else ""
            cols.append((header(col.name, unit), describe_column(table, col.name)))
            cols.extend(pattern_cols.pop(col.name, []))
        for rest in pattern_cols.values():
            cols.extend(rest)
        out[table] = cols
    return out


_TEMPLATE_NOTE = (
    " A header may name another unit in brackets, e.g. [mohm]; a cell may carry its own "
    "unit, e.g. 6.5 mΩ. Blank cells take the default shown and are listed as assumed."
)


def write_template(path: Path) -> Path:
    """A blank workbook, one sheet per table, each header cell with a Comment."""
    wb = _new_workbook()
    for table, cols in template_columns().items():
        ws = wb.create_sheet(table)
        ws.append([head for head, _text in cols])
        for idx, (_head, text) in enumerate(cols, start=1):
            body = text + (_TEMPLATE_NOTE if idx == 1 else "")
            comment = Comment(body, "selector")
            comment.width = 320
            comment.height = max(90, 20 * (2 + len(body) // 40))
            ws.cell(row=1, column=idx).comment = comment
        _style_header(ws, [max(9, min(30, len(h) + 2)) for h, _t in cols])
    wb.save(path)
    return path


# --------------------------------------------------------------------------------------
# The design
# --------------------------------------------------------------------------------------

DESIGN_TOML = """\
# Greenhouse climate controller: an invented demo design for `selector`.
# One 24 V supply; the controller is a 3.3 V microcontroller with a 12 V gate-drive rail.
# Values are SI with the unit in the comment; strings with units ("24 V") also work.
#
# Caution: the pump and the valve coils are inductive. Without a freewheel diode or a
# rated clamp their turn-off spike can destroy the switch. Heatsinks in a closed box get
# hot enough to burn. Results are estimates: verify by measurement, and follow local
# electrical codes and licensed practice for anything wired to the mains.

[conditions]
ambient_min = -5          # °C, cold night in an unheated greenhouse
ambient_max = 45          # °C, closed greenhouse in full sun
junction_margin = 25      # K kept below each part's tj_max
voltage_derating = 0.8    # apply at most this fraction of v_rating
airflow = 0               # m/s over the heatsinks; 0 = natural convection
heatsink_derating = 0     # fraction added to every RθSA as a safety factor

[[channel]]
name = "soil heater"      # heating mat under the seed trays
supply = 24               # V
current = 8               # A, on-state load current (3 Ω mat)
peak_current = 8          # A, a resistive mat has no inrush
peak_time = 0             # s
on_time = 0               # s; 0 = steady (thermostat switches it rarely)
off_time = 0              # s
load = "resistive"        # resistive | inductive | motor | lamp | capacitive
inductance = 0            # H
duty = 1.0                # on-time fraction
pwm_frequency = 0         # Hz; 0 = switched rarely
drive = 12                # V, from the 12 V gate-drive rail
side = "low"              # low | high | any
quantity = 1              # copies on the board
heatsink_group = "main sink"   # shares one heatsink with the circulation pump

[[channel]]
name = "circulation pump" # brushed DC pump motor
supply = 24               # V
current = 3               # A, running current
peak_current = 15         # A, stall current at start-up
peak_time = 0.5           # s the stall current lasts while the pump spins up
on_time = 0               # s; 0 = steady
off_time = 0              # s
load = "motor"            # needs a freewheel diode or a rated avalanche
inductance = 0.002        # H, winding inductance
duty = 1.0                # on-time fraction
pwm_frequency = 0         # Hz
drive = 12                # V, from the 12 V gate-drive rail
side = "low"              # low | high | any
quantity = 1              # copies on the board
heatsink_group = "main sink"   # shares one heatsink with the soil heater

[[channel]]
name = "irrigation valves" # solenoid valves, one per bed
supply = 24               # V
current = 0.5             # A, holding current of one coil (48 Ω)
peak_current = 0.5        # A, a DC coil has no inrush
peak_time = 0             # s
on_time = 600             # s open (ten minutes of watering) ...
off_time = 3000           # s ... then closed
load = "inductive"        # coil: freewheel diode or avalanche rating needed
inductance = 0.08         # H, coil inductance
duty = 1.0                # on-time fraction while on
pwm_frequency = 0         # Hz
drive = 3.3               # V, straight from a microcontroller pin
side = "low"              # low | high | any
quantity = 2              # two beds, two identical valve channels
heatsink_group = ""       # no shared heatsink

[[channel]]
name = "mist valves"      # fine-spray nozzles for humidity
supply = 24               # V
current = 0.35            # A, coil current
peak_current = 0.35       # A
peak_time = 0             # s
on_time = 5               # s spraying ...
off_time = 55             # s ... then a pause, repeated
load = "inductive"        # coil: freewheel diode or avalanche rating needed
inductance = 0.06         # H, coil inductance
duty = 1.0                # on-time fraction while on
pwm_frequency = 0         # Hz
drive = 3.3               # V, straight from a microcontroller pin
side = "low"              # low | high | any
quantity = 2              # two misting lines
heatsink_group = ""       # no shared heatsink

[[channel]]
name = "LED grow bar"     # LED bar with its own constant-voltage strings
supply = 24               # V
current = 4               # A while the PWM is on
peak_current = 4          # A
peak_time = 0             # s
on_time = 0               # s; 0 = steady
off_time = 0              # s
load = "resistive"        # the LED strings with their resistors behave resistively
inductance = 0            # H
duty = 0.7                # 70 % brightness
pwm_frequency = 2000      # Hz, dimming PWM
drive = 3.3               # V, a timer pin of the microcontroller
side = "low"              # low | high | any
quantity = 1              # copies on the board
heatsink_group = ""       # no shared heatsink

[[channel]]
name = "vent fan"         # brushed DC fan in the roof vent
supply = 24               # V
current = 1.5             # A, running current
peak_current = 4          # A, start-up current
peak_time = 0.2           # s until the fan is up to speed
on_time = 0               # s; 0 = steady
off_time = 0              # s
load = "motor"            # needs a freewheel diode or a rated avalanche
inductance = 0.001        # H, winding inductance
duty = 1.0                # on-time fraction
pwm_frequency = 0         # Hz
drive = 3.3               # V, a microcontroller pin (with a level shifter for a high-side part)
side = "high"             # fan housing stays at ground potential when off
quantity = 1              # copies on the board
heatsink_group = ""       # no shared heatsink

[[channel]]
name = "frost heater"     # air heater that keeps the greenhouse above 2 °C on cold nights
supply = 24               # V
current = 16              # A, on-state load current (1.5 Ω element, about 380 W)
peak_current = 16         # A, a metal-sheathed element has little inrush
peak_time = 0             # s
on_time = 0               # s; 0 = steady (runs for hours on a cold night)
off_time = 0              # s
load = "resistive"        # resistive | inductive | motor | lamp | capacitive
inductance = 0            # H
duty = 1.0                # on-time fraction
pwm_frequency = 0         # Hz
drive = 12                # V, from the 12 V gate-drive rail
side = "low"              # low | high | any
quantity = 1              # copies on the board
heatsink_group = ""       # its own heatsink if it needs one
"""


def write_design(path: Path) -> Path:
    path.write_text(DESIGN_TOML, encoding="utf-8")
    return path


def build_all(folder: Path = HERE, seed: int = SEED) -> dict[str, object]:
    """Write every demo file into ``folder``; return the paths written."""
    tables = build_tables(seed)
    return {
        "workbook": write_workbook(tables, folder / "greenhouse_inventory.xlsx"),
        "csv": write_csv(tables, folder / "greenhouse_csv"),
        "design": write_design(folder / "greenhouse.toml"),
        "template": write_template(folder / "template.xlsx"),
    }


def main(argv: list[str] | None = None) -> int:
    out = build_all()
    for key, value in out.items():
        print(f"{key}: {value}")
    return 0


if __name__ == "__main__":
    sys.path.insert(0, str(HERE.parent))
    raise SystemExit(main())
