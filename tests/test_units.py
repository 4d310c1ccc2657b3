"""Tests of selector.units: quantity parsing and conversion to SI floats.

The reference for every conversion is pint itself (a general-purpose unit library from
PyPI): each expected value is computed by ``pint.UnitRegistry().Quantity(number,
unit).to(target)`` on a fresh registry, with the number and unit passed apart, so the
checks do not reuse the parsing under test.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pint
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from selector.errors import InputError
from selector.units import (
    check_unit,
    dimension_name,
    parse_quantity_series,
    resolve_unit,
    si_unit_of,
    to_si,
    ureg,
)

REF = pint.UnitRegistry()  # an independent registry as the reference


def ref(number: float, unit: str, target: str) -> float:
    """pint's own conversion of ``number unit`` to ``target``."""
    return float(REF.Quantity(number, unit).to(target).magnitude)


CELLS = [
    # (cell as typed, target, bare-number unit, number, pint unit of the cell)
    ("6.5 mΩ", "ohm", "ohm", 6.5, "milliohm"),
    ("6,5 mOhm", "ohm", "ohm", 6.5, "milliohm"),
    ("4.5mohm", "ohm", "ohm", 4.5, "milliohm"),
    ("0.2 kOhm", "ohm", "ohm", 0.2, "kiloohm"),
    ("60V", "V", "V", 60.0, "volt"),
    ("1.2 °C/W", "K/W", "K/W", 1.2, "delta_degC/W"),
    ("0.8 K / W", "K/W", "K/W", 0.8, "K/W"),
    ("150 °C", "degC", "degC", 150.0, "degC"),
    ("302 °F", "degC", "degC", 302.0, "degF"),
    ("423.15 K", "degC", "degC", 423.15, "K"),
    ("25 nC", "C", "nC", 25.0, "nC"),
    ("4.7 µF", "F", "pF", 4.7, "uF"),
    ("4.7 uF", "F", "pF", 4.7, "uF"),
    ("2 kHz", "Hz", "Hz", 2.0, "kHz"),
    ("35 ns", "s", "ns", 35.0, "ns"),
    ("1.5 mJ", "J", "mJ", 1.5, "mJ"),
    ("120 µJ", "J", "mJ", 120.0, "uJ"),
    ("40 mm", "m", "mm", 40.0, "mm"),
    ("400 lfm", "m/s", "m/s", 400.0, "ft/min"),
    ("2 m/s", "m/s", "m/s", 2.0, "m/s"),
    ("1e-3 V", "V", "V", 1e-3, "V"),
    ("1.5E3 mV", "V", "V", 1.5e3, "mV"),
]


@pytest.mark.parametrize(("cell", "target", "bare", "number", "unit"), CELLS)
def test_cell_units_convert_like_pint(cell, target, bare, number, unit):
    """Each cell form converts exactly as pint converts number and unit given apart."""
    vals, why = parse_quantity_series(pd.Series([cell], dtype=object), target, bare)
    assert why.iloc[0] is None
    assert vals[0] == pytest.approx(ref(number, unit, target), rel=1e-12)


@pytest.mark.parametrize(
    ("header_unit", "target", "number"),
    [
        ("mohm", "ohm", 6.5),
        ("nC", "C", 25.0),
        ("pF", "F", 470.0),
        ("ns", "s", 12.0),
        ("mJ", "J", 0.8),
        ("mm", "m", 3.0),
        ("°F", "degC", 212.0),
        ("kV", "V", 2.5),
    ],
)
def test_bare_numbers_take_the_header_unit_like_pint(header_unit, target, number):
    """A bare number (numeric column) is in the header's unit; compared with pint."""
    vals, why = parse_quantity_series(pd.Series([number, np.nan]), target, header_unit)
    pint_unit = {"mohm": "milliohm", "°F": "degF"}.get(header_unit, header_unit)
    assert vals[0] == pytest.approx(ref(number, pint_unit, target), rel=1e-12)
    assert np.isnan(vals[1]) and why.isna().all()


