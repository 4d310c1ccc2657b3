"""Steady thermal chain, electro-thermal coupling and shared heatsinks (selector.thermal).

Check values are physics.md §11 (E1, E2, E10), computed by the reference's author from
the closed forms of §5–§7 and cross-checked there; the thermal chain itself is textbook
(Mohan/Undeland/Robbins, *Power Electronics*, 3rd ed., ch. 29 "heat sinks"). General-
purpose cross-checks use scipy (brentq, root) as independent solvers.
"""

from __future__ import annotations

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq, root

from selector import thermal as th

PROPS = settings(max_examples=60, deadline=None)

# E1 data: 10 A heater, R25 = 10 mΩ, α_L = 0.008 /K -> P0 = 1 W, P1 = 0.008 W/K.
E1_P0, E1_P1 = 1.0, 0.008


# ---------------------------------------------------------------- E1 (§5, §6.1, §6.4)


def test_heater_on_low_side_nmos_without_heatsink_runs_above_tj_max():
    """E1(a), physics.md §11: RθJA = 62 K/W, Ta = 40 °C -> G = 0.496, Tj = 177.78 °C,
    P = 2.2222 W; balance check 40 + 62·P = Tj (closed form §6.1, derived)."""
    s = th.junction_temperature_linear(40.0, 62.0, E1_P0, E1_P1)
    assert float(s.gain) == pytest.approx(0.496, abs=1e-12)
    assert float(s.tj) == pytest.approx(177.78, abs=0.005)
    assert float(s.p) == pytest.approx(2.2222, abs=5e-5)
    assert float(s.tj) == pytest.approx(40.0 + 62.0 * float(s.p), rel=1e-12)
    assert not bool(s.runaway)  # a solution exists; it fails the 150 °C limit
    assert float(s.tj) > 150.0


def test_heater_on_heatsink_matches_hand_calculation():
    """E1(b), physics.md §11: RθJC 1 + RθCS 1 + RθSA 10 = 12 K/W, G = 0.096:
    Tj = 54.87 °C, P = 1.2389 W at Ta = 40 °C; Tj = 76.99 °C at Ta = 60 °C."""
    r = 1.0 + 1.0 + 10.0
    s = th.junction_temperature_linear(40.0, r, E1_P0, E1_P1)
    assert float(s.gain) == pytest.approx(0.096, abs=1e-12)
    assert float(s.tj) == pytest.approx(54.87, abs=0.005)
    assert float(s.p) == pytest.approx(1.2389, abs=5e-5)
    hot = th.junction_temperature_linear(60.0, r, E1_P0, E1_P1)
    assert float(hot.tj) == pytest.approx(76.99, abs=0.005)
    # the series chain at that power gives the same junction (Mohan et al. ch. 29)
    chain = th.chain_temperatures(float(s.p), 40.0, 1.0, 1.0, 10.0)
    assert float(chain.tj) == pytest.approx(float(s.tj), rel=1e-12)
    assert float(chain.ts) == pytest.approx(40.0 + 10.0 * float(s.p), rel=1e-12)
    assert float(chain.tc) == pytest.approx(float(chain.ts) + float(s.p), rel=1e-12)


def test_heater_required_resistance_at_125c_limit():
    """E1(c), physics.md §11 and §6.4: P(125) = 1.8 W, Rθ,total,max = 36.11 K/W,
    RθSA,max = 34.11 K/W; RθJA = 62 is not admissible; Rθ = 36.111 gives
    Tj = 125.00 °C; linear runaway at Rθ = 1/(P_c25·α_L) = 125 K/W."""
    p_lim = E1_P0 + E1_P1 * (125.0 - 25.0)
    assert p_lim == pytest.approx(1.8)
    r_tot = float(th.required_r_total(125.0, 60.0, p_lim))
    assert r_tot == pytest.approx(36.11, abs=0.005)
    assert float(th.required_rth_sa(125.0, 60.0, p_lim, 1.0, 1.0)) == pytest.approx(
        34.11, abs=0.005
    )
    assert 62.0 > r_tot  # no heatsink: not admissible
    s = th.junction_temperature_linear(60.0, 36.111, E1_P0, E1_P1)
    assert float(s.tj) == pytest.approx(125.00, abs=0.005)
    assert float(th.critical_r_linear(E1_P1)) == pytest.approx(125.0)
    assert bool(th.junction_temperature_linear(40.0, 125.0, E1_P0, E1_P1).runaway)
    assert not bool(th.junction_temperature_linear(40.0, 36.0, E1_P0, E1_P1).runaway)


