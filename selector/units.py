"""Quantity parsing and conversion at the edges of the library (pint), SI floats out.

Inside the library every value is an SI float (V, A, Ω, W, J, s, F, C, m, m/s, K/W);
temperatures are °C and temperature differences K. This module turns what people type in
spreadsheets and design files (``6.5 mΩ``, ``6,5 mOhm``, ``60V``, ``1.2 °C/W``, ``-5 °C``,
``2 kHz``) into those floats.

Number and unit are split with a regular expression and handed to pint separately, which
avoids two pint traps: a decimal comma (``1,5 mΩ`` would otherwise be read as 15 mΩ) and
offset units (``150 °C`` or ``1.2 °C/W`` as one string raise). Columns are converted
vectorised: one pint call per distinct unit in a column, not one per cell.

Numbers with a single separator followed by exactly three digits (``1.250``, ``1,250``)
are ambiguous between a decimal mark and a thousands separator. They are read by the
file's decimal convention when that is known and refused otherwise; never guessed.
"""

from __future__ import annotations

import datetime as _dt
import functools
import re
from typing import Any

import numpy as np
import pandas as pd
import pint
import pint.util

from .errors import InputError

__all__ = [
    "ureg",
    "Q_",
    "check_unit",
    "dimension_name",
    "parse_quantity_series",
    "resolve_unit",
    "si_unit_of",
    "split_number",
    "to_si",
]

#: The one unit registry of the project.
ureg = pint.UnitRegistry()
ureg.define("@alias ohm = Ohm")
ureg.define("linear_foot_per_minute = foot / minute = lfm = LFM")
Q_ = ureg.Quantity

_BLANK_TOKENS = frozenset(
    {"", "-", "–", "—", "n/a", "na", "nan", "none", "null", "#n/a", "?"}
)

# sign, number (digits with . , separators), optional exponent, the rest (unit)
_SPLIT_RE = re.compile(
    r"^\s*(?P<sign>[-+±−]?)\s*(?P<num>\d[\d.,]*\d|\d\.?|[.,]\d+)"
    r"(?:\s*[eE](?P<exp>[-+−]?\d{1,3}))?\s*(?P<unit>.*?)\s*$"
)

_UNIT_REPLACEMENTS = (
    ("℃", "°C"),
    ("℉", "°F"),
    ("º", "°"),  # ordinal indicator typed for a degree sign
    ("˚", "°"),
    ("Ω", "ohm"),
    ("Ω", "ohm"),  # the ohm sign (U+2126)
    ("−", "-"),
    ("·", "*"),
    ("²", "**2"),
    ("³", "**3"),
)
_DEG_C_RE = re.compile(
    r"^(?:°\s*c|deg\s*c|degc|celsius|degrees?\s*c(?:elsius)?)$", re.I
)
_DEG_F_RE = re.compile(r"^(?:°\s*f|deg\s*f|degf|fahrenheit)$", re.I)
_C_PER_W_RE = re.compile(r"^(?:°|deg)?\s*c\s*/\s*w$", re.I)
_TRAILING_WORDS_RE = re.compile(r"\s*\b(?:max\.?|maximum)$", re.I)

_DIMENSION_NAMES = (
    ("V", "a voltage"),
    ("A", "a current"),
    ("ohm", "a resistance"),
    ("K/W", "a thermal resistance"),
    ("K", "a temperature"),
    ("C", "a charge"),
    ("s", "a time"),
    ("F", "a capacitance"),
    ("J", "an energy"),
    ("W", "a power"),
    ("Hz", "a frequency"),
    ("H", "an inductance"),
    ("m", "a length"),
    ("m/s", "a speed"),
    ("kg", "a mass"),
    ("m**2", "an area"),
    ("", "a plain number"),
)


def _dimension_table() -> dict[Any, str]:
    return {ureg.get_dimensionality(u): name for u, name in _DIMENSION_NAMES}


_DIMENSIONS = _dimension_table()