def test_decimal_comma_is_not_read_as_a_larger_number():
    """pint alone reads '1,5 mΩ' as 15 mΩ; the split number/unit path gives 1.5 mΩ."""
    whole = (
        REF.Quantity("1,5 milliohm").to("ohm").magnitude
    )  # the trap, shown with pint
    assert whole == pytest.approx(0.015)
    vals, _ = parse_quantity_series(pd.Series(["1,5 mΩ"], dtype=object), "ohm", "ohm")
    assert vals[0] == pytest.approx(0.0015)


def test_offset_units_as_one_string_fail_in_pint_but_parse_here():
    """'150 °C' and '1.2 °C/W' raise in pint as one string; parsed apart they work."""
    with pytest.raises(pint.errors.OffsetUnitCalculusError):
        REF.Quantity("1.2 °C/W").to("K/W")
    vals, why = parse_quantity_series(
        pd.Series(["1.2 °C/W", "1.2 C/W"], dtype=object), "K/W", None
    )
    assert list(vals) == pytest.approx([1.2, 1.2]) and why.isna().all()


def test_temperature_difference_column_reads_degrees_celsius_as_a_difference():
    """A rise of '75 °C' is 75 K, not 348 K (pint: delta_degC to K is 1:1)."""
    vals, _ = parse_quantity_series(
        pd.Series(["75 °C", "75", "50 K"], dtype=object), "K", None
    )
    assert list(vals) == pytest.approx([ref(75, "delta_degC", "K"), 75.0, 50.0])


@pytest.mark.parametrize(
    ("cell", "decimal", "expected"),
    [
        ("1.250", ",", 1250.0),  # thousands dot in a decimal-comma file
        ("1,250", ",", 1.25),
        ("1.250", ".", 1.25),
        ("1,250", ".", 1250.0),  # thousands comma in a decimal-point file
        ("1.250,5", None, 1250.5),  # both marks: the last one is the decimal mark
        ("1,250.5", None, 1250.5),
        ("1.000.000", None, 1e6),
        ("0,250", None, 0.25),  # a group never starts with 0
        ("12,5", None, 12.5),
        ("4.5", ",", 4.5),  # no 3-digit group: a decimal point even in a comma file
    ],
)
def test_thousands_and_decimal_marks(cell, decimal, expected):
    """The thousands-dot trap: '1.250' is decided by the file's decimal mark (common practice)."""
    vals, why = parse_quantity_series(
        pd.Series([cell], dtype=object), "V", None, decimal=decimal
    )
    assert why.iloc[0] is None
    assert vals[0] == pytest.approx(expected)


@pytest.mark.parametrize("cell", ["1.250", "1,250", "12.345 V"])
def test_ambiguous_grouping_without_a_known_decimal_mark_is_refused(cell):
    vals, why = parse_quantity_series(
        pd.Series([cell], dtype=object), "V", None, decimal=None
    )
    assert np.isnan(vals[0])
    assert "ambiguous" in why.iloc[0]


@pytest.mark.parametrize(
    ("cell", "fragment"),
    [
        ("5 A", "a current"),
        ("6.5 mΩ", "a resistance"),
        ("abc", "not a number"),
        ("3 blorf", "unknown unit"),
        ("1.2.3", "not a number"),
        ("#DIV/0!", "error value"),
    ],
)
def test_bad_cells_get_a_reason_and_nan(cell, fragment):
    vals, why = parse_quantity_series(
        pd.Series([cell, "12 V"], dtype=object), "V", None
    )
    assert np.isnan(vals[0]) and fragment in why.iloc[0]
    assert vals[1] == 12.0 and why.iloc[1] is None


def test_blank_tokens_are_blank_not_bad():
    cells = pd.Series(["", "  ", None, np.nan, "-", "n/a", "#N/A"], dtype=object)
    vals, why = parse_quantity_series(cells, "V", None)
    assert np.isnan(vals).all() and why.isna().all()


def test_spreadsheet_types_in_a_number_column():
    """Dates (a spreadsheet's '4.5' turned into 4 May) and booleans are not numbers."""
    cells = pd.Series([pd.Timestamp("2024-05-04"), True, 3.5, 2], dtype=object)
    vals, why = parse_quantity_series(cells, "V", None)
    assert "date" in why.iloc[0] and "yes/no" in why.iloc[1]
    assert list(vals[2:]) == [3.5, 2.0]


