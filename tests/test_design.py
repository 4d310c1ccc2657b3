"""Design files: reading, unit strings, every validation message, round trip, page table."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from selector.design import (
    design_from_table,
    design_to_toml,
    load_design,
    load_design_and_settings,
)
from selector.errors import DesignError, InputError
from selector.models import LOAD_KINDS, Channel, Conditions, Design, Settings

HEATER = {"name": "heater", "supply": 24, "current": 6}


def design_dict(*channels, conditions=None, **extra):
    d = {"conditions": conditions or {}, "channel": list(channels) or [dict(HEATER)]}
    d.update(extra)
    return d


def problems_of(source) -> list[tuple[str | None, str | None, str]]:
    with pytest.raises(DesignError) as exc:
        load_design(source)
    return [(loc.channel, loc.field, msg) for loc, msg in exc.value.problems]


def only_problem(source) -> tuple[str | None, str | None, str]:
    p = problems_of(source)
    assert len(p) == 1, p
    return p[0]


# ------------------------------------------------------------------------------ reading
def test_toml_text_with_unit_strings_becomes_si_floats():
    """Unit strings at the edge: 24 V, −5 °C, 2 kHz, 80 mH, 70 % (SI inside)."""
    text = """
    [conditions]
    ambient_min = "-5 °C"
    ambient_max = "45 °C"
    junction_margin = "25 K"
    airflow = "1.5 m/s"
    max_parallel = 3

    [[channel]]
    name = "valve"
    supply = "24 V"
    current = "350 mA"
    load = "inductive"
    inductance = "80 mH"
    duty = "70 %"
    pwm_frequency = "2 kHz"
    drive = "3.3 V"
    on_time = "5 s"
    off_time = "1 min"
    """
    d = load_design(text)
    c = d.conditions
    assert (c.ambient_min, c.ambient_max, c.junction_margin) == (-5.0, 45.0, 25.0)
    assert c.airflow == 1.5 and c.max_parallel == 3
    ch = d.channel("valve")
    assert ch.supply == 24.0
    assert ch.current == pytest.approx(0.35)
    assert ch.inductance == pytest.approx(0.08)
    assert ch.duty == pytest.approx(0.7)
    assert ch.pwm_frequency == 2000.0
    assert ch.off_time == 60.0


def test_design_file_path_is_read_and_named_in_errors(tmp_path):
    path = tmp_path / "board.toml"
    path.write_text('[[channel]]\nname = "a"\nsupply = 12\ncurrent = 1\n', "utf-8")
    d = load_design(path)
    assert d.source == str(path) and d.channels[0].supply == 12.0
    assert load_design(str(path)) == d
    path.write_text('[[channel]]\nname = "a"\nsupply = -12\ncurrent = 1\n', "utf-8")
    with pytest.raises(DesignError) as exc:
        load_design(path)
    assert str(path) in str(exc.value)


def test_missing_file_and_bad_toml_are_one_clear_design_error(tmp_path):
    with pytest.raises(DesignError, match="design file not found"):
        load_design(tmp_path / "nope.toml")
    with pytest.raises(DesignError, match="not valid TOML"):
        load_design("[conditions\nambient_min = 1\n")


def test_design_error_is_an_input_error_and_a_value_error():
    with pytest.raises(InputError):
        load_design(design_dict({"name": "x", "supply": 0, "current": 1}))
    with pytest.raises(ValueError):
        load_design(design_dict({"name": "x", "supply": 0, "current": 1}))


def test_settings_table_overrides_engineering_defaults():
    d, s = load_design_and_settings(
        design_dict(settings={"vgs_derating": 0.6, "vth_tempco": "-4 mV/K"})
    )
    assert s.vgs_derating == 0.6
    assert s.vth_tempco == pytest.approx(-4e-3)
    assert s.avalanche_acceptance == Settings().avalanche_acceptance
    assert load_design(design_dict(settings={"vgs_derating": 0.6})) == d


# --------------------------------------------------------------------------- validation
def test_zero_supply_is_named_with_channel_and_field():
    ch, field, msg = only_problem(
        design_dict({"name": "fan", "supply": 0, "current": 1})
    )
    assert (ch, field) == ("fan", "supply")
    assert "above 0 V" in msg


def test_negative_current_is_named_with_channel_and_field():
    ch, field, msg = only_problem(
        design_dict({"name": "fan", "supply": 12, "current": -2})
    )
    assert (ch, field) == ("fan", "current")
    assert "-2 A" in msg


def test_duty_outside_zero_to_one_is_refused():
    for duty in (0, 1.2, -0.1):
        ch, field, msg = only_problem(design_dict(dict(HEATER, duty=duty)))
        assert field == "duty" and "(0, 1]" in msg


def test_ambient_min_above_ambient_max_is_refused():
    _, field, msg = only_problem(
        design_dict(conditions={"ambient_min": 50, "ambient_max": 40})
    )
    assert field == "conditions.ambient_min"
    assert "50 °C is above ambient_max 40 °C" in msg


def test_unknown_load_kind_lists_the_valid_ones():
    ch, field, msg = only_problem(design_dict(dict(HEATER, load="heater")))
    assert field == "load"
    for kind in LOAD_KINDS:
        assert kind in msg


def test_unknown_load_kind_suggests_the_close_one():
    _, _, msg = only_problem(design_dict(dict(HEATER, load="inductiv", inductance=0.1)))
    assert "did you mean 'inductive'" in msg


def test_unknown_side_lists_the_valid_ones():
    _, field, msg = only_problem(design_dict(dict(HEATER, side="top")))
    assert field == "side" and "low, high, any" in msg


@pytest.mark.parametrize("load", ["inductive", "motor"])
def test_inductive_or_motor_load_without_inductance_is_refused(load):
    ch, field, msg = only_problem(design_dict(dict(HEATER, load=load)))
    assert (ch, field) == ("heater", "inductance")
    assert load in msg


def test_peak_current_below_current_is_refused():
    _, field, msg = only_problem(design_dict(dict(HEATER, peak_current=2)))
    assert field == "peak_current"
    assert "2 A is below the on-state current 6 A" in msg


def test_duplicate_channel_names_are_refused():
    _, field, msg = only_problem(design_dict(dict(HEATER), dict(HEATER)))
    assert field == "name" and "2 channels are named 'heater'" in msg


@pytest.mark.parametrize("q", [0, -1, 1.5, "two", True])
def test_quantity_must_be_a_positive_whole_number(q):
    _, field, msg = only_problem(design_dict(dict(HEATER, quantity=q)))
    assert field == "quantity" and "positive whole number" in msg


def test_quantity_written_as_float_or_text_whole_number_is_fine():
    assert (
        load_design(design_dict(dict(HEATER, quantity=2.0))).channels[0].quantity == 2
    )
    assert (
        load_design(design_dict(dict(HEATER, quantity="3"))).channels[0].quantity == 3
    )


def test_unknown_channel_key_suggests_the_close_one():
    ch, field, msg = only_problem(design_dict(dict(HEATER, suply=24)))
    assert (ch, field) == ("heater", "suply")
    assert "did you mean 'supply'" in msg


def test_unknown_conditions_key_and_top_level_table_are_refused():
    p = problems_of(design_dict(conditions={"airflo": 1}, channels=[]))
    msgs = " | ".join(m for _, _, m in p)
    assert "did you mean 'airflow'" in msgs
    assert "unknown table or key 'channels'" in msgs


def test_unknown_setting_is_refused_with_suggestion():
    _, field, msg = only_problem(design_dict(settings={"vgs_derate": 0.7}))
    assert field == "settings.vgs_derate" and "did you mean 'vgs_derating'" in msg


def test_wrong_dimension_for_supply_names_both_dimensions():
    ch, field, msg = only_problem(design_dict(dict(HEATER, supply="5 A")))
    assert (ch, field) == ("heater", "supply")
    assert "current" in msg and "voltage" in msg


def test_text_that_is_no_number_is_refused():
    _, field, msg = only_problem(design_dict(dict(HEATER, current="lots")))
    assert field == "current" and "not a number" in msg


def test_missing_supply_and_current_are_named():
    p = problems_of(design_dict({"name": "x"}))
    assert {(c, f) for c, f, _ in p} == {("x", "supply"), ("x", "current")}


def test_channel_without_name_and_design_without_channels():
    _, field, msg = only_problem(design_dict({"supply": 12, "current": 1}))
    assert field == "name" and "needs a name" in msg
    _, field, msg = only_problem({"conditions": {}})
    assert field == "channel" and "no [[channel]]" in msg


def test_every_problem_is_collected_into_one_error():
    src = design_dict(
        {"name": "a", "supply": "5 A", "current": -1, "duty": 1.5, "load": "x"},
        {"name": "b", "supply": 12, "current": 1, "side": "up", "quantity": 0},
        conditions={"ambient_min": 60, "voltage_derating": 1.5},
    )
    with pytest.raises(DesignError) as exc:
        load_design(src)
    fields = {(loc.channel, loc.field) for loc, _ in exc.value.problems}
    assert {
        ("a", "supply"),
        ("a", "current"),
        ("a", "duty"),
        ("a", "load"),
        ("b", "side"),
        ("b", "quantity"),
        (None, "conditions.ambient_min"),
        (None, "conditions.voltage_derating"),
    } <= fields
    text = str(exc.value)
    assert text.startswith(f"{len(exc.value.problems)} problems in the design")
    assert "channel 'b', field 'side'" in text


# --------------------------------------------------------------------------- round trip
def test_design_to_toml_round_trips_with_settings():
    d = Design(
        Conditions(ambient_min=-20.5, ambient_max=55, airflow=1.0, max_parallel=2),
        (
            Channel('mat "A"', 24, 8, heatsink_group="main"),
            Channel(
                "pump",
                24,
                3,
                peak_current=15,
                peak_time=0.5,
                load="motor",
                inductance=0.002,
                side="any",
                drive=12,
                quantity=2,
            ),
            Channel("bar", 24, 4, duty=0.7, pwm_frequency=2000, drive=3.3),
        ),
    )
    s = Settings(vgs_derating=0.65, overshoot_per_amp=0.25)
    text = design_to_toml(d, s)
    d2, s2 = load_design_and_settings(text)
    assert d2 == d
    assert s2 == s
    assert "[settings]" in text and "pin_resistance" not in text


channel_st = st.builds(
    Channel,
    name=st.text(
        st.characters(codec="utf-8", exclude_categories=("Cs", "Cc")),
        min_size=1,
        max_size=12,
    ).filter(lambda s: s.strip() == s and s),
    supply=st.floats(0.1, 1000),
    current=st.floats(0.001, 100),
    duty=st.floats(0.01, 1.0),
    load=st.sampled_from(("resistive", "lamp", "capacitive")),
    drive=st.floats(1.0, 20.0),
    side=st.sampled_from(("low", "high", "any")),
    quantity=st.integers(1, 9),
)


@settings(max_examples=30, deadline=None)
@given(channel_st)
def test_any_valid_channel_round_trips_through_toml(ch):
    """design_to_toml writes floats with repr, so every float comes back exact."""
    d = Design(Conditions(), (ch,))
    assert load_design(design_to_toml(d)) == d


# ---------------------------------------------------------------------------- page table
def test_page_table_with_blank_cells_and_blank_rows_becomes_a_design():
    table = pd.DataFrame(
        [
            {"name": "heater", "supply": 24.0, "current": 6.0, "load": "resistive",
             "inductance": np.nan, "quantity": 2.0, "heatsink_group": None},
            {"name": None, "supply": np.nan, "current": np.nan, "load": None,
             "inductance": np.nan, "quantity": np.nan, "heatsink_group": None},
            {"name": "valve", "supply": 24.0, "current": 0.5, "load": "inductive",
             "inductance": 0.08, "quantity": np.nan, "heatsink_group": ""},
        ]
    )  # fmt: skip
    d = design_from_table(Conditions(), table)
    assert [c.name for c in d.channels] == ["heater", "valve"]
    assert d.channels[0].quantity == 2 and d.channels[0].inductance == 0.0
    assert d.channels[1].quantity == 1 and d.channels[1].inductance == 0.08


def test_page_table_problems_name_row_channel_and_field():
    table = pd.DataFrame(
        [
            {"name": "ok", "supply": 24.0, "current": 1.0, "duty": 1.0},
            {"name": "bad", "supply": 24.0, "current": 1.0, "duty": 2.0},
            {"name": None, "supply": 12.0, "current": 1.0, "duty": 1.0},
        ]
    )
    with pytest.raises(DesignError) as exc:
        design_from_table(Conditions(ambient_min=50, ambient_max=40), table)
    where = {(loc.row, loc.channel, loc.field) for loc, _ in exc.value.problems}
    assert (2, "bad", "duty") in where
    assert (3, "#3", "name") in where
    assert (None, None, "conditions.ambient_min") in where


def test_design_of_the_page_round_trips_through_toml():
    table = pd.DataFrame(
        [{"name": "fan", "supply": 12.0, "current": 1.5, "peak_current": 4.0,
          "peak_time": 0.2, "load": "motor", "inductance": 0.001, "side": "high",
          "drive": 3.3, "quantity": 1}]
    )  # fmt: skip
    d = design_from_table(Conditions(ambient_min=-10.0), table)
    assert load_design(design_to_toml(d)) == d
    assert math.isclose(d.channels[0].peak, 4.0)
