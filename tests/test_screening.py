"""Screening rules: the safety cases, the funnel, "why not this part", diodes and drivers.

Inventories are built by hand here (columns per the inventory contract, SI values), so the
tests do not depend on the demo data.
"""

from __future__ import annotations

from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest

from selector import drive
from selector.models import Channel, Conditions, Settings
from selector.screening import (
    RULES,
    diode_candidates,
    driver_candidates,
    explain_part,
    row_checks,
    screen_channel,
)

COND = Conditions(ambient_min=-5.0, ambient_max=45.0, max_parallel=2)
S = Settings()


def switch(part, kind="nmos", **kw) -> dict:
    row = dict(
        part=part,
        kind=kind,
        package="TO-220",
        price=1.0,
        stock=np.nan,
        v_rating=60.0,
        i_rating=30.0,
        tj_max=175.0,
        rth_jc=1.0,
        rth_ja=62.0,
        vgs_max=20.0,
        vth_max=2.0,
        rds_hot_ratio=1.8,
        tab="drain",
        i_pulse=120.0,
        eas=np.nan,
        vce_sat=np.nan,
        vce_sat_i=np.nan,
        vce_sat_vge=np.nan,
        qg=np.nan,
        qgs=np.nan,
        qgd=np.nan,
        v_plateau=np.nan,
        rg_int=np.nan,
        t_rise=np.nan,
        t_fall=np.nan,
        coss=np.nan,
        e_on=np.nan,
        e_off=np.nan,
        e_test_v=np.nan,
        e_test_i=np.nan,
    )
    row.update(kw)
    return row


def inventory(switches, points, *, diodes=None, drivers=None, interfaces=None):
    return SimpleNamespace(
        switches=pd.DataFrame(switches),
        rds_points=pd.DataFrame(points, columns=["part", "vgs", "rds_on"]),
        diodes=pd.DataFrame(
            diodes or [],
            columns=[
                "part",
                "price",
                "stock",
                "v_rrm",
                "i_avg",
                "vf",
                "rth_ja",
                "tj_max",
            ],
        ),
        drivers=pd.DataFrame(
            drivers or [],
            columns=["part", "price", "stock", "kind", "v_out", "v_supply_max"],
        ),
        interfaces=pd.DataFrame(
            interfaces or [],
            columns=["part", "price", "stock", "fits", "rth_cs", "insulating"],
        ),
    )


GREASE = dict(part="GREASE", price=0.05, stock=np.nan, fits=("TO-220",), rth_cs=0.5,
              insulating=False)  # fmt: skip
SCHOTTKY = dict(part="D1", price=0.1, stock=np.nan, v_rrm=60.0, i_avg=3.0, vf=0.7,
                rth_ja=60.0, tj_max=150.0)  # fmt: skip
LS_DRIVER = dict(part="GD", price=0.5, stock=np.nan, kind="low_side", v_out=12.0,
                 v_supply_max=20.0)  # fmt: skip


# --------------------------------------------------------------------------- registry
def test_rule_ids_are_stable_and_in_funnel_order():
    assert list(RULES) == [
        "kind_side",
        "voltage",
        "gate_drive_level",
        "gate_overvoltage",
        "threshold_cold",
        "current_continuous",
        "current_peak",
        "avalanche",
        "switching_data",
        "thermal_runaway",
        "thermal_no_option",
        "surge",
    ]
    assert (
        "{need}" in RULES["gate_drive_level"] and "{have}" in RULES["gate_drive_level"]
    )


# ------------------------------------------------------------------------- safety cases
def test_24v_high_side_p_channel_without_clamp_is_refused_for_gate_overvoltage():
    """Physics §9: gate pulled to 0 V under a 24 V source sees −24 V; |V_GS| must stay
    ≤ 0.7 × 20 V = 14 V (MIL-DTL-917 derating)."""
    inv = inventory([switch("P", "pmos")], [("P", 10.0, 0.02)], interfaces=[GREASE])
    ch = Channel("fan", 24.0, 2.0, side="high", drive=3.3)
    res = screen_channel(inv, ch, COND, S, gate_clamp=False)
    assert len(res.passed) == 0
    assert set(res.rejected["rule"]) == {"gate_overvoltage"}
    reason = res.rejected["reason"].iloc[0]
    assert "24 V" in reason and "14 V" in reason and "no Vgs clamp" in reason
    assert res.funnel["gate_overvoltage"] == 2

    clamped = screen_channel(inv, ch, COND, S, gate_clamp=True)
    assert len(clamped.passed) == 2
    row = clamped.passed.iloc[0]
    assert row["topology"] == drive.LEVEL_SHIFTER_CLAMP
    assert row["vgs_on_v"] == pytest.approx(14.0)
    assert "divider" in row["notes"]


