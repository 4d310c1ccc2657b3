"""Device-loss checks against the physics reference's worked values (physics.md §11).

Every check value comes from ``shared/reference/physics.md`` §11, whose author verified the
numbers by running Python (closed forms plus time-stepping or brute force). Each test
names the section and the source tag the reference gives: [b] common practice of the
trade, [c] from memory, [derived] algebra on the stated model. Books: [MUR] Mohan,
Undeland, Robbins, *Power Electronics* (linear-ramp switching); [EM] Erickson,
Maksimović, *Fundamentals of Power Electronics*; [BAL] Baliga, *Fundamentals of Power
Semiconductor Devices* (temperature behaviour of Rds(on)).
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from _shared import loss_switches
from scipy.integrate import solve_ivp
from scipy.optimize import minimize_scalar

from selector import losses as L
from selector.models import Channel, Conditions, Settings

REL = 1e-3  # physics.md §11: "suggested test tolerance 0.1 %"


def approx(x, rel=REL):
    return pytest.approx(x, rel=rel)


_switches = loss_switches


def _points(*rows: tuple[str, float, float]) -> pd.DataFrame:
    return pd.DataFrame(rows, columns=["part", "vgs", "rds_on"])


# E4/E5 MOSFET: V_th 2 V, V_pl 3 V, Q_gs2 2 nC (Q_gs = 2 nC·3/(3 − 2) = 6 nC), Q_gd 6 nC,
# Q_g 15 nC, R_G,int 1.5 Ω, C_oss 300 pF at 25 V, 12 mΩ at 4.5 V. Rating 30 V keeps the
# 12 V supply below half the rating, so Q_gd is used as given.
E4_PART = dict(
    part="E4",
    kind="nmos",
    v_rating=30.0,
    rds_hot_ratio=1.8,
    vth_max=2.0,
    v_plateau=3.0,
    qg=15e-9,
    qgs=6e-9,
    qgd=6e-9,
    rg_int=1.5,
    coss=300e-12,
)
E4_POINTS = (("E4", 10.0, 8e-3), ("E4", 4.5, 12e-3))
E4_FAN = Channel(
    name="fan",
    supply=12.0,
    current=3.0,
    load="inductive",
    inductance=5e-3,
    duty=0.6,
    pwm_frequency=25e3,
    drive=5.0,
)


# ---------------------------------------------------------------------------- E1


def test_heater_on_low_side_nmos_matches_hand_calculation():
    """E1 (physics §1.1 [b], §1.2 M1 [b], §6.1 [derived]): 24 V, 2.4 Ω heater, 10 A, D = 1,
    R25 = 10 mΩ at 10 V, α_L = 0.008 /K → P_c25 = 1.000 W, P0 = 1.000 W, P1 = 0.008 W/K;
    at Tj = 177.78 °C P = 2.2222 W; at T_lim = 125 °C P = 1.800 W."""
    sw = _switches(dict(part="H", kind="nmos", v_rating=40.0, rds_hot_ratio=1.8))
    pts = _points(("H", 10.0, 10e-3))
    heater = Channel(name="heater", supply=24.0, current=24.0 / 2.4, drive=10.0)
    t = L.switch_losses(
        sw, pts, heater, Conditions(), Settings(), 1, [177.78], driver_voltage=10.0
    )
    assert t.missing[0] == ""
    assert t.p0[0] == approx(1.000)
    assert t.p1[0] == approx(0.008)
    assert t.p_dev[0] == approx(2.2222)
    assert t.sw_method[0] == "off" and t.p_sw[0] == 0.0 and t.p_gate[0] == 0.0
    hot = L.switch_losses(
        sw, pts, heater, Conditions(), Settings(), 1, 125.0, driver=True
    )
    assert hot.p_dev[0] == approx(1.800)
    # E1(c): R_total,max = (125 − 60)/P(125) = 36.11 K/W
    assert (125.0 - 60.0) / hot.p_dev[0] == approx(36.11)


def test_conduction_loss_is_duty_times_current_squared_times_rds():
    """E1 and E5 conduction (physics §1.1 [b]): 10²·0.010 = 1.000 W; 0.6·3²·0.0192 =
    0.1037 W."""
    assert L.mosfet_conduction_loss(10.0, 1.0, 0.010) == approx(1.000)
    assert L.mosfet_conduction_loss(3.0, 0.6, 0.0192) == approx(0.1037)


# ---------------------------------------------------------------------------- E2


def test_temperature_model_fits_match_reference_for_k150_of_two():
    """E2 (physics §1.2, models M1 [b], M2 [b], M3 [c: BAL]; numbers [derived]): k150 = 2.0
    → α_L = 0.008000, α_E = 0.005561, n = 1.9797."""
    assert L.RDS_MODELS["M1"].fit(2.0, 150.0) == approx(0.008000)
    assert L.RDS_MODELS["M2"].fit(2.0, 150.0) == approx(0.005561)
    assert L.RDS_MODELS["M3"].fit(2.0, 150.0) == approx(1.9797)
    assert L.rds_alpha(2.0, t_hot=150.0) == approx(0.008)
    # the inventory's ratio is at 125 °C: 1.8 → 0.008 /K
    assert L.rds_alpha(1.8) == approx(0.008)


@pytest.mark.parametrize(
    ("tj", "m1", "m2", "m3"),
    [
        (100.0, 1.6000, 1.5157, 1.5593),
        (125.0, 1.8000, 1.7411, 1.7729),
        (-40.0, 0.4800, 0.6974, 0.6146),
    ],
)
def test_temperature_model_ratios_match_reference(tj, m1, m2, m3):
    """E2 (physics §1.2 [b; c: BAL], [derived]): R/R25 for k150 = 2.0 by M1/M2/M3, before
    the clamp."""
    for name, want in (("M1", m1), ("M2", m2), ("M3", m3)):
        got = L.rds_model_factor(tj, 2.0, name, t_hot=150.0, clamp=False)
        assert got == approx(want), name


def test_rds_held_at_25c_value_below_25c():
    """E2 / physics §1.2 [b]: below 25 °C the models disagree (0.48/0.70/0.61 at −40 °C),
    so the on-resistance is clamped to R25 (conservative)."""
    for name in L.RDS_MODELS:
        assert L.rds_model_factor(-40.0, 2.0, name, t_hot=150.0) == 1.0
    assert L.rds_factor(-40.0, 0.008) == 1.0
    assert L.rds_factor(100.0, 0.008) == approx(1.6)
    with pytest.raises(ValueError, match="unknown Rds"):
        L.rds_model_factor(25.0, 2.0, "M9")


def test_cold_junction_keeps_25c_loss_in_switch_losses():
    """physics §1.2 clamp [b]: p_dev at −10 °C equals p0 (the 25 °C loss)."""
    sw = _switches(dict(part="H", kind="nmos", v_rating=40.0, rds_hot_ratio=1.8))
    pts = _points(("H", 10.0, 10e-3))
    ch = Channel(name="h", supply=24.0, current=10.0, drive=10.0)
    t = L.switch_losses(sw, pts, ch, Conditions(), Settings(), 1, -10.0)
    assert t.p_dev[0] == t.p0[0] == approx(1.0)


def test_blank_hot_ratio_uses_the_proposed_default_and_says_so():
    """physics §1.2 proposed default [c]: α_L 0.8 %/K (≤ 100 V) → ratio 1.8 at 125 °C,
    1.2 %/K above 100 V → 2.2; the result lists the assumption."""
    sw = _switches(
        dict(part="LV", kind="nmos", v_rating=60.0),
        dict(part="HV", kind="nmos", v_rating=400.0),
    )
    pts = _points(("LV", 10.0, 0.01), ("HV", 10.0, 0.01))
    ch = Channel(name="h", supply=24.0, current=1.0, drive=10.0)
    t = L.switch_losses(sw, pts, ch, Conditions(), Settings())
    assert t.alpha.tolist() == pytest.approx([0.008, 0.012])
    recs = {(r["part"], r["column"]): r["value"] for r in t.assumed_records()}
    assert recs[("LV", "rds_hot_ratio")] == "1.8"
    assert recs[("HV", "rds_hot_ratio")] == "2.2"


# ---------------------------------------------------------------------------- E3


@pytest.mark.parametrize(
    ("drive", "want"),
    [(10.8, 8e-3), (6.65, 12e-3), (4.75, 12e-3), (4.5, 12e-3), (3.135, np.nan)],
)
def test_gate_voltage_spec_point_is_highest_listed_at_or_below_drive(drive, want):
    """E3 (physics §1.3 rule [b]): 8 mΩ at 10 V, 12 mΩ at 4.5 V: 12 V driver (10.8 V min)
    → 8 mΩ; 7 V −5 % (6.65 V) → 12 mΩ, never interpolated; 4.75 V → 12 mΩ; 3.135 V →
    no guaranteed point (reject)."""
    pts = _points(("E3", 10.0, 8e-3), ("E3", 4.5, 12e-3), ("other", 2.5, 1e-3))
    rds, used = L.rds_at_drive(pts, ["E3"], drive)
    if np.isnan(want):
        assert np.isnan(rds[0]) and np.isnan(used[0])
    else:
        assert rds[0] == want
        assert used[0] == (10.0 if want == 8e-3 else 4.5)


def test_spec_point_lookup_is_per_part_and_keeps_input_order():
    """physics §1.3 [b]: each part gets its own point; repeats and P-channel (negative)
    points are handled; duplicate points keep the larger (worst) value."""
    pts = _points(
        ("A", 10.0, 8e-3),
        ("A", 4.5, 12e-3),
        ("P", -4.5, 30e-3),
        ("P", -10.0, 20e-3),
        ("P", -10.0, 22e-3),
    )
    rds, used = L.rds_at_drive(pts, ["P", "A", "missing", "A", "P"], [12, 5, 12, 12, 5])
    assert rds[0] == 22e-3 and used[0] == 10.0
    assert rds[1] == 12e-3
    assert np.isnan(rds[2])
    assert rds[3] == 8e-3
    assert rds[4] == 30e-3 and used[4] == 4.5
    low = L.rds_lowest_vgs(pts, ["A", "P", "missing"])
    assert low[:2].tolist() == [4.5, 4.5] and np.isnan(low[2])


def test_standard_level_part_is_refused_at_logic_drive_with_numbers():
    """E3 (physics §1.3 [b]): a 3.3 V controller (3.135 V min) cannot reach the 4.5 V
    point; the row is refused with the numbers and its losses are not evaluated."""
    sw = _switches(dict(part="E3", kind="nmos", v_rating=30.0, rds_hot_ratio=1.8))
    pts = _points(("E3", 10.0, 8e-3), ("E3", 4.5, 12e-3))
    ch = Channel(name="valve", supply=12.0, current=1.0, drive=3.135)
    t = L.switch_losses(sw, pts, ch, Conditions(), Settings())
    assert "needs 4.5 V gate drive" in t.missing[0]
    assert "3.135 V" in t.missing[0]
    assert np.isnan(t.p_dev[0]) and np.isnan(t.p0[0])


# ---------------------------------------------------------------------------- E4


def test_gate_charge_intervals_with_microcontroller_pin_match_reference():
    """E4 (physics §2.2 constant-gate-current method [b], §2.5 R_pin [derived from c]):
    R_G = 40 + 100 + 1.5 Ω; t_ri 113.20, t_fv 424.50, t_rv 283.00, t_fi 113.20 ns."""
    r_g = 40.0 + 100.0 + 1.5
    v_pl = L.plateau_voltage(2.0, 3.0, 3.0)
    assert v_pl == approx(3.0)
    q_gs2 = L.qgs2_from_qgs(6e-9, v_pl, 2.0)
    assert q_gs2 == approx(2e-9)
    ivl = L.gate_charge_intervals(5.0, r_g, 2.0, v_pl, q_gs2, 6e-9)
    assert ivl.t_ri == approx(113.20e-9)
    assert ivl.t_fv == approx(424.50e-9)
    assert ivl.t_rv == approx(283.00e-9)
    assert ivl.t_fi == approx(113.20e-9)


def test_gate_charge_switching_loss_of_pin_driven_fan_is_0_4203_w():
    """E4 (physics §2.2 [b]; linear-ramp energies after [MUR]): E_on = 9.679 µJ,
    E_off = 7.132 µJ, P_sw = 16.810 µJ·25 kHz = 0.4203 W; the same from switch_losses."""
    ivl = L.gate_charge_intervals(5.0, 141.5, 2.0, 3.0, 2e-9, 6e-9)
    assert 0.5 * 12 * 3 * ivl.t_on == approx(9.679e-6)
    assert 0.5 * 12 * 3 * ivl.t_off == approx(7.132e-6)
    assert L.transition_loss(12.0, 3.0, ivl.t_on, ivl.t_off, 25e3) == approx(0.4203)
    t = L.switch_losses(
        _switches(E4_PART), _points(*E4_POINTS), E4_FAN, Conditions(), Settings()
    )
    assert t.missing[0] == ""
    assert t.sw_method[0] == "gate_charge"
    assert t.p_sw[0] == approx(0.4203)


def test_rc_gate_model_agrees_with_constant_current_form():
    """E4 RC form (physics §2.2 [b; derived]): C_iss = 2 nF, τ = 283.0 ns, t_ri 114.75 ns,
    t_d,on 144.56 ns; within ~1.5 % of the constant-current t_ri."""
    rc = L.rc_intervals(5.0, 141.5, 2e-9, 2.0, 3.0)
    assert rc["tau"] == approx(283.0e-9)
    assert rc["t_ri"] == approx(114.75e-9)
    assert rc["t_d_on"] == approx(144.56e-9)
    cc = L.gate_charge_intervals(5.0, 141.5, 2.0, 3.0, 2e-9, 6e-9)
    assert abs(rc["t_ri"] / cc.t_ri - 1.0) < 0.015


def test_datasheet_times_underestimate_pin_drive_and_are_refused_for_it():
    """E4 (physics §2.1 [c: MUR], §2.5 [b]): the simple method with datasheet
    t_r + t_f = 18 ns gives 8.10 mW, 52× too low for pin drive; so a part with only
    t_rise/t_fall is refused for pin-driven PWM, and accepted with a gate driver."""
    assert L.transition_loss(12.0, 3.0, 10e-9, 8e-9, 25e3) == approx(8.10e-3)
    assert 0.4203 / 8.10e-3 == approx(52, rel=0.01)
    part = dict(
        part="T",
        kind="nmos",
        v_rating=30.0,
        rds_hot_ratio=1.8,
        t_rise=10e-9,
        t_fall=8e-9,
        coss=300e-12,
    )
    pts = _points(("T", 4.5, 12e-3), ("T", 10.0, 8e-3))
    pin = L.switch_losses(_switches(part), pts, E4_FAN, Conditions(), Settings())
    assert "strong gate driver" in pin.missing[0]
    drv = L.switch_losses(
        _switches(part), pts, E4_FAN, Conditions(), Settings(), driver_voltage=10.0
    )
    assert drv.missing[0] == "" and drv.sw_method[0] == "rise_fall_times"
    assert drv.p_sw[0] == approx(8.10e-3)
    assert drv.vgs_used[0] == 10.0 and drv.rds25[0] == 8e-3


def test_3v3_pin_cannot_pass_a_3v_plateau():
    """E4 (physics §2.5 [b]): with a 3.3 V pin, I_g2 = 0.3/141.5 = 2.12 mA and
    t_fv = 2.83 µs; a plateau at or above the drive level cannot be switched at all."""
    ivl = L.gate_charge_intervals(3.3, 141.5, 2.0, 3.0, 2e-9, 6e-9)
    assert 0.3 / 141.5 == approx(2.12e-3, rel=2e-3)
    assert ivl.t_fv == approx(2.83e-6, rel=2e-3)
    blocked = L.gate_charge_intervals(3.0, 141.5, 2.0, 3.0, 2e-9, 6e-9)
    assert np.isinf(blocked.t_fv)
    part = dict(E4_PART, v_plateau=3.4)
    pts = _points(("E4", 2.5, 20e-3), ("E4", 4.5, 12e-3))
    ch = Channel(name="fan", supply=12.0, current=3.0, pwm_frequency=25e3, drive=3.3)
    t = L.switch_losses(_switches(part), pts, ch, Conditions(), Settings())
    assert "plateau 3.4 V at or above the 3.3 V drive" in t.missing[0]
    on_off = L.switch_losses(
        _switches(part), pts, Channel(name="v", supply=12, current=1, drive=3.3),
        Conditions(), Settings(),
    )  # fmt: skip
    assert "cannot switch it on" in on_off.missing[0]


# ---------------------------------------------------------------------------- E5


def test_coss_energy_of_300pf_at_12v_is_41_57_nj():
    """E5 (physics §2.3 junction model [b; derived]): C_oss = 300 pF at 25 V:
    E_oss(12 V) = 41.57 nJ (C_oss(12 V) = 433.0 pF, ½CV² = 31.18 nJ, ratio 4/3);
    P_oss = 1.039 mW at 25 kHz."""
    e = L.coss_energy(300e-12, 12.0, 25.0)
    assert e == approx(41.57e-9)
    c12 = 300e-12 * math.sqrt(25.0 / 12.0)
    assert c12 == approx(433.0e-12)
    assert 0.5 * c12 * 144 == approx(31.18e-9)
    assert e / (0.5 * c12 * 144) == approx(4.0 / 3.0, rel=1e-9)
    assert e * 25e3 == approx(1.039e-3)


def test_gate_drive_power_and_its_shares_in_the_gate_loop():
    """E5 (physics §2.4 [b]): P_G = 15 nC·5 V·25 kHz = 1.875 mW: pin 0.530 mW, external
    resistor 1.325 mW, inside the MOSFET 0.020 mW."""
    p_g = L.gate_drive_power(15e-9, 5.0, 25e3)
    assert p_g == approx(1.875e-3)
    sh = L.gate_power_shares(p_g, {"pin": 40.0, "external": 100.0, "internal": 1.5})
    assert sh["pin"] == approx(0.530e-3, rel=2e-3)
    assert sh["external"] == approx(1.325e-3, rel=2e-3)
    assert sh["internal"] == approx(0.020e-3, rel=2e-2)


def test_pin_driven_fan_total_mosfet_loss_is_0_525_w():
    """E5 (physics §1, §2.2–§2.4 [b]): R(4.5 V, 100 °C) = 19.2 mΩ, P_c = 0.1037 W;
    total ≈ 0.1037 + 0.4203 + 0.0010 = 0.525 W; P_G 1.875 mW reported apart."""
    t = L.switch_losses(
        _switches(E4_PART),
        _points(*E4_POINTS),
        E4_FAN,
        Conditions(),
        Settings(),
        1,
        100.0,
    )
    assert t.rds25[0] == 12e-3 and t.vgs_used[0] == 4.5
    assert t.p_cond[0] == approx(0.1037, rel=2e-3)
    assert t.p_coss[0] == approx(1.039e-3)
    assert t.p_gate[0] == approx(1.875e-3)
    assert t.p_dev[0] == approx(0.525, rel=2e-3)
    assert t.p_dev[0] == approx(t.p0[0] + t.p1[0] * 75.0, rel=1e-12)
    cols = {r["column"] for r in t.assumed_records()}
    assert {"pin_resistance", "gate_resistor_pin", "coss_test_v"} <= cols


def test_schottky_freewheel_diode_loss_is_0_720_w():
    """E5 (physics §4.1 [b]): V_F0 = 0.45 V, r_F = 0.05 Ω, 1 − D = 0.4, 3 A:
    P_D = 0.4·(0.45·3 + 0.05·9) = 0.720 W."""
    assert L.freewheel_diode_loss(E4_FAN, 0.45, 0.05) == approx(0.720)
    need = L.diode_requirements(E4_FAN, Settings())
    assert need.needed
    assert need.i_avg == approx(1.2)
    assert need.i_avg_min == approx(1.2 / 0.8)
    assert need.i_peak == 3.0
    assert need.v_rrm_min == approx(18.0)
    # vectorised over a diode table
    np.testing.assert_allclose(need.loss([0.45, 0.9], 0.05), [0.720, 1.260])


# ---------------------------------------------------------------------------- E6


def test_igbt_conduction_from_two_point_fit_is_6_816_w():
    """E6 (physics §3.1 [b; c]): (5 A, 1.25 V), (20 A, 2.10 V) → r_CE = 56.67 mΩ,
    V_CE0 = 0.9667 V; 8 A, D = 0.6 → P_c = 6.816 W."""
    vce0, r_ce = L.igbt_two_point_fit(5.0, 1.25, 20.0, 2.10)
    assert r_ce == approx(0.05667)
    assert vce0 == approx(0.9667)
    assert L.igbt_conduction_loss(8.0, 0.6, vce0, r_ce) == approx(6.816)


def test_igbt_switching_energy_scaled_to_the_application_is_0_41933_mj():
    """E6 (physics §3.2 [c]): 1.5 mJ at 400 V, 20 A, 150 °C; K_i = 1, K_v = 1.35,
    TC_E = 0.003 → 0.41933 mJ at 325 V, 8 A, 125 °C; P_sw = 2.0966 W at 5 kHz; with
    conduction P = 8.9126 W and RθSA,max = 75/8.9126 − 1.3 = 7.115 K/W."""
    e = L.igbt_switching_energy(1.5e-3, 8.0, 20.0, 325.0, 400.0, 125.0, 150.0)
    assert e == approx(0.41933e-3)
    assert e * 5e3 == approx(2.0966)
    p = 6.816 + e * 5e3
    assert p == approx(8.9126)
    assert 75.0 / p - 1.3 == approx(7.115)


def test_igbt_single_point_rule_is_conservative_and_flags_extrapolation():
    """physics §3.1 [derived]: v_CE(i) = V_CE(sat)·max(1, i/I_test) bounds the E6 line
    V_CE0 + r_CE·i (fitted through (20 A, 2.10 V)) at every current; above I_test the
    engine flags it; energies scale with (i/e_test_i) and (V/e_test_v)^K_v (§3.2)."""
    vce0, r_ce = L.igbt_two_point_fit(5.0, 1.25, 20.0, 2.10)
    i = np.linspace(0.1, 40.0, 200)
    assert np.all(L.igbt_vce(i, 2.10, 20.0) >= vce0 + r_ce * i - 1e-12)
    sw = _switches(
        dict(
            part="G",
            kind="igbt",
            v_rating=600.0,
            vce_sat=2.0,
            vce_sat_i=10.0,
            e_on=0.9e-3,
            e_off=0.6e-3,
            e_test_v=400.0,
            e_test_i=10.0,
            qg=80e-9,
        )
    )
    ch = Channel(
        name="chopper",
        supply=325.0,
        current=12.0,
        duty=0.5,
        pwm_frequency=5e3,
        drive=15,
    )
    t = L.switch_losses(
        sw, _points(), ch, Conditions(), Settings(), 1, 25.0, driver=True
    )
    assert t.sw_method[0] == "igbt_energy" and t.missing[0] == ""
    assert t.p_cond[0] == approx(0.5 * 12.0 * 2.0 * 12.0 / 10.0)
    e = 1.5e-3 * (12.0 / 10.0) * (325.0 / 400.0) ** 1.35
    assert t.p_sw[0] == approx(e * 5e3)
    assert t.p_coss[0] == 0.0  # included in IGBT E_on (physics §2.3 [b])
    assert "above the vce_sat test current" in t.notes[0]
    assert "energies extrapolated" in t.notes[0]
    # p1: hot V_CE(sat) factor 1.2 at 125 °C and TC_E on the switching energy
    assert t.p1[0] == approx(0.002 * t.p_cond[0] + 0.003 * t.p_sw[0])
    no_e = L.switch_losses(
        sw.drop(columns=["e_on"]), _points(), ch, Conditions(), Settings(), driver=True
    )
    assert "no switching energies" in no_e.missing[0]


# ---------------------------------------------------------------------------- E7


def test_unclamped_solenoid_avalanche_energy_conservative_73_53_mj():
    """E7(b) (physics §4.2 [b]): 0.1 H, 1 A, V_BR = 75 V, 24 V → ½LI²·V_BR/(V_BR − V_DD)
    = 73.53 mJ, t_av = 1.961 ms; V_BR ≈ 1.25·60 V here (1.2–1.4 × V_DSS, [c])."""
    assert L.avalanche_energy(0.1, 1.0, 75.0, 24.0) == approx(73.53e-3)
    assert L.avalanche_time(0.1, 1.0, 75.0, 24.0) == approx(1.961e-3)
    assert L.avalanche_voltage(60.0, 1.25) == 75.0
    assert np.isinf(L.avalanche_energy(0.1, 1.0, 20.0, 24.0))


def test_unclamped_solenoid_avalanche_energy_with_coil_resistance_56_40_mj():
    """E7(b) (physics §4.2 [derived, checked numerically]): with R = 24 Ω → 56.40 mJ,
    t_av = 1.607 ms; cross-checked here by integrating L·di/dt = V_DD − V_BR − R·i with
    scipy's solve_ivp (general-purpose ODE solver)."""
    e = L.avalanche_energy(0.1, 1.0, 75.0, 24.0, 24.0)
    t_av = L.avalanche_time(0.1, 1.0, 75.0, 24.0, 24.0)
    assert e == approx(56.40e-3)
    assert t_av == approx(1.607e-3)

    def rhs(_t, y):
        i = max(y[0], 0.0)
        return [(24.0 - 75.0 - 24.0 * i) / 0.1, 75.0 * i]

    def hit_zero(_t, y):
        return y[0]

    hit_zero.terminal = True
    sol = solve_ivp(rhs, (0, 0.01), [1.0, 0.0], events=hit_zero, rtol=1e-10, atol=1e-12)
    assert sol.y[1, -1] == approx(float(e), rel=1e-6)
    assert sol.t_events[0][0] == approx(float(t_av), rel=1e-6)


