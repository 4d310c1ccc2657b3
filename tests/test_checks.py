"""Voltage, current and avalanche checks against published worked values (physics §4, §10)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest
from scipy.integrate import solve_ivp

from selector import checks
from selector.models import Channel, Conditions, Settings

REL = 1e-3  # physics.md §11: round to the digits shown, 0.1 % tolerance

# E7: 24 V solenoid, R = 24 Ω -> 1 A, L = 0.1 H
E7_L, E7_I, E7_V, E7_R, E7_VBR = 0.1, 1.0, 24.0, 24.0, 75.0


def switches(*rows) -> pd.DataFrame:
    base = dict(
        part="S",
        kind="nmos",
        v_rating=60.0,
        i_rating=10.0,
        i_pulse=40.0,
        tj_max=175.0,
        eas=0.1,
    )
    return pd.DataFrame([{**base, **r} for r in rows])


# ------------------------------------------------------------------------ E7 avalanche
def test_unclamped_solenoid_energy_matches_e7_conservative_form():
    """E7(b): ½·L·I²·V_BR/(V_BR − V) = 50 mJ·75/51 = 73.53 mJ, t_av = 1.961 ms.

    Source: physics.md §4.2/E7; the formula is the makers' single-pulse avalanche energy
    (common practice).
    """
    e = checks.avalanche_energy(E7_L, E7_I, E7_VBR, E7_V)
    assert float(e) == pytest.approx(73.53e-3, rel=REL)
    assert float(checks.avalanche_time(E7_L, E7_I, E7_VBR, E7_V)) == pytest.approx(
        1.961e-3, rel=REL
    )


def test_unclamped_solenoid_energy_with_coil_resistance_matches_e7():
    """E7(b) with R = 24 Ω: E = 56.40 mJ, t_av = 1.607 ms (physics.md §4.2, derived)."""
    e = checks.avalanche_energy_exact(E7_L, E7_I, E7_VBR, E7_V, E7_R)
    assert float(e) == pytest.approx(56.40e-3, rel=REL)
    t = checks.avalanche_time_exact(E7_L, E7_I, E7_VBR, E7_V, E7_R)
    assert float(t) == pytest.approx(1.607e-3, rel=REL)


def test_exact_avalanche_energy_equals_numerical_integration_with_scipy():
    """Cross-check with scipy's ODE solver: L·di/dt = V − V_BR − R·i, E = ∫V_BR·i dt."""

    def rhs(_t, y):
        i = y[0]
        return [(E7_V - E7_VBR - E7_R * i) / E7_L, E7_VBR * i]

    def stop(_t, y):
        return y[0]

    stop.terminal = True
    sol = solve_ivp(rhs, (0, 1.0), [E7_I, 0.0], events=stop, rtol=1e-10, atol=1e-12)
    exact = checks.avalanche_energy_exact(E7_L, E7_I, E7_VBR, E7_V, E7_R)
    assert sol.y[1, -1] == pytest.approx(float(exact), rel=1e-6)
    assert sol.t_events[0][0] == pytest.approx(
        float(checks.avalanche_time_exact(E7_L, E7_I, E7_VBR, E7_V, E7_R)), rel=1e-6
    )


def test_exact_form_tends_to_the_conservative_form_as_coil_resistance_vanishes():
    """Physics §4.2: R → 0 recovers ½·L·I²·V_BR/(V_BR − V) (derived)."""
    e0 = checks.avalanche_energy(E7_L, E7_I, E7_VBR, E7_V)
    assert float(checks.avalanche_energy_exact(E7_L, E7_I, E7_VBR, E7_V, 1e-12)) == (
        pytest.approx(float(e0), rel=1e-9)
    )
    assert float(checks.avalanche_energy_exact(E7_L, E7_I, E7_VBR, E7_V, 1e-3)) < e0


def test_avalanche_rating_derated_to_85_degc_start_matches_e7():
    """E7: E_AS 100 mJ at 25 °C, Tj,max 175 °C, start 85 °C → 60.0 mJ.

    Linear derating to zero at Tj,max (physics §4.2, common practice).
    """
    assert float(checks.eas_at(0.1, 175.0, 85.0)) == pytest.approx(60.0e-3, rel=REL)
    assert float(checks.eas_at(0.1, 175.0, 200.0)) == 0.0


