"""Bill of materials, calculation report workbook and CSV export.

The workbook is meant to stand on its own in front of purchasing and a design review:

* **Bill of materials**: one line per distinct part with quantity, ratings, prices and
  the channels that use it, and a total;
* **Calculations**: per channel, the inputs, the chosen parts, every loss term, every
  thermal resistance of the chain, the junction temperature against its limit, the
  drive, the voltage and current checks, and every value taken from a default (marked
  as assumed);
* **Junction temperatures**: a table and charts of the junction temperature of each
  channel against its limit;
* **Alternatives**: the ranked solutions with their cost and what differs from the best;
* **Rejections**: the screening funnel per channel and the nearest misses;
* **Cautions and method**: the methods with their published sources, the assumptions and
  the safety cautions.

Every text that comes from the user or the inventory is written with :func:`safe_text`,
so that a value beginning with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return
stays text and never becomes a formula. The only formulas in the workbook are our own
(the total of the bill of materials). The CSV export applies the usual neutralisation
for CSV (a leading apostrophe) because a CSV file carries no cell types.

Functions return bytes or text and never write files; the command line and the page
decide where the output goes.
"""

from __future__ import annotations

import csv
import io
import math
import numbers
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field, fields
from typing import Any

import numpy as np
import pandas as pd
from openpyxl import Workbook
from openpyxl.cell.cell import ILLEGAL_CHARACTERS_RE
from openpyxl.chart import BarChart, Reference, ScatterChart, Series
from openpyxl.styles import Alignment, Border, Font, PatternFill, Side
from openpyxl.utils import get_column_letter

from selector import __version__
from selector.errors import SelectorError
from selector.models import Channel, ChannelPick, Design, SelectionResult, Solution

# --------------------------------------------------------------------------- constants

BOM_KINDS = ("switch", "heatsink", "interface", "diode", "driver")
"""Kinds of bill-of-materials lines, in the order the lines are listed."""

KIND_TABLES = {
    "switch": "switches",
    "heatsink": "heatsinks",
    "interface": "interfaces",
    "diode": "diodes",
    "driver": "drivers",
}
"""Inventory table that holds each kind of part."""

FORMULA_LEADS = ("=", "+", "-", "@", "\t", "\r")
"""Leading characters that a spreadsheet may read as the start of a formula."""

SHEET_BOM = "Bill of materials"
SHEET_CALC = "Calculations"
SHEET_TEMPS = "Junction temperatures"
SHEET_ALT = "Alternatives"
SHEET_REJ = "Rejections"
SHEET_CAUTIONS = "Cautions and method"

BOM_COLUMNS = (
    "line",
    "quantity",
    "part",
    "kind",
    "manufacturer",
    "mpn",
    "description",
    "unit_price",
    "extended_price",
    "channels",
    "counted_as",
    "notes",
)
"""Columns of :func:`bom_lines` (prices in the inventory's currency)."""

BOM_HEADERS = {
    "line": "Line",
    "quantity": "Quantity [pcs]",
    "part": "Part",
    "kind": "Kind",
    "manufacturer": "Manufacturer",
    "mpn": "Manufacturer part number",
    "description": "Description (key ratings)",
    "unit_price": "Unit price [currency]",
    "extended_price": "Extended price [currency]",
    "channels": "Used by channels",
    "counted_as": "How the quantity is counted",
    "notes": "Inventory notes",
}
"""Headers of the bill of materials in the workbook and in the CSV."""

CALC_COLUMNS = (
    "channel",
    "section",
    "item",
    "value",
    "unit",
    "limit",
    "margin",
    "result",
    "source",
    "note",
    "key",
)
"""Columns of :func:`calculation_table`."""

CALC_HEADERS = {
    "channel": "Channel",
    "section": "Section",
    "item": "Item",
    "value": "Value",
    "unit": "Unit",
    "limit": "Limit",
    "margin": "Margin",
    "result": "Result",
    "source": "Source",
    "note": "Note",
    "key": "Key",
}

ALL_CHANNELS = "(all channels)"
MISSING = "—"

CAUTIONS = (
    "Results are estimates from datasheet values and published models. Verify every "
    "channel by measurement (junction or case temperature, sink temperature, switching "
    "waveforms) in the final enclosure at the highest ambient before relying on it.",
    "Hot surfaces: heatsinks and switch tabs can reach temperatures that burn skin. "
    "Guard or mark accessible hot parts and check touch-temperature limits (for "
    "example IEC 62368-1, ISO 13732-1) against the edition in force.",
    "Mains and high voltages can kill. A heatsink under a non-insulating interface is "
    "at the tab's potential (live). Keep creepage and clearance, insulate or earth "
    "accessible metal, and have such work done or checked by a qualified person.",
    "Inductive loads (motors, solenoids, valves, relays) produce voltage spikes at "
    "turn-off. Fit the freewheel diode or clamp the calculation asks for, keep its "
    "loop short, and check the drain voltage with an oscilloscope.",
    "Fire: an overloaded or failed switch, a loose connection or an undersized wire can "
    "overheat. Protect each load circuit with a fuse or breaker sized for its wiring.",
    "Follow the electrical codes that apply where the equipment is built and used, and "
    "licensed practice for any mains installation.",
)
"""The safety cautions printed in the workbook (our own wording)."""

METHODS = (
    (
        "Conduction loss of a MOSFET",
        "P = I² · Rds(on)(Tj) per device, with Rds(on) at the guaranteed gate-drive point "
        "and a linear rise with junction temperature fitted to Rds(125 °C)/Rds(25 °C)",
        "N. Mohan, T. M. Undeland, W. P. Robbins, Power Electronics, 3rd ed., Wiley, 2003; "
        "B. J. Baliga, Fundamentals of Power Semiconductor Devices, Springer, 2008",
    ),
    (
        "Conduction loss of an IGBT",
        "P = Vce(sat) · I, scaled from the datasheet test point",
        "B. J. Baliga, Fundamentals of Power Semiconductor Devices, Springer, 2008",
    ),
    (
        "Switching and output-capacitance loss",
        "Linear-edge switching energy from gate charge and drive current (or switching "
        "times or energies), times the switching frequency; ½·Coss·V²·f",
        "R. W. Erickson, D. Maksimović, Fundamentals of Power Electronics, 3rd ed., "
        "Springer, 2020; Mohan, Undeland, Robbins, 2003",
    ),
    (
        "Steady thermal chain",
        "Tj = Ta + P·(RθJC + RθCS) + P_sink·RθSA; without a heatsink Tj = Ta + P·RθJA",
        "JEDEC JESD51 series (JESD51-1, -2, -12 for the meaning of RθJC and RθJA); "
        "Mohan, Undeland, Robbins, 2003",
    ),
    (
        "Electro-thermal coupling and thermal runaway",
        "Loss rises with junction temperature; the coupled solution is found in closed "
        "form and flagged as runaway when no steady state exists",
        "D. L. Blackburn, Power MOSFET Failure Revisited, IEEE PESC 1988; J. L. Shue, "
        "H. Leidecker, Power MOSFET Thermal Instability Operation Characterization "
        "Support, NASA TM, 2010",
    ),
    (
        "Transient junction rise (start-up peaks, on/off cycles)",
        "Foster network of the junction-to-case thermal impedance",
        "JEDEC JESD51-14; A. Weyman, Understanding Cauer and Foster Thermal Chain "
        "Models, EEPower, 2025",
    ),
    (
        "Voltage, gate-voltage and current derating",
        "Applied voltage ≤ derating × rating; |Vgs| ≤ 0.7 · Vgs,max; current within the "
        "rating (the thermal check usually governs)",
        "MIL-DTL-917, Table XIX (field-effect transistor derating); common practice",
    ),
    (
        "Avalanche and freewheel protection",
        "Single avalanche energy ≤ 0.8 · E_AS; freewheel diode with V_RRM ≥ 1.5 × supply "
        "and I_F(AV) used ≤ 0.8 × rating",
        "J. Dodge, Power MOSFET Tutorial, EE Times, 2006; common practice",
    ),
    (
        "Heatsink resistance at the operating point",
        "Catalogue RθSA corrected for the actual temperature rise (natural convection) "
        "and the airflow; plate-fin estimate from geometry when no value is given",
        "W. Elenbaas, Physica 9, 1942; A. Bar-Cohen, W. M. Rohsenow, J. Heat Transfer "
        "106, 1984; S. W. Churchill, H. H. S. Chu, Int. J. Heat Mass Transfer 18, 1975; "
        "P. Teertstra, M. M. Yovanovich, J. R. Culham, IEEE SEMI-THERM 1999; Bergman, "
        "Lavine, Incropera, DeWitt, Introduction to Heat Transfer",
    ),
    (
        "Touch temperature of accessible heatsinks",
        "Sink temperature compared with surface limits by contact time",
        "IEC 62368-1; ISO 13732-1; IEC Guide 117:2010 (verify the edition in force)",
    ),
    (
        "Choice of parts",
        "Cheapest combination that meets every limit, found as an integer program over "
        "the screened candidates, respecting stock and shared heatsinks",
        "Integer programming with the PuLP modeller and the CBC or HiGHS solver",
    ),
)
"""(topic, what is computed, published sources) shown on the method sheet."""