def test_avalanche_rating_derated_to_starting_temperature_is_60_mj():
    """E7(b) (physics §4.2 [b]; [a:BLACK] for the fall with temperature): 100 mJ at 25 °C,
    Tj,max 175 °C, start 85 °C → 60.0 mJ; 73.5 > 60 and 56.4 > 0.8·60 = 48 → FAIL, fit a
    diode (acceptance 0.8 proposed [c])."""
    eas = L.eas_at_start(100e-3, 175.0, 85.0)
    assert eas == approx(60.0e-3)
    assert L.eas_at_start(100e-3, 175.0, 180.0) == 0.0
    acc = Settings().avalanche_acceptance * eas
    assert acc == approx(48e-3)
    assert L.avalanche_energy(0.1, 1.0, 75.0, 24.0) > eas
    assert L.avalanche_energy(0.1, 1.0, 75.0, 24.0, 24.0) > acc


def test_solenoid_freewheel_diode_energy_and_ratings():
    """E7(a) (physics §4.1 [derived; b]): τ = L/R = 4.167 ms, E_D ≈ 0.9·1·4.167 ms =
    3.75 mJ per turn-off; V_RRM ≥ 2·24 = 48 V (the reference uses 2×; the default factor
    1.5 gives 36 V), peak 1 A; stored energy ½LI² = 50.0 mJ."""
    valve = Channel(
        name="valve",
        supply=24.0,
        current=1.0,
        load="inductive",
        inductance=0.1,
        on_time=2.0,
        off_time=8.0,
    )
    need = L.diode_requirements(valve, Settings(diode_voltage_factor=2.0))
    assert need.v_rrm_min == approx(48.0)
    assert need.i_peak == 1.0
    assert need.q_event == approx(4.167e-3)
    assert need.energy_per_event(0.9) == approx(3.75e-3)
    assert need.f_events == approx(0.1)
    assert L.freewheel_diode_loss(valve, 0.9) == approx(3.75e-3 * 0.1)
    assert L.diode_requirements(valve, Settings()).v_rrm_min == approx(36.0)
    assert 0.5 * 0.1 * 1.0**2 == approx(50.0e-3)
    heater = Channel(name="heater", supply=24.0, current=10.0)
    assert not L.diode_requirements(heater, Settings()).needed
    assert L.freewheel_diode_loss(heater, 0.9) == 0.0