def test_e7_solenoid_without_clamp_fails_with_both_forms():
    """E7: conservative 73.5 mJ > 60 mJ and exact 56.4 mJ > 0.8·60 = 48 mJ → fit a diode."""
    limit = 0.8 * float(checks.eas_at(0.1, 175.0, 85.0))
    assert limit == pytest.approx(48e-3, rel=REL)
    assert float(checks.avalanche_energy(E7_L, E7_I, E7_VBR, E7_V)) > limit
    assert float(checks.avalanche_energy_exact(E7_L, E7_I, E7_VBR, E7_V, E7_R)) > limit


def test_freewheel_diode_energy_per_turn_off_matches_e7a():
    """E7(a): V_F 0.9 V, 1 A, τ = L/R = 4.167 ms → 3.75 mJ per turn-off (§4.1, derived)."""
    e = checks.freewheel_energy_per_event(0.9, E7_I, E7_L, E7_R)
    assert float(e) == pytest.approx(3.75e-3, rel=REL)


def test_diode_plus_zener_clamp_matches_e7c():
    """E7(c): 33 V Zener + 0.9 V diode: Zener takes 48.67 mJ; switch blocks 57.9 V and so
    needs ≥ 72.4 V at 80 % (physics §4.1 derived; §10 derating, common practice)."""
    assert float(checks.zener_clamp_energy(E7_L, E7_I, 33.0, 0.9)) == pytest.approx(
        48.67e-3, rel=REL
    )
    v_block = E7_V + 33.0 + 0.9
    assert v_block == pytest.approx(57.9)
    assert v_block / 0.8 == pytest.approx(72.4, rel=REL)


def test_avalanche_check_over_switches_says_why_each_part_may_not_absorb_it():
    """E7 solenoid: a part with margin passes, too small / blank rating / IGBT / PWM fail.

    V_BR = avalanche_factor·v_rating (1.3, from memory, §4.2); Tj0 = T_lim.
    """
    ch = Channel("valve", 24.0, 1.0, load="inductive", inductance=0.1)
    sw = switches(
        dict(part="big", eas=1.0),
        dict(part="small", eas=0.1),
        dict(part="blank", eas=np.nan),
        dict(part="igbt", kind="igbt", eas=1.0, v_rating=600.0),
    )
    chk = checks.avalanche_check(sw, ch, Settings(), 150.0)
    vbr = 1.3 * 60.0
    e = 0.5 * 0.1 * 1.0 * vbr / (vbr - 24.0)
    assert chk.value[0] == pytest.approx(e)
    assert chk.limit[0] == pytest.approx(0.8 * 1.0 * 25 / 150)
    assert list(chk.ok) == [True, False, False, False]
    assert list(chk.extra["reason"]) == ["", "energy", "no_eas", "igbt"]
    pwm = Channel("valve", 24.0, 1.0, load="inductive", inductance=0.1, duty=0.5,
                  pwm_frequency=100.0)  # fmt: skip
    assert not checks.avalanche_check(sw, pwm, Settings(), 150.0).ok.any()


def test_avalanche_check_does_not_apply_to_resistive_loads():
    chk = checks.avalanche_check(switches({}), Channel("h", 24, 5), Settings(), 100.0)
    assert chk.ok.all() and chk.value[0] == 0.0


def test_slow_cycling_reports_average_avalanche_power():
    """A valve cycled every 60 s: P = E/60 s (§4.2: repetitive events add to the budget)."""
    ch = Channel(
        "v", 24.0, 1.0, load="inductive", inductance=0.1, on_time=5, off_time=55
    )
    chk = checks.avalanche_check(switches(dict(eas=1.0)), ch, Settings(), 100.0)
    assert chk.extra["p_avg_w"][0] == pytest.approx(chk.value[0] / 60.0)