def test_required_resistance_puts_junction_exactly_at_limit():
    """§6.4 (derived): for the linear model R* = (T_lim − Ta)/P(T_lim) is the exact
    boundary, so the closed form at R* returns T_lim (to 1e-9 relative)."""
    p_lim = E1_P0 + E1_P1 * 100.0
    r_tot = th.required_r_total(125.0, 60.0, p_lim)
    tj = th.junction_temperature_linear(60.0, r_tot, E1_P0, E1_P1).tj
    assert float(tj) == pytest.approx(125.0, rel=1e-9)


@PROPS
@given(
    p0=st.floats(0.05, 50.0),
    alpha=st.floats(0.0, 0.015),
    ta=st.floats(-20.0, 70.0),
    head=st.floats(5.0, 120.0),
    rjc=st.floats(0.05, 3.0),
    rcs=st.floats(0.0, 2.0),
    n=st.integers(1, 4),
)
def test_required_rth_sa_boundary_is_exact_for_n_devices(
    p0, alpha, ta, head, rjc, rcs, n
):
    """§6.4 and §7.2 (derived): n identical devices on one sink with RθSA = the required
    value sit exactly at T_lim, both in the series form (path RθJC + RθCS + n·RθSA) and
    in the coupled M×M system; relative 1e-9."""
    t_lim = ta + head
    p1 = alpha * p0
    p_lim = p0 + p1 * max(t_lim - 25.0, 0.0)  # R clamped at R25 below 25 °C (§1.2)
    r_sa = float(th.required_rth_sa(t_lim, ta, p_lim, rjc, rcs, n))
    if r_sa <= 0:
        return  # no sink can work; nothing to place at the boundary
    series = th.junction_temperature_linear(ta, rjc + rcs + n * r_sa, p0, p1)
    assert float(series.tj) == pytest.approx(t_lim, rel=1e-9)
    shared = th.shared_sink_junctions(
        np.full(n, p0), np.full(n, p1), np.full(n, rjc + rcs), r_sa, ta
    )
    np.testing.assert_allclose(shared.tj, t_lim, rtol=1e-9)


@PROPS
@given(
    p0=st.floats(0.01, 30.0),
    alpha=st.floats(0.0, 0.02),
    ta=st.floats(-10.0, 80.0),
    r=st.floats(0.1, 80.0),
)
def test_closed_form_equals_brentq_on_fixed_point_equation(p0, alpha, ta, r):
    """§6.1 closed form against scipy.optimize.brentq on g(T) = Ta + Rθ·P(T) − T
    (§6.3, a general-purpose root finder), with the loss clamped below 25 °C (§1.2)."""
    p1 = alpha * p0

    def loss(t):
        return p0 + p1 * max(t - 25.0, 0.0)

    s = th.junction_temperature_linear(ta, r, p0, p1, t_cap=1e9)
    g_cap = ta + r * loss(1e4) - 1e4
    if bool(s.runaway):
        assert r * p1 >= 1.0 and g_cap > 0  # no root anywhere below 10^4 °C
        return
    ref = brentq(lambda t: ta + r * loss(t) - t, ta, 1e7, xtol=1e-12, rtol=1e-14)
    assert float(s.tj) == pytest.approx(ref, rel=1e-10, abs=1e-9)


def test_runaway_is_flagged_above_the_temperature_cap():
    """§6.3: a junction above the iteration cap (Settings.thermal_cap, 250 °C) is
    reported as runaway even where G < 1 (inf temperature)."""
    s = th.junction_temperature_linear(40.0, 62.0, 3.0, 0.0)  # 226 °C
    assert not bool(s.runaway)
    s = th.junction_temperature_linear(40.0, 62.0, 4.0, 0.0)  # 288 °C
    assert bool(s.runaway) and math.isinf(float(s.tj))
    s = th.junction_temperature_linear(40.0, 62.0, 4.0, 0.0, t_cap=300.0)
    assert float(s.tj) == pytest.approx(288.0)