_KIND_LABELS = {"nmos": "N-MOSFET", "pmos": "P-MOSFET", "igbt": "IGBT"}
_DRIVER_LABELS = {
    "low_side": "low-side",
    "high_side": "high-side",
    "isolated": "isolated",
}

_INPUT_LABELS = {
    "supply": ("Supply voltage", "V"),
    "current": ("Load current (on state)", "A"),
    "peak_current": ("Peak current", "A"),
    "peak_time": ("Peak duration", "s"),
    "on_time": ("On time of the repeated cycle", "s"),
    "off_time": ("Off time of the repeated cycle", "s"),
    "load": ("Load kind", ""),
    "inductance": ("Load inductance", "H"),
    "duty": ("PWM duty (on fraction)", "-"),
    "pwm_frequency": ("PWM frequency", "Hz"),
    "drive": ("Gate-drive level the controller guarantees", "V"),
    "side": ("Switch side", ""),
    "quantity": ("Copies on the board", "pcs"),
    "heatsink_group": ("Heatsink group", ""),
}

_CONDITION_LABELS = {
    "ambient_min": ("Ambient, lowest", "°C"),
    "ambient_max": ("Ambient, highest", "°C"),
    "junction_margin": ("Junction margin below tj_max", "K"),
    "voltage_derating": ("Voltage derating (fraction of rating)", "-"),
    "airflow": ("Airflow over the heatsinks", "m/s"),
    "heatsink_derating": ("Heatsink derating (fraction added to RθSA)", "-"),
    "max_parallel": ("Most devices in parallel considered", "pcs"),
}

_LOSS_LABELS = {
    "conduction": ("Conduction loss", "W"),
    "switching": ("Switching loss", "W"),
    "coss": ("Output-capacitance loss", "W"),
    "avalanche": ("Avalanche loss", "W"),
    "total": ("Total loss in the die", "W"),
    "gate_drive": ("Gate-drive power (in driver and resistors, not the die)", "W"),
    "p_gate": ("Gate-drive power (in driver and resistors, not the die)", "W"),
}

_CHAIN_LABELS = {
    "rth_jc": ("Junction to case RθJC", "K/W", "switch"),
    "rth_cs": ("Case to sink RθCS (interface)", "K/W", "interface"),
    "rth_sa": ("Sink to ambient RθSA (at the operating point)", "K/W", "heatsink"),
    "rth_ja": ("Junction to ambient RθJA (no heatsink)", "K/W", "switch"),
    "sink_method": ("How RθSA was found", "", None),
}

_UNIT_SUFFIXES = (
    ("_k_per_w", "K/W"),
    ("_w_per_k", "W/K"),
    ("_ohm", "Ω"),
    ("_w", "W"),
    ("_v", "V"),
    ("_a", "A"),
    ("_c", "°C"),
    ("_k", "K"),
    ("_s", "s"),
    ("_hz", "Hz"),
    ("_j", "J"),
)

_NUMBER_FORMATS = {
    "W": "0.000",
    "°C": "0.0",
    "K": "0.0",
    "K/W": "0.000",
    "pcs": "0",
    "currency": "#,##0.00",
}

_HEADER_FONT = Font(bold=True)
_HEADER_FILL = PatternFill("solid", fgColor="D9E1F2")
_SECTION_FILL = PatternFill("solid", fgColor="F2F2F2")
_WARN_FILL = PatternFill("solid", fgColor="FCE4D6")
_TOP_BORDER = Border(top=Side(style="thin", color="808080"))
_MAX_CELL_TEXT = 32_767  # the spreadsheet's limit of characters in one cell


# ------------------------------------------------------------------- safe cell writing


def safe_text(cell, text: Any):
    """Write ``text`` into an openpyxl ``cell`` so that it stays text.

    openpyxl turns any string beginning with ``=`` into a formula and ``#N/A`` into an
    error cell. Setting the data type to ``"s"`` after assigning the value stores the
    string as text; the quote prefix also keeps the spreadsheet program from turning it
    into a formula when the cell is edited. Characters that the file format forbids
    (control characters other than tab, line feed and carriage return) are removed and
    the text is cut at the spreadsheet's cell limit.

    Parameters
    ----------
    cell : openpyxl.cell.Cell
    text : str or any object (converted with ``str``); ``None`` leaves the cell empty.

    Returns
    -------
    The cell.
    """
    if text is None:
        cell.value = None
        return cell
    if not isinstance(text, str):
        text = str(text)
    text = ILLEGAL_CHARACTERS_RE.sub("", text)[:_MAX_CELL_TEXT]
    cell.value = text
    cell.data_type = "s"  # after the value: the assignment guesses a type
    if text[:1] in FORMULA_LEADS:
        cell.quotePrefix = True
    return cell


def neutralise_csv_cell(value: Any) -> Any:
    """Return ``value`` safe for a CSV cell (the OWASP rule for CSV injection).

    A string beginning with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return gets a
    leading apostrophe, so that a spreadsheet program opening the CSV shows it as text.
    Numbers pass unchanged (a negative number is not a formula); NaN becomes empty.
    The CSV writer quotes every text cell and doubles embedded quotes.
    """
    if value is None:
        return ""
    if isinstance(value, bool | np.bool_):
        return "yes" if value else "no"
    if isinstance(value, numbers.Number):
        v = float(value) if not isinstance(value, numbers.Integral) else int(value)
        if isinstance(v, float) and not math.isfinite(v):
            return ""
        return v
    text = str(value)
    if text[:1] in FORMULA_LEADS:
        return "'" + text
    return text


def _is_number(value: Any) -> bool:
    return isinstance(value, numbers.Number) and not isinstance(value, bool | np.bool_)


def _is_missing(value: Any) -> bool:
    if value is None:
        return True
    if isinstance(value, float | np.floating):
        return bool(np.isnan(value))
    try:
        return bool(pd.isna(value)) if np.ndim(value) == 0 else False
    except (TypeError, ValueError):
        return False


def _as_text(value: Any) -> str:
    """Plain text for any value that is written as a string."""
    if _is_missing(value):
        return MISSING
    if isinstance(value, bool | np.bool_):
        return "yes" if value else "no"
    if isinstance(value, Mapping):
        return "; ".join(f"{k}: {_as_text(v)}" for k, v in value.items())
    if isinstance(value, list | tuple | set | np.ndarray):
        return "; ".join(_as_text(v) for v in value) if len(value) else "none"
    if _is_number(value):
        return _num3(float(value))
    return str(value)


def _put(ws, row: int, col: int, value: Any, number_format: str | None = None):
    """Write one value: numbers as numbers, everything else as safe text."""
    cell = ws.cell(row=row, column=col)
    if value is None:
        return cell
    if _is_number(value):
        v = value.item() if isinstance(value, np.generic) else value
        if isinstance(v, float) and not math.isfinite(v):
            text = MISSING if math.isnan(v) else ("∞" if v > 0 else "−∞")
            return safe_text(cell, text)
        cell.value = v
        if number_format:
            cell.number_format = number_format
        return cell
    return safe_text(cell, _as_text(value))


def _formula(ws, row: int, col: int, formula: str, number_format: str | None = None):
    """Write one of our own formulas (never user text)."""
    cell = ws.cell(row=row, column=col)
    cell.value = formula
    if number_format:
        cell.number_format = number_format
    return cell