def test_diode_plus_zener_clamp_split():
    """E7(c) (physics §4.1 [derived]): 33 V Zener + 0.9 V diode: Zener energy
    50·33/33.9 = 48.67 mJ; the switch blocks 57.9 V (≥ 72.4 V rating at 80 %)."""
    z = L.zener_clamp(0.1, 1.0, 33.0, 0.9, 24.0)
    assert z["energy_zener"] == approx(48.67e-3)
    assert z["v_switch"] == approx(57.9)
    assert z["v_switch"] / 0.8 == approx(72.4, rel=2e-3)


# ---------------------------------------------------------------------------- E11


def test_two_paralleled_mosfets_static_sharing():
    """E11 (physics §7.1 [b; derived]): 30 A, R_min = 0.8·R_max: I1 = 30/1.8 = 16.667 A,
    I2 = 13.333 A (+11.1 % over 15 A); the worst loss is equal sharing at R_max."""
    s = L.parallel_sharing(30.0, 2, 0.8)
    assert s.i_worst == approx(16.667)
    assert 30.0 - s.i_worst == approx(13.333)
    assert s.i_worst / 15.0 - 1.0 == approx(0.111, rel=3e-3)
    assert s.r_hot_ratio == 1.0 and s.i_hot == approx(15.0)


def test_three_paralleled_mosfets_worst_device():
    """E11 N = 3 (physics §7.1 [derived]): 45 A, device 1 at 8 mΩ, others 10 mΩ:
    I1 = 17.308 A, P1 = 2.396 W (> 2.250 W for equal sharing)."""
    s = L.parallel_sharing(45.0, 3, 0.8)
    assert s.r_hot_ratio == approx(0.8)
    assert s.i_hot == approx(17.308)
    assert s.i_hot**2 * 0.8 * 10e-3 == approx(2.396)
    sw = _switches(dict(part="M", kind="nmos", v_rating=40.0, rds_hot_ratio=1.8))
    pts = _points(("M", 10.0, 10e-3))
    ch = Channel(name="big", supply=24.0, current=45.0, drive=10.0)
    t = L.switch_losses(sw, pts, ch, Conditions(), Settings(rds_min_ratio=0.8), 3)
    assert t.p_dev[0] == approx(2.396)
    assert t.i_dev[0] == approx(17.308)


