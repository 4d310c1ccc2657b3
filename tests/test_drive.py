"""Gate drive: topology per kind and side, guaranteed-point rule, gate limits, cold threshold."""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from selector import drive
from selector.models import Channel, Settings

REL = 1e-3
S = Settings()


def part(name="Q", kind="nmos", vgs_max=20.0, vth_max=2.5, vce_sat_vge=np.nan):
    return dict(
        part=name, kind=kind, vgs_max=vgs_max, vth_max=vth_max, vce_sat_vge=vce_sat_vge
    )


def points(*rows) -> pd.DataFrame:
    return pd.DataFrame(rows, columns=["part", "vgs", "rds_on"])


def drivers(*rows) -> pd.DataFrame:
    cols = ["part", "kind", "v_out", "v_supply_max", "stock", "price"]
    return pd.DataFrame([dict(zip(cols, r, strict=True)) for r in rows], columns=cols)


# E3 datasheet: 8 mΩ at 10 V, 12 mΩ at 4.5 V; V_GS(th) 1.0–2.5 V
E3_POINTS = points(("E3", 10.0, 0.008), ("E3", 4.5, 0.012))


def table(sw_rows, rds, channel, side="low", drv=None, ambient_min=25.0, clamp=True):
    sw = pd.DataFrame(sw_rows)
    return drive.drive_table(
        sw, rds, channel, side, S, drv, ambient_min=ambient_min, clamp=clamp
    )


# ------------------------------------------------------------------------ check values
@pytest.mark.parametrize(
    ("drive_v", "rds", "point"),
    [(10.8, 0.008, 10.0), (6.65, 0.012, 4.5), (4.75, 0.012, 4.5)],
)
def test_e3_guaranteed_point_at_or_below_the_drive_level(drive_v, rds, point):
    """E3 (physics §1.3, common practice): 12 V driver (10.8 V) → 8 mΩ; 7 V −5 % (6.65 V)
    → 12 mΩ, never interpolated; 5 V MCU at 4.75 V → 12 mΩ."""
    r, v = drive.spec_point_at(E3_POINTS, ["E3"], drive_v)
    assert r[0] == pytest.approx(rds) and v[0] == point
    t = table([part("E3")], E3_POINTS, Channel("c", 24, 1, drive=drive_v))
    assert t["gate_drive_level_ok"].iloc[0]
    assert t["topology"].iloc[0] == drive.DIRECT
    assert t["vgs_point_v"].iloc[0] == point


def test_e3_part_is_refused_at_3v3_drive():
    """E3: a 3.3 V MCU (3.135 V guaranteed) is below the lowest point 4.5 V → reject."""
    r, _ = drive.spec_point_at(E3_POINTS, ["E3"], 3.135)
    assert math.isnan(r[0])
    t = table([part("E3")], E3_POINTS, Channel("c", 24, 1, drive=3.135))
    assert not t["gate_drive_level_ok"].iloc[0]
    assert t["gate_min_v"].iloc[0] == 4.5
    assert t["driver_kind"].iloc[0] == "low_side"
    assert t["drive_case"].iloc[0] == "no_driver"


def test_e14_threshold_rises_when_cold_and_falls_when_hot():
    """E14 (physics §9; k_th −5 mV/K from memory, sign per Dodge): V_th,max 2.5 V →
    2.825 V at −40 °C; V_th,min 1.0 V → 0.50 V at 125 °C."""
    assert float(drive.vth_at(2.5, -40.0, -5e-3)) == pytest.approx(2.825, rel=REL)
    assert float(drive.vth_at(1.0, 125.0, -5e-3)) == pytest.approx(0.50, rel=REL)


def test_e14_p_channel_divider_sets_gate_voltage_and_dissipation():
    """E14 (physics §9, common practice): R1 = 10 kΩ, R2 = 15 kΩ → V_GS = −0.4·V_S:
    18 V → −7.2 V (the −4.5 V point is used), 30 V → −12.0 V (≤ 0.7·20 V);
    divider dissipation 12.96 mW and 36.0 mW."""
    assert float(drive.divider_gate_voltage(18.0, 10e3, 15e3)) == pytest.approx(-7.2)
    assert float(drive.divider_gate_voltage(30.0, 10e3, 15e3)) == pytest.approx(-12.0)
    assert float(drive.divider_power(18.0, 10e3, 15e3)) == pytest.approx(12.96e-3)
    assert float(drive.divider_power(30.0, 10e3, 15e3)) == pytest.approx(36.0e-3)
    # E3's points as a P-channel part: 7.2 V uses the 4.5 V point
    _, v = drive.spec_point_at(E3_POINTS, ["E3"], abs(-7.2))
    assert v[0] == 4.5
    assert 12.0 <= float(drive.gate_limit("pmos", 20.0, S)) == pytest.approx(14.0)