def _header(ws, row: int, headers: Iterable[str], col: int = 1) -> None:
    for j, h in enumerate(headers):
        c = safe_text(ws.cell(row=row, column=col + j), h)
        c.font = _HEADER_FONT
        c.fill = _HEADER_FILL
        c.alignment = Alignment(wrap_text=True, vertical="top")


def _title(ws, row: int, text: str, size: int = 12) -> None:
    c = safe_text(ws.cell(row=row, column=1), text)
    c.font = Font(bold=True, size=size)


def _fit_widths(ws, minimum: int = 8, maximum: int = 60, fixed=None) -> None:
    """Set column widths from the longest text in each column."""
    widths: dict[int, int] = {}
    for row in ws.iter_rows():
        for cell in row:
            if cell.value is None:
                continue
            text = str(cell.value)
            longest = max((len(t) for t in text.splitlines()), default=0)
            widths[cell.column] = max(widths.get(cell.column, 0), longest)
    for col, w in widths.items():
        letter = get_column_letter(col)
        ws.column_dimensions[letter].width = max(minimum, min(maximum, w + 2))
    for letter, w in (fixed or {}).items():
        ws.column_dimensions[letter].width = w


# ------------------------------------------------------------------ number formatting


def _num3(x: float) -> str:
    """Three significant digits without an exponent for everyday magnitudes."""
    if not math.isfinite(x):
        return "∞" if x > 0 else ("−∞" if x < 0 else MISSING)
    if x == 0:
        return "0"
    if abs(x) >= 1000 or abs(x) < 1e-3:
        return f"{x:.4g}"
    return f"{x:.3g}"


_PREFIX = {"k": 1e3, "": 1.0, "m": 1e-3, "µ": 1e-6, "n": 1e-9, "p": 1e-12}


def _eng(value: Any, unit: str, prefixes: str | tuple[str, ...] = ("",)) -> str | None:
    """Format ``value`` [unit] with the largest allowed SI prefix; None when missing."""
    if _is_missing(value) or not _is_number(value):
        return None
    v = float(value)
    if not math.isfinite(v):
        return None
    allowed = sorted(prefixes, key=lambda p: -_PREFIX[p])
    for p in allowed:
        if abs(v) >= _PREFIX[p] * 0.9995 or p == allowed[-1]:
            return f"{_num3(v / _PREFIX[p])} {p}{unit}"
    return f"{_num3(v)} {unit}"  # pragma: no cover - loop always returns


# -------------------------------------------------------------- inventory look-ups


def _table(inventory: Any, kind: str) -> pd.DataFrame | None:
    df = getattr(inventory, KIND_TABLES[kind], None)
    if df is None and isinstance(inventory, Mapping):
        df = inventory.get(KIND_TABLES[kind])
    return df if isinstance(df, pd.DataFrame) else None


def _part_row(inventory: Any, kind: str, part: str) -> dict[str, Any] | None:
    df = _table(inventory, kind)
    if df is None or df.empty or "part" not in df.columns:
        return None
    hit = df[df["part"].astype(str) == str(part)]
    if hit.empty:
        return None
    return hit.iloc[0].to_dict()


def _rds_points(inventory: Any, part: str, row: Mapping[str, Any]) -> list[tuple]:
    """(vgs [V], rds_on [Ω]) points of a MOSFET, highest gate voltage first."""
    pts: list[tuple[float, float]] = []
    df = getattr(inventory, "rds_points", None)
    if isinstance(df, pd.DataFrame) and {"part", "vgs", "rds_on"} <= set(df.columns):
        sub = df[df["part"].astype(str) == str(part)]
        for vgs, rds in zip(sub["vgs"], sub["rds_on"], strict=True):
            if not (_is_missing(vgs) or _is_missing(rds)):
                pts.append((float(vgs), float(rds)))
    if not pts:  # a table that still holds rds_on@VGS columns
        for key, val in row.items():
            k = str(key).lower().replace(" ", "")
            if k.startswith("rds_on@") and _is_number(val) and not _is_missing(val):
                try:
                    vgs = float(k.split("@", 1)[1].rstrip("v"))
                except ValueError:
                    continue
                pts.append((vgs, float(val)))
    return sorted(set(pts), reverse=True)


def _airflow_points(inventory: Any, part: str) -> list[tuple[float, float]]:
    """(airflow [m/s], rth_sa [K/W]) points of a heatsink from ``sink_airflow``."""
    df = getattr(inventory, "sink_airflow", None)
    if not isinstance(df, pd.DataFrame) or not {"part", "airflow", "rth_sa"} <= set(
        df.columns
    ):
        return []
    sub = df[df["part"].astype(str) == str(part)]
    pts = [
        (float(a), float(r))
        for a, r in zip(sub["airflow"], sub["rth_sa"], strict=True)
        if not (_is_missing(a) or _is_missing(r)) and float(a) > 0
    ]
    return sorted(set(pts))


def _text_field(row: Mapping[str, Any] | None, *names: str) -> str:
    if not row:
        return ""
    for n in names:
        v = row.get(n)
        if not _is_missing(v) and str(v).strip():
            return str(v)
    return ""


def _fits_text(value: Any) -> str:
    if _is_missing(value):
        return ""
    if isinstance(value, list | tuple | set):
        return ", ".join(str(v) for v in value)
    return str(value).replace(";", ",")


def describe_part(inventory: Any, kind: str, part: str) -> str:
    """A one-line description of a part from its key ratings in the inventory.

    For example ``"N-MOSFET 60 V 50 A, 6.5 mΩ @ 10 V, TO-220, RθJC 0.9 K/W"``.
    Missing ratings are left out; a part absent from the inventory says so.
    """
    row = _part_row(inventory, kind, part)
    if row is None:
        return f"{kind} not found in the inventory"
    bits: list[str] = []
    if kind == "switch":
        dev = str(row.get("kind", "")).lower()
        head = " ".join(
            x
            for x in (
                _KIND_LABELS.get(dev, dev.upper() or "Switch"),
                _eng(row.get("v_rating"), "V", ("k", "")),
                _eng(row.get("i_rating"), "A", ("", "m")),
            )
            if x
        )
        bits.append(head)
        if dev == "igbt":
            vce = _eng(row.get("vce_sat"), "V")
            at = _eng(row.get("vce_sat_i"), "A")
            if vce:
                bits.append(f"Vce(sat) {vce}" + (f" @ {at}" if at else ""))
        else:
            for vgs, rds in _rds_points(inventory, part, row):
                bits.append(f"{_eng(rds, 'Ω', ('', 'm', 'µ'))} @ {_eng(vgs, 'V')}")
        if _text_field(row, "package"):
            bits.append(_text_field(row, "package"))
        if _eng(row.get("rth_jc"), "K/W"):
            bits.append(f"RθJC {_eng(row.get('rth_jc'), 'K/W')}")
        tab = _text_field(row, "tab")
        if tab:
            bits.append("isolated tab" if tab == "isolated" else f"tab on {tab}")
    elif kind == "heatsink":
        rsa = _eng(row.get("rth_sa"), "K/W")
        rise = _eng(row.get("rth_sa_rise"), "K")
        if rsa:
            bits.append(
                f"Heatsink RθSA {rsa} natural convection"
                + (f" at {rise}" if rise else "")
            )
        else:
            bits.append("Heatsink (RθSA estimated from its geometry)")
        for airflow, rsa_air in _airflow_points(inventory, part):
            bits.append(f"{_eng(rsa_air, 'K/W')} at {_num3(airflow)} m/s")
        pos = row.get("positions")
        if _is_number(pos) and not _is_missing(pos):
            n = int(pos)
            bits.append(f"{n} position" + ("s" if n != 1 else ""))
        if _fits_text(row.get("fits")):
            bits.append(f"fits {_fits_text(row.get('fits'))}")
    elif kind == "interface":
        head = "Thermal interface"
        rcs = _eng(row.get("rth_cs"), "K/W")
        if rcs:
            head += f" RθCS {rcs}"
        bits.append(head)
        ins = row.get("insulating")
        if isinstance(ins, str):
            ins = ins.strip().lower() in ("yes", "y", "true", "1")
        if not _is_missing(ins):
            bits.append("insulating" if bool(ins) else "not insulating")
        iso = _eng(row.get("isolation_voltage"), "V", ("k", ""))
        if iso:
            bits.append(f"isolation {iso}")
        if _fits_text(row.get("fits")):
            bits.append(f"fits {_fits_text(row.get('fits'))}")
    elif kind == "diode":
        head = " ".join(
            x
            for x in (
                "Diode",
                _eng(row.get("v_rrm"), "V", ("k", "")),
                _eng(row.get("i_avg"), "A", ("", "m")),
            )
            if x
        )
        bits.append(head)
        if _eng(row.get("vf"), "V"):
            bits.append(f"Vf {_eng(row.get('vf'), 'V')}")
        if _text_field(row, "package"):
            bits.append(_text_field(row, "package"))
    elif kind == "driver":
        dk = _text_field(row, "kind")
        bits.append("Gate driver" + (f" {_DRIVER_LABELS.get(dk, dk)}" if dk else ""))
        if _eng(row.get("v_out"), "V"):
            bits.append(f"{_eng(row.get('v_out'), 'V')} out")
        if _eng(row.get("i_peak"), "A", ("", "m")):
            bits.append(f"{_eng(row.get('i_peak'), 'A', ('', 'm'))} peak")
        if _eng(row.get("v_supply_max"), "V"):
            bits.append(f"supply up to {_eng(row.get('v_supply_max'), 'V')}")
    return ", ".join(b for b in bits if b)