@pytest.mark.parametrize("n", [2, 3, 4, 5, 8])
@pytest.mark.parametrize("rho", [0.3, 0.5, 0.7, 0.8])
def test_worst_device_resistance_rule_matches_brute_force(n, rho):
    """physics §7.1 [derived, checked by brute force]: the device loss I1²·R1 with the
    others at R_max peaks at R1 = min(R_max, max(R_min, R_max/(N − 1))); checked here
    on a dense grid of R1 ∈ [R_min, R_max] and, independently, with scipy's bounded
    scalar optimiser."""
    r1 = np.linspace(rho, 1.0, 200_001)
    p_grid = (1.0 / (1.0 + (n - 1) * r1)) ** 2 * r1
    s = L.parallel_sharing(1.0, n, rho)
    p_rule = s.i_hot**2 * s.r_hot_ratio
    assert p_rule >= p_grid.max() - 1e-15
    assert p_rule == approx(p_grid.max(), rel=1e-9)
    res = minimize_scalar(
        lambda r: -((1.0 / (1.0 + (n - 1) * r)) ** 2) * r,
        bounds=(rho, 1.0),
        method="bounded",
        options={"xatol": 1e-10},
    )
    assert p_rule == approx(-res.fun, rel=1e-6)


def test_two_paralleled_mosfets_worst_loss_covers_electrothermal_mismatch():
    """E11 (physics §7.1 [b], §6.1 [derived]): common sink at 70 °C, 1.5 K/W each,
    α_L = 0.008. Mismatched pair by fixed point: I1 = 16.628 A, Tj 74.64/73.73 °C,
    P 3.090/2.485 W. Equal sharing at R_max (what the engine reports): Tj = 74.72 °C,
    P = 3.145 W, the larger loss."""
    r25 = np.array([8e-3, 10e-3])
    tj = np.array([70.0, 70.0])
    for _ in range(200):
        r = r25 * (1 + 0.008 * (tj - 25))
        i = 30.0 * (1 / r) / np.sum(1 / r)
        p = i**2 * r
        tj = 70.0 + 1.5 * p
    assert i[0] == approx(16.628)
    assert tj.tolist() == pytest.approx([74.64, 73.73], rel=1e-4)
    assert p.tolist() == pytest.approx([3.090, 2.485], rel=1e-3)

    sw = _switches(dict(part="M", kind="nmos", v_rating=40.0, rds_hot_ratio=1.8))
    pts = _points(("M", 10.0, 10e-3))
    ch = Channel(name="pair", supply=24.0, current=30.0, drive=10.0)
    t = L.switch_losses(sw, pts, ch, Conditions(), Settings(rds_min_ratio=0.8), 2)
    # closed form of physics §6.1 with the engine's p0/p1: Tj = Ts + Rθ·P(Tj)
    tj_eq = 25.0 + (70.0 - 25.0 + 1.5 * t.p0[0]) / (1.0 - 1.5 * t.p1[0])
    assert tj_eq == approx(74.72, rel=1e-4)
    at = L.switch_losses(
        sw, pts, ch, Conditions(), Settings(rds_min_ratio=0.8), 2, tj_eq
    )
    assert at.p_dev[0] == approx(3.145)
    assert at.p_dev[0] > p.max()
    assert at.i_dev[0] == approx(16.667)