def test_divider_for_inverts_the_divider_formula():
    r2 = float(drive.divider_for(30.0, 12.0))
    assert r2 == pytest.approx(15e3)
    assert float(drive.divider_gate_voltage(30.0, 10e3, r2)) == pytest.approx(-12.0)
    assert float(drive.divider_for(10.0, 12.0)) == 0.0


# --------------------------------------------------------------------- topology choice
def test_low_side_nmos_from_the_pin_or_through_a_low_side_driver():
    ch = Channel("c", 24, 2, drive=3.3)
    rds = points(("L", 2.5, 0.02), ("S", 10.0, 0.01))
    d = drivers(("GD", "low_side", 12.0, 20.0, np.nan, 0.5))
    t = table([part("L", vgs_max=12), part("S")], rds, ch, drv=d)
    assert list(t["topology"]) == [drive.DIRECT, drive.GATE_DRIVER]
    assert list(t["driver_kind"]) == ["", "low_side"]
    assert list(t["vgs_on_v"]) == [3.3, 12.0]
    assert list(t["vgs_point_v"]) == [2.5, 10.0]
    assert t["gate_drive_level_ok"].all() and t["gate_overvoltage_ok"].all()
    assert t["driver_v_min"].iloc[1] == 10.0 and t["driver_v_max"].iloc[1] == 14.0


def test_high_side_nmos_needs_bootstrap_with_pwm_and_charge_pump_when_steady():
    """Physics §9: bootstrap needs regular off-time (duty < 1); steady on needs a charge
    pump or an isolated supply; a pin cannot drive a high-side N-MOSFET."""
    pwm = drive.drive_needs(
        "nmos", "high", Channel("c", 24, 2, duty=0.5, pwm_frequency=2e3)
    )
    assert pwm.topology == drive.BOOTSTRAP
    assert pwm.driver_kinds == ("high_side", "isolated")
    steady = drive.drive_needs("nmos", "high", Channel("c", 24, 2))
    assert steady.topology == drive.CHARGE_PUMP
    assert any("charge pump" in n for n in steady.notes)
    slow = drive.drive_needs(
        "nmos", "high", Channel("c", 24, 2, on_time=5, off_time=55)
    )
    assert slow.topology == drive.CHARGE_PUMP
    t = table([part("S")], points(("S", 10.0, 0.01)), Channel("c", 24, 2), side="high")
    assert not t["gate_drive_level_ok"].iloc[0]  # no driver in the inventory


def test_high_side_p_channel_gets_a_level_shifter_and_a_clamp_above_the_gate_limit():
    """Physics §9: level shifter; divider when V_supply > 0.7·V_GS,max."""
    rds = points(("P", 10.0, 0.02), ("P", 4.5, 0.03))
    at12 = drive.drive_needs(
        "pmos", "high", Channel("c", 12, 1), gate_min=4.5, vgs_max=20
    )
    assert at12.topology == drive.LEVEL_SHIFTER and at12.vgs_on == 12.0
    at24 = drive.drive_needs(
        "pmos", "high", Channel("c", 24, 1), gate_min=4.5, vgs_max=20
    )
    assert at24.topology == drive.LEVEL_SHIFTER_CLAMP
    assert at24.vgs_on == pytest.approx(14.0)
    r1, r2 = at24.divider
    assert float(drive.divider_gate_voltage(24.0, r1, r2)) == pytest.approx(-14.0)
    t = table([part("P", kind="pmos")], rds, Channel("c", 24, 1), side="high")
    assert t["topology"].iloc[0] == drive.LEVEL_SHIFTER_CLAMP
    assert t["vgs_applied_v"].iloc[0] == pytest.approx(14.0)
    assert t["vgs_point_v"].iloc[0] == 10.0
    assert t["gate_overvoltage_ok"].iloc[0] and t["gate_drive_level_ok"].iloc[0]
    assert t["driver_kind"].iloc[0] == ""