# ------------------------------------------------------------------- bill of materials


@dataclass
class _Line:
    kind: str
    part: str
    quantity: int = 0
    channels: list[str] = field(default_factory=list)
    counted_as: list[str] = field(default_factory=list)

    def add(self, qty: int, channel_names: Iterable[str], how: str) -> None:
        self.quantity += int(qty)
        for name in channel_names:
            if name not in self.channels:
                self.channels.append(name)
        self.counted_as.append(how)


def _solution(result: SelectionResult, solution_index: int) -> Solution:
    n = len(result.solutions)
    if n == 0:
        raise SelectorError(
            f"there is no selection to write (status '{result.status}'): "
            "every channel needs a feasible choice first"
        )
    if not -n <= solution_index < n:
        raise SelectorError(
            f"solution number {solution_index + 1} does not exist; "
            f"the result has {n} solution(s)"
        )
    return result.solutions[solution_index]


def _design_channel(design: Design | None, name: str) -> Channel | None:
    if design is None:
        return None
    try:
        return design.channel(name)
    except KeyError:
        return None


def _group_of(design: Design | None, pick: ChannelPick) -> str:
    ch = _design_channel(design, pick.channel)
    if ch is not None:
        return ch.heatsink_group or ""
    inputs = pick.details.get("inputs") if isinstance(pick.details, dict) else None
    if isinstance(inputs, Mapping):
        return str(inputs.get("heatsink_group") or "")
    return ""


def _count_lines(solution: Solution, design: Design | None) -> list[_Line]:
    """Quantities per (kind, part), following the counting rules of the contract.

    Switches and interfaces: copies × devices in parallel (one interface per device).
    Heatsinks: one per channel copy, or one per heatsink group. Diodes and drivers: one
    per channel copy.
    """
    lines: dict[tuple[str, str], _Line] = {}

    def line(kind: str, part: str) -> _Line:
        key = (kind, str(part))
        if key not in lines:
            lines[key] = _Line(kind, str(part))
        return lines[key]

    group_sinks: dict[str, str] = {
        str(g): str(s) for g, s in (solution.group_sinks or {}).items() if s
    }
    group_members: dict[str, list[str]] = {}
    for pick in solution.channels:
        q = int(pick.quantity)
        n = int(pick.switch_count)
        name = pick.channel
        line("switch", pick.switch).add(q * n, [name], f"{name}: {q} × {n}")
        if pick.interface:
            line("interface", pick.interface).add(
                q * n, [name], f"{name}: {q} × {n} (one per device)"
            )
        group = _group_of(design, pick)
        if group and (group in group_sinks or pick.heatsink):
            group_members.setdefault(group, []).append(name)
            if group not in group_sinks and pick.heatsink:
                group_sinks[group] = str(pick.heatsink)
        elif pick.heatsink:
            line("heatsink", pick.heatsink).add(q, [name], f"{name}: {q} × 1")
        if pick.diode:
            line("diode", pick.diode).add(q, [name], f"{name}: {q} × 1")
        if pick.driver:
            line("driver", pick.driver).add(q, [name], f"{name}: {q} × 1")
    for group, sink in group_sinks.items():
        members = group_members.get(group, [])
        line("heatsink", sink).add(
            1, members, f"group {group} ({', '.join(members)}): 1 shared"
        )
    order = {k: i for i, k in enumerate(BOM_KINDS)}
    return sorted(lines.values(), key=lambda ln: (order[ln.kind], ln.part))


def bom_lines(
    result: SelectionResult, inventory: Any, design: Design, solution_index: int = 0
) -> pd.DataFrame:
    """The bill of materials of one solution: one line per distinct part.

    Parameters
    ----------
    result : the selection (``selector.pipeline.select``).
    inventory : the inventory the selection was made from (tables ``switches``,
        ``heatsinks``, ``interfaces``, ``diodes``, ``drivers``, ``rds_points``).
    design : the design (for channel copies and heatsink groups).
    solution_index : 0 for the best solution, 1 for the next, ...

    Returns
    -------
    DataFrame with the columns of :data:`BOM_COLUMNS`: ``quantity`` [pcs] is the sum over
    channels of copies × devices for switches and interfaces (one interface per device),
    one heatsink per channel copy or per heatsink group, one diode and one driver per
    copy; ``unit_price`` and ``extended_price`` (= quantity × unit price) are in the
    inventory's currency (NaN when the inventory has no price for the part).
    """
    solution = _solution(result, solution_index)
    rows = []
    for i, ln in enumerate(_count_lines(solution, design), start=1):
        row = _part_row(inventory, ln.kind, ln.part)
        price = row.get("price") if row else None
        unit = float(price) if _is_number(price) and not _is_missing(price) else np.nan
        rows.append(
            {
                "line": i,
                "quantity": ln.quantity,
                "part": ln.part,
                "kind": ln.kind,
                "manufacturer": _text_field(row, "manufacturer"),
                "mpn": _text_field(row, "mpn"),
                "description": describe_part(inventory, ln.kind, ln.part),
                "unit_price": unit,
                "extended_price": ln.quantity * unit,
                "channels": ", ".join(ln.channels),
                "counted_as": "; ".join(ln.counted_as),
                "notes": _text_field(row, "notes"),
            }
        )
    df = pd.DataFrame(rows, columns=list(BOM_COLUMNS))
    df["line"] = df["line"].astype("int64")
    df["quantity"] = df["quantity"].astype("int64")
    df["unit_price"] = df["unit_price"].astype("float64")
    df["extended_price"] = df["extended_price"].astype("float64")
    return df


def bom_csv_text(
    result: SelectionResult, inventory: Any, design: Design, solution_index: int = 0
) -> str:
    """The bill-of-materials lines as CSV text (UTF-8, comma separated, one header row).

    Text cells that begin with ``=``, ``+``, ``-``, ``@``, a tab or a carriage return get a
    leading apostrophe (:func:`neutralise_csv_cell`); every text cell is quoted.
    """
    df = bom_lines(result, inventory, design, solution_index)
    out = io.StringIO()
    writer = csv.writer(out, quoting=csv.QUOTE_NONNUMERIC, lineterminator="\n")
    writer.writerow([BOM_HEADERS[c] for c in BOM_COLUMNS])
    for rec in df.itertuples(index=False):
        writer.writerow([neutralise_csv_cell(v) for v in rec])
    return out.getvalue()


# ----------------------------------------------------------------- calculation table

_EXTRA_LABELS = {
    # chain
    "sink_rise_k": ("Heatsink rise above the highest ambient", "K"),
    "devices_on_sink": ("Devices on this heatsink", "pcs"),
    "tj_steady_c": ("Junction temperature, steady state", "°C"),
    "tj_peak_c": ("Junction temperature at the end of the start-up peak", "°C"),
    # losses
    "at_tj_c": ("Losses evaluated at junction temperature", "°C"),
    "p_dev_at_limit": ("Loss per device if the junction were at its limit", "W"),
    # drive
    "topology": ("Drive topology", ""),
    "needs": ("What the drive needs", ""),
    "notes": ("Drive notes", ""),
    "driver": ("Gate driver", ""),
    "side": ("Switch side", ""),
    "gate_v": ("Gate voltage applied", "V"),
    # other details
    "group": ("Heatsink group", ""),
    "mount": ("Mounting", ""),
    "tab_node": ("Circuit node on the tab", ""),
    "insulating": ("Insulating interface", ""),
}

