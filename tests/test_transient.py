"""Transient junction temperature: Foster network, pulses, profiles, surges (thermal).

Check values are physics.md §11 (E8, E9, E12, E13, E15), computed by the reference's
author from the closed forms of §8 and checked there by time stepping. The Foster model
itself is the JEDEC JESD51 transient thermal impedance as datasheets give it, and the
Foster/Cauer article [WEY] (A. Weyman, EEPower 2025). General-purpose cross-check:
scipy.signal.lsim on a state-space model of the same parallel RC branches.
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy import signal

from selector import thermal as th

PROPS = settings(max_examples=40, deadline=None)

# E8 network (physics.md §11): RθJC = 1.00 K/W
R8 = np.array([0.05, 0.15, 0.30, 0.50])
TAU8 = np.array([0.1e-3, 1e-3, 10e-3, 100e-3])


def foster_state_space(r, tau):
    """Independent oracle: each Foster branch i is C_i·dθ_i/dt = P − θ_i/R_i with
    C_i = τ_i/R_i; the junction rise is Σ θ_i (physics.md §8.1)."""
    r, tau = np.asarray(r, float), np.asarray(tau, float)
    a = np.diag(-1.0 / tau)
    b = (r / tau)[:, None]
    c = np.ones((1, r.size))
    d = np.zeros((1, 1))
    return signal.StateSpace(a, b, c, d)


# ---------------------------------------------------------------- E8 (§8.1)


def test_foster_step_response_matches_worked_example():
    """E8, physics.md §11: Zth(1 ms) = 0.178340 K/W (terms 0.0499977, 0.0948181,
    0.0285488, 0.0049751), ΔTj = 8.917 K at 50 W; Zth(100 ms) = 0.816047 K/W,
    ΔTj = 40.802 K."""
    terms = R8 * (1 - np.exp(-1e-3 / TAU8))
    np.testing.assert_allclose(
        terms, [0.0499977, 0.0948181, 0.0285488, 0.0049751], atol=5e-8
    )
    assert float(th.zth(1e-3, R8, TAU8)) == pytest.approx(0.178340, abs=5e-7)
    assert float(th.single_pulse_rise(50.0, 1e-3, R8, TAU8)) == pytest.approx(
        8.917, abs=5e-4
    )
    assert float(th.zth(0.1, R8, TAU8)) == pytest.approx(0.816047, abs=5e-7)
    assert float(th.single_pulse_rise(50.0, 0.1, R8, TAU8)) == pytest.approx(
        40.802, abs=5e-4
    )
    assert float(th.zth(1e6, R8, TAU8)) == pytest.approx(1.0)  # Σ R_i = RθJC


def test_foster_step_and_pulse_equal_scipy_lsim():
    """scipy.signal.lsim (zero-order hold) on the state-space form of the E8 network:
    the step response P·Zth(t) and the 5 ms pulse response P·[Z(t) − Z(t − tp)] agree
    to 1e-9 K."""
    t = np.arange(0, 0.4, 1e-5)
    sys = foster_state_space(R8, TAU8)
    step = np.full_like(t, 50.0)
    _, y, _ = signal.lsim(sys, step, t, interp=False)
    np.testing.assert_allclose(th.zth(t, R8, TAU8) * 50.0, y, atol=1e-9)
    pulse = np.where(t < 5e-3 - 1e-12, 50.0, 0.0)
    _, y, _ = signal.lsim(sys, pulse, t, interp=False)
    np.testing.assert_allclose(th.pulse_response(t, 50.0, 5e-3, R8, TAU8), y, atol=1e-9)


def test_recursive_profile_and_superposition_equal_lsim():
    """§8.2: the exact recursive update and the superposition sum both equal
    scipy.signal.lsim for a random piecewise-constant profile (1 ms steps)."""
    rng = np.random.default_rng(3)
    dt = 1e-3
    power = rng.uniform(0, 40, 200)
    rec = th.foster_profile(power, dt, R8, TAU8)
    t_k = np.arange(power.size) * dt
    sup = th.superposition_response(t_k + dt, t_k, power, R8, TAU8)
    sub = 20
    t = np.arange(power.size * sub + 1) * (dt / sub)
    u = np.repeat(np.append(power, 0.0), sub)[: t.size]
    _, y, _ = signal.lsim(foster_state_space(R8, TAU8), u, t, interp=False)
    ends = y[sub::sub]
    np.testing.assert_allclose(rec, ends, atol=1e-9)
    np.testing.assert_allclose(sup, ends, atol=1e-9)


def test_foster_columns_from_inventory():
    """Foster arrays from zth_r1..5 / zth_tau1..5 (SI); blanks are absent branches; a
    network summing below the sheet's rth_jc is scaled up to it (datasheets scale the
    normalised r(t) by RθJC: common practice); parts without data are flagged."""
    df = pd.DataFrame(
        {
            "rth_jc": [1.0, 2.0, 0.8],
            "zth_r1": [0.05, 0.5, np.nan],
            "zth_tau1": [1e-4, 1e-3, np.nan],
            "zth_r2": [0.15, 0.5, np.nan],
            "zth_tau2": [1e-3, 1e-2, np.nan],
            "zth_r3": [0.30, np.nan, np.nan],
            "zth_tau3": [1e-2, np.nan, np.nan],
            "zth_r4": [0.50, np.nan, np.nan],
            "zth_tau4": [1e-1, np.nan, np.nan],
        }
    )
    r, tau, has = th.foster_from_switches(df)
    assert r.shape == (3, 5) and list(has) == [True, True, False]
    assert th.zth(1e-3, r[0], tau[0]) == pytest.approx(0.178340, abs=5e-7)
    assert np.nansum(r[1]) == pytest.approx(2.0)  # 1.0 scaled up to rth_jc = 2.0
    assert float(th.zth(1.0, r[2], tau[2])) == 0.0


# ---------------------------------------------------------------- E9 (§8.3)


def test_periodic_pulses_exact_peak_matches_worked_example():
    """E9, physics.md §11: E8 network, 50 W, t_p = 1 ms, T = 10 ms: branch factors
    0.049998, 0.094822, 0.045163, 0.052280 (sum 0.242263) -> ΔTj,peak = 12.113 K,
    ΔTj,min = 3.308 K, mean 5.000 K; the single pulse gives 8.917 K."""
    f = R8 * (1 - np.exp(-1e-3 / TAU8)) / (1 - np.exp(-10e-3 / TAU8))
    np.testing.assert_allclose(f, [0.049998, 0.094822, 0.045163, 0.052280], atol=5e-7)
    pr = th.periodic_pulse_rise(50.0, 1e-3, 10e-3, R8, TAU8)
    assert float(pr.peak) == pytest.approx(12.113, abs=5e-4)
    assert float(pr.peak) == pytest.approx(50 * 0.242263, abs=5e-5)
    assert float(pr.minimum) == pytest.approx(3.308, abs=5e-4)
    assert float(pr.mean) == pytest.approx(5.000, abs=5e-4)
    assert float(th.single_pulse_rise(50, 1e-3, R8, TAU8)) == pytest.approx(
        8.917, abs=5e-4
    )


def test_periodic_pulses_classical_approximation():
    """E9, physics.md §11 (approximation quoted from memory there): Zth(11 ms) =
    0.452219, Zth(10 ms) = 0.437211 -> 50·(0.1 + 0.9·0.452219 − 0.437211 + 0.178340)
    = 12.406 K, slightly above the exact 12.113 K."""
    assert float(th.zth(11e-3, R8, TAU8)) == pytest.approx(0.452219, abs=5e-7)
    assert float(th.zth(10e-3, R8, TAU8)) == pytest.approx(0.437211, abs=5e-7)
    approx = float(th.periodic_pulse_rise_approx(50.0, 1e-3, 10e-3, R8, TAU8))
    assert approx == pytest.approx(12.406, abs=5e-4)
    assert approx > float(th.periodic_pulse_rise(50.0, 1e-3, 10e-3, R8, TAU8).peak)


def test_periodic_pulses_equal_time_stepping_and_lsim():
    """E9, physics.md §11: time-stepped simulation over 200 periods reaches 12.113 K;
    here the exact recursion (§8.2) and scipy.signal.lsim (10 µs steps, 1.5 s) both
    reach the closed-form peak and minimum."""
    power = np.tile([50.0, 0.0], 200)
    dt = np.tile([1e-3, 9e-3], 200)
    rec = th.foster_profile(power, dt, R8, TAU8)
    pr = th.periodic_pulse_rise(50.0, 1e-3, 10e-3, R8, TAU8)
    assert rec[-2] == pytest.approx(float(pr.peak), abs=1e-6)
    assert rec[-1] == pytest.approx(float(pr.minimum), abs=1e-6)
    t = np.arange(0, 1.5, 1e-5)
    u = np.where(np.mod(np.arange(t.size), 1000) < 100, 50.0, 0.0)
    _, y, _ = signal.lsim(foster_state_space(R8, TAU8), u, t, interp=False)
    assert y[-1000:].max() == pytest.approx(float(pr.peak), abs=1e-6)


def test_on_off_cycle_with_sink_equals_lsim_of_the_whole_network():
    """§8.3 per branch with §8.4 approach 1: junction-case Foster network + a fast
    interface + the sink as one RC carrying both devices' power, against
    scipy.signal.lsim of the same state-space (10 s on / 20 s off, 2 devices,
    RθSA = 1.5 K/W, C = 0.25 kg·900 J/(kg·K))."""
    c_sink = float(th.heat_capacity(0.25))
    assert c_sink == pytest.approx(225.0)
    pr = th.on_off_rise(
        6.0, 10.0, 20.0, R8, TAU8, rth_cs=0.5, r_sa=1.5, c_sink=c_sink, n_devices=2
    )
    tau_sa = 1.5 * c_sink
    sys = foster_state_space(np.append(R8, 2 * 1.5), np.append(TAU8, tau_sa))
    t = np.arange(0, 30.0 * 120, 1e-2)
    u = np.where(np.mod(t + 1e-9, 30.0) < 10.0, 6.0, 0.0)
    _, y, _ = signal.lsim(sys, u, t, interp=False)
    last = slice(-3000, None)
    peak_sim = (y[last] + 0.5 * u[last]).max()  # interface follows the power at once
    assert float(pr.peak) == pytest.approx(peak_sim, abs=2e-3)
    assert float(pr.mean) == pytest.approx(6.0 * (1.0 + 0.5 + 3.0) / 3.0)
    steady = 6.0 * (1.0 + 0.5 + 3.0)
    assert float(pr.peak) < steady


def test_pwm_ripple_is_small_at_high_frequency():
    """§8.3 (derived): at 20 kHz against the E8 network the ripple above the mean is a
    small fraction of the mean rise, and it grows as the frequency falls."""
    hi = float(th.pwm_ripple_rise(10.0, 0.5, 20e3, R8, TAU8))
    lo = float(th.pwm_ripple_rise(10.0, 0.5, 200.0, R8, TAU8))
    assert 0 < hi < 0.01 * 10.0 * 1.0
    assert lo > hi


# ---------------------------------------------------------------- E12, E13, E15 (§8.5)


def test_lamp_inrush_bound_matches_worked_example():
    """E12, physics.md §11 (§4.3, §8.5): 12 V 55 W lamp, k = 12, τ = 4 ms/ln 11,
    R_on,hot = 20 mΩ: P_pk = 60.5 W, E_x = 57.82 mJ, E_x/P_pk = 0.956 ms,
    bound 60.5·Zth(0.956 ms) = 60.5·0.174414 = 10.55 K; time-stepped actual 5.61 K."""
    i_hot, k, tau, r_on = 55.0 / 12.0, 12.0, 4e-3 / math.log(11.0), 0.02
    p_pk = r_on * (k * i_hot) ** 2
    e_x = r_on * i_hot**2 * tau * (2 * (k - 1) + (k - 1) ** 2 / 2)
    assert p_pk == pytest.approx(60.5, abs=5e-4)
    assert e_x == pytest.approx(57.82e-3, abs=5e-6)
    assert e_x / p_pk == pytest.approx(0.956e-3, abs=5e-7)
    assert float(th.zth(e_x / p_pk, R8, TAU8)) == pytest.approx(0.174414, abs=2e-5)
    bound = float(th.pulse_energy_bound(p_pk, e_x, R8, TAU8))
    assert bound == pytest.approx(10.55, abs=5e-3)
    dt = 1e-6
    t = (np.arange(60_000) + 0.5) * dt
    i = i_hot * (1 + (k - 1) * np.exp(-t / tau))
    actual = th.foster_profile(r_on * (i**2 - i_hot**2), dt, R8, TAU8).max()
    assert actual == pytest.approx(5.61, abs=5e-3)
    assert actual <= bound


def test_motor_stall_rise_matches_worked_example():
    """E13, physics.md §11 (§4.5, §8): 30 A stall for 0.2 s at 15 mΩ -> 13.5 W;
    Zth(0.2 s) = 0.05 + 0.15 + 0.30 + 0.5·(1 − e^−2) = 0.932332 K/W, ΔTj = 12.59 K
    above the case (sink assumed not to move in 0.2 s)."""
    assert float(th.zth(0.2, R8, TAU8)) == pytest.approx(0.932332, abs=5e-7)
    s = th.surge_extra_rise(13.5, 0.0, 0.2, R8, TAU8, 1.0)
    assert float(s.rise) == pytest.approx(12.59, abs=5e-3)
    assert s.method.item() == th.SURGE_FOSTER


def test_capacitive_charging_bound_matches_worked_example():
    """E15, physics.md §11 (§4.4, §8.5): 470 µF to 24 V in 10 ms: E = 0.1354 J,
    I = 1.128 A, P_pk = 27.07 W, E/P_pk = 5.000 ms, bound 27.07·Zth(5 ms) =
    27.07·0.341415 = 9.24 K; time-stepped 6.14 K."""
    c, v, t_r = 470e-6, 24.0, 10e-3
    e = 0.5 * c * v * v
    i = c * v / t_r
    p_pk = v * i
    assert e == pytest.approx(0.1354, abs=5e-5)
    assert i == pytest.approx(1.128, abs=5e-4)
    assert p_pk == pytest.approx(27.07, abs=5e-3)
    assert e / p_pk == pytest.approx(5.000e-3, abs=5e-7)
    assert float(th.zth(e / p_pk, R8, TAU8)) == pytest.approx(0.341415, abs=5e-7)
    bound = float(th.pulse_energy_bound(p_pk, e, R8, TAU8))
    assert bound == pytest.approx(9.24, abs=5e-3)
    dt = 1e-6
    t = (np.arange(10_000) + 0.5) * dt
    actual = th.foster_profile(p_pk * (1 - t / t_r), dt, R8, TAU8).max()
    assert actual == pytest.approx(6.14, abs=5e-3)
    assert actual <= bound


@PROPS
@given(
    power=st.lists(st.floats(0.0, 100.0), min_size=1, max_size=40),
    dt=st.floats(1e-5, 5e-2),
)
def test_pulse_energy_bound_holds_for_any_shape(power, dt):
    """§8.5 (derived): for any pulse, the junction rise never exceeds
    P_pk·Zth(E/P_pk) (dZth/dt is nonincreasing for a Foster network)."""
    p = np.asarray(power)
    if p.max() <= 0:
        return
    rise = th.foster_profile(p, dt, R8, TAU8)
    bound = float(th.pulse_energy_bound(p.max(), p.sum() * dt, R8, TAU8))
    assert rise.max() <= bound + 1e-9


# ---------------------------------------------------------------- surges


def test_surge_rule_without_zth_data_uses_rth_jc():
    """Conservative rule (physics.md §8.1: Zth(t) ≤ RθJC for every t): a part without
    Foster data is charged the steady RθJC; the interface is treated as fast; a peak
    with peak_time = 0 is a short pulse (rise 0, checked against i_pulse)."""
    nan = np.full(4, np.nan)
    s = th.surge_extra_rise(13.5, 3.5, 0.2, nan, nan, 1.0, 0.5)
    assert float(s.rise) == pytest.approx(10.0 * (1.0 + 0.5))
    assert s.method.item() == th.SURGE_CONSERVATIVE
    s = th.surge_extra_rise(13.5, 3.5, 0.0, R8, TAU8, 1.0)
    assert float(s.rise) == 0.0 and s.method.item() == th.SURGE_SHORT
    s = th.surge_extra_rise(3.5, 3.5, 0.2, R8, TAU8, 1.0)
    assert float(s.rise) == 0.0 and s.method.item() == th.SURGE_NONE
    # vectorised over parts: row-wise Foster or rule
    r = np.vstack([R8, nan])
    tau = np.vstack([TAU8, nan])
    s = th.surge_extra_rise([13.5, 13.5], [0.0, 0.0], 0.2, r, tau, [1.0, 1.0])
    np.testing.assert_allclose(s.rise, [13.5 * 0.932332, 13.5], atol=1e-5)


def test_sink_rc_time_scale_separation():
    """§8.4 approach 1: the sink as one RC with C = m·c_p (aluminium 900 J/(kg·K),
    common practice); after one time constant the rise is 1 − 1/e of its final value,
    and an unknown capacity is treated as an instant sink (conservative)."""
    c = float(th.heat_capacity(0.4))
    tau = 2.0 * c
    assert float(th.sink_rc_rise(tau, 10.0, 2.0, c)) == pytest.approx(
        20 * (1 - math.e**-1)
    )
    assert float(th.sink_rc_rise(1e-3, 10.0, 2.0, np.nan)) == pytest.approx(20.0)


@PROPS
@given(
    t1=st.floats(1e-4, 5.0),
    dt=st.floats(0.0, 5.0),
    dp=st.floats(0.1, 50.0),
    zth_known=st.booleans(),
)
def test_longer_surge_is_never_cooler(t1, dt, dp, zth_known):
    """Common practice (Zth(t) nondecreasing, physics.md §8.1): a longer surge never
    gives a smaller extra rise, with Foster data or with the conservative rule, and
    the plotted peak of the surge profile (with a sink RC) never falls either."""
    r = R8 if zth_known else np.full(4, np.nan)
    tau = TAU8 if zth_known else np.full(4, np.nan)
    a = float(th.surge_extra_rise(dp, 0.0, t1, r, tau, 1.0, 0.3).rise)
    b = float(th.surge_extra_rise(dp, 0.0, t1 + dt, r, tau, 1.0, 0.3).rise)
    assert b >= a - 1e-12
    kw = dict(rth_cs=0.3, r_sa=2.0, c_sink=200.0, n_devices=2)
    _, ya = th.surge_profile(40.0, 2.0, 2.0 + dp, t1, R8, TAU8, **kw)
    _, yb = th.surge_profile(40.0, 2.0, 2.0 + dp, t1 + dt, R8, TAU8, **kw)
    assert yb.max() >= ya.max() - 1e-9


@PROPS
@given(
    p_run=st.floats(0.0, 20.0),
    dp=st.floats(0.0, 60.0),
    t_pk=st.floats(1e-4, 600.0),
    r_sa=st.floats(0.0, 5.0),
    c_sink=st.one_of(st.just(float("nan")), st.floats(10.0, 2000.0)),
    n=st.integers(1, 4),
    ta=st.floats(-10.0, 60.0),
)
def test_transient_peak_never_exceeds_steady_state_at_surge_current(
    p_run, dp, t_pk, r_sa, c_sink, n, ta
):
    """Common practice (physics.md §8: Zth ≤ Rθ at every time): the junction during a
    surge never exceeds the steady temperature it would reach if the surge loss
    lasted for ever, Ta + P_pk·(RθJC + RθCS + n·RθSA); the surge check
    (steady + surge_extra_rise, sink fixed) is bounded the same way, and it falls short
    of the profile's peak by no more than the sink's RC rise during the surge."""
    p_pk = p_run + dp
    _, tj = th.surge_profile(
        ta,
        p_run,
        p_pk,
        t_pk,
        R8,
        TAU8,
        rth_cs=0.4,
        r_sa=r_sa,
        c_sink=c_sink,
        n_devices=n,
    )
    steady_pk = ta + p_pk * (1.0 + 0.4 + n * r_sa)
    assert tj.max() <= steady_pk + 1e-9
    check = (
        ta
        + p_run * (1.0 + 0.4 + n * r_sa)
        + float(th.surge_extra_rise(p_pk, p_run, t_pk, R8, TAU8, 1.0, 0.4).rise)
    )
    assert check <= steady_pk + 1e-9
    # and the check misses only the sink's own movement during the surge (§8.4)
    sink_move = float(th.sink_rc_rise(t_pk, n * dp, r_sa, c_sink))
    assert tj.max() <= check + sink_move + 1e-9