def dimension_name(unit: str) -> str:
    """A readable name for the dimension of ``unit`` ("a voltage", "a current", ...).

    >>> dimension_name("mohm"), dimension_name("°C/W")
    ('a resistance', 'a thermal resistance')
    """
    try:
        dim = ureg.get_dimensionality(resolve_unit(unit, None))
    except Exception:  # noqa: BLE001 - any pint failure: unknown
        return "an unknown quantity"
    return _DIMENSIONS.get(dim, f"a quantity of dimension {dim}")


def _is_temperature_difference(target: str | None) -> bool:
    """Targets in K (or delta_degC) are temperature differences by convention."""
    return target in ("K", "kelvin", "delta_degC", "delta_degree_Celsius")


def resolve_unit(text: str | None, target: str | None) -> str:
    """Normalise a unit as typed into a pint unit string.

    Handles the ohm sign and ``Ohm``, ``℃``, a typed ``C/W`` (meaning °C/W), and, when the
    target is a temperature difference (``K``), reads ``°C``/``°F`` as differences.

    >>> resolve_unit("mOhm", "ohm"), resolve_unit("C/W", "K/W"), resolve_unit("°C", "K")
    ('mohm', 'delta_degC/W', 'delta_degC')
    """
    u = (text or "").strip()
    for a, b in _UNIT_REPLACEMENTS:
        u = u.replace(a, b)
    u = _TRAILING_WORDS_RE.sub("", u).strip()
    if u.lower() in ("ohm", "ohms"):
        return "ohm"
    if re.fullmatch(r"[mkMµu]?[oO]hms?", u):
        return (
            u[0].replace("u", "µ") + "ohm" if len(u) > 3 and u[0] in "mkMµu" else "ohm"
        )
    if _C_PER_W_RE.match(u) and (target in ("K/W", None)):
        return "delta_degC/W"
    if _DEG_C_RE.match(u):
        return "delta_degC" if _is_temperature_difference(target) else "degC"
    if _DEG_F_RE.match(u):
        return "delta_degF" if _is_temperature_difference(target) else "degF"
    if u in ("-", "1"):
        return ""
    return u


def check_unit(text: str, target: str) -> str | None:
    """Why ``text`` cannot be converted to ``target``, or None when it can.

    >>> check_unit("mV", "V") is None, check_unit("A", "V")
    (True, "'A' is a current, not a voltage (V)")
    """
    unit = resolve_unit(text, target)
    try:
        Q_(1.0, unit).to(target)
    except pint.errors.DimensionalityError:
        return f"'{text}' is {dimension_name(unit)}, not {dimension_name(target)} ({target or 'no unit'})"
    except Exception:  # noqa: BLE001 - pint raises several kinds on bad unit text
        return f"unknown unit '{text}'"
    return None


def si_unit_of(unit: str) -> str:
    """The unit our SI convention stores ``unit``'s dimension in (°C for temperatures).

    >>> si_unit_of("kHz"), si_unit_of("mohm"), si_unit_of("°C"), si_unit_of("mm")
    ('Hz', 'ohm', 'degC', 'm')
    """
    u = resolve_unit(unit, None)
    if u in (
        "degC",
        "degF",
        "degree_Celsius",
        "degree_Fahrenheit",
        "degR",
        "degree_Rankine",
    ):
        return "degC"
    if u in ("delta_degC", "delta_degF", "K", "kelvin"):
        return "K"
    q = Q_(1.0, u)
    dim = q.dimensionality
    for cand in (
        "V",
        "A",
        "ohm",
        "K/W",
        "C",
        "s",
        "F",
        "J",
        "W",
        "Hz",
        "H",
        "m",
        "m/s",
        "kg",
        "m**2",
        "",
    ):
        if ureg.get_dimensionality(cand) == dim:
            return cand
    return str(q.to_base_units().units)


def split_number(text: str) -> tuple[str, str, str, str] | None:
    """Split ``"−6,5e-3 mΩ"`` into (sign, number, exponent, unit); None if no number.

    >>> split_number("6,5 mOhm")
    ('', '6,5', '', 'mOhm')
    """
    m = _SPLIT_RE.match(text)
    if m is None:
        return None
    return m["sign"], m["num"], m["exp"] or "", m["unit"]