_DETAIL_SECTIONS = (
    "inputs",
    "chain",
    "losses",
    "drive",
    "checks",
    "assumed",
    "tj_curve",
    "transient",
)

_CHAIN_TABLES = {
    "switch": "switches",
    "interface": "interfaces",
    "heatsink": "heatsinks",
}


def _unit_for(key: str) -> str:
    k = key.lower()
    for suffix, unit in _UNIT_SUFFIXES:
        if k.endswith(suffix):
            return unit
    if k.startswith("rth") or k.startswith("r_th"):
        return "K/W"
    if k.startswith("p_"):
        return "W"
    if k.startswith("tj") or k.startswith("t_"):
        return "°C"
    return ""


def _label(key: str, *tables: Mapping[str, tuple]) -> tuple[str, str]:
    """(readable label, unit) of a details key; the key itself when unknown."""
    for t in tables:
        if key in t:
            return t[key][0], t[key][1]
    return key, _unit_for(key)


def _as_list(value: Any) -> list:
    if value is None:
        return []
    if isinstance(value, list | tuple):
        return list(value)
    return [value]


def _as_map(value: Any) -> Mapping[str, Any]:
    return value if isinstance(value, Mapping) else {}


def _assumed_set(inventory: Any, pick: ChannelPick) -> dict[tuple[str, str, str], str]:
    """(table, part, column) -> reason, for values taken from defaults.

    The table is "" where the source does not name it; :func:`_assumed_reason` tries
    both.
    """
    out: dict[tuple[str, str, str], str] = {}
    df = getattr(inventory, "assumed", None)
    if isinstance(df, pd.DataFrame) and {"part", "column"} <= set(df.columns):
        for rec in df.to_dict("records"):
            t = rec.get("table", "")
            why = rec.get("reason", "")
            key = (
                "" if _is_missing(t) else str(t),
                str(rec["part"]),
                str(rec["column"]),
            )
            out[key] = "" if _is_missing(why) else str(why)
    for a in _as_list(pick.details.get("assumed")):
        if isinstance(a, Mapping):
            t = str(a.get("table", "") or "")
            key = (t, str(a.get("part", "")), str(a.get("column", "")))
            out[key] = str(a.get("reason", "") or "")
    return out


def _assumed_reason(assumed, table: str, part: str, column: str) -> str | None:
    for key in ((table, part, column), ("", part, column)):
        if key in assumed:
            return assumed[key] or "default value"
    return None


class _CalcRows:
    """Collects the rows of the calculation table."""

    def __init__(self) -> None:
        self.rows: list[dict[str, Any]] = []

    def add(self, channel, section, item, value, unit="", key="", source=None, **kw):
        row = dict.fromkeys(CALC_COLUMNS)
        row.update(
            channel=channel,
            section=section,
            item=item,
            value=value,
            unit=unit,
            key=key,
            source=source,
        )
        row.update(kw)
        self.rows.append(row)


def _calc_inputs(out: _CalcRows, name: str, ch: Channel | None, details) -> None:
    inputs: dict[str, Any] = {}
    if ch is not None:
        inputs.update({f.name: getattr(ch, f.name) for f in fields(ch)})
    for k, v in _as_map(details.get("inputs")).items():
        inputs.setdefault(k, v)
    inputs.pop("name", None)
    if not inputs:
        out.add(name, "Inputs", "Channel inputs", MISSING, key="inputs")
    for k, v in inputs.items():
        label, unit = _label(k, _INPUT_LABELS)
        out.add(name, "Inputs", label, v, unit, f"inputs.{k}", "design")


def _calc_parts(out: _CalcRows, pick: ChannelPick, solution, group: str) -> None:
    name = pick.channel
    for key, label, value, unit in (
        ("switch", "Switch", pick.switch, ""),
        ("switch_count", "Switches in parallel per copy", pick.switch_count, "pcs"),
        ("quantity", "Copies of the channel", pick.quantity, "pcs"),
        ("heatsink", "Heatsink", pick.heatsink or "none", ""),
        (
            "interface",
            "Thermal interface (one per device)",
            pick.interface or "none",
            "",
        ),
        ("diode", "Freewheel diode", pick.diode or "none", ""),
        ("driver", "Gate driver", pick.driver or "none", ""),
        ("cost", "Cost of the channel's own parts (all copies)", pick.cost, "currency"),
    ):
        out.add(name, "Parts", label, value, unit, f"parts.{key}", "selection")
    if group:
        sink = (solution.group_sinks or {}).get(group, pick.heatsink) or "none"
        label = "Heatsink group (one shared sink)"
        out.add(
            name,
            "Parts",
            label,
            f"{group}: {sink}",
            "",
            "parts.heatsink_group",
            "design",
        )


def _calc_losses(out: _CalcRows, pick: ChannelPick, details) -> None:
    name, section = pick.channel, "Losses per device"
    loss = pick.loss.to_dict()
    for k in ("conduction", "switching", "coss", "avalanche", "total"):
        label, unit = _LOSS_LABELS[k]
        out.add(name, section, label, loss[k], unit, f"loss.{k}", "computed")
    extra = dict(_as_map(details.get("losses")))
    gate = extra.pop("p_gate", None)
    if gate is None or _is_missing(gate):
        gate = loss["gate_drive"]
    label, unit = _LOSS_LABELS["gate_drive"]
    out.add(name, section, label, gate, unit, "loss.gate_drive", "computed")
    for k, v in extra.items():
        if k not in loss:
            label, unit = _label(k, _LOSS_LABELS, _EXTRA_LABELS)
            out.add(name, section, label, v, unit, f"losses.{k}", "computed")
    devices = int(pick.quantity) * int(pick.switch_count)
    out.add(
        name,
        section,
        "Heat from all switches of the channel (all copies)",
        float(loss["total"]) * devices,
        "W",
        "loss.channel_total",
        "computed",
        note=f"{devices} device(s) × total loss in the die",
    )


def _calc_thermal(out, pick: ChannelPick, details, cond, assumed) -> None:
    name, section = pick.channel, "Thermal"
    if cond is not None:
        out.add(
            name, section, "Ambient, highest", cond.ambient_max, "°C",
            "conditions.ambient_max", "design",
        )  # fmt: skip
    chain = _as_map(details.get("chain"))
    owners = {
        "switch": pick.switch,
        "interface": pick.interface,
        "heatsink": pick.heatsink,
    }
    for k, (label, unit, owner_kind) in _CHAIN_LABELS.items():
        value = chain.get(k, MISSING)
        value = "not used" if value is None else value
        owner = owners.get(owner_kind) if owner_kind else None
        source = "inventory" if owner and k != "rth_sa" else "computed"
        note = None
        if owner:
            why = _assumed_reason(assumed, _CHAIN_TABLES[owner_kind], str(owner), k)
            if why is not None:
                source, note = "assumed", why
        if value is MISSING:
            source = None
        out.add(name, section, label, value, unit, f"chain.{k}", source, note=note)
    for k, v in chain.items():
        if k not in _CHAIN_LABELS:
            label, unit = _label(k, _EXTRA_LABELS)
            out.add(name, section, label, v, unit, f"chain.{k}", "computed")
    tj = pick.tj_at_ambient_max
    finite = _is_number(tj) and math.isfinite(float(tj))
    over = not (finite and float(tj) <= float(pick.tj_limit))
    out.add(
        name,
        section,
        "Junction temperature at the highest ambient",
        tj if finite else "thermal runaway",
        "°C",
        "tj_at_ambient_max",
        "computed",
        limit=pick.tj_limit,
        margin=pick.margin,
        result="over the limit" if over else "ok",
    )
    rows = (
        ("Junction limit (tj_max − junction margin)", pick.tj_limit, "°C", "tj_limit"),
        ("Margin below the limit", pick.margin, "K", "margin"),
        (
            "Heatsink temperature at the highest ambient",
            pick.sink_temperature
            if pick.sink_temperature is not None
            else "no heatsink",
            "°C",
            "sink_temperature",
        ),
    )
    for label, value, unit, key in rows:
        out.add(name, section, label, value, unit, key, "computed")