def test_parallel_switching_energy_at_one_and_a_half_times_the_share():
    """physics §7.1 proposed [c]: each of N devices switches (I/N)·1.5 (never above I);
    two gates on one pin each see N·R_pin + R_ext + R_int [derived]."""
    t = L.switch_losses(
        _switches(E4_PART),
        _points(*E4_POINTS),
        E4_FAN,
        Conditions(),
        Settings(),
        np.array([1, 2, 3]),
    )
    assert t.i_sw.tolist() == pytest.approx([3.0, 2.25, 1.5])
    r_g2 = 2 * 40.0 + 100.0 + 1.5
    ivl = L.gate_charge_intervals(5.0, r_g2, 2.0, 3.0, 2e-9, 6e-9)
    assert t.p_sw[1] == approx(L.transition_loss(12.0, 2.25, ivl.t_on, ivl.t_off, 25e3))
    assert "parallel_switching_factor" in t.assumed[1]
    assert "parallel_switching_factor" not in t.assumed[0]


# ---------------------------------------------------------------------------- rules


def test_missing_switching_data_refuses_pwm_but_not_on_off():
    """Project rule (documented in switch_losses): at any PWM > 0 a part without the
    data its switching loss needs is refused with the reason, never guessed; at f = 0
    the switching loss is 0 (common practice: a few transitions a minute)."""
    part = dict(part="N", kind="nmos", v_rating=30.0, rds_hot_ratio=1.8, coss=1e-9)
    pts = _points(("N", 4.5, 10e-3))
    pwm = L.switch_losses(_switches(part), pts, E4_FAN, Conditions(), Settings())
    assert "no switching data" in pwm.missing[0]
    assert pwm.sw_method[0] == "no_data" and not pwm.ok[0]
    onoff = Channel(name="valve", supply=12.0, current=3.0, drive=5.0)
    t = L.switch_losses(_switches(part), pts, onoff, Conditions(), Settings())
    assert t.ok[0] and t.sw_method[0] == "off" and t.p_sw[0] == 0.0
    no_coss = dict(E4_PART, coss=np.nan)
    c = L.switch_losses(
        _switches(no_coss), _points(*E4_POINTS), E4_FAN, Conditions(), Settings()
    )
    assert "coss blank" in c.missing[0]