def test_standard_level_part_is_refused_at_3v3_drive():
    """Physics §1.3 / E3 rule (common practice): a part guaranteed only at 10 V is not
    admissible at 3.3 V; with a 12 V low-side driver in the inventory it is."""
    inv = inventory([switch("STD")], [("STD", 10.0, 0.01)], interfaces=[GREASE])
    ch = Channel("heater", 24.0, 4.0, drive=3.3)
    res = screen_channel(inv, ch, COND, S)
    assert len(res.passed) == 0
    assert set(res.rejected["rule"]) == {"gate_drive_level"}
    assert (
        res.rejected["reason"]
        .iloc[0]
        .startswith(
            "needs 10 V gate drive for its guaranteed Rds(on); the controller gives 3.3 V"
        )
    )

    inv_d = inventory(
        [switch("STD")], [("STD", 10.0, 0.01)], interfaces=[GREASE], drivers=[LS_DRIVER]
    )
    ok = screen_channel(inv_d, ch, COND, S)
    assert len(ok.passed) == 2
    row = ok.passed.iloc[0]
    assert (row["topology"], row["driver_kind"]) == (drive.GATE_DRIVER, "low_side")
    assert row["vgs_on_v"] == 12.0 and row["vgs_used_v"] == 10.0
    assert (row["driver_v_min"], row["driver_v_max"]) == (10.0, pytest.approx(14.0))


def test_inductive_load_without_diode_or_avalanche_rating_is_refused():
    """Physics §4.2: no clamp and no avalanche rating → a freewheel diode is required;
    with no diode in the inventory the channel has no way, and the result says so."""
    inv = inventory([switch("N", eas=np.nan)], [("N", 2.5, 0.03)], interfaces=[GREASE])
    ch = Channel("valve", 24.0, 1.0, load="inductive", inductance=0.1, drive=3.3)
    res = screen_channel(inv, ch, COND, S)
    assert len(res.passed) == 0
    assert set(res.rejected["rule"]) == {"avalanche"}
    reason = res.rejected["reason"].iloc[0]
    assert "no avalanche rating" in reason
    assert "no diode in the inventory fits" in reason and "36 V" in reason
    assert any("no diode in the inventory fits" in n for n in res.notes)
    assert any(n.startswith("Caution") for n in res.notes)

    with_diode = inventory(
        [switch("N", eas=np.nan)], [("N", 2.5, 0.03)], diodes=[SCHOTTKY],
        interfaces=[GREASE],
    )  # fmt: skip
    res2 = screen_channel(with_diode, ch, COND, S)
    assert len(res2.passed) == 2
    assert res2.passed["needs_diode"].all() and not res2.passed["avalanche_ok"].any()
    assert list(res2.diodes["part"]) == ["D1"]


def test_inductive_load_on_an_avalanche_rated_part_needs_no_diode():
    """E7-like solenoid on a part rated 1 J at 25 °C: E ≈ 72 mJ ≤ 0.8·E_AS(150 °C)."""
    inv = inventory([switch("N", eas=1.0)], [("N", 2.5, 0.03)], interfaces=[GREASE])
    ch = Channel("valve", 24.0, 1.0, load="inductive", inductance=0.1, drive=3.3)
    res = screen_channel(inv, ch, COND, S)
    assert len(res.passed) == 2
    assert res.passed["avalanche_ok"].all() and not res.passed["needs_diode"].any()
    assert "avalanche" in res.passed["notes"].iloc[0]


def test_pwm_inductive_load_always_needs_a_diode():
    """Repetitive avalanche at every PWM cycle is not allowed (physics §4.2)."""
    inv = inventory([switch("N", eas=1.0)], [("N", 2.5, 0.03)], interfaces=[GREASE])
    ch = Channel("coil", 24.0, 1.0, load="inductive", inductance=0.1, drive=3.3,
                 duty=0.5, pwm_frequency=500.0)  # fmt: skip
    res = screen_channel(inv, ch, COND, S)
    assert set(res.rejected["rule"]) == {"avalanche"}
    assert "PWM" in res.rejected["reason"].iloc[0]