def _number_marks(nums: pd.Series) -> tuple[pd.Series, ...] | None:
    """The separator classes of number texts (see :func:`_normalise_number_strings`):
    has_dot, has_com, amb_dot, amb_com, single_dot, single_com; None without any mark.
    """
    has_dot = nums.str.contains(".", regex=False)
    has_com = nums.str.contains(",", regex=False)
    if not (has_dot.any() or has_com.any()):
        return None
    amb_dot = has_dot & ~has_com & nums.str.fullmatch(r"[1-9]\d{0,2}\.\d{3}")
    amb_com = has_com & ~has_dot & nums.str.fullmatch(r"[1-9]\d{0,2},\d{3}")
    single_dot = has_dot & ~has_com & nums.str.fullmatch(r"\d*\.\d*") & ~amb_dot
    single_com = has_com & ~has_dot & nums.str.fullmatch(r"\d*,\d*") & ~amb_com
    return has_dot, has_com, amb_dot, amb_com, single_dot, single_com


def _decide_decimal(
    decimal: str | None, ambiguous: bool, point_ev: bool, comma_ev: bool
) -> str | None:
    """The decimal mark for a column's ambiguous numbers: the file's, else the one its
    unambiguous numbers all use (``point_ev``/``comma_ev``: some use ``.``/``,``)."""
    if decimal is None and ambiguous and point_ev != comma_ev:
        return "." if point_ev else ","
    return decimal


def _normalise_number_strings(
    nums: pd.Series,
    decimal: str | None,
    *,
    infer: bool = True,
    marks: tuple[pd.Series, ...] | None | bool = False,
) -> tuple[pd.Series, pd.Series]:
    """Turn number texts with ``.``/``,`` into plain decimal-point texts.

    Returns (normalised text, reason or None). Rules: with both marks, the last one is the
    decimal mark and the other must group thousands by threes; one mark repeated groups
    thousands; a single mark before exactly three digits after 1–3 digits is ambiguous and
    decided by ``decimal`` (the file's convention) or, failing that, by the column's own
    unambiguous numbers when they all use one mark; else refused. Any other single mark is
    the decimal mark. With ``infer=False`` the texts' own numbers decide nothing:
    ``decimal`` is then already the whole column's decision. ``marks`` may bring the
    texts' :func:`_number_marks` when already known.
    """
    out = nums.copy()
    reasons = pd.Series(None, index=nums.index, dtype=object)
    if marks is False:
        marks = _number_marks(nums)
    if marks is None:
        return out, reasons
    has_dot, has_com, amb_dot, amb_com, single_dot, single_com = marks
    out[single_com] = nums[single_com].str.replace(",", ".", regex=False)
    if infer:  # else ``decimal`` is already the column's (None: undecided)
        decimal = _decide_decimal(
            decimal,
            bool(amb_dot.any() or amb_com.any()),
            bool(single_dot.any()),
            bool(single_com.any()),
        )
    # ambiguous ones, by the file's (or column's) convention
    if amb_dot.any():
        if decimal == ",":
            out[amb_dot] = nums[amb_dot].str.replace(".", "", regex=False)
        elif decimal is None:
            reasons[amb_dot] = "ambiguous"
    if amb_com.any():
        if decimal == ".":
            out[amb_com] = nums[amb_com].str.replace(",", "", regex=False)
        elif decimal == ",":
            out[amb_com] = nums[amb_com].str.replace(",", ".", regex=False)
        else:
            reasons[amb_com] = "ambiguous"
    rest = (has_dot | has_com) & ~(amb_dot | amb_com | single_dot | single_com)
    for idx, text in nums[rest].items():
        last = max(text.rfind("."), text.rfind(","))
        mark = text[last]
        other = "," if mark == "." else "."
        if mark in text[:last]:  # one mark repeated: thousands grouping
            if other in text or not re.fullmatch(
                rf"[1-9]\d{{0,2}}(?:{re.escape(mark)}\d{{3}})+", text
            ):
                reasons[idx] = "bad"
            else:
                out[idx] = text.replace(mark, "")
            continue
        head = text[:last]
        if (
            not re.fullmatch(rf"\d{{1,3}}(?:{re.escape(other)}\d{{3}})*", head)
            or last == len(text) - 1
        ):
            reasons[idx] = "bad"
            continue
        out[idx] = head.replace(other, "") + "." + text[last + 1 :]
    return out, reasons