def test_magnitude_and_plus_minus():
    """P-channel ratings written negative, and '±20 V', give magnitudes."""
    vals, _ = parse_quantity_series(
        pd.Series(["-30", "±20 V", -8.0], dtype=object), "V", None, magnitude=True
    )
    assert list(vals) == [30.0, 20.0, 8.0]


def test_one_pint_call_per_distinct_unit_gives_the_same_values_as_cell_by_cell():
    """The vectorised path agrees with pint cell by cell on a mixed column of 2,000 cells."""
    rng = np.random.default_rng(3)
    units = ["mΩ", "mohm", "ohm", "µΩ", ""]
    nums = rng.uniform(0.1, 99, 2000).round(3)
    us = rng.choice(units, 2000)
    cells = pd.Series(
        [f"{n}{(' ' + u) if u else ''}" for n, u in zip(nums, us, strict=True)],
        dtype=object,
    )
    vals, why = parse_quantity_series(cells, "ohm", "mohm")
    assert why.isna().all()
    pint_unit = {
        "mΩ": "milliohm",
        "mohm": "milliohm",
        "ohm": "ohm",
        "µΩ": "microohm",
        "": "milliohm",
    }
    expected = [ref(n, pint_unit[u], "ohm") for n, u in zip(nums, us, strict=True)]
    np.testing.assert_allclose(vals, expected, rtol=1e-12)


def test_index_is_kept_and_numeric_header_unit_of_wrong_dimension_is_reported():
    s = pd.Series([1.0, 2.0], index=[10, 20])
    vals, why = parse_quantity_series(s, "V", "A")
    assert list(why.index) == [10, 20]
    assert np.isnan(vals).all() and "a current" in why.iloc[0]


@pytest.mark.parametrize(
    ("value", "unit", "expected"),
    [
        ("24 V", "V", 24.0),
        ("-5 °C", "degC", -5.0),
        ("2 kHz", "Hz", 2000.0),
        (2, "kHz", 2000.0),
        ("100 mohm", "ohm", 0.1),
        (4.5, "mohm", 0.0045),
        ("75 °C", "K", 75.0),
        ("3,3 V", "V", 3.3),
        ("10 µH", "H", 1e-5),
        ("0.5", "percent", 0.005),
    ],
)
def test_to_si_matches_pint(value, unit, expected):
    assert to_si(value, unit) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize(
    "value", ["5 A", "abc", "", "1.250 V", "3 blorf", True, None, float("nan")]
)
def test_to_si_refuses_bad_values_with_the_input_error(value):
    with pytest.raises(InputError) as exc:
        to_si(value, "V")
    assert "\n" not in str(exc.value)


def test_unit_helpers():
    assert resolve_unit("mOhm", "ohm") == "mohm"
    assert resolve_unit("°C", "K") == "delta_degC"
    assert resolve_unit("°C", "degC") == "degC"
    assert resolve_unit("℃", "degC") == "degC"
    assert (
        si_unit_of("kHz") == "Hz"
        and si_unit_of("°F") == "degC"
        and si_unit_of("mm") == "m"
    )
    assert check_unit("mV", "V") is None
    assert "a current" in check_unit("A", "V")
    assert "unknown unit" in check_unit("blorf", "V")
    assert dimension_name("°C/W") == "a thermal resistance"
    assert ureg.Quantity(1, "mOhm").to("ohm").magnitude == pytest.approx(1e-3)


@settings(max_examples=60, deadline=None)
@given(
    x=st.floats(min_value=1e-3, max_value=1e4, allow_nan=False),
    unit=st.sampled_from(
        ["mV", "V", "kV", "mA", "A", "mohm", "ohm", "nC", "pF", "ns", "mJ", "mm"]
    ),
    comma=st.booleans(),
)
def test_scalar_and_column_paths_agree_with_pint(x, unit, comma):
    """to_si and parse_quantity_series agree with pint for random values, any decimal mark."""
    num = f"{x:.6f}"
    text = (num.replace(".", ",") if comma else num) + " " + unit
    target = si_unit_of(unit)
    expected = ref(float(num), unit, target)
    assert math.isclose(to_si(text, unit), expected, rel_tol=1e-12)
    vals, why = parse_quantity_series(pd.Series([text], dtype=object), target, unit)
    assert why.iloc[0] is None and math.isclose(vals[0], expected, rel_tol=1e-12)