def _calc_drive_and_checks(out: _CalcRows, name: str, details) -> None:
    drive = _as_map(details.get("drive"))
    if not drive:
        out.add(name, "Drive", "Drive topology and needs", MISSING, key="drive")
    for k, v in drive.items():
        label, unit = _label(k, _EXTRA_LABELS)
        if v is None or (isinstance(v, list | tuple) and not v):
            v = "none"
        out.add(name, "Drive", label, v, unit, f"drive.{k}", "computed")

    checks = _as_list(details.get("checks"))
    if not checks:
        out.add(name, "Checks", "Voltage and current checks", MISSING, key="checks")
    for i, c in enumerate(checks):
        c = _as_map(c)
        ok = c.get("ok")
        out.add(
            name,
            "Checks",
            c.get("rule", MISSING),
            c.get("value", MISSING),
            c.get("unit", "") or "",
            f"checks[{i}]",
            "computed",
            limit=c.get("limit", MISSING),
            margin=c.get("margin", MISSING),
            result=MISSING if ok is None else ("ok" if ok else "not met"),
        )


def _calc_assumed_and_notes(out: _CalcRows, pick: ChannelPick, details) -> None:
    name = pick.channel
    listed = [a for a in _as_list(details.get("assumed")) if isinstance(a, Mapping)]
    if not listed:
        label = "Values taken from defaults"
        out.add(
            name, "Assumed values", label, "none recorded", "", "assumed", "assumed"
        )
    for i, a in enumerate(listed):
        column = str(a.get("column", MISSING))
        out.add(
            name,
            "Assumed values",
            f"{a.get('part', MISSING)}: {column}",
            a.get("value", MISSING),
            _unit_for(column),
            f"assumed[{i}]",
            "assumed",
            note=a.get("reason"),
        )
    # anything else the engine recorded (mounting, tab node, ...)
    for k, v in details.items():
        if k not in _DETAIL_SECTIONS:
            label, unit = _label(k, _EXTRA_LABELS)
            v = "none" if v is None else v
            out.add(name, "Mounting and other details", label, v, unit, k, "computed")
    for i, text in enumerate(pick.notes or []):
        out.add(name, "Notes", "Note", text, "", f"notes[{i}]", "computed")


def calculation_table(
    result: SelectionResult, inventory: Any, design: Design, solution_index: int = 0
) -> pd.DataFrame:
    """The calculation behind one solution, one row per quantity (long format).

    Columns (:data:`CALC_COLUMNS`): ``channel``, ``section`` (Conditions, Inputs, Parts,
    Losses per device, Thermal, Drive, Checks, Assumed values, Mounting and other
    details, Notes), ``item`` (a readable name), ``value`` (number or text), ``unit``,
    ``limit`` and ``margin`` (for the junction temperature and the checks), ``result``
    ("ok" / "not met" / "over the limit"), ``source`` ("design", "inventory",
    "assumed", "computed", "selection"), ``note`` and ``key`` (where the value came
    from, e.g. ``loss.conduction``, ``chain.rth_jc``, ``tj_at_ambient_max``,
    ``checks[0]``). Values are those of the :class:`~selector.models.ChannelPick` and
    its ``details``; a missing detail shows as "—".
    """
    solution = _solution(result, solution_index)
    out = _CalcRows()
    cond = design.conditions if design is not None else None
    if cond is not None:
        for f in fields(cond):
            label, unit = _label(f.name, _CONDITION_LABELS)
            value = getattr(cond, f.name)
            out.add(
                ALL_CHANNELS,
                "Conditions",
                label,
                value,
                unit,
                f"conditions.{f.name}",
                "design",
            )
    for pick in solution.channels:
        details = pick.details if isinstance(pick.details, dict) else {}
        _calc_inputs(out, pick.channel, _design_channel(design, pick.channel), details)
        _calc_parts(out, pick, solution, _group_of(design, pick))
        _calc_losses(out, pick, details)
        _calc_thermal(out, pick, details, cond, _assumed_set(inventory, pick))
        _calc_drive_and_checks(out, pick.channel, details)
        _calc_assumed_and_notes(out, pick, details)
    return pd.DataFrame(out.rows, columns=list(CALC_COLUMNS))


# --------------------------------------------------------------------- alternatives

_PICK_FIELDS = {
    "switch": "switch",
    "switch_count": "devices in parallel",
    "heatsink": "heatsink",
    "interface": "interface",
    "diode": "diode",
    "driver": "driver",
}


def differences(best: Solution, other: Solution) -> list[str]:
    """What ``other`` chooses differently from ``best``, one sentence per change."""
    out: list[str] = []
    for p in other.channels:
        try:
            b = best.pick(p.channel)
        except KeyError:
            out.append(f"{p.channel}: not in the best solution")
            continue
        for f, label in _PICK_FIELDS.items():
            bv, ov = getattr(b, f), getattr(p, f)
            if bv != ov:
                out.append(f"{p.channel}: {label} {bv or 'none'} → {ov or 'none'}")
    for g, s in (other.group_sinks or {}).items():
        bs = (best.group_sinks or {}).get(g)
        if bs != s:
            out.append(f"group {g}: heatsink {bs or 'none'} → {s or 'none'}")
    return out


# ----------------------------------------------------------------------- the workbook


def _fmt_for(unit: str) -> str | None:
    return _NUMBER_FORMATS.get(unit)


def _write_bom_sheet(ws, df: pd.DataFrame, solution: Solution, result, currency: str):
    headers = [BOM_HEADERS[c] for c in BOM_COLUMNS]
    if currency:
        headers = [h.replace("[currency]", f"[{currency}]") for h in headers]
    _header(ws, 1, headers)
    col = {c: i + 1 for i, c in enumerate(BOM_COLUMNS)}
    r = 1
    for rec in df.to_dict("records"):
        r += 1
        for c in BOM_COLUMNS:
            fmt = "#,##0.00" if c in ("unit_price", "extended_price") else None
            if c in ("line", "quantity"):
                fmt = "0"
            _put(ws, r, col[c], rec[c], fmt)
        ws.cell(row=r, column=col["description"]).alignment = Alignment(wrap_text=True)
    last = r
    total = float(df["extended_price"].sum(skipna=False)) if len(df) else 0.0
    ext = get_column_letter(col["extended_price"])
    r += 1
    safe_text(ws.cell(row=r, column=col["part"]), "Total")
    safe_text(ws.cell(row=r, column=col["description"]), "sum of the extended prices")
    _formula(ws, r, col["extended_price"], f"=SUM({ext}2:{ext}{last})", "#,##0.00")
    for c in range(1, len(BOM_COLUMNS) + 1):
        ws.cell(row=r, column=c).font = _HEADER_FONT
        ws.cell(row=r, column=c).border = _TOP_BORDER
    r += 1
    safe_text(ws.cell(row=r, column=col["part"]), "Total (value)")
    safe_text(
        ws.cell(row=r, column=col["description"]),
        "the same total stored as a number, for readers that do not recalculate",
    )
    _put(ws, r, col["extended_price"], total, "#,##0.00")
    ws.cell(row=r, column=col["part"]).font = _HEADER_FONT
    r += 2
    mismatch = (
        math.isfinite(total)
        and _is_number(solution.total_cost)
        and not math.isclose(
            total, float(solution.total_cost), rel_tol=1e-9, abs_tol=1e-5
        )
    )
    lines = [
        f"Solution {solution.rank} of {len(result.solutions)}; status: {result.status}"
        + ("" if solution.proven_optimal else " (not proven the cheapest)"),
        "Estimates to verify by measurement; read the sheet "
        f"'{SHEET_CAUTIONS}' before building (hot surfaces, mains, inductive spikes, fire).",
    ]
    if not math.isfinite(total):
        lines.append(
            "Some parts have no price in the inventory; the total is incomplete."
        )
    if mismatch:
        lines.append(
            f"Check: the selection reported a total of {_num3(float(solution.total_cost))}, "
            f"which differs from the sum of these lines ({_num3(total)})."
        )
    for text in lines:
        c = safe_text(ws.cell(row=r, column=1), text)
        if text.startswith("Check") or text.startswith("Some"):
            c.fill = _WARN_FILL
        r += 1
    ws.freeze_panes = "A2"
    ws.print_title_rows = "1:1"
    if last >= 2:
        ws.auto_filter.ref = f"A1:{get_column_letter(len(BOM_COLUMNS))}{last}"
    _fit_widths(ws, fixed={get_column_letter(col["description"]): 55})