def test_vectorised_junction_temperature_equals_scalar_calls():
    """The array path equals element-wise scalar calls (no hidden row coupling)."""
    rng = np.random.default_rng(7)
    ta = rng.uniform(-10, 60, 50)
    r = rng.uniform(1, 70, 50)
    p0 = rng.uniform(0.1, 5, 50)
    p1 = rng.uniform(0, 0.02, 50)
    vec = th.junction_temperature_linear(ta, r, p0, p1)
    for i in range(50):
        one = th.junction_temperature_linear(ta[i], r[i], p0[i], p1[i])
        assert float(one.tj) == float(vec.tj[i]) or (
            math.isinf(one.tj) and math.isinf(vec.tj[i])
        )


def test_cold_ambient_keeps_the_25c_loss():
    """§1.2: below 25 °C the on-resistance is clamped at R25 (conservative), so at
    Ta = −5 °C with 1 W and 12 K/W the junction sits at −5 + 12·1 = 7 °C."""
    s = th.junction_temperature_linear(-5.0, 12.0, E1_P0, E1_P1)
    assert float(s.tj) == pytest.approx(7.0)
    assert float(s.p) == pytest.approx(1.0)


def test_junction_across_ambient_range_for_plots():
    """tj_over_ambient is the closed form at every ambient (physics.md §6.5); E1(b) data
    give 54.87 °C at 40 °C and 76.99 °C at 60 °C; shape S + (A,)."""
    amb = np.array([-5.0, 40.0, 60.0])
    tj = th.tj_over_ambient(amb, [12.0, 62.0], E1_P0, E1_P1)
    assert tj.shape == (2, 3)
    assert tj[0, 1] == pytest.approx(54.87, abs=0.005)
    assert tj[0, 2] == pytest.approx(76.99, abs=0.005)
    assert tj[1, 1] == pytest.approx(177.78, abs=0.005)
    assert np.all(np.diff(tj, axis=1) > 0)


# ---------------------------------------------------------------- E2 (§6.2)

B_E2 = 0.0055452  # b = ln(1 + α_E), α_E = 0.005561 (k150 = 2.0)


def test_exponential_model_lambert_w_at_12_kw():
    """E2, physics.md §11: exponential model with E1 data, Ta = 40 °C, Rθ = 12:
    A·b·e = 0.1966 ≤ 1, Tj = 54.10 °C, P = 1.1751 W (Lambert W form of §6.2)."""
    s = th.junction_temperature_exponential(40.0, 12.0, 1.0, B_E2)
    assert float(s.abe) == pytest.approx(0.1966, abs=5e-5)
    assert float(s.tj) == pytest.approx(54.10, abs=0.005)
    assert float(s.p) == pytest.approx(1.1751, abs=5e-5)
    assert not bool(s.runaway)


def test_exponential_model_runs_away_at_62_kw():
    """E2, physics.md §11: Rθ = 62 gives A·b·e = 1.0156 > 1 -> runaway; the critical
    Rθ is 61.05 K/W and the tangency temperature Ta + 1/b = 220.3 °C."""
    s = th.junction_temperature_exponential(40.0, 62.0, 1.0, B_E2)
    assert float(s.abe) == pytest.approx(1.0156, abs=5e-5)
    assert bool(s.runaway) and math.isinf(float(s.tj))
    r_crit = th.critical_r_exponential(40.0, 1.0, B_E2)
    assert r_crit == pytest.approx(61.05, abs=0.005)
    near = th.junction_temperature_exponential(40.0, r_crit * (1 - 1e-10), 1.0, B_E2)
    assert float(near.tj) == pytest.approx(40.0 + 1.0 / B_E2, abs=0.1)
    assert 40.0 + 1.0 / B_E2 == pytest.approx(220.3, abs=0.05)


@PROPS
@given(
    pc=st.floats(0.05, 10.0),
    psw=st.floats(0.0, 5.0),
    b=st.floats(0.001, 0.012),
    ta=st.floats(-10.0, 70.0),
    r=st.floats(0.5, 60.0),
)
def test_exponential_closed_form_equals_brentq(pc, psw, b, ta, r):
    """§6.2 Lambert-W form (constant switching loss folded in exactly) against
    scipy.optimize.brentq on the lowest root of Ta + Rθ·P(T) − T (§6.3)."""
    s = th.junction_temperature_exponential(ta, r, pc, b, psw, t_cap=1e9)

    def g(t):
        return ta + r * (pc * math.exp(b * max(t - 25.0, 0.0)) + psw) - t

    if bool(s.runaway):
        # no root: g stays positive up to the tangency and beyond
        grid = np.linspace(ta, ta + r * psw + 5.0 / b, 4000)
        assert all(g(t) > 0 for t in grid)
        return
    # the lowest root lies between Ta and the tangency point
    hi = max(ta, 25.0) + r * psw + 1.0 / b + 1e-9
    ref = brentq(g, ta, hi, xtol=1e-12, rtol=1e-14)
    assert float(s.tj) == pytest.approx(ref, rel=1e-8, abs=1e-7)