def test_part_that_runs_away_thermally_is_refused_with_that_reason():
    """Physics §6.1: loop gain G = Rθ·dP/dTj ≥ 1 has no steady state. 10 A through 50 mΩ
    (5 W at 25 °C, Rds doubling by 125 °C) alone in air at 62 K/W: G ≈ 3 ≥ 1, and no
    interface in the inventory fits its package to put it on a sink."""
    inv = inventory(
        [switch("HOT", rds_hot_ratio=2.0, i_rating=40.0)], [("HOT", 10.0, 0.05)]
    )
    ch = Channel("heater", 24.0, 10.0, drive=12.0)
    res = screen_channel(inv, ch, COND, S, counts=[1])
    assert list(res.rejected["rule"]) == ["thermal_runaway"]
    reason = res.rejected["reason"].iloc[0]
    assert reason.startswith("runs away thermally")
    assert "≥ 1" in reason and "62 K/W" in reason


# ----------------------------------------------------------------------- funnel & rules
def test_a_part_failing_several_rules_counts_under_the_first_and_keeps_every_reason():
    inv = inventory([switch("LOW", v_rating=20.0)], [("LOW", 10.0, 0.01)])
    ch = Channel("heater", 24.0, 4.0, drive=3.3)
    res = screen_channel(inv, ch, COND, S, counts=[1])
    row = res.rejected.iloc[0]
    assert row["rule"] == "voltage"
    assert row["rules"][:2] == ("voltage", "gate_drive_level")
    assert len(row["reasons"]) == len(row["rules"])
    assert "0.8 × its 20 V rating allows only 16 V" in row["reason"]
    assert res.funnel == {r: (1 if r == "voltage" else 0) for r in RULES}
    assert res.rejected_counts == {"voltage": 1}
    assert res.total == 1


def test_continuous_current_rule_depends_on_the_parallel_count():
    inv = inventory(
        [switch("S", i_rating=6.0)], [("S", 2.5, 0.01)], interfaces=[GREASE]
    )
    ch = Channel("heater", 24.0, 8.0, drive=3.3)
    res = screen_channel(inv, ch, COND, S)
    assert list(res.rejected["count"]) == [1]
    assert res.rejected["rule"].iloc[0] == "current_continuous"
    assert "8 A per device with 1 in parallel" in res.rejected["reason"].iloc[0]
    assert list(res.passed["count"]) == [2]


def test_lamp_inrush_is_checked_against_the_pulsed_rating():
    """E12 (physics §4.3): 55 W 12 V lamp, k = 12 → 55 A start-up peak."""
    inv = inventory(
        [switch("A", i_pulse=50.0), switch("B", i_pulse=80.0)],
        [("A", 2.5, 0.01), ("B", 2.5, 0.01)],
        interfaces=[GREASE],
    )
    ch = Channel("lamp", 12.0, 55.0 / 12.0, load="lamp", drive=3.3)
    res = screen_channel(inv, ch, COND, S, counts=[1])
    assert list(res.passed["part"]) == ["B"]
    assert res.rejected["rule"].iloc[0] == "current_peak"
    assert "55 A" in res.rejected["reason"].iloc[0]
    assert any("12 × the running current" in n for n in res.notes)


def test_side_any_prefers_the_low_side_and_puts_a_p_channel_high():
    inv = inventory(
        [switch("N", vgs_max=12.0), switch("P", "pmos")],
        [("N", 2.5, 0.02), ("P", 10.0, 0.02), ("P", 4.5, 0.03)],
        interfaces=[GREASE],
    )
    ch = Channel("fan", 24.0, 2.0, side="any", drive=3.3)
    res = screen_channel(inv, ch, COND, S, counts=[1])
    sides = dict(zip(res.passed["part"], res.passed["side"], strict=True))
    assert sides == {"N": "low", "P": "high"}
    assert len(res.rejected) == 0


def test_side_any_rejection_names_both_sides():
    inv = inventory([switch("STD")], [("STD", 10.0, 0.01)])
    ch = Channel("fan", 24.0, 2.0, side="any", drive=3.3)
    res = screen_channel(inv, ch, COND, S, counts=[1])
    reasons = res.rejected["reasons"].iloc[0]
    assert any(r.startswith("on the low side:") for r in reasons)
    assert any(r.startswith("on the high side:") for r in reasons)