def _write_calc_sheet(ws, calc: pd.DataFrame) -> None:
    _header(ws, 1, [CALC_HEADERS[c] for c in CALC_COLUMNS])
    col = {c: i + 1 for i, c in enumerate(CALC_COLUMNS)}
    prev_channel, prev_section = None, None
    for r, rec in enumerate(calc.to_dict("records"), start=2):
        fmt = _fmt_for(rec["unit"] or "")
        for c in CALC_COLUMNS:
            v = rec[c]
            if c != "value" and (v is None or _is_missing(v)):
                continue
            if c == "unit" and v == "currency":
                v = "inventory currency"
            _put(ws, r, col[c], v, fmt if c in ("value", "limit", "margin") else None)
        if rec["channel"] != prev_channel:
            for j in range(1, len(CALC_COLUMNS) + 1):
                ws.cell(row=r, column=j).border = _TOP_BORDER
            ws.cell(row=r, column=col["channel"]).font = _HEADER_FONT
        if (rec["channel"], rec["section"]) != (prev_channel, prev_section):
            ws.cell(row=r, column=col["section"]).font = _HEADER_FONT
            ws.cell(row=r, column=col["section"]).fill = _SECTION_FILL
        if rec["source"] == "assumed":
            ws.cell(row=r, column=col["source"]).fill = _WARN_FILL
        if rec["result"] in ("not met", "over the limit"):
            ws.cell(row=r, column=col["result"]).fill = _WARN_FILL
        prev_channel, prev_section = rec["channel"], rec["section"]
    ws.freeze_panes = "D2"
    ws.print_title_rows = "1:1"
    ws.auto_filter.ref = f"A1:{get_column_letter(len(CALC_COLUMNS))}{len(calc) + 1}"
    _fit_widths(ws, fixed={"C": 46, "J": 50})


def _write_temperature_sheet(ws, solution: Solution, design: Design | None) -> None:
    heads = [
        "Channel",
        "Junction at the highest ambient [°C]",
        "Junction limit [°C]",
        "Margin [K]",
        "Heatsink [°C]",
    ]
    _header(ws, 1, heads)
    n = len(solution.channels)
    for r, p in enumerate(solution.channels, start=2):
        safe_text(ws.cell(row=r, column=1), p.channel)
        _put(ws, r, 2, p.tj_at_ambient_max, "0.0")
        _put(ws, r, 3, p.tj_limit, "0.0")
        _put(ws, r, 4, p.margin, "0.0")
        _put(
            ws,
            r,
            5,
            p.sink_temperature if p.sink_temperature is not None else "none",
            "0.0",
        )
    ws.freeze_panes = "A2"
    _fit_widths(ws, maximum=40)
    if n:
        chart = BarChart()
        chart.type = "col"
        chart.title = "Junction temperature at the highest ambient against its limit"
        chart.y_axis.title = "°C"
        chart.x_axis.title = "Channel"
        data = Reference(ws, min_col=2, max_col=3, min_row=1, max_row=n + 1)
        cats = Reference(ws, min_col=1, min_row=2, max_row=n + 1)
        chart.add_data(data, titles_from_data=True)
        chart.set_categories(cats)
        chart.height, chart.width = 8, 16
        ws.add_chart(chart, "G2")

    # Tj against ambient, and transient curves, where the engine gave them
    row0 = n + 4
    for key, title, xt in (
        (
            "tj_curve",
            "Junction temperature against ambient",
            ("ambient_c", "Ambient [°C]"),
        ),
        (
            "transient",
            "Junction temperature during the start-up peak",
            ("t_s", "Time [s]"),
        ),
    ):
        curves = []
        for p in solution.channels:
            d = _as_map((p.details or {}).get(key))
            xs, ys = _as_list(d.get(xt[0])), _as_list(d.get("tj_c"))
            if xs and len(xs) == len(ys):
                curves.append((p.channel, xs, ys))
        if not curves:
            continue
        _title(ws, row0, title, 11)
        chart = ScatterChart()
        chart.title = title
        chart.style = 13
        chart.x_axis.title = xt[1]
        chart.y_axis.title = "Junction [°C]"
        col = 1
        longest = 0
        for name, xs, ys in curves:
            _header(ws, row0 + 1, [xt[1], f"{name} [°C]"], col=col)
            for i, (x, y) in enumerate(zip(xs, ys, strict=True)):
                _put(ws, row0 + 2 + i, col, x)
                _put(ws, row0 + 2 + i, col + 1, y, "0.0")
            xref = Reference(
                ws, min_col=col, min_row=row0 + 2, max_row=row0 + 1 + len(xs)
            )
            yref = Reference(
                ws, min_col=col + 1, min_row=row0 + 1, max_row=row0 + 1 + len(xs)
            )
            series = Series(yref, xref, title_from_data=True)
            series.marker.symbol = "none"
            chart.series.append(series)
            longest = max(longest, len(xs))
            col += 2
        chart.height, chart.width = 8, 16
        ws.add_chart(chart, f"{get_column_letter(col + 1)}{row0}")
        row0 += max(longest, 16) + 4


def _write_alternatives_sheet(ws, result: SelectionResult) -> None:
    best = result.solutions[0]
    _header(
        ws,
        1,
        [
            "Rank",
            "Total cost [currency]",
            "More than the best [currency]",
            "Proven the cheapest",
            "Smallest junction margin [K]",
            "What differs from the best",
        ],
    )
    r = 1
    for s in result.solutions:
        r += 1
        _put(ws, r, 1, s.rank, "0")
        _put(ws, r, 2, s.total_cost, "#,##0.00")
        _put(ws, r, 3, float(s.total_cost) - float(best.total_cost), "#,##0.00")
        _put(ws, r, 4, "yes" if s.proven_optimal else "no")
        _put(ws, r, 5, s.min_margin, "0.0")
        if s is best:
            diff_text = "the best solution (reference)"
        else:
            diffs = list(s.differs_from_best) or differences(best, s)
            diff_text = "; ".join(diffs) if diffs else "same parts"
        c = safe_text(ws.cell(row=r, column=6), diff_text)
        c.alignment = Alignment(wrap_text=True, vertical="top")
    r += 2
    _title(ws, r, "Parts of each solution per channel", 11)
    r += 1
    heads = [
        "Rank",
        "Channel",
        "Switch",
        "In parallel [pcs]",
        "Copies [pcs]",
        "Heatsink",
        "Interface",
        "Diode",
        "Driver",
        "Junction [°C]",
        "Limit [°C]",
        "Margin [K]",
        "Channel cost [currency]",
    ]
    _header(ws, r, heads)
    for s in result.solutions:
        for p in s.channels:
            r += 1
            vals = [
                (s.rank, "0"),
                (p.channel, None),
                (p.switch, None),
                (p.switch_count, "0"),
                (p.quantity, "0"),
                (p.heatsink or "none", None),
                (p.interface or "none", None),
                (p.diode or "none", None),
                (p.driver or "none", None),
                (p.tj_at_ambient_max, "0.0"),
                (p.tj_limit, "0.0"),
                (p.margin, "0.0"),
                (p.cost, "#,##0.00"),
            ]
            for j, (v, fmt) in enumerate(vals, start=1):
                _put(ws, r, j, v, fmt)
    ws.freeze_panes = "A2"
    _fit_widths(ws, maximum=45, fixed={"F": 70})


def _flatten(value: Any, prefix: str = "") -> list[tuple[str, Any]]:
    """Nested dicts/lists/objects -> (item, value) pairs for a two-column listing."""
    if hasattr(value, "description") and hasattr(value, "values"):  # NearMiss
        out = [(prefix or "nearest miss", value.description)]
        out += _flatten(value.values, prefix or "nearest miss")
        return out
    if isinstance(value, Mapping):
        out = []
        for k, v in value.items():
            out += _flatten(v, f"{prefix}: {k}" if prefix else str(k))
        return out
    if isinstance(value, list | tuple) and any(
        isinstance(v, Mapping) or hasattr(v, "description") for v in value
    ):
        out = []
        for i, v in enumerate(value, start=1):
            out += _flatten(v, f"{prefix} {i}" if prefix else str(i))
        return out
    return [(prefix, value)]