def test_gate_charge_estimates_are_listed_as_assumed():
    """physics §2.2 [b]: Q_gs bound qg − qgd, plateau estimate vth_max + 1 V ([c]
    proposed), rg_int default ([c]) and Q_gd scaled above half the rating are listed."""
    part = dict(
        part="X",
        kind="nmos",
        v_rating=20.0,
        rds_hot_ratio=1.8,
        vth_max=2.0,
        qg=20e-9,
        qgd=6e-9,
        coss=300e-12,
    )
    t = L.switch_losses(
        _switches(part), _points(("X", 4.5, 12e-3)), E4_FAN, Conditions(), Settings()
    )
    assert t.ok[0], t.missing[0]
    rec = {r["column"]: r["value"] for r in t.assumed_records()}
    assert rec["v_plateau"] == "3 V"
    assert rec["qgs"] == "14 nC"
    assert rec["rg_int"] == "1.5 Ω"
    assert rec["qgd_test_v"] == "10 V"
    v_th, v_pl = 2.0, 3.0
    q_gs2 = 14e-9 * (v_pl - v_th) / v_pl
    ivl = L.gate_charge_intervals(5.0, 141.5, v_th, v_pl, q_gs2, 6e-9 * 12.0 / 10.0)
    assert t.p_sw[0] == approx(L.transition_loss(12.0, 3.0, ivl.t_on, ivl.t_off, 25e3))