def test_thermal_rules_read_the_evaluated_losses():
    """Rule logic on a hand-made evaluation (the evaluator is injected): runaway when
    p1·R_best ≥ 1; no option when even an ideal sink (RθJC + best RθCS) rises more than
    T_lim − Ta,max; surge when only the start-up rise breaks it."""

    def fake(inv, channel, conditions, settings, counts=None, **kw):
        sw = inv.switches.reset_index(drop=True)
        p_dev = sw["p_dev"].to_numpy(float)
        n = len(sw)
        return pd.DataFrame(
            {
                "part": sw["part"], "kind": sw["kind"], "package": sw["package"],
                "tab": sw["tab"], "count": 1, "price": sw["price"], "stock": np.nan,
                "tj_max_c": sw["tj_max"], "t_lim_c": sw["tj_max"] - 25.0,
                "rth_jc_k_per_w": sw["rth_jc"], "rth_ja_k_per_w": sw["rth_ja"],
                "vgs_used_v": 10.0, "rds25_ohm": 0.01, "i_dev_a": 1.0,
                "i_dev_peak_a": 1.0, "p_cond_w": p_dev, "p_sw_w": 0.0,
                "p_coss_w": 0.0, "p_gate_w": 0.0, "p_dev_w": p_dev,
                "p0_w": p_dev, "p1_w_per_k": sw["p1"], "r_ja_max_k_per_w": np.nan,
                "surge_rise_k": sw["surge"], "surge_dp_w": 0.0, "surge_method": "",
                "tj_no_sink_c": np.nan, "tj_no_sink_peak_c": np.nan,
                "runaway_no_sink": False, "gain_no_sink": np.nan, "sw_method": "off",
                "loss_ok": True, "loss_reason": "", "loss_assumed": "",
                "loss_notes": "",
            },
            index=range(n),
        )  # fmt: skip

    rows = [
        switch("RUN", p_dev=1.0, p1=0.7, surge=0.0),  # R_best 1.5 K/W → G = 1.05
        switch("BIG", p_dev=80.0, p1=0.01, surge=0.0),  # 80 W × 1.5 = 120 K > 105 K
        switch("PEAK", p_dev=60.0, p1=0.01, surge=20.0),  # 90 K + 20 K > 105 K
        switch("OK", p_dev=10.0, p1=0.01, surge=5.0),
    ]
    pts = [(r["part"], 10.0, 0.01) for r in rows]
    inv = inventory(rows, pts, interfaces=[GREASE])
    ch = Channel("heater", 24.0, 1.0, drive=12.0)
    res = screen_channel(inv, ch, COND, S, counts=[1], evaluate=fake)
    got = dict(zip(res.rejected["part"], res.rejected["rule"], strict=True))
    assert got == {
        "RUN": "thermal_runaway",
        "BIG": "thermal_no_option",
        "PEAK": "surge",
    }
    assert list(res.passed["part"]) == ["OK"]
    big = res.rejected.set_index("part").loc["BIG", "reason"]
    assert "120 K rise" in big and "105 K" in big


# ------------------------------------------------------------------------ explanations
def test_explain_part_gives_the_numbers_for_a_refused_part():
    inv = inventory(
        [switch("STD"), switch("LOG", vgs_max=12.0)],
        [("STD", 10.0, 0.01), ("LOG", 2.5, 0.02)],
        interfaces=[GREASE],
    )
    ch = Channel("heater", 24.0, 4.0, drive=3.3)
    lines = explain_part(inv, ch, COND, S, "STD")
    assert lines[0].startswith("STD with 1–2 in parallel: needs 10 V gate drive")
    passing = explain_part(inv, ch, COND, S, "LOG")
    assert passing[0].startswith(
        "LOG passes every rule for 'heater' with 1–2 in parallel"
    )
    assert "cheaper candidate" in passing[0]
    unknown = explain_part(inv, ch, COND, S, "LOGG")
    assert unknown == [
        "'LOGG' is not in the switches table of the inventory; did you mean 'LOG'?"
    ]


def test_row_checks_give_value_limit_margin_and_unit():
    inv = inventory(
        [switch("N", vgs_max=12.0)], [("N", 2.5, 0.02)], interfaces=[GREASE]
    )
    res = screen_channel(inv, Channel("h", 24.0, 4.0, drive=3.3), COND, S, counts=[1])
    recs = {c["rule"]: c for c in row_checks(res.passed.iloc[0].to_dict())}
    v = recs["voltage"]
    assert (v["value"], v["limit"], v["unit"], v["ok"]) == (26.0, 48.0, "V", True)
    assert v["margin"] == pytest.approx(22.0)
    g = recs["gate_drive_level"]
    assert (g["value"], g["limit"], g["margin"]) == (3.3, 2.5, pytest.approx(0.8))
    assert "avalanche" not in recs  # not applicable to a resistive load