def test_24v_high_side_p_channel_without_clamp_sees_the_whole_supply_on_its_gate():
    """Safety case (physics §9): gate pulled to 0 V under a 24 V source → V_GS = −24 V,
    above 0.7 × 20 V = 14 V (MIL-DTL-917 derating) → gate over-voltage."""
    rds = points(("P", 10.0, 0.02))
    t = table(
        [part("P", kind="pmos")], rds, Channel("c", 24, 1), side="high", clamp=False
    )
    assert t["topology"].iloc[0] == drive.LEVEL_SHIFTER
    assert t["vgs_applied_v"].iloc[0] == 24.0
    assert t["vgs_limit_v"].iloc[0] == pytest.approx(14.0)
    assert not t["gate_overvoltage_ok"].iloc[0]


def test_p_channel_on_the_low_side_is_not_usable():
    need = drive.drive_needs("pmos", "low", Channel("c", 24, 1))
    assert not need.usable and need.topology == drive.NOT_USABLE
    t = table([part("P", kind="pmos")], points(("P", 10.0, 0.02)), Channel("c", 24, 1))
    assert not t["kind_side_ok"].iloc[0]


def test_igbt_needs_its_vce_sat_gate_voltage_and_an_isolated_driver_on_the_high_side():
    """Physics §3.3: require V_GE,on ≥ the V_GE of the Vce(sat) spec (15 V); high side
    needs a floating supply. IGBT gate limit 0.8 × 20 V = 16 V (common practice)."""
    g = part("G", kind="igbt", vth_max=6.5, vce_sat_vge=15.0)
    d = drivers(
        ("LS", "low_side", 12.0, 20.0, np.nan, 0.5),
        ("ISO", "isolated", 15.0, 30.0, np.nan, 2.8),
    )
    low = table([g], points(), Channel("c", 24, 2, drive=12.0), drv=d)
    assert not low["gate_drive_level_ok"].iloc[0]
    assert low["gate_min_v"].iloc[0] == 15.0
    high = table([g], points(), Channel("c", 24, 2, drive=3.3), side="high", drv=d)
    assert high["topology"].iloc[0] == drive.ISOLATED
    assert high["driver_kind"].iloc[0] == "isolated"
    assert high["vgs_on_v"].iloc[0] == 15.0
    assert high["vgs_limit_v"].iloc[0] == pytest.approx(16.0)
    assert high["gate_drive_level_ok"].iloc[0] and high["gate_overvoltage_ok"].iloc[0]


def test_driver_above_a_logic_level_gate_limit_is_a_gate_overvoltage():
    """A 10 V high-side driver on a part with vgs_max 12 V (limit 8.4 V) → over-voltage."""
    d = drivers(("HS", "high_side", 10.0, 40.0, np.nan, 1.2))
    t = table(
        [part("L", vgs_max=12.0)], points(("L", 4.5, 0.02)), Channel("c", 24, 2),
        side="high", drv=d,
    )  # fmt: skip
    assert t["drive_case"].iloc[0] == "driver_too_high"
    assert t["gate_drive_level_ok"].iloc[0]
    assert not t["gate_overvoltage_ok"].iloc[0]
    assert t["vgs_applied_v"].iloc[0] == 10.0


def test_high_side_driver_must_stand_the_supply_and_be_in_stock():
    d = drivers(
        ("HS20", "high_side", 10.0, 20.0, np.nan, 1.0),
        ("HS0", "high_side", 10.0, 60.0, 0.0, 1.0),
    )
    t = table([part("S")], points(("S", 10.0, 0.01)), Channel("c", 24, 2), "high", d)
    assert t["drive_case"].iloc[0] == "no_driver"


def test_logic_part_on_a_12v_rail_is_a_gate_overvoltage():
    t = table(
        [part("L", vgs_max=8.0)],
        points(("L", 2.5, 0.02)),
        Channel("c", 24, 2, drive=12),
    )
    assert t["vgs_limit_v"].iloc[0] == pytest.approx(5.6)
    assert not t["gate_overvoltage_ok"].iloc[0]