def test_resistive_pwm_uses_one_sixth_transition_energy():
    """physics §2.1 [derived]: for a resistive load voltage and current ramp together,
    V·I·t/6 per transition, a third of the clamped-inductive ½ form."""
    assert L.load_transition_factor("resistive") == approx(1 / 6)
    assert L.load_transition_factor("lamp") == approx(1 / 6)
    assert L.load_transition_factor("motor") == 0.5
    heater = Channel(
        name="mat", supply=12.0, current=3.0, duty=0.6, pwm_frequency=25e3, drive=5.0
    )
    t = L.switch_losses(
        _switches(E4_PART), _points(*E4_POINTS), heater, Conditions(), Settings()
    )
    assert t.p_sw[0] == approx(0.4203 / 3.0)
    assert "V·I·t/6" in t.notes[0]


def test_unknown_kind_and_bad_count():
    """Input guard: an unknown kind is refused per row; a count below one device is a
    programming error."""
    sw = _switches(dict(part="Q", kind="bjt"))
    t = L.switch_losses(sw, _points(), E4_FAN, Conditions(), Settings())
    assert "unknown switch kind" in t.missing[0]
    with pytest.raises(ValueError, match="count"):
        L.switch_losses(sw, _points(), E4_FAN, Conditions(), Settings(), 0)
    with pytest.raises(ValueError, match="count"):
        L.switch_losses(sw, _points(), E4_FAN, Conditions(), Settings(), 1.5)