# ---------------------------------------------------------------- E10 (§7.2)

E10_P0 = np.array([2.0, 8.0])  # A: 2·[1 + 0.008(Tj − 25)] W; B: 8 W constant
E10_P1 = np.array([0.016, 0.0])
E10_RJS = np.array([2.2, 1.8])  # 1.0 + 1.2 (mica + grease); 0.8 + 1.0 (pad)


def test_two_devices_on_one_heatsink_with_fixed_losses():
    """E10, physics.md §11: RθSA = 3.0, Ta = 50 °C, P_A = 3 W, P_B = 8 W ->
    Ts = 83.0 °C, Tj,A = 89.6 °C, Tj,B = 97.4 °C (lumped sink, Mohan et al. ch. 29)."""
    ts, tj = th.shared_sink_steady([3.0, 8.0], E10_RJS, 3.0, 50.0)
    assert float(ts) == pytest.approx(83.0, abs=0.05)
    np.testing.assert_allclose(tj, [89.6, 97.4], atol=0.05)


def test_two_devices_on_one_heatsink_coupled_losses():
    """E10, physics.md §11: coupled solution Tj,A = 82.32/0.9168 = 89.79 °C,
    P_A = 3.0366 W, Ts = 83.11 °C, Tj,B = 97.51 °C (M×M linear system, §7.2)."""
    s = th.shared_sink_junctions(E10_P0, E10_P1, E10_RJS, 3.0, 50.0)
    assert s.tj[0] == pytest.approx(89.79, abs=0.005)
    assert s.p[0] == pytest.approx(3.0366, abs=5e-5)
    assert float(s.ts) == pytest.approx(83.11, abs=0.005)
    assert s.tj[1] == pytest.approx(97.51, abs=0.005)
    assert not bool(s.runaway)


def test_shared_sink_limit_conservative_and_exact():
    """E10, physics.md §11, T_lim = 125 °C: conservative RθSA,max = 60.6/11.6 =
    5.224 K/W; exact (B binding, A solved) P_A = 3.4925 W, Tj,A = 118.28 °C,
    RθSA,max = 5.273 K/W."""
    p_lim = E10_P0 + E10_P1 * 100.0
    cons = th.shared_sink_max_rth_sa_conservative([125.0, 125.0], 50.0, p_lim, E10_RJS)
    assert float(cons) == pytest.approx(5.224, abs=5e-4)
    exact = float(
        th.shared_sink_max_rth_sa([125.0, 125.0], 50.0, E10_P0, E10_P1, E10_RJS)
    )
    assert exact == pytest.approx(5.273, abs=5e-4)
    s = th.shared_sink_junctions(E10_P0, E10_P1, E10_RJS, exact, 50.0)
    assert s.tj[1] == pytest.approx(125.0, rel=1e-9)  # B binds exactly
    assert s.tj[0] == pytest.approx(118.28, abs=0.005)
    assert s.p[0] == pytest.approx(3.4925, abs=5e-5)


@PROPS
@given(
    p0=st.lists(st.floats(0.1, 20.0), min_size=1, max_size=5),
    alpha=st.floats(0.0, 0.012),
    r_sa=st.floats(0.05, 4.0),
    ta=st.floats(0.0, 60.0),
    seed=st.integers(0, 1000),
)
def test_shared_sink_linear_system_equals_scipy_root(p0, alpha, r_sa, ta, seed):
    """§7.2: the M×M linear solution equals scipy.optimize.root on the nonlinear
    balance Tj,k = Ta + RθSA·ΣP_j(Tj,j) + Rjs,k·P_k(Tj,k) (a second, general solver)."""
    rng = np.random.default_rng(seed)
    p0 = np.asarray(p0)
    p1 = alpha * p0
    r_js = rng.uniform(0.3, 3.0, p0.size)
    s = th.shared_sink_junctions(p0, p1, r_js, r_sa, ta, t_cap=1e6)
    if bool(s.runaway):
        return

    def f(tj):
        p = p0 + p1 * np.maximum(tj - 25.0, 0.0)
        return ta + r_sa * p.sum() + r_js * p - tj

    ref = root(f, np.full(p0.size, ta + 1.0), tol=1e-12)
    assert np.max(np.abs(f(ref.x))) < 1e-8  # scipy found the balance point
    np.testing.assert_allclose(s.tj, ref.x, rtol=1e-8)