def test_threshold_check_at_the_coldest_ambient():
    """Gate level must be ≥ 1.5 × V_th,max(Ta,min) (physics §9 sanity, proposed factor):
    V_th,max 2.5 V at −40 °C → 2.825 V → needs 4.24 V; 4.0 V fails, 4.5 V passes."""
    rds = points(("Q", 4.0, 0.02))
    cold = table([part("Q")], rds, Channel("c", 12, 1, drive=4.0), ambient_min=-40.0)
    assert cold["vth_cold_v"].iloc[0] == pytest.approx(2.825)
    assert cold["threshold_need_v"].iloc[0] == pytest.approx(4.2375)
    assert not cold["threshold_cold_ok"].iloc[0]
    warm = table([part("Q")], rds, Channel("c", 12, 1, drive=4.5), ambient_min=-40.0)
    assert warm["threshold_cold_ok"].iloc[0]


# ---------------------------------------------------------------- vectorised == scalar
part_st = st.fixed_dictionaries(
    {
        "kind": st.sampled_from(["nmos", "pmos", "igbt"]),
        "vgs_max": st.sampled_from([8.0, 12.0, 20.0, 30.0]),
        "point": st.sampled_from([1.8, 2.5, 4.5, 10.0]),
    }
)


@settings(max_examples=40, deadline=None)
@given(
    parts=st.lists(part_st, min_size=1, max_size=6),
    side=st.sampled_from(["low", "high"]),
    supply=st.sampled_from([5.0, 12.0, 24.0, 48.0]),
    drive_v=st.sampled_from([3.3, 5.0, 12.0]),
    pwm=st.booleans(),
    clamp=st.booleans(),
)
def test_drive_table_matches_the_scalar_decision(
    parts, side, supply, drive_v, pwm, clamp
):
    """The vectorised table and the plain scalar :func:`drive_needs` agree on every part."""
    ch = Channel(
        "c", supply, 1.0, drive=drive_v, duty=0.5 if pwm else 1.0,
        pwm_frequency=1e3 if pwm else 0.0,
    )  # fmt: skip
    rows = [
        part(
            f"Q{i}",
            p["kind"],
            p["vgs_max"],
            1.0,
            15.0 if p["kind"] == "igbt" else np.nan,
        )
        for i, p in enumerate(parts)
    ]
    rds = points(*[(f"Q{i}", p["point"], 0.01) for i, p in enumerate(parts)])
    t = table(rows, rds, ch, side=side, clamp=clamp)
    for i, p in enumerate(parts):
        gmin = 15.0 if p["kind"] == "igbt" else p["point"]
        need = drive.drive_needs(
            p["kind"], side, ch, S, gate_min=gmin, vgs_max=p["vgs_max"], clamp=clamp
        )
        assert t["topology"].iloc[i] == need.topology
        assert t["driver_kind"].iloc[i] == "|".join(need.driver_kinds)
        assert t["clamp"].iloc[i] == need.clamp
        if need.driver_kinds or not need.usable:
            assert math.isnan(t["vgs_on_v"].iloc[i])
        else:
            assert t["vgs_on_v"].iloc[i] == pytest.approx(need.vgs_on)
        assert t["gate_min_v"].iloc[i] == gmin
        assert t["vgs_limit_v"].iloc[i] == pytest.approx(need.gate_max)


# ------------------------------------------------------- fast paths against plain pandas
def test_lowest_guaranteed_point_matches_pandas_grouping_with_blanks_and_inf():
    """The array form of the lowest spec point per part (physics §1.3, E3) equals the
    plain pandas form (drop blank points, group by part, min |V_GS|, map the parts):
    negative P-channel levels, duplicate points, blank and infinite Rds(on), blank
    part ids and parts without points. No physics: an equivalence of two codings."""
    rp = pd.DataFrame(
        {
            "part": ["A", "A", "B", "B", None, "C", "D", "E"],
            "vgs": [10.0, 4.5, -4.5, -2.5, 3.0, np.nan, 6.0, 5.0],
            "rds_on": [0.008, 0.012, 0.02, np.inf, 0.01, 0.01, np.nan, 0.03],
        }
    )
    parts = np.array(["B", "A", "C", "D", "E", "Z", None, "A"], dtype=object)
    ref = drive._lowest_point_frame(rp, parts)
    np.testing.assert_array_equal(drive._lowest_point(rp, parts), ref)
    look = drive._RdsLookup(rp, parts)  # inf Rds(on): the look-up is not used
    np.testing.assert_array_equal(drive._lowest_point(rp, parts, look), ref)
    finite = rp[np.isfinite(rp["rds_on"]) | rp["rds_on"].isna()]
    np.testing.assert_array_equal(
        drive._lowest_point(finite, parts, drive._RdsLookup(finite, parts)),
        drive._lowest_point_frame(finite, parts),
    )
    # B: the -2.5 V point has an infinite Rds(on) but is not blank, so it counts here
    assert ref[1] == 4.5 and ref[0] == 2.5 and np.isnan(ref[2]) and np.isnan(ref[5])