def _write_rejections_sheet(ws, result: SelectionResult, solution: Solution) -> None:
    _title(ws, 1, "Screening funnel: candidates rejected per channel and rule")
    _header(ws, 2, ["Channel", "Rule", "Rejected (part, count) combinations"])
    r = 2
    names = [p.channel for p in solution.channels]
    for ch in list(result.rejected) + [c for c in names if c not in result.rejected]:
        funnel = _as_map(result.rejected.get(ch))
        cand = (result.candidates or {}).get(ch)
        if not funnel:
            r += 1
            safe_text(ws.cell(row=r, column=1), ch)
            safe_text(ws.cell(row=r, column=2), "none rejected")
        for rule, count in funnel.items():
            r += 1
            safe_text(ws.cell(row=r, column=1), ch)
            safe_text(ws.cell(row=r, column=2), rule)
            _put(ws, r, 3, count, "0")
        if isinstance(cand, pd.DataFrame):
            r += 1
            safe_text(ws.cell(row=r, column=1), ch)
            safe_text(ws.cell(row=r, column=2), "candidates left for the search")
            _put(ws, r, 3, len(cand), "0")
    r += 2
    _title(ws, r, "Nearest misses", 11)
    r += 1
    _header(ws, r, ["Channel", "Item", "Detail"])
    if not result.infeasible:
        r += 1
        safe_text(
            ws.cell(row=r, column=1),
            "none: every channel has a choice that meets every limit",
        )
    for ch, info in (result.infeasible or {}).items():
        for item, val in _flatten(info):
            r += 1
            safe_text(ws.cell(row=r, column=1), ch)
            safe_text(ws.cell(row=r, column=2), item)
            _put(ws, r, 3, val)
    ws.freeze_panes = "A3"
    _fit_widths(ws, maximum=70)


def _write_cautions_sheet(ws, result, solution, inventory, design, parts) -> None:
    r = 1
    _title(ws, r, "Cautions", 14)
    for text in CAUTIONS:
        r += 1
        c = safe_text(ws.cell(row=r, column=1), f"• {text}")
        c.alignment = Alignment(wrap_text=True, vertical="top")
        ws.merge_cells(start_row=r, start_column=1, end_row=r, end_column=3)
        ws.row_dimensions[r].height = 45
    r += 2
    _title(ws, r, "Methods and their published sources", 12)
    r += 1
    _header(ws, r, ["Topic", "What is computed", "Sources"])
    for topic, what, src in METHODS:
        r += 1
        for j, t in enumerate((topic, what, src), start=1):
            c = safe_text(ws.cell(row=r, column=j), t)
            c.alignment = Alignment(wrap_text=True, vertical="top")
    r += 2
    _title(ws, r, "Assumptions of the whole selection", 12)
    r += 1
    general = [
        "Datasheet maximum values are used where given; typical values are flagged.",
        "Thermal checks are made at the highest ambient; gate-threshold and breakdown "
        "checks also at the lowest.",
        "Steady state unless the channel has a peak or an on/off cycle; a short peak is "
        "checked against the pulse rating.",
        "Parallel devices are assumed to share current within the resistance spread "
        "stated in the settings; they sit on one heatsink.",
        "Heatsink resistance is the catalogue value corrected for its temperature rise "
        "and the airflow; the enclosure, orientation and dust are covered only by the "
        "design's heatsink derating.",
    ]
    for text in general:
        r += 1
        c = safe_text(ws.cell(row=r, column=1), f"• {text}")
        ws.merge_cells(start_row=r, start_column=1, end_row=r, end_column=3)
        c.alignment = Alignment(wrap_text=True, vertical="top")
    assumptions = [a for a in (result.assumptions or []) if a is not None]
    if assumptions:
        r += 2
        _title(ws, r, "Engine settings and defaults used", 11)
        keys: list[str] = []
        for a in assumptions:
            for k in a if isinstance(a, Mapping) else ["assumption"]:
                if k not in keys:
                    keys.append(str(k))
        r += 1
        _header(ws, r, keys)
        for a in assumptions:
            r += 1
            a = a if isinstance(a, Mapping) else {"assumption": a}
            for j, k in enumerate(keys, start=1):
                _put(ws, r, j, a.get(k))
    inv_assumed = getattr(inventory, "assumed", None)
    if (
        isinstance(inv_assumed, pd.DataFrame)
        and not inv_assumed.empty
        and "part" in inv_assumed
    ):
        sub = inv_assumed[inv_assumed["part"].astype(str).isin(parts)]
        r += 2
        _title(ws, r, "Inventory values assumed from defaults (chosen parts)", 11)
        r += 1
        cols = list(sub.columns)
        _header(ws, r, cols)
        if sub.empty:
            r += 1
            safe_text(ws.cell(row=r, column=1), "none for the chosen parts")
        for rec in sub.to_dict("records"):
            r += 1
            for j, k in enumerate(cols, start=1):
                _put(ws, r, j, rec[k])
    r += 2
    _title(ws, r, "About this workbook", 12)
    info = [
        ("Made by", f"selector {__version__}"),
        ("Design", (design.source if design is not None else "") or "—"),
        ("Status", result.status),
        ("Solution", f"{solution.rank} of {len(result.solutions)}"),
        ("Proven the cheapest", "yes" if solution.proven_optimal else "no"),
        ("Solver", result.solver or "—"),
    ]
    info += [("Message", m) for m in result.messages or []]
    for label, val in info:
        r += 1
        safe_text(ws.cell(row=r, column=1), label).font = _HEADER_FONT
        safe_text(ws.cell(row=r, column=2), val)
    ws.column_dimensions["A"].width = 40
    ws.column_dimensions["B"].width = 70
    ws.column_dimensions["C"].width = 70


def workbook_total(workbook: Any) -> float:
    """The bill-of-materials total stored as a number in a workbook this module wrote.

    ``workbook`` is an openpyxl Workbook, the xlsx bytes or a path. Reads the
    "Total (value)" row of the "Bill of materials" sheet (no recalculation needed).
    """
    from openpyxl import load_workbook

    wb = workbook
    if isinstance(workbook, bytes | bytearray):
        wb = load_workbook(io.BytesIO(workbook))
    elif not hasattr(workbook, "sheetnames"):
        wb = load_workbook(workbook)
    if SHEET_BOM not in wb.sheetnames:
        raise SelectorError(f"the workbook has no sheet '{SHEET_BOM}'")
    ws = wb[SHEET_BOM]
    col = {c: i for i, c in enumerate(BOM_COLUMNS)}
    for row in ws.iter_rows(min_row=2, values_only=True):
        if row[col["part"]] == "Total (value)":
            return float(row[col["extended_price"]])
    raise SelectorError(f"no total row in the sheet '{SHEET_BOM}'")


def workbook_bytes(
    result: SelectionResult, inventory: Any, design: Design, solution_index: int = 0
) -> bytes:
    """The review workbook (xlsx) of one solution, as bytes; nothing is written to disk.

    Sheets: "Bill of materials", "Calculations", "Junction temperatures" (with charts),
    "Alternatives", "Rejections", "Cautions and method". All user and inventory text is
    written with :func:`safe_text`; the only formula is the bill-of-materials total,
    which is also stored as a number in the row below it.
    """
    solution = _solution(result, solution_index)
    df = bom_lines(result, inventory, design, solution_index)
    calc = calculation_table(result, inventory, design, solution_index)
    currency = str(getattr(inventory, "currency", "") or "")

    wb = Workbook()
    ws = wb.active
    ws.title = SHEET_BOM
    _write_bom_sheet(ws, df, solution, result, currency)
    _write_calc_sheet(wb.create_sheet(SHEET_CALC), calc)
    _write_temperature_sheet(wb.create_sheet(SHEET_TEMPS), solution, design)
    _write_alternatives_sheet(wb.create_sheet(SHEET_ALT), result)
    _write_rejections_sheet(wb.create_sheet(SHEET_REJ), result, solution)
    _write_cautions_sheet(
        wb.create_sheet(SHEET_CAUTIONS),
        result,
        solution,
        inventory,
        design,
        set(df["part"].astype(str)),
    )
    wb.properties.title = "Bill of materials and calculations"
    wb.properties.creator = f"selector {__version__}"
    buf = io.BytesIO()
    wb.save(buf)
    return buf.getvalue()