def test_results_broadcast_over_counts_and_temperatures():
    """Engine contract: count and tj broadcast against the rows; p_dev equals the linear
    model p0 + p1·(Tj − 25) (physics §6.1 [derived]) everywhere at Tj ≥ 25 °C."""
    sw = _switches(E4_PART, dict(E4_PART, part="E4b", qgd=9e-9))
    pts = _points(*E4_POINTS, ("E4b", 4.5, 9e-3))
    counts = np.array([[1], [2], [3], [4]])
    tj = np.array([[25.0], [80.0], [125.0], [150.0]])
    t = L.switch_losses(sw, pts, E4_FAN, Conditions(), Settings(), counts, tj)
    assert t.p_dev.shape == (4, 2) and t.missing.shape == (4, 2)
    np.testing.assert_allclose(t.p_dev, t.p0 + t.p1 * (tj - 25.0), rtol=1e-12)
    assert t.part[3, 1] == "E4b"
    frame = t.to_frame()
    assert len(frame) == 8 and {"p_dev_w", "p1_w_per_k", "i_dev_a"} <= set(frame)


# ------------------------------------------------------- fast paths against plain pandas
def test_switch_kind_flags_follow_the_text_normalisation():
    """Kinds are compared after strip + lower case (inventory contract); the per-unique
    shortcut must agree with the plain pandas text form on odd spellings and blanks.
    No physics: an equivalence of two codings."""
    kind = pd.Series(
        ["nmos", " PMOS", "igbt ", "IGBT", None, np.nan, "diode", "n-mos", 7, "nmos"],
        dtype=object,
    )
    mos, igbt = L._kind_flags(kind)
    norm = kind.astype(str).str.strip().str.lower()
    np.testing.assert_array_equal(mos, norm.isin(("nmos", "pmos")).to_numpy(bool))
    np.testing.assert_array_equal(igbt, norm.eq("igbt").to_numpy(bool, na_value=False))
    assert mos.tolist()[:4] == [True, True, False, False]
    assert igbt.tolist()[:4] == [False, False, True, True]


def test_rds_lookup_text_shortcut_equals_the_converted_ids():
    """Part ids are matched as text (``astype(str)``): plain text ids take the shortcut,
    ids of other types (numbers) the conversion; both give the §1.3 rule (highest
    point ≤ drive, E3: 12 mΩ at 4.5 V for a 5 V drive)."""
    rp = pd.DataFrame(
        {
            "part": ["E3", "E3", "7"],
            "vgs": [10.0, 4.5, 4.5],
            "rds_on": [0.008, 0.012, 0.02],
        }
    )
    r, used = L.rds_at_drive(rp, np.array(["E3", "7", None], dtype=object), 5.0)
    np.testing.assert_allclose(r[:2], [0.012, 0.02])
    assert np.isnan(r[2]) and used[0] == 4.5
    r2, _ = L.rds_at_drive(rp, np.array([7, "E3"], dtype=object), 12.0)  # number id
    np.testing.assert_allclose(r2, [0.02, 0.008])
    r3, _ = L.rds_at_drive(rp, pd.Series(["E3", "7"], dtype="str"), 12.0)
    np.testing.assert_allclose(r3, [0.008, 0.02])


def test_float_columns_read_like_the_coercing_reader():
    """The one-pass column reader gives the same arrays as ``_col`` for float, integer,
    text-with-numbers and absent columns (blank → NaN)."""
    df = pd.DataFrame(
        {
            "a": [1.0, np.nan, 3.0],
            "b": [1, 2, 3],
            "c": pd.Series(["4.5", "x", None], dtype=object),
        }
    )
    got = L._float_columns(df, ("a", "b", "c", "zz", "a"))
    assert set(got) == {"a", "b", "c", "zz"}
    for k, v in got.items():
        np.testing.assert_array_equal(v, L._col(df, k))
        assert v.dtype == float