def test_shared_sink_runaway_is_flagged():
    """§7.2 (derived): with P1 large enough the loop matrix has spectral radius ≥ 1 and
    there is no steady state; every junction is reported as inf."""
    s = th.shared_sink_junctions([1.0, 1.0], [0.2, 0.2], [1.0, 1.0], 2.0, 40.0)
    assert bool(s.runaway)
    assert float(s.gain) >= 1.0
    assert np.all(np.isinf(s.tj))


def test_shared_sink_with_rise_dependent_resistance():
    """A natural-convection sink R(ΔT) = 2·(ΔT/75)^(−0.25) K/W (the ΔT^−0.25 law of
    physics.md §5.3, common practice): the solution satisfies Ts − Ta = R(ΔT)·ΣP to
    1e-9, and with a constant R it equals the linear-system answer."""

    def rise(q, r_ref=2.0, n=0.25):
        # solve ΔT = r_ref (ΔT/75)^−n q  ->  ΔT^(1+n) = r_ref 75^n q
        return (r_ref * 75.0**n * q) ** (1.0 / (1.0 + n))

    s = th.shared_sink_junctions(E10_P0, E10_P1, E10_RJS, ta=50.0, sink_rise=rise)
    dts = float(s.ts) - 50.0
    r_at = 2.0 * (dts / 75.0) ** -0.25
    assert dts == pytest.approx(r_at * s.p.sum(), rel=1e-9)
    lin = th.shared_sink_junctions(E10_P0, E10_P1, E10_RJS, 3.0, 50.0)
    const = th.shared_sink_junctions(
        E10_P0, E10_P1, E10_RJS, ta=50.0, sink_rise=lambda q: 3.0 * q
    )
    np.testing.assert_allclose(const.tj, lin.tj, rtol=1e-9)


# ---------------------------------------------------------------- properties


@PROPS
@given(
    i1=st.floats(0.1, 40.0),
    di=st.floats(0.0, 20.0),
    r25=st.floats(1e-3, 0.1),
    alpha=st.floats(0.0, 0.015),
    r=st.floats(0.5, 80.0),
    ta=st.floats(-20.0, 70.0),
)
def test_more_current_never_cools_a_junction(i1, di, r25, alpha, r, ta):
    """Common practice (conduction loss I²·R(Tj), physics.md §1.1/§1.2 with M1):
    raising the current never lowers the steady junction temperature."""

    def tj(i):
        p0 = i * i * r25
        return float(th.junction_temperature_linear(ta, r, p0, alpha * p0).tj)

    assert tj(i1 + di) >= tj(i1) - 1e-9


@PROPS
@given(
    r_sa=st.floats(0.0, 20.0),
    dr=st.floats(0.0, 10.0),
    p0=st.floats(0.1, 20.0),
    alpha=st.floats(0.0, 0.012),
    ta=st.floats(-10.0, 60.0),
    other=st.floats(0.0, 20.0),
)
def test_lower_heatsink_resistance_never_heats_a_junction(
    r_sa, dr, p0, alpha, ta, other
):
    """Common practice (series chain §5.1, shared sink §7.2): a smaller RθSA never
    raises any junction, alone or beside a second device on the sink."""
    p1 = alpha * p0
    lo = th.junction_temperature_linear(ta, 2.0 + r_sa, p0, p1).tj
    hi = th.junction_temperature_linear(ta, 2.0 + r_sa + dr, p0, p1).tj
    assert float(lo) <= float(hi) + 1e-9
    a = th.shared_sink_junctions([p0, other], [p1, 0.0], [2.0, 1.5], r_sa, ta)
    b = th.shared_sink_junctions([p0, other], [p1, 0.0], [2.0, 1.5], r_sa + dr, ta)
    assert np.all(a.tj <= b.tj + 1e-9)