# ---------------------------------------------------------------------------- voltage
def test_resistive_load_voltage_check_adds_wiring_overshoot():
    """24 V, 8 A, 0.5 V/A → 28 V against 0.8 × v_rating (physics §10, common practice)."""
    sw = switches(dict(v_rating=40.0), dict(v_rating=30.0))
    chk = checks.voltage_check(sw, Channel("h", 24.0, 8.0), Conditions(), Settings())
    assert chk.value[0] == pytest.approx(28.0)
    assert list(chk.limit) == pytest.approx([32.0, 24.0])
    assert list(chk.ok) == [True, False]
    assert chk.margin[0] == pytest.approx(4.0)
    rec = chk.record(1)
    assert rec["rule"] == "voltage" and rec["unit"] == "V" and rec["ok"] is False


def test_inductive_load_voltage_check_adds_the_clamp_diode_drop():
    """With a clamp: supply + V_F + overshoot_per_amp·I (physics §4.1)."""
    ch = Channel("v", 24.0, 1.0, load="inductive", inductance=0.1)
    chk = checks.voltage_check(switches({}), ch, Conditions(), Settings(), diode_vf=0.9)
    assert chk.value[0] == pytest.approx(24.0 + 0.9 + 0.5)


def test_motor_is_checked_at_its_stall_current():
    """A motor may be switched off while stalled (physics §4.5): I_off = peak_current."""
    ch = Channel("m", 12.0, 4.0, peak_current=30.0, load="motor", inductance=1e-3)
    assert checks.turn_off_current(ch) == 30.0
    chk = checks.voltage_check(switches({}), ch, Conditions(), Settings(), diode_vf=1.0)
    assert chk.value[0] == pytest.approx(12.0 + 1.0 + 15.0)


# ---------------------------------------------------------------------------- current
def test_lamp_without_peak_current_assumes_twelve_times_inrush():
    """E12: 12 V 55 W lamp, I_hot = 4.5833 A, k = 12 → 55.0 A (physics §4.3, [b] 10–15×)."""
    ch = Channel("lamp", 12.0, 55.0 / 12.0, load="lamp")
    ipk, how = checks.peak_current(ch)
    assert ipk == pytest.approx(55.0, rel=REL)
    assert "12" in how
    chk = checks.peak_current_check(
        switches(dict(i_pulse=60.0), dict(i_pulse=50.0)), ch, ch.current
    )
    assert list(chk.ok) == [True, False]


def test_peak_current_shares_like_the_steady_current_and_falls_back_to_i_rating():
    """Per-device peak = i_dev·I_peak/I; blank i_pulse → i_rating (conservative)."""
    ch = Channel("m", 24.0, 3.0, peak_current=15.0, load="motor", inductance=1e-3)
    sw = switches(dict(i_pulse=np.nan, i_rating=8.0), dict(i_pulse=20.0))
    chk = checks.peak_current_check(sw, ch, np.array([1.5, 1.5]))
    assert list(chk.value) == pytest.approx([7.5, 7.5])
    assert list(chk.limit) == [8.0, 20.0]
    assert list(chk.extra["from_rating"]) == [True, False]


def test_continuous_current_rejects_above_rating_and_warns_above_eighty_percent():
    """MIL-DTL-917 / common practice: ≤ 0.6–0.8 of rating recommended (§10)."""
    sw = switches(dict(i_rating=10.0), dict(i_rating=10.0), dict(i_rating=10.0))
    chk = checks.continuous_current_check(sw, np.array([7.0, 9.0, 11.0]))
    assert list(chk.ok) == [True, True, False]
    assert list(chk.extra["warn"]) == [False, True, False]
    assert chk.sense == "max" and chk.unit == "A"


def test_ratings_given_as_text_are_read_as_numbers():
    """A rating column that arrives as text (or mixed) is coerced, blanks are NaN: the
    voltage check (physics §10, 0.8 derating; common practice) treats a blank rating as
    failing and a text "60" as 60 V."""
    sw = pd.DataFrame(
        {
            "part": ["A", "B", "C"],
            "v_rating": pd.Series(["60", None, 40.0], dtype=object),
        }
    )
    ch = Channel(name="heater", supply=24.0, current=2.0)
    chk = checks.voltage_check(sw, ch, Conditions(), Settings(), diode_vf=0.0)
    np.testing.assert_allclose(chk.limit, [48.0, np.nan, 32.0])
    assert chk.ok.tolist() == [True, False, True]