def _is_plain_number(v: Any) -> bool:
    return isinstance(v, int | float | np.integer | np.floating) and not isinstance(
        v, bool | np.bool_
    )


def parse_quantity_series(
    values: pd.Series,
    target_unit: str,
    header_unit: str | None,
    *,
    decimal: str | None = None,
    magnitude: bool = False,
) -> tuple[np.ndarray, pd.Series]:
    """Convert a column of spreadsheet cells to SI floats.

    Parameters
    ----------
    values : the cells (numbers, strings with or without units, blanks).
    target_unit : pint unit of the result (e.g. ``"V"``, ``"ohm"``, ``"degC"``, ``"K/W"``;
        ``"K"`` means a temperature difference, so ``°C`` in a cell is read as a difference).
    header_unit : the unit of bare numbers (from the header's brackets or the column's
        default unit); ``None`` means ``target_unit``.
    decimal : the file's decimal mark (``"."``, ``","``) when known; decides numbers like
        ``1.250``. With ``None`` the column's own unambiguous numbers decide when they
        all use one mark; otherwise such numbers are refused as ambiguous.
    magnitude : take the absolute value (``±20 V`` and ``-60 V`` become 20 and 60).

    Returns
    -------
    (values, reasons) : float array in ``target_unit`` with NaN for blank or bad cells, and
    a Series holding a reason string for every bad cell (None for good and blank cells).

    Notes
    -----
    Vectorised: the number and the unit are split with one regular expression over the
    column, and pint is called once per distinct unit string.
    """
    vals, why, _ = _parse_quantity_series(
        values, target_unit, header_unit, decimal=decimal, magnitude=magnitude
    )
    if why is None:
        why = pd.Series(
            np.full(len(vals), None, dtype=object), index=values.index, dtype=object
        )
    return vals, why


@functools.lru_cache(maxsize=1024)
def _parsed_unit(unit: str) -> Any:
    """``unit`` parsed as :class:`pint.Quantity` parses its unit text (cached)."""
    return ureg.parse_units(unit)


@functools.lru_cache(maxsize=256)
def _parsed_target(unit: str) -> Any:
    """``unit`` parsed as :meth:`pint.Quantity.to` parses its target (cached)."""
    return pint.util.to_units_container(unit, ureg)