# ---------------------------------------------------------------- diodes and drivers
def test_diode_candidates_apply_voltage_and_current_rules_with_reasons():
    """V_RRM ≥ 1.5 × supply and I_F(AV) ≥ load current (physics §4.1, §10, common practice)."""
    diodes = pd.DataFrame(
        [
            dict(part="OK", v_rrm=40.0, i_avg=1.0, vf=0.5, stock=np.nan),
            dict(part="LOWV", v_rrm=30.0, i_avg=1.0, vf=0.5, stock=np.nan),
            dict(part="LOWI", v_rrm=100.0, i_avg=0.5, vf=0.5, stock=np.nan),
            dict(part="NONE", v_rrm=100.0, i_avg=3.0, vf=0.5, stock=0.0),
        ]
    )
    ch = Channel("valve", 24.0, 1.0, load="inductive", inductance=0.1)
    res = diode_candidates(diodes, ch, S)
    assert list(res.passed["part"]) == ["OK"]
    why = dict(zip(res.rejected["part"], res.rejected["reason"], strict=True))
    assert "below 1.5 × the 24 V supply = 36 V" in why["LOWV"]
    assert "I_F(AV) 0.5 A is below the 1 A" in why["LOWI"]
    assert why["NONE"] == "none in stock"
    e7 = diode_candidates(diodes, ch, Settings(diode_voltage_factor=2.0))
    assert (
        "48 V"
        in dict(zip(e7.rejected["part"], e7.rejected["reason"], strict=True))["OK"]
    )  # E7(a): V_RRM ≥ 48 V at 2 × supply
    assert len(diode_candidates(diodes, Channel("h", 24, 1), S).passed) == 0


def test_driver_candidates_for_a_drive_need_and_for_a_screened_row():
    drivers = pd.DataFrame(
        [
            dict(
                part="LS", kind="low_side", v_out=12.0, v_supply_max=20.0, stock=np.nan
            ),
            dict(part="HS", kind="high_side", v_out=10.0, v_supply_max=40.0, stock=4.0),
            dict(part="ISO", kind="isolated", v_out=15.0, v_supply_max=30.0, stock=2.0),
        ]
    )
    ch = Channel("fan", 24.0, 2.0, side="high")
    need = drive.drive_needs("nmos", "high", ch, S, gate_min=4.5, vgs_max=20.0)
    res = driver_candidates(drivers, need, ch)
    assert list(res.passed["part"]) == ["HS"]
    assert "charge pump" in res.passed["note"].iloc[0]
    why = dict(zip(res.rejected["part"], res.rejected["reason"], strict=True))
    assert "above the part's gate limit 14 V" in why["ISO"]
    assert why["LS"].startswith("kind low_side")
    row = {"driver_kind": "low_side", "driver_v_min": 10.0, "driver_v_max": 14.0}
    assert list(driver_candidates(drivers, row, ch).passed["part"]) == ["LS"]


def test_reason_sentences_are_written_only_when_read_and_match_the_table():
    """A pick reads no sentence, so none is written during screening; reading one row's
    reasons gives exactly that row of the full table, and the table is built once."""
    inv = inventory(
        [switch("LOWV", v_rating=20.0), switch("WEAK", i_rating=2.0), switch("OK")],
        [("LOWV", 10.0, 0.01), ("WEAK", 10.0, 0.01), ("OK", 10.0, 0.01)],
        interfaces=[GREASE],
    )
    ch = Channel("heater", 24.0, 6.0, drive=12.0)
    res = screen_channel(inv, ch, COND, S, counts=[1, 2])
    assert all(not job._done for job in res.jobs)  # nothing written yet
    assert set(res.rejected_rows["part"]) == {"LOWV", "WEAK"}
    assert "reason" not in res.rejected_rows.columns
    last = len(res.rejected_rows) - 1
    ((reason, reasons),) = res.reasons_at([last])
    table = res.rejected
    assert table["reason"].iloc[last] == reason
    assert tuple(table["reasons"].iloc[last]) == reasons
    assert res.rejected is table  # written once, kept
    low = table.set_index(["part", "count"]).loc[("LOWV", 1)]
    assert low["rule"] == "voltage" and "20 V rating" in low["reason"]


def test_side_any_first_rule_comes_from_the_side_that_got_furthest():
    """A part failing on both sides is counted under the later rule (the side where it
    got furthest through the funnel), and that reason names its side."""
    inv = inventory([switch("STD")], [("STD", 10.0, 0.01)])
    ch = Channel("fan", 24.0, 2.0, side="any", drive=3.3)
    res = screen_channel(inv, ch, COND, S, counts=[1])
    row = res.rejected.iloc[0]
    side = row["reason"].split(" side:")[0].removeprefix("on the ")
    assert side in ("low", "high")
    assert sum(res.funnel.values()) == 1 and res.funnel[row["rule"]] == 1
    assert set(row["rules"]) >= {row["rule"]}