@settings(max_examples=40, deadline=None)
@given(
    st.lists(
        st.tuples(
            st.sampled_from(["A", "B", "C", "D"]),
            st.sampled_from([2.5, 4.5, -4.5, 10.0, np.nan]),
            st.sampled_from([0.01, 0.02, np.nan]),
        ),
        max_size=12,
    ),
    st.lists(st.sampled_from(["A", "B", "C", "D", "E"]), min_size=1, max_size=8),
)
def test_lowest_guaranteed_point_property_matches_pandas(rows, query):
    """Random point tables: array form == pandas grouping form (equivalence only)."""
    rp = pd.DataFrame(rows, columns=["part", "vgs", "rds_on"]).astype(
        {"vgs": float, "rds_on": float}
    )
    parts = np.array(query, dtype=object)
    look = drive._RdsLookup(rp, parts)
    np.testing.assert_array_equal(
        drive._lowest_point(rp, parts, look), drive._lowest_point_frame(rp, parts)
    )


def test_drive_notes_are_those_of_drive_needs_row_by_row():
    """The notes column is built once per distinct (kind, gate_min, vgs_max) but must
    read, row by row, as :func:`drive_needs` gives them (E14 level shifter with clamp
    on a 24 V high side; common practice)."""
    kinds = np.array(
        ["pmos", "nmos", "pmos", "igbt", "diode", None, "pmos"], dtype=object
    )
    gmin = np.array([4.5, 4.5, np.nan, 15.0, 1.0, 2.0, 4.5])
    vmax = np.array([20.0, 20.0, 12.0, 20.0, np.nan, 20.0, 20.0])
    ch = Channel(name="fan", supply=24.0, current=1.0, drive=3.3, side="high")
    got = drive._notes(kinds, gmin, vmax, "high", ch, S, True)
    for k, g, v, text in zip(kinds, gmin, vmax, got, strict=True):
        if k not in ("nmos", "pmos", "igbt"):
            assert text == ""
        else:
            need = drive.drive_needs(k, "high", ch, S, gate_min=g, vgs_max=v)
            assert text == "; ".join(need.notes)
    assert "Vgs clamp" in got[0] and got[0] == got[6]


def test_driver_arrays_keep_the_usable_drivers_rules():
    """The array read of the drivers keeps exactly the rows :func:`_usable_drivers`
    keeps (stock > 0 or blank, v_out given, high-side supply rating ≥ supply)."""
    drv = drivers(
        ("D1", "low_side", 12.0, np.nan, 5, 1.0),
        ("D2", "high_side", 12.0, 20.0, 5, 1.0),  # 20 V rating < 24 V supply
        ("D3", "high_side", 10.0, 60.0, 0, 1.0),  # no stock
        ("D4", "isolated", np.nan, np.nan, 3, 1.0),  # no v_out
        ("D5", "isolated", 15.0, np.nan, np.nan, 1.0),
        ("D6", "high_side", 12.0, np.nan, 2, 1.0),
    )
    ch = Channel(name="pump", supply=24.0, current=2.0, drive=3.3, side="high")
    v_out, kind = drive._usable_driver_arrays(drv, ch)
    ref = drive._usable_drivers(drv, ch)
    np.testing.assert_array_equal(v_out, ref["v_out"].to_numpy(dtype=float))
    assert list(kind) == list(ref["kind"]) == ["low_side", "isolated", "high_side"]
    empty = drive._usable_driver_arrays(None, ch)
    assert empty[0].size == 0 and empty[1].size == 0