def _parse_quantity_series(
    values: pd.Series,
    target_unit: str,
    header_unit: str | None,
    *,
    decimal: str | None = None,
    magnitude: bool = False,
) -> tuple[np.ndarray, pd.Series | None, bool]:
    """The work of :func:`parse_quantity_series`; also says if any cell was bad.

    The reasons are None when the column cannot hold a bad cell (a numeric column in a
    unit of the right dimension), which spares a Series of blanks per column.
    """
    n = len(values)
    bare_unit = (
        resolve_unit(header_unit, target_unit)
        if header_unit is not None
        else target_unit
    )

    def convert(arr: np.ndarray, unit: str) -> tuple[np.ndarray | None, str | None]:
        try:
            # as Q_(arr, unit).to(target_unit).magnitude, with the units parsed once
            res = np.asarray(
                ureg.convert(arr, _parsed_unit(unit), _parsed_target(target_unit)),
                dtype=float,
            )
        except pint.errors.DimensionalityError:
            return None, (
                f"is {dimension_name(unit)}, this column needs "
                f"{dimension_name(target_unit)} ({target_unit or 'no unit'})"
            )
        except Exception:  # noqa: BLE001 - pint raises several kinds on odd unit text
            return None, "unknown unit"
        return res, None

    def finish() -> tuple[np.ndarray, pd.Series | None, bool]:
        res = np.abs(out, out=out) if magnitude else out  # ``out`` is our own array
        if why_out is None:
            return res, None, False
        any_bad = bad_seen[0] and bool((why_out != None).any())  # noqa: E711 - elementwise
        return res, pd.Series(why_out, index=values.index, dtype=object), any_bad

    bad_seen = [True]  # cleared below on the paths that cannot produce a reason

    if n == 0:
        out = np.full(n, np.nan)
        why_out = np.full(n, None, dtype=object)
        return finish()

    if pd.api.types.is_numeric_dtype(values.dtype) and not pd.api.types.is_bool_dtype(
        values.dtype
    ):
        arr = values.to_numpy(dtype=float, na_value=np.nan)
        conv, why = convert(arr, bare_unit)
        if conv is None:
            out = np.full(n, np.nan)
            why_out = np.full(n, None, dtype=object)
            why_out[~np.isnan(arr)] = f"a bare number in '{header_unit}' {why}"
        else:
            # a fresh array of our own (never the caller's cells)
            out = conv.copy() if np.may_share_memory(conv, arr) else conv
            why_out = None
        return finish()

    out = np.full(n, np.nan)
    why_out = np.full(n, None, dtype=object)
    obj = values.to_numpy(dtype=object)
    dtype = values.dtype
    if isinstance(dtype, pd.StringDtype) and dtype.na_value is np.nan:
        # a text column: every cell is text or NaN (NaN counts as a number, as below)
        is_num = values.isna().to_numpy(dtype=bool)
        is_str = ~is_num
    else:
        is_str = np.fromiter((isinstance(v, str) for v in obj), dtype=bool, count=n)
        is_num = np.fromiter((_is_plain_number(v) for v in obj), dtype=bool, count=n)
    # numbers stored as numbers (spreadsheet cells): bare numbers in the header unit
    if is_num.any():
        arr = obj[is_num].astype(float)
        conv, why = convert(arr, bare_unit)
        if conv is None:
            pos = np.flatnonzero(is_num)[~np.isnan(arr)]
            why_out[pos] = f"a bare number in '{header_unit}' {why}"
        else:
            out[is_num] = conv
    other = ~is_str & ~is_num & ~pd.isna(obj)
    for pos in np.flatnonzero(other):
        v = obj[pos]
        if isinstance(v, _dt.date | _dt.datetime | _dt.time | _dt.timedelta):
            why_out[pos] = (
                "a date or time, not a number (the spreadsheet may have turned a number "
                "such as 4.5 into a date; format the cell as a number)"
            )
        elif isinstance(v, bool | np.bool_):
            why_out[pos] = "a yes/no value, not a number"
        else:
            why_out[pos] = "not a number"
    if not is_str.any():
        return finish()

    # cells that are only digits with at most one point take a short way (below)
    plain = _plain_decimal_cells(values)
    if plain is not None:
        plain &= is_str
    slow = is_str if plain is None else is_str & ~plain
    str_pos = np.flatnonzero(slow)
    text = pd.Series(obj[slow], dtype=object).str.strip()
    keep = ~text.str.lower().isin(_BLANK_TOKENS).to_numpy(dtype=bool)
    str_pos = str_pos[keep]
    text = text[keep].reset_index(drop=True)
    parts = text.str.extract(_SPLIT_RE) if len(text) else None
    if parts is not None:
        no_num = parts["num"].isna().to_numpy(dtype=bool)
        for i in np.flatnonzero(no_num):
            cell = text.iloc[i]
            if cell.startswith("#") and cell.endswith(("!", "?", "A")):
                why_out[str_pos[i]] = "a spreadsheet error value, not a number"
            else:
                why_out[str_pos[i]] = "not a number"
        has = ~no_num
        parts = parts[has].reset_index(drop=True)
        text = text[has].reset_index(drop=True)
        str_pos = str_pos[has]
        if len(parts) == 0:
            parts = None
    fast_pos = np.flatnonzero(plain) if plain is not None else np.zeros(0, np.int64)
    if parts is None and not len(fast_pos):
        return finish()
    # the decimal mark of the column's ambiguous numbers, from all its numbers
    ambiguous = point_ev = comma_ev = False
    marks = None
    if parts is not None:
        marks = _number_marks(parts["num"].astype(object))
        if marks is not None:
            _hd, _hc, amb_dot, amb_com, single_dot, single_com = marks
            ambiguous = bool(amb_dot.any() or amb_com.any())
            point_ev = bool(single_dot.any())
            comma_ev = bool(single_com.any())
    if len(fast_pos):
        fast_num, fast_amb, fast_dot = _plain_decimal_texts(values, fast_pos)
        ambiguous = ambiguous or bool(fast_amb.any())
        point_ev = point_ev or bool((fast_dot & ~fast_amb).any())
    decimal = _decide_decimal(decimal, ambiguous, point_ev, comma_ev)

    def ambiguous_msg(num_text: str) -> str:
        return (
            f"ambiguous number: is the separator in '{num_text}' a thousands "
            "separator or a decimal mark? Write it without grouping (e.g. 1250 or 1.25)"
        )

    cells: list[tuple[np.ndarray, np.ndarray]] = []  # (positions, number texts)
    if parts is not None:
        norm, why = _normalise_number_strings(
            parts["num"].astype(object), decimal, infer=False, marks=marks
        )
        bad = why.notna().to_numpy(dtype=bool)
        for i in np.flatnonzero(bad):
            if why.iloc[i] == "ambiguous":
                why_out[str_pos[i]] = ambiguous_msg(parts["num"].iloc[i])
            else:
                why_out[str_pos[i]] = "not a number"
        ok = ~bad
        parts = parts[ok].reset_index(drop=True)
        str_pos = str_pos[ok]
        cells.append((str_pos, norm[ok].to_numpy(dtype=object)))
    else:
        str_pos = np.zeros(0, dtype=np.int64)
    if len(fast_pos):
        # as the general way treats them: no sign, exponent or unit; one point
        fast_norm = fast_num
        if fast_amb.any():
            if decimal == ",":
                fast_norm = fast_num.copy()
                fast_norm[fast_amb] = [t.replace(".", "") for t in fast_num[fast_amb]]
            elif decimal is None:
                for i in np.flatnonzero(fast_amb):
                    why_out[fast_pos[i]] = ambiguous_msg(fast_num[i])
                fast_pos = fast_pos[~fast_amb]
                fast_norm = fast_num[~fast_amb]
        cells.append((fast_pos, fast_norm))
    # the number texts of the whole column read at once, in its order (as before)
    all_pos = np.concatenate([c[0] for c in cells])
    order = np.argsort(all_pos, kind="stable")
    all_num = pd.Series(np.concatenate([c[1] for c in cells])[order], dtype=object)
    num_all = np.empty(n)
    num_all[all_pos[order]] = pd.to_numeric(all_num, errors="coerce").to_numpy(
        dtype=float
    )
    num = num_all[str_pos]
    if len(str_pos):
        exp_txt = (
            parts["exp"].fillna("0").astype(str).str.replace("−", "-", regex=False)
        )
        exp = pd.to_numeric(exp_txt, errors="coerce").to_numpy(dtype=float)
        num = num * np.power(10.0, exp)
        sign = parts["sign"].fillna("").to_numpy(dtype=object)
        num = np.where((sign == "-") | (sign == "−"), -num, num)
        units = parts["unit"].fillna("").astype(object).to_numpy()
    else:
        units = np.zeros(0, dtype=object)
    if len(fast_pos):
        # bare numbers (exponent 0 and no sign leave them as read): unit ""
        num = np.concatenate([num, num_all[fast_pos]])
        units = np.concatenate([units, np.full(len(fast_pos), "", dtype=object)])
        str_pos = np.concatenate([str_pos, fast_pos])
    codes, uniques = pd.factorize(units)
    for code, unit_text in enumerate(uniques):
        sel = np.flatnonzero(codes == code)
        unit = bare_unit if unit_text == "" else resolve_unit(unit_text, target_unit)
        conv, why2 = convert(num[sel], unit)
        if conv is not None:
            out[str_pos[sel]] = conv
            continue
        if why2 == "unknown unit":
            msg = f"unknown unit '{unit_text}'"
        elif unit_text == "":
            msg = f"a bare number in '{header_unit}' {why2}"
        else:
            msg = f"'{unit_text}' {why2}"
        why_out[str_pos[sel]] = msg
    return finish()


_PLAIN_DECIMAL = r"^[0-9]+(?:\.[0-9]+)?$"
_AMBIGUOUS_POINT = r"^[1-9][0-9]{0,2}\.[0-9]{3}$"


def _plain_decimal_cells(values: pd.Series) -> np.ndarray | None:
    """Cells of a pyarrow-backed text column that are only ASCII digits with at most
    one point inside (``12``, ``4.75``); None for other columns.

    Such a cell has no sign, exponent or unit and splits into itself as the number,
    whichever regular-expression engine reads it.
    """
    dtype = values.dtype
    if not (isinstance(dtype, pd.StringDtype) and dtype.storage == "pyarrow"):
        return None
    try:
        import pyarrow as pa
        import pyarrow.compute as pc

        arr = pa.array(values.array)
        hit = pc.fill_null(pc.match_substring_regex(arr, _PLAIN_DECIMAL), False)
        return np.asarray(hit.to_numpy(zero_copy_only=False), dtype=bool).copy()
    except Exception:  # noqa: BLE001 - the general way handles every cell
        return None


def _plain_decimal_texts(
    values: pd.Series, pos: np.ndarray
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """The texts of the plain-decimal cells at ``pos`` (object array), which of them
    are ambiguous (``1.250``: 1–3 digits, a point, three digits) and which have a
    point."""
    import pyarrow as pa
    import pyarrow.compute as pc

    arr = pa.array(values.array).take(pa.array(pos))
    amb = pc.match_substring_regex(arr, _AMBIGUOUS_POINT)
    dot = pc.match_substring(arr, ".")
    return (
        np.asarray(arr.to_numpy(zero_copy_only=False), dtype=object),
        np.asarray(amb.to_numpy(zero_copy_only=False), dtype=bool),
        np.asarray(dot.to_numpy(zero_copy_only=False), dtype=bool),
    )


def _number_text(num: str, decimal: str | None) -> tuple[str | None, str | None]:
    """Scalar version of :func:`_normalise_number_strings`: (plain text, problem)."""
    out, why = _normalise_number_strings(pd.Series([num], dtype=object), decimal)
    w = why.iloc[0]
    return out.iloc[0], (w if isinstance(w, str) else None)


def to_si(value: float | str, unit: str) -> float:
    """One value, typed or numeric, as an SI float (temperatures in °C).

    A bare number is in ``unit``; a string may carry its own unit of the same dimension.

    >>> to_si("24 V", "V"), to_si("-5 °C", "degC"), to_si("2 kHz", "Hz"), to_si("75 °C", "K")
    (24.0, -5.0, 2000.0, 75.0)

    Raises
    ------
    InputError
        When the value is not a number, has an unknown unit or the wrong dimension.
    """
    target = si_unit_of(unit)
    if isinstance(value, bool | np.bool_):
        raise InputError(f"{value!r} is not a number")
    if isinstance(value, int | float | np.integer | np.floating):
        if np.isnan(value):
            raise InputError("a number is needed")
        return float(Q_(float(value), resolve_unit(unit, target)).to(target).magnitude)
    if not isinstance(value, str):
        raise InputError(f"{value!r} is not a number")
    text = value.strip()
    if text.lower() in _BLANK_TOKENS:
        raise InputError(f"'{value}' is blank, a number is needed")
    parts = split_number(text)
    if parts is None:
        raise InputError(f"'{value}' is not a number")
    sign, num, exp, unit_text = parts
    plain = num
    if "." in num or "," in num:
        plain, why = _number_text(num, None)
        if why is not None:
            raise InputError(
                f"'{value}' is ambiguous: write the number without grouping (e.g. 1250 or 1.25)"
                if why == "ambiguous"
                else f"'{value}' is not a number"
            )
    x = float(plain) * 10.0 ** int((exp or "0").replace("−", "-"))
    if sign in ("-", "−"):
        x = -x
    src = resolve_unit(unit_text, target) if unit_text else resolve_unit(unit, target)
    try:
        return float(Q_(x, src).to(target).magnitude)
    except pint.errors.DimensionalityError:
        raise InputError(
            f"'{value}': '{unit_text}' is {dimension_name(src)}, not {dimension_name(target)}"
        ) from None
    except Exception:  # noqa: BLE001 - pint raises several kinds on odd unit text
        raise InputError(f"'{value}': unknown unit '{unit_text}'") from None
