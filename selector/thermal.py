"""Junction temperature: steady thermal chain, electro-thermal coupling, transients.

Every function works on numpy arrays and broadcasts its arguments, so one call covers a
whole inventory; scalars work too. Units: temperatures in °C, temperature differences in
K, power in W, thermal resistance in K/W, time in s, heat capacity in J/K.

Sections (physics reference §5–§8):

- steady chain: :func:`chain_temperatures`, :func:`shared_sink_temperature`,
  :func:`shared_sink_steady`;
- electro-thermal coupling: :func:`junction_temperature_linear` (closed form, runaway
  flag), :func:`critical_r_linear`, :func:`junction_temperature_exponential` (Lambert W),
  :func:`critical_r_exponential`, :func:`tj_over_ambient`;
- feasibility boundary: :func:`required_r_total`, :func:`required_rth_sa`;
- several devices on one sink: :func:`shared_sink_junctions` (M×M linear system),
  :func:`shared_sink_max_rth_sa`, :func:`shared_sink_max_rth_sa_conservative`;
- transients (Foster network): :func:`zth`, :func:`foster_from_switches`,
  :func:`single_pulse_rise`, :func:`pulse_response`, :func:`superposition_response`,
  :func:`foster_profile`, :func:`periodic_pulse_rise`,
  :func:`periodic_pulse_rise_approx`, :func:`on_off_rise`, :func:`pwm_ripple_rise`,
  :func:`pulse_energy_bound`;
- start-up surge: :func:`surge_extra_rise` (the check used per switch) and
  :func:`surge_profile` (the curve for the report), with the heatsink as one RC
  (:func:`heat_capacity`, :func:`sink_rc_rise`).

Sources
-------
[MUR] N. Mohan, T. M. Undeland, W. P. Robbins, *Power Electronics: Converters,
Applications, and Design*, 3rd ed., Wiley, 2003 (heat sinks and thermal chain).
JEDEC JESD51 series (definitions of RθJA, RθJC and transient thermal impedance).
[WEY] A. Weyman, "Pursuing Cool: Understanding Cauer and Foster Thermal Chain Models",
EEPower, 2025 (Foster versus Cauer networks, attaching a heatsink).
Closed forms marked "derived" are the project's physics reference (§6, §7.2, §8.3, §8.5).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np
import pandas as pd
from scipy.optimize import brentq
from scipy.special import lambertw

T_REF = 25.0  # [°C] reference junction temperature of the loss models
ALUMINIUM_SPECIFIC_HEAT = 900.0  # [J/(kg·K)] c_p of aluminium, common practice
DEFAULT_T_CAP = 250.0  # [°C] same as Settings.thermal_cap
FOSTER_STAGES = 5  # zth_r1..zth_r5, zth_tau1..zth_tau5 in the inventory

SURGE_NONE = "none"
SURGE_SHORT = "short pulse (checked against i_pulse)"
SURGE_FOSTER = "foster zth"
SURGE_CONSERVATIVE = "steady rth_jc (no zth data, conservative)"


def _f(x) -> np.ndarray:
    return np.asarray(x, dtype=float)


# --------------------------------------------------------------------------------------
# Steady chain
# --------------------------------------------------------------------------------------


@dataclass(frozen=True)
class ChainTemperatures:
    """Temperatures along a series chain [°C]: junction, case (tab), sink."""

    tj: np.ndarray
    tc: np.ndarray
    ts: np.ndarray


def chain_temperatures(p, ta, rth_jc, rth_cs=0.0, rth_sa=0.0) -> ChainTemperatures:
    """Steady temperatures of one device on its own heatsink.

    .. math::

        T_s = T_a + P R_{θSA},\\quad T_c = T_s + P R_{θCS},\\quad T_j = T_c + P R_{θJC}

    Parameters
    ----------
    p : array-like [W]
        Heat dissipated in the die.
    ta : array-like [°C]
        Ambient air temperature.
    rth_jc, rth_cs, rth_sa : array-like [K/W]
        Junction-case, case-sink (interface) and sink-ambient resistances. For a part
        standing alone in air pass ``rth_jc = rth_ja`` and zeros for the others (then
        ``tc`` and ``ts`` equal ``ta`` and mean nothing).

    Returns
    -------
    ChainTemperatures
        ``tj``, ``tc``, ``ts`` [°C], broadcast over the inputs.

    Notes
    -----
    One-dimensional heat flow through series resistances, all heat leaving through the
    tab; the losses are taken as given (see :func:`junction_temperature_linear` for the
    coupled solution). Source: [MUR] ch. 29 (heat sinks); RθJC as defined by JEDEC
    JESD51 (case held isothermal by a cold plate).
    """
    p, ta = _f(p), _f(ta)
    ts = ta + p * _f(rth_sa)
    tc = ts + p * _f(rth_cs)
    tj = tc + p * _f(rth_jc)
    return ChainTemperatures(tj=tj, tc=tc, ts=ts)


def shared_sink_temperature(p_total, r_sa, ta) -> np.ndarray:
    """Temperature of a lumped (isothermal) heatsink carrying several devices [°C].

    .. math:: T_s = T_a + R_{θSA}\\,\\sum_k P_k

    Parameters
    ----------
    p_total : array-like [W]
        Total heat of every device on the sink that can be on at the same time.
    r_sa : array-like [K/W]
        Sink-to-ambient resistance at the operating point.
    ta : array-like [°C]
        Ambient temperature.

    Notes
    -----
    The sink is isothermal (no spreading resistance between devices). Add only loads
    that can be on together; time-averaged power is valid only when the on/off periods
    are short against the sink time constant (minutes). Source: [MUR] ch. 29; physics
    reference §7.2 (common practice).
    """
    return _f(ta) + _f(r_sa) * _f(p_total)


def shared_sink_steady(p, r_js, r_sa, ta) -> tuple[np.ndarray, np.ndarray]:
    """Sink and junction temperatures of M devices with fixed losses on one sink.

    .. math:: T_s = T_a + R_{θSA}\\sum_k P_k,\\qquad T_{j,k} = T_s + P_k R_{js,k}

    Parameters
    ----------
    p : array-like [W], shape (..., M)
        Losses of the M devices (last axis).
    r_js : array-like [K/W], shape (..., M)
        Junction-to-sink resistance of each device, RθJC + RθCS.
    r_sa : array-like [K/W], shape (...)
        Sink-to-ambient resistance.
    ta : array-like [°C], shape (...)
        Ambient temperature.

    Returns
    -------
    ts : ndarray [°C], shape (...)
    tj : ndarray [°C], shape (..., M)

    Notes
    -----
    Lumped sink, losses independent of temperature (use :func:`shared_sink_junctions`
    for the coupled solution). Source: [MUR] ch. 29; physics reference §7.2.
    """
    p = _f(p)
    ts = shared_sink_temperature(p.sum(axis=-1), r_sa, ta)
    tj = ts[..., None] + p * _f(r_js)
    return ts, tj


# --------------------------------------------------------------------------------------
# Electro-thermal coupling
# --------------------------------------------------------------------------------------


@dataclass(frozen=True)
class LinearSolution:
    """Result of :func:`junction_temperature_linear` (arrays broadcast over the inputs).

    Fields
    ------
    tj : [°C] steady junction temperature; ``inf`` where ``runaway``.
    p : [W] device loss at ``tj``; ``inf`` where ``runaway``.
    gain : [-] thermal loop gain G = Rθ·P1.
    runaway : bool, no steady solution (G ≥ 1) or ``tj`` above the cap.
    """

    tj: np.ndarray
    p: np.ndarray
    gain: np.ndarray
    runaway: np.ndarray


def junction_temperature_linear(
    ta, r_th, p0, p1, *, t_cap: float = DEFAULT_T_CAP
) -> LinearSolution:
    """Closed-form steady junction temperature with a loss that rises linearly with Tj.

    With :math:`P(T_j) = P_0 + P_1 (T_j - 25)` and :math:`T_j = T_a + R_θ P(T_j)`:

    .. math::

        T_j - 25 = \\frac{T_a - 25 + R_θ P_0}{1 - G},\\qquad G = R_θ P_1

    Parameters
    ----------
    ta : array-like [°C]
        Ambient temperature.
    r_th : array-like [K/W]
        Total junction-to-ambient resistance of the path (RθJA alone in air, or
        RθJC + RθCS + RθSA; for n identical devices on one sink RθJC + RθCS + n·RθSA).
    p0 : array-like [W]
        Loss per device at Tj = 25 °C.
    p1 : array-like [W/K]
        Slope of the loss with junction temperature (α_L·P_c25 for conduction).
    t_cap : float [°C]
        Above this temperature the answer is reported as runaway (Settings.thermal_cap).

    Returns
    -------
    LinearSolution
        ``tj`` [°C], ``p`` [W], ``gain`` [-], ``runaway`` (bool).

    Notes
    -----
    - G ≥ 1: no steady solution within the model (thermal runaway); ``tj = inf``.
    - Below 25 °C the on-resistance is clamped at its 25 °C value (physics reference
      §1.2, conservative), so where the linear answer lies below 25 °C the loss is held
      at P0 and :math:`T_j = T_a + R_θ P_0`.
    - NaN inputs give NaN ``tj`` and ``runaway = False``.

    Source: derived from the linear on-resistance model (physics reference §6.1, M1 of
    §1.2); thermal chain [MUR] ch. 29; runaway criterion as in [BAL] (Baliga,
    *Fundamentals of Power Semiconductor Devices*, temperature dependence of R_on).
    """
    ta, r_th, p0, p1 = np.broadcast_arrays(_f(ta), _f(r_th), _f(p0), _f(p1))
    gain = r_th * p1
    num = ta - T_REF + r_th * p0
    with np.errstate(divide="ignore", invalid="ignore"):
        u = num / (1.0 - gain)
    cold = num < 0.0  # clamp: below 25 °C the loss stays at P0
    u = np.where(cold, num, u)
    tj = T_REF + u
    p = np.where(cold, p0, p0 + p1 * u)
    nan = np.isnan(tj)
    runaway = ~nan & (((gain >= 1.0) & ~cold) | ~np.isfinite(tj) | (tj > t_cap))
    tj = np.where(runaway, np.inf, tj)
    p = np.where(runaway, np.inf, p)
    return LinearSolution(tj=tj, p=p, gain=gain, runaway=runaway)


def critical_r_linear(p1) -> np.ndarray:
    """Thermal resistance at which the linear model runs away [K/W]: Rθ = 1/P1.

    Parameters
    ----------
    p1 : array-like [W/K]
        Slope of the device loss with junction temperature.

    Notes
    -----
    G = Rθ·P1 = 1 (physics reference §6.1, derived); ``inf`` where P1 ≤ 0.
    """
    p1 = _f(p1)
    with np.errstate(divide="ignore"):
        return np.where(p1 > 0, 1.0 / np.where(p1 > 0, p1, 1.0), np.inf)


@dataclass(frozen=True)
class ExponentialSolution:
    """Result of :func:`junction_temperature_exponential`.

    Fields: ``tj`` [°C] (``inf`` on runaway), ``p`` [W], ``abe`` [-] the existence
    number A'·b·e (a solution exists iff ≤ 1), ``runaway`` (bool).
    """

    tj: np.ndarray
    p: np.ndarray
    abe: np.ndarray
    runaway: np.ndarray


def junction_temperature_exponential(
    ta, r_th, p_c25, b, p_const=0.0, *, t_cap: float = DEFAULT_T_CAP
) -> ExponentialSolution:
    """Steady junction temperature with an exponential on-resistance model (Lambert W).

    Loss :math:`P(T_j) = P_{c25} e^{b (T_j - 25)} + P_{const}`. With
    :math:`x = T_j - T_a - R_θ P_{const}` the balance is :math:`x = A' e^{b x}`,
    :math:`A' = R_θ P_{c25} e^{b (T_a - 25)} e^{b R_θ P_{const}}`; a solution exists iff
    :math:`A' b e \\le 1`, and then

    .. math:: x = -W_0(-A' b)/b

    with :math:`W_0` the principal branch of the Lambert W function
    (``scipy.special.lambertw``).

    Parameters
    ----------
    ta : array-like [°C]
        Ambient temperature.
    r_th : array-like [K/W]
        Junction-to-ambient resistance of the path.
    p_c25 : array-like [W]
        Temperature-dependent (conduction) loss at 25 °C.
    b : array-like [1/K]
        Exponent, b = ln(1 + α_E) for the model R = R25·(1 + α_E)^(Tj − 25).
    p_const : array-like [W]
        Loss that does not depend on Tj (e.g. switching), folded into A' exactly.
    t_cap : float [°C]
        Answers above the cap are reported as runaway.

    Returns
    -------
    ExponentialSolution

    Notes
    -----
    At the existence limit (tangency) Tj = Ta + R_θ·P_const + 1/b. Below 25 °C the
    resistance is clamped at R25 (physics reference §1.2), as in
    :func:`junction_temperature_linear`. Source: physics reference §6.2 (derived; M2 is
    the form used in semiconductor makers' loss notes, common practice).
    """
    ta, r_th, p_c25, b, p_const = np.broadcast_arrays(
        _f(ta), _f(r_th), _f(p_c25), _f(b), _f(p_const)
    )
    shift = r_th * p_const
    a = r_th * p_c25 * np.exp(b * (ta - T_REF)) * np.exp(b * shift)
    abe = a * b * np.e
    ok = abe <= 1.0
    with np.errstate(divide="ignore", invalid="ignore"):
        z = np.where(ok, -a * b, 0.0)
        w = lambertw(np.maximum(z, -1.0 / np.e), 0).real
        x = np.where(b > 0, -w / np.where(b > 0, b, 1.0), a)
    tj = ta + shift + x
    cold = (ta + r_th * (p_c25 + p_const)) < T_REF
    tj = np.where(cold, ta + r_th * (p_c25 + p_const), tj)
    p = np.where(cold, p_c25 + p_const, p_c25 * np.exp(b * (tj - T_REF)) + p_const)
    nan = np.isnan(abe) | np.isnan(tj)
    runaway = ~nan & ((~ok & ~cold) | (tj > t_cap))
    return ExponentialSolution(
        tj=np.where(runaway, np.inf, tj),
        p=np.where(runaway, np.inf, p),
        abe=abe,
        runaway=runaway,
    )


def critical_r_exponential(ta, p_c25, b, p_const=0.0) -> np.ndarray:
    """Largest Rθ with a steady solution under the exponential model [K/W].

    Solves :math:`R P_{c25} e^{b(T_a - 25)} e^{b R P_{const}}\\, b e = 1` for R (closed
    form for ``p_const = 0``: :math:`R = 1/(b e P_{c25} e^{b(T_a-25)})`; otherwise by
    ``scipy.optimize.brentq``, the left side being increasing in R).

    Parameters
    ----------
    ta : float [°C]
    p_c25 : float [W]
    b : float [1/K]
    p_const : float [W]

    Notes
    -----
    Physics reference §6.2 (derived).
    """
    k = float(p_c25) * np.exp(float(b) * (float(ta) - T_REF)) * float(b) * np.e
    if k <= 0:
        return np.inf
    if float(p_const) == 0.0:
        return 1.0 / k

    def f(r: float) -> float:
        return r * k * np.exp(float(b) * r * float(p_const)) - 1.0

    return brentq(f, 0.0, 1.0 / k, xtol=1e-14, rtol=1e-14)


def tj_over_ambient(
    ambient, r_th, p0, p1, *, t_cap: float = DEFAULT_T_CAP
) -> np.ndarray:
    """Junction temperature across an ambient range, for plots [°C].

    Parameters
    ----------
    ambient : array-like [°C], shape (A,)
        Ambient temperatures (e.g. ``np.linspace(ambient_min, ambient_max, 50)``).
    r_th, p0, p1 : array-like, broadcast to shape S
        As in :func:`junction_temperature_linear` ([K/W], [W], [W/K]).
    t_cap : float [°C]

    Returns
    -------
    ndarray [°C], shape S + (A,)
        ``inf`` where the junction runs away.

    Notes
    -----
    The closed form of :func:`junction_temperature_linear` evaluated at every ambient;
    losses rise with Tj, so the hottest ambient is the thermal worst case (physics
    reference §6.5, common practice).
    """
    amb = _f(ambient)
    r_th, p0, p1 = np.broadcast_arrays(_f(r_th), _f(p0), _f(p1))
    sol = junction_temperature_linear(
        amb, r_th[..., None], p0[..., None], p1[..., None], t_cap=t_cap
    )
    return sol.tj


# --------------------------------------------------------------------------------------
# Feasibility boundary (§6.4)
# --------------------------------------------------------------------------------------


def required_r_total(t_lim, ta_max, p_at_tlim) -> np.ndarray:
    """Largest total junction-to-ambient resistance that keeps Tj ≤ T_lim [K/W].

    .. math:: R^*_{θ,total} = \\frac{T_{lim} - T_{a,max}}{P(T_{lim})}

    Parameters
    ----------
    t_lim : array-like [°C]
        Junction limit (tj_max − junction_margin).
    ta_max : array-like [°C]
        Highest ambient.
    p_at_tlim : array-like [W]
        Device loss evaluated at Tj = T_lim (and at the worst-case parameters).

    Returns
    -------
    ndarray [K/W]
        ``inf`` where the loss is zero and T_lim ≥ Ta; negative where T_lim < Ta (no
        path can work).

    Notes
    -----
    Always sufficient; exact for any loss model whose h(T) = (T − Ta)/P(T) is
    nondecreasing on [Ta, T_lim], which holds for the linear model M1 (then
    h′ ∝ P(Ta) > 0), so R* is the exact boundary there (physics reference §6.4, derived).
    """
    t_lim, ta_max, p = np.broadcast_arrays(_f(t_lim), _f(ta_max), _f(p_at_tlim))
    head = t_lim - ta_max
    with np.errstate(divide="ignore", invalid="ignore"):
        r = head / np.where(p > 0, p, 1.0)
    return np.where(p > 0, r, np.where(head >= 0, np.inf, -np.inf))


def required_rth_sa(
    t_lim, ta_max, p_at_tlim, rth_jc, rth_cs, n_devices=1, extra_rise=0.0
) -> np.ndarray:
    """Largest sink-to-ambient resistance that keeps every junction at T_lim [K/W].

    For n identical devices on one sink, each with loss P(T_lim) and a further rise
    ΔT_x of its own (e.g. a start-up surge above steady):

    .. math::

        R_{θSA,max} = \\frac{T_{lim} - T_{a,max} - P(T_{lim})(R_{θJC} + R_{θCS})
                       - ΔT_x}{n\\,P(T_{lim})}

    For n = 1 and ΔT_x = 0 this is ``required_r_total − rth_jc − rth_cs``.

    Parameters
    ----------
    t_lim, ta_max : array-like [°C]
    p_at_tlim : array-like [W]
        Loss per device at T_lim.
    rth_jc, rth_cs : array-like [K/W]
    n_devices : array-like [-]
        Identical devices sharing the sink.
    extra_rise : array-like [K]
        Rise of each junction above its steady value that must also fit under T_lim.

    Returns
    -------
    ndarray [K/W]
        Negative where no sink can work.

    Notes
    -----
    Exact for the linear loss model with symmetric devices: all junctions sit at the
    same temperature, the path per device is RθJC + RθCS + n·RθSA (physics reference
    §6.4 and §7.2, derived). The surge term assumes the sink does not move during the
    surge (see :func:`surge_extra_rise`).
    """
    p = _f(p_at_tlim)
    head = _f(t_lim) - _f(ta_max) - p * (_f(rth_jc) + _f(rth_cs)) - _f(extra_rise)
    q = _f(n_devices) * p
    with np.errstate(divide="ignore", invalid="ignore"):
        r = head / np.where(q > 0, q, 1.0)
    return np.where(q > 0, r, np.where(head >= 0, np.inf, -np.inf))


# --------------------------------------------------------------------------------------
# Several devices on one sink (§7.2)
# --------------------------------------------------------------------------------------


@dataclass(frozen=True)
class SharedSinkSolution:
    """Result of :func:`shared_sink_junctions`.

    Fields
    ------
    tj : [°C] junction temperatures, shape (..., M); ``inf`` where ``runaway``.
    p : [W] device losses at ``tj``, shape (..., M).
    ts : [°C] sink temperature, shape (...).
    runaway : bool, shape (...): no steady solution, or a junction above the cap.
    gain : [-] spectral radius of the loop matrix with every slope active (above
        25 °C a value ≥ 1 means runaway).
    """

    tj: np.ndarray
    p: np.ndarray
    ts: np.ndarray
    runaway: np.ndarray
    gain: np.ndarray


def shared_sink_junctions(
    p0,
    p1,
    r_js,
    r_sa=None,
    ta=25.0,
    *,
    t_cap: float = DEFAULT_T_CAP,
    sink_rise: Callable[[float], float] | None = None,
) -> SharedSinkSolution:
    """Coupled steady junction temperatures of M devices on one heatsink.

    Each device has :math:`P_k = P_{0,k} + P_{1,k}(T_{j,k} - 25)` and
    :math:`T_{j,k} = T_a + R_{θSA}\\sum_j P_j + R_{js,k} P_k`. With
    :math:`u = T_j - 25` this is the M×M linear system

    .. math::

        \\left(I - R_{θSA}\\,\\mathbf{1} P_1^T - \\operatorname{diag}(R_{js} P_1)\\right) u
        = (T_a - 25)\\mathbf{1} + R_{θSA}\\sum_j P_{0,j}\\,\\mathbf{1} + R_{js} P_0

    solved with ``numpy.linalg.solve`` (stacked over leading axes).

    Parameters
    ----------
    p0 : array-like [W], shape (..., M)
        Loss of each device at 25 °C.
    p1 : array-like [W/K], shape (..., M)
        Loss slope of each device.
    r_js : array-like [K/W], shape (..., M)
        Junction-to-sink resistance of each device (RθJC + RθCS).
    r_sa : array-like [K/W], shape (...), optional
        Sink-to-ambient resistance, constant. Give this or ``sink_rise``.
    ta : array-like [°C], shape (...)
        Ambient temperature.
    t_cap : float [°C]
        Junctions above the cap are reported as runaway.
    sink_rise : callable, optional
        ``sink_rise(total_power [W]) -> rise [K]`` for a sink whose resistance depends
        on its own rise (natural convection). Then the sink temperature is found with
        ``scipy.optimize.brentq`` on :math:`T_s = T_a + \\mathrm{rise}(Q(T_s))`, where
        each device's loss at a given sink temperature is
        :math:`P_k = (P_{0,k} + P_{1,k}(T_s - 25))/(1 - P_{1,k} R_{js,k})`
        (one system only, scalar ``ta``).

    Returns
    -------
    SharedSinkSolution

    Notes
    -----
    - Runaway: the loop matrix :math:`M = R_{θSA}\\mathbf{1}P_1^T +
      \\operatorname{diag}(R_{js}P_1)` is nonnegative for P1 ≥ 0; the fixed-point
      iteration (the physical operating point) exists iff its spectral radius is < 1.
    - Devices whose linear answer falls below 25 °C have their slope set to zero (loss
      clamped at P0, physics reference §1.2) and the system is solved again.
    - Lumped, isothermal sink; only devices that are on together belong in one call.

    Source: physics reference §7.2 (derived; E10); lumped sink per [MUR] ch. 29.
    """
    p0, p1, r_js = np.broadcast_arrays(_f(p0), _f(p1), _f(r_js))
    if sink_rise is not None:
        return _shared_sink_callable(p0, p1, r_js, float(ta), t_cap, sink_rise)
    if r_sa is None:
        raise ValueError("shared_sink_junctions needs r_sa or sink_rise")
    batch = p0.shape[:-1]
    m = p0.shape[-1]
    r_sa = np.broadcast_to(_f(r_sa), batch)
    ta_b = np.broadcast_to(_f(ta), batch)
    p1_eff = p1.copy()
    eye = np.eye(m)
    rhs = (ta_b - T_REF)[..., None] + (r_sa * p0.sum(axis=-1))[..., None] + r_js * p0
    inconsistent = np.zeros(batch, dtype=bool)
    for _ in range(m + 1):
        loop = (
            r_sa[..., None, None] * p1_eff[..., None, :]
            + eye * (r_js * p1_eff)[..., None, :]
        )
        with np.errstate(all="ignore"):
            try:
                u = np.linalg.solve(eye - loop, rhs[..., None])[..., 0]
            except np.linalg.LinAlgError:
                u = np.full(p0.shape, np.inf)
        # a device held at P0 (clamped) must really sit below 25 °C; if it does not,
        # the unclamped system had no physical (nonnegative) solution: runaway
        inconsistent |= np.any((p1_eff == 0) & (p1 != 0) & (u > 0), axis=-1)
        cold = (u < 0) & (p1_eff != 0)
        if not cold.any():
            break
        p1_eff = np.where(cold, 0.0, p1_eff)
    full = r_sa[..., None, None] * p1[..., None, :] + eye * (r_js * p1)[..., None, :]
    with np.errstate(all="ignore"):
        gain_used = np.max(np.abs(np.linalg.eigvals(loop)), axis=-1)
        gain = np.max(np.abs(np.linalg.eigvals(full)), axis=-1)
    tj = T_REF + u
    p = p0 + p1_eff * u
    ts = ta_b + r_sa * p.sum(axis=-1)
    runaway = (
        (gain_used >= 1.0)
        | inconsistent
        | np.any(~np.isfinite(tj) | (tj > t_cap), axis=-1)
    )
    tj = np.where(runaway[..., None], np.inf, tj)
    p = np.where(runaway[..., None], np.inf, p)
    ts = np.where(runaway, np.inf, ts)
    return SharedSinkSolution(tj=tj, p=p, ts=ts, runaway=runaway, gain=gain)


def _shared_sink_callable(p0, p1, r_js, ta, t_cap, sink_rise) -> SharedSinkSolution:
    g_dev = p1 * r_js
    if np.any(g_dev >= 1.0):
        inf = np.full(p0.shape, np.inf)
        return SharedSinkSolution(inf, inf, np.inf, np.bool_(True), np.max(g_dev))

    def dev_p(ts: float) -> np.ndarray:
        return np.maximum(p0 + p1 * (ts - T_REF), p0 * (p1 >= 0)) / (1.0 - g_dev)

    def h(ts: float) -> float:
        return ta + float(sink_rise(float(dev_p(ts).sum()))) - ts

    if h(t_cap) > 0:
        inf = np.full(p0.shape, np.inf)
        return SharedSinkSolution(inf, inf, np.inf, np.bool_(True), np.nan)
    ts = brentq(h, ta, t_cap, xtol=1e-10, rtol=1e-12)
    p = dev_p(ts)
    tj = ts + r_js * p
    runaway = bool(np.any(tj > t_cap))
    if runaway:
        tj = np.full(p0.shape, np.inf)
    return SharedSinkSolution(tj, p, np.float64(ts), np.bool_(runaway), np.nan)


def shared_sink_max_rth_sa_conservative(t_lim, ta, p_at_tlim, r_js) -> np.ndarray:
    """Sufficient largest RθSA for several devices on one sink [K/W].

    .. math::

        T_{s,max} = \\min_k\\,[T_{lim,k} - P_k(T_{lim,k}) R_{js,k}],\\qquad
        R_{θSA} \\le \\frac{T_{s,max} - T_a}{\\sum_k P_k(T_{lim,k})}

    Parameters
    ----------
    t_lim : array-like [°C], shape (..., M)
    ta : array-like [°C], shape (...)
    p_at_tlim : array-like [W], shape (..., M)
        Each device's loss evaluated at its own T_lim.
    r_js : array-like [K/W], shape (..., M)

    Notes
    -----
    Every loss is taken at its limit, so the answer is sufficient (conservative) when
    only one device binds (physics reference §7.2, derived; E10: 5.224 K/W).
    """
    t_lim, p, r_js = np.broadcast_arrays(_f(t_lim), _f(p_at_tlim), _f(r_js))
    ts_max = np.min(t_lim - p * r_js, axis=-1)
    return (ts_max - _f(ta)) / p.sum(axis=-1)


def shared_sink_max_rth_sa(t_lim, ta, p0, p1, r_js) -> np.ndarray:
    """Exact largest RθSA that keeps every junction on a shared sink ≤ its limit [K/W].

    For each device b in turn, put it exactly at its limit: :math:`P_b = P_b(T_{lim,b})`,
    :math:`T_s = T_{lim,b} - P_b R_{js,b}`; every other device then settles at
    :math:`T_{j,k} - 25 = (T_s - 25 + R_{js,k}P_{0,k})/(1 - R_{js,k}P_{1,k})`; the sink
    resistance that produces that :math:`T_s` is :math:`R_b = (T_s - T_a)/\\sum_k P_k`.
    Junction temperatures rise with RθSA, so the answer is :math:`\\min_b R_b`.

    Parameters
    ----------
    t_lim : array-like [°C], shape (..., M)
    ta : array-like [°C], shape (...)
    p0, p1 : array-like [W], [W/K], shape (..., M)
        Linear loss model of each device.
    r_js : array-like [K/W], shape (..., M)

    Returns
    -------
    ndarray [K/W], shape (...)

    Notes
    -----
    Linear loss model, lumped sink. Physics reference §7.2 (derived; E10: 5.273 K/W
    exact against 5.224 K/W conservative).
    """
    t_lim, p0, p1, r_js = np.broadcast_arrays(_f(t_lim), _f(p0), _f(p1), _f(r_js))
    p_b = p0 + p1 * (t_lim - T_REF)  # (..., M) binding device at its limit
    ts = t_lim - p_b * r_js  # (..., M) sink temperature when b binds
    ts_b = ts[..., :, None]  # (..., B, 1) against others (..., 1, K)
    with np.errstate(divide="ignore", invalid="ignore"):
        u = (ts_b - T_REF + r_js[..., None, :] * p0[..., None, :]) / (
            1.0 - r_js[..., None, :] * p1[..., None, :]
        )
    p_k = p0[..., None, :] + p1[..., None, :] * u
    p_k = np.where(1.0 - r_js[..., None, :] * p1[..., None, :] <= 0, np.inf, p_k)
    m = p0.shape[-1]
    eye = np.eye(m, dtype=bool)
    p_k = np.where(eye, p_b[..., :, None], p_k)
    r_b = (ts - _f(ta)[..., None]) / p_k.sum(axis=-1)
    return np.min(r_b, axis=-1)


# --------------------------------------------------------------------------------------
# Transient thermal impedance (Foster network, §8)
# --------------------------------------------------------------------------------------


def _valid_branches(r, tau) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    r, tau = np.broadcast_arrays(_f(r), _f(tau))
    ok = np.isfinite(r) & (r > 0) & ~np.isnan(tau) & (tau >= 0)
    return np.where(ok, r, 0.0), np.where(ok, tau, 1.0), ok


def _branch_step(t, tau) -> np.ndarray:
    """1 − e^(−t/τ) with τ = 0 meaning an instantaneous branch; 0 for t ≤ 0."""
    with np.errstate(divide="ignore", over="ignore", invalid="ignore"):
        x = np.where(tau > 0, -np.expm1(-t / np.where(tau > 0, tau, 1.0)), 1.0)
    return np.where(t > 0, x, 0.0)


def zth(t, r, tau) -> np.ndarray:
    """Transient thermal impedance of a Foster network [K/W].

    .. math:: Z_{th}(t) = \\sum_i R_i\\left(1 - e^{-t/τ_i}\\right),\\qquad τ_i = R_i C_i

    Parameters
    ----------
    t : array-like [s]
        Time since a power step; broadcast against the network's leading shape. Z = 0
        for t ≤ 0.
    r : array-like [K/W], shape (..., K)
        Branch resistances (last axis). NaN or non-positive entries are absent branches
        (a part with fewer than five stages).
    tau : array-like [s], shape (..., K)
        Branch time constants; τ = 0 is an instantaneous branch (a resistance with no
        heat capacity, e.g. an interface treated as fast).

    Returns
    -------
    ndarray [K/W], shape broadcast(t, r[..., 0])

    Notes
    -----
    Step response per watt, measured with the case held at constant temperature
    (JEDEC JESD51-14 transient method); Σ R_i = RθJC. Foster terms are a curve fit: the
    internal nodes have no physical meaning [WEY]. Source: physics reference §8.1;
    JEDEC JESD51 series; [WEY].
    """
    r, tau, _ = _valid_branches(r, tau)
    t = _f(t)[..., None]
    return np.sum(r * _branch_step(t, tau), axis=-1)


def foster_from_switches(
    switches: pd.DataFrame, *, scale_to_rth_jc: bool = True
) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Foster network arrays from the inventory columns zth_r1..5, zth_tau1..5.

    Parameters
    ----------
    switches : DataFrame
        Inventory switches (SI: zth_r* [K/W], zth_tau* [s], rth_jc [K/W]); missing
        columns count as blank.
    scale_to_rth_jc : bool
        Scale each network up so that Σ R_i equals the sheet's ``rth_jc`` where the
        branches sum to less (datasheet Foster tables usually fit the typical curve
        while ``rth_jc`` is the maximum; datasheets scale the normalised curve r(t) by
        RθJC the same way). Never scales down.

    Returns
    -------
    r : ndarray [K/W], shape (N, 5), NaN for absent branches
    tau : ndarray [s], shape (N, 5)
    has_zth : ndarray of bool, shape (N,)
        At least one complete branch (R > 0 and τ > 0).

    Notes
    -----
    Source: physics reference §8.1; normalised Zth curves r(t)·RθJC as common practice
    in datasheets.
    """
    n = len(switches)
    r = np.full((n, FOSTER_STAGES), np.nan)
    tau = np.full((n, FOSTER_STAGES), np.nan)
    for i in range(FOSTER_STAGES):
        rc, tc = f"zth_r{i + 1}", f"zth_tau{i + 1}"
        if rc in switches.columns:
            r[:, i] = pd.to_numeric(switches[rc], errors="coerce").to_numpy(float)
        if tc in switches.columns:
            tau[:, i] = pd.to_numeric(switches[tc], errors="coerce").to_numpy(float)
    ok = np.isfinite(r) & (r > 0) & np.isfinite(tau) & (tau > 0)
    r = np.where(ok, r, np.nan)
    tau = np.where(ok, tau, np.nan)
    has = ok.any(axis=1)
    if scale_to_rth_jc and "rth_jc" in switches.columns and n:
        rjc = pd.to_numeric(switches["rth_jc"], errors="coerce").to_numpy(float)
        total = np.nansum(r, axis=1)
        with np.errstate(divide="ignore", invalid="ignore"):
            k = np.where(has & (total > 0) & (rjc > total), rjc / total, 1.0)
        r = r * k[:, None]
    return r, tau, has


def single_pulse_rise(p, t, r, tau) -> np.ndarray:
    """Junction rise during a single rectangular power pulse [K]: ΔTj(t) = P·Zth(t).

    Parameters
    ----------
    p : array-like [W]
    t : array-like [s]
        Time since the start of the pulse (within the pulse).
    r, tau : array-like [K/W], [s], shape (..., K)
        Foster network (see :func:`zth`).

    Notes
    -----
    Physics reference §8.1; JEDEC JESD51 transient thermal impedance (common practice in
    datasheets).
    """
    return _f(p) * zth(t, r, tau)


def pulse_response(t, p, t_p, r, tau) -> np.ndarray:
    """Junction rise during and after one rectangular pulse of width t_p [K].

    .. math:: ΔT_j(t) = P\\,[Z_{th}(t) - Z_{th}(t - t_p)]

    (the second term only for t > t_p; superposition of a step up and a step down).

    Parameters
    ----------
    t : array-like [s]
        Time since the start of the pulse.
    p : array-like [W]
    t_p : array-like [s]
        Pulse width.
    r, tau : Foster network [K/W], [s], shape (..., K)

    Notes
    -----
    Physics reference §8.2 (superposition, common practice).
    """
    t = _f(t)
    return _f(p) * (zth(t, r, tau) - zth(t - _f(t_p), r, tau))


def superposition_response(t, t_k, p_k, r, tau) -> np.ndarray:
    """Junction rise for piecewise-constant power by superposition [K].

    .. math:: ΔT_j(t) = \\sum_k (P_k - P_{k-1})\\,Z_{th}(t - t_k),\\quad P_{-1} = 0

    Parameters
    ----------
    t : array-like [s], shape (T,)
        Times at which the rise is wanted.
    t_k : array-like [s], shape (S,)
        Start time of each step (ascending).
    p_k : array-like [W], shape (S,)
        Power from t_k until the next step.
    r, tau : array-like, shape (K,)
        One Foster network.

    Returns
    -------
    ndarray [K], shape (T,)

    Notes
    -----
    Physics reference §8.2 (common practice); linear network, losses not updated with Tj.
    """
    t = _f(t)
    t_k, p_k = _f(t_k), _f(p_k)
    dp = np.diff(np.concatenate([[0.0], p_k]))
    z = zth(t[:, None] - t_k[None, :], r, tau)  # (T, S)
    return z @ dp


def foster_profile(power, dt, r, tau, theta0=None) -> np.ndarray:
    """Junction rise for a piecewise-constant power profile, stepped exactly [K].

    For each step of constant power P over Δt, every branch updates as

    .. math:: θ_i \\leftarrow θ_i e^{-Δt/τ_i} + P R_i (1 - e^{-Δt/τ_i}),\\qquad
              ΔT_j = \\sum_i θ_i

    Parameters
    ----------
    power : array-like [W], shape (S,) or (S, ...)
        Power of each step (the trailing axes broadcast against the network's leading
        axes).
    dt : array-like [s], scalar or shape (S,)
        Duration of each step.
    r, tau : array-like, shape (..., K)
        Foster network(s); τ = 0 is an instantaneous branch.
    theta0 : array-like [K], shape (..., K), optional
        Initial branch rises (default 0, i.e. starting at ambient/case temperature).

    Returns
    -------
    ndarray [K], shape (S, ...)
        Rise at the end of each step.

    Notes
    -----
    Exact for constant power over each step (no time-discretisation error); coupling
    with losses can be added by the caller step by step. Physics reference §8.2
    (derived).
    """
    r, tau, ok = _valid_branches(r, tau)
    power = _f(power)
    n = power.shape[0]
    dt = np.broadcast_to(_f(dt), (n,))
    theta = np.zeros(r.shape) if theta0 is None else np.array(theta0, dtype=float)
    theta = np.broadcast_to(theta, np.broadcast_shapes(theta.shape, r.shape)).copy()
    out = np.empty((n,) + theta.shape[:-1])
    for k in range(n):
        step = _branch_step(dt[k], tau)
        theta = theta * (1.0 - step) + _f(power[k])[..., None] * r * step
        out[k] = np.sum(np.where(ok, theta, 0.0), axis=-1)
    return out


@dataclass(frozen=True)
class PeriodicRise:
    """Periodic steady state of a rectangular pulse train [K above the reference].

    Fields: ``peak`` (end of each pulse), ``minimum`` (just before each pulse),
    ``mean`` (period average).
    """

    peak: np.ndarray
    minimum: np.ndarray
    mean: np.ndarray


def periodic_pulse_rise(p, t_p, period, r, tau) -> PeriodicRise:
    """Exact periodic steady-state rise for rectangular pulses of width t_p, period T.

    .. math::

        ΔT_{j,peak} = P\\sum_i R_i\\frac{1 - e^{-t_p/τ_i}}{1 - e^{-T/τ_i}},\\qquad
        ΔT_{j,min} = P\\sum_i R_i\\frac{(1 - e^{-t_p/τ_i})\\,e^{-(T - t_p)/τ_i}}
        {1 - e^{-T/τ_i}},\\qquad \\overline{ΔT_j} = P\\,D\\sum_i R_i

    Parameters
    ----------
    p : array-like [W]
        Power during the pulse.
    t_p : array-like [s]
        Pulse width (on-time), 0 ≤ t_p ≤ T.
    period : array-like [s]
        Period T > 0.
    r, tau : array-like, shape (..., K)
        Foster network; a τ = 0 branch follows the power instantly (peak R, minimum 0).

    Returns
    -------
    PeriodicRise

    Notes
    -----
    Every branch peaks at the end of the pulse, so the sum of branch peaks is the peak.
    Physics reference §8.3 (derived, checked by time stepping; E9).
    """
    r, tau, _ = _valid_branches(r, tau)
    p = _f(p)[..., None]
    tp = _f(t_p)[..., None]
    per = _f(period)[..., None]
    inst = tau <= 0
    ts = np.where(inst, 1.0, tau)
    with np.errstate(over="ignore", invalid="ignore", divide="ignore"):
        a = -np.expm1(-tp / ts)
        den = -np.expm1(-per / ts)
        peak_f = np.where(inst, np.where(tp > 0, 1.0, 0.0), a / den)
        min_f = np.where(
            inst, np.where(tp >= per, 1.0, 0.0), a * np.exp(-(per - tp) / ts) / den
        )
    peak = np.sum(p * r * peak_f, axis=-1)
    minimum = np.sum(p * r * min_f, axis=-1)
    mean = np.sum(p * r, axis=-1) * (tp / per)[..., 0]
    return PeriodicRise(peak=peak, minimum=minimum, mean=mean)


def periodic_pulse_rise_approx(p, t_p, period, r, tau) -> np.ndarray:
    """Classical duty-cycle approximation of the periodic peak rise [K].

    .. math:: ΔT_{j,peak} \\approx P\\,[D R_θ + (1 - D) Z(T + t_p) - Z(T) + Z(t_p)]

    Parameters
    ----------
    p, t_p, period : array-like [W], [s], [s]
    r, tau : Foster network, shape (..., K)

    Notes
    -----
    Slightly conservative against :func:`periodic_pulse_rise` (E9: 12.406 K against
    12.113 K). Used for datasheet duty-cycle curve families; quoted from memory in the
    physics reference §8.3 [c]. Kept for comparison only.
    """
    r_ = _f(r)
    rth = np.nansum(np.where(_f(r) > 0, r_, 0.0), axis=-1)
    tp, per = _f(t_p), _f(period)
    d = tp / per
    return _f(p) * (
        d * rth + (1 - d) * zth(per + tp, r, tau) - zth(per, r, tau) + zth(tp, r, tau)
    )


def pwm_ripple_rise(p_avg, duty, frequency, r, tau) -> np.ndarray:
    """Junction ripple above its mean for PWM conduction [K].

    The die sees P_on = P_avg/D for t_p = D/f in each period 1/f; the rise above the
    mean is :math:`ΔT_{peak} - P_{avg}R_θ` from :func:`periodic_pulse_rise`.

    Parameters
    ----------
    p_avg : array-like [W]
        Average device loss (what the steady chain uses).
    duty : array-like [-]
        On fraction, 0 < D ≤ 1.
    frequency : array-like [Hz]
        PWM frequency > 0.
    r, tau : Foster network, shape (..., K)

    Notes
    -----
    Switching-edge energies are spread over the on-time (a fine approximation while
    the period is short against the smallest τ). Physics reference §8.3 (derived).
    """
    d = _f(duty)
    per = 1.0 / _f(frequency)
    with np.errstate(divide="ignore", invalid="ignore"):
        pr = periodic_pulse_rise(_f(p_avg) / d, d * per, per, r, tau)
    return pr.peak - pr.mean


def pulse_energy_bound(p_peak, energy, r, tau) -> np.ndarray:
    """Upper bound of the junction rise for a pulse of any shape [K].

    .. math:: ΔT_j \\le P_{pk}\\,Z_{th}(E/P_{pk})

    Parameters
    ----------
    p_peak : array-like [W]
        Highest instantaneous power of the pulse.
    energy : array-like [J]
        Pulse energy (above the steady loss).
    r, tau : Foster network, shape (..., K)

    Notes
    -----
    dZth/dt is nonincreasing for any Foster network, so a rectangular pulse of height
    P_pk and duration E/P_pk applied last heats the junction most. Use for lamp inrush,
    motor stall, capacitor charging. Physics reference §8.5 (derived; E12, E15).
    """
    p = _f(p_peak)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = np.where(p > 0, _f(energy) / np.where(p > 0, p, 1.0), 0.0)
    return p * zth(t, r, tau)


# --------------------------------------------------------------------------------------
# Heatsink as one RC (time-scale separation, §8.4 approach 1)
# --------------------------------------------------------------------------------------


def heat_capacity(mass, specific_heat=ALUMINIUM_SPECIFIC_HEAT) -> np.ndarray:
    """Heat capacity of a heatsink body [J/K]: C = m·c_p.

    Parameters
    ----------
    mass : array-like [kg]
    specific_heat : array-like [J/(kg·K)]
        Default aluminium, c_p ≈ 900 J/(kg·K) (common practice; physics reference §8.4).
    """
    return _f(mass) * _f(specific_heat)


def sink_rc_rise(t, p, r_sa, c_sink) -> np.ndarray:
    """Sink rise after a power step, the sink as one RC [K].

    .. math:: ΔT_s(t) = P R_{θSA}\\,(1 - e^{-t/(R_{θSA} C)})

    Parameters
    ----------
    t : array-like [s]
    p : array-like [W]
        Total power step into the sink.
    r_sa : array-like [K/W]
    c_sink : array-like [J/K]
        Heat capacity of the sink (:func:`heat_capacity`); NaN or ≤ 0 means unknown and
        is treated as an instantaneous sink (conservative).

    Notes
    -----
    Approximation: the sink is isothermal with one time constant τ_SA = RθSA·C (minutes
    for a usual extrusion), its resistance fixed at the operating point. Physics
    reference §8.4, approach 1 (time-scale separation, common practice).
    """
    c = _f(c_sink)
    c = np.where(np.isfinite(c) & (c > 0), c, 0.0)
    return _f(p) * _f(r_sa) * _branch_step(_f(t), _f(r_sa) * c)


# --------------------------------------------------------------------------------------
# Start-up surge and on/off profiles
# --------------------------------------------------------------------------------------


@dataclass(frozen=True)
class SurgeRise:
    """Extra junction rise during a start-up peak above its steady value.

    Fields: ``rise`` [K] (array), ``method`` (str array: one of SURGE_* names).
    """

    rise: np.ndarray
    method: np.ndarray


def surge_extra_rise(
    p_peak, p_run, peak_time, r, tau, rth_jc, rth_cs=0.0, has_zth=None
) -> SurgeRise:
    """Extra junction rise during a start-up peak of duration t_pk [K].

    .. math::

        ΔT_{surge} = (P_{pk} - P_{run})\\,[Z_{th,jc}(t_{pk}) + R_{θCS}]

    added on top of the steady temperature at the running loss.

    Parameters
    ----------
    p_peak : array-like [W]
        Device loss at the peak current.
    p_run : array-like [W]
        Device loss at the running current (same temperature, same device count).
    peak_time : array-like [s]
        How long the peak lasts; ≤ 0 means a short pulse, checked against the pulsed
        current rating elsewhere (rise 0 here).
    r, tau : array-like, shape (..., K)
        Foster network junction-to-case (:func:`foster_from_switches`).
    rth_jc : array-like [K/W]
        Used instead of Zth where the part has no Foster data: Zth(t) = RθJC, the
        steady value, an upper bound for every t (conservative rule).
    rth_cs : array-like [K/W]
        Interface, treated as fast (no heat capacity): conservative.
    has_zth : array-like of bool, optional
        Which rows have Foster data (default: any valid branch).

    Returns
    -------
    SurgeRise

    Notes
    -----
    Assumptions: the surge starts from the steady running state (a restart or stall
    while hot: conservative against a cold start); the losses are taken at the same
    junction temperature for both currents; the heatsink does not move during the surge
    (its time constant is minutes; add :func:`sink_rc_rise` of the extra total power
    for surges lasting a noticeable part of it). Source: physics reference §4.5, §8.1,
    §8.4 approach 1 (time-scale separation); JEDEC JESD51 Zth; [WEY].
    """
    r_, tau_, ok = _valid_branches(r, tau)
    if has_zth is None:
        has_zth = ok.any(axis=-1)
    has_zth = np.asarray(has_zth, dtype=bool)
    t = _f(peak_time)
    dp = np.maximum(_f(p_peak) - _f(p_run), 0.0)
    z = np.where(has_zth, zth(np.maximum(t, 0.0), r_, tau_), _f(rth_jc))
    active = (t > 0) & (dp > 0)
    rise = np.where(active, dp * (z + _f(rth_cs)), 0.0)
    rise = np.where(np.isnan(dp), np.nan, rise)
    code = np.where(dp > 0, np.where(t > 0, np.where(has_zth, 2, 3), 1), 0)
    names = np.array(
        [SURGE_NONE, SURGE_SHORT, SURGE_FOSTER, SURGE_CONSERVATIVE], object
    )
    return SurgeRise(rise=rise, method=names[code.ravel()].reshape(code.shape))


def _augmented(r, tau, rth_cs, r_sa, c_sink, n_devices):
    """Foster jc network plus a fast interface branch and a sink RC branch.

    The sink branch carries the power of all n devices, so its resistance is n·RθSA per
    device watt. Unknown heat capacity: instantaneous sink (conservative).
    """
    r_, tau_, ok = _valid_branches(r, tau)
    r_ = np.where(ok, r_, 0.0)
    lead = r_.shape[:-1]
    c = _f(c_sink) if c_sink is not None else _f(np.nan)
    c = np.where(np.isfinite(c) & (c > 0), c, 0.0)
    r_sa = _f(r_sa)
    extra_r = np.stack(
        np.broadcast_arrays(_f(rth_cs), _f(n_devices) * r_sa), axis=-1
    ).astype(float)
    extra_t = np.stack(np.broadcast_arrays(np.zeros_like(r_sa), r_sa * c), axis=-1)
    shape = np.broadcast_shapes(lead, extra_r.shape[:-1], extra_t.shape[:-1])
    r_all = np.concatenate(
        [
            np.broadcast_to(r_, shape + r_.shape[-1:]),
            np.broadcast_to(extra_r, shape + (2,)),
        ],
        axis=-1,
    )
    t_all = np.concatenate(
        [
            np.broadcast_to(tau_, shape + tau_.shape[-1:]),
            np.broadcast_to(extra_t, shape + (2,)),
        ],
        axis=-1,
    )
    return r_all, t_all


def on_off_rise(
    p_on,
    on_time,
    off_time,
    r,
    tau,
    *,
    rth_cs=0.0,
    r_sa=0.0,
    c_sink=None,
    n_devices=1,
) -> PeriodicRise:
    """Junction rise above ambient for a repeated on/off load, periodic steady state [K].

    The junction-case Foster network, the interface (fast) and the sink (one RC driven by
    the power of all n devices on it) are each driven by the same rectangular power
    wave, so the exact periodic formula of :func:`periodic_pulse_rise` applies per
    branch:

    .. math::

        ΔT_{j,peak} = P_{on}\\left[\\sum_i R_i f_i + R_{θCS} + n R_{θSA} f_{SA}\\right],
        \\quad f = \\frac{1 - e^{-t_{on}/τ}}{1 - e^{-(t_{on}+t_{off})/τ}}

    Parameters
    ----------
    p_on : array-like [W]
        Device loss while on.
    on_time, off_time : array-like [s]
        The repeated profile (on_time > 0).
    r, tau : array-like, shape (..., K)
        Foster network junction-to-case. For a part without Foster data pass
        ``r = rth_jc`` with ``tau = 0`` (steady, conservative).
    rth_cs : array-like [K/W]
        Interface resistance (fast).
    r_sa : array-like [K/W]
        Sink-to-ambient resistance (0 for no sink; then put RθJA in ``r`` with τ = 0).
    c_sink : array-like [J/K], optional
        Heat capacity of the sink; unknown = instantaneous sink (conservative).
    n_devices : array-like [-]
        Devices on the sink, all on together.

    Returns
    -------
    PeriodicRise
        Relative to ambient.

    Notes
    -----
    Time-scale separation, the sink as one lumped RC (physics reference §8.4
    approach 1); losses fixed at the on value (take them at the junction limit for a
    conservative answer). Periodic formula: physics reference §8.3 (derived).
    """
    r_all, t_all = _augmented(r, tau, rth_cs, r_sa, c_sink, n_devices)
    on, off = _f(on_time), _f(off_time)
    return periodic_pulse_rise(p_on, on, on + off, r_all, t_all)


def surge_profile(
    ta,
    p_run,
    p_peak,
    peak_time,
    r,
    tau,
    *,
    rth_cs=0.0,
    r_sa=0.0,
    c_sink=None,
    n_devices=1,
    t_end=None,
    n_points=400,
) -> tuple[np.ndarray, np.ndarray]:
    """Junction temperature over time through a start-up surge, for one device [°C].

    Before t = 0 the device runs steadily at ``p_run`` (sink at its steady
    temperature); from 0 to t_pk it dissipates ``p_peak``, then ``p_run`` again:

    .. math::

        T_j(t) = T_a + P_{run}R_{total} + (P_{pk} - P_{run})\\,[Z(t) - Z(t - t_{pk})]

    with :math:`Z = Z_{th,jc} + R_{θCS} + n R_{θSA}(1 - e^{-t/τ_{SA}})` (interface fast,
    sink one RC with τ_SA = RθSA·C carrying all n devices' extra power).

    Parameters
    ----------
    ta : float [°C]
    p_run, p_peak : float [W]
        Device loss while running and during the peak.
    peak_time : float [s]
    r, tau : array-like, shape (K,)
        Foster network junction-to-case (or ``rth_jc`` with τ = 0 without data).
    rth_cs, r_sa : float [K/W]
        Interface and sink resistances (r_sa = 0 and ``r`` = RθJA for a part in air).
    c_sink : float [J/K], optional
        Sink heat capacity; unknown = instantaneous sink (conservative).
    n_devices : int
    t_end : float [s], optional
        End of the plotted window (default: t_pk plus five times the largest
        junction-case τ, at least 2·t_pk).
    n_points : int

    Returns
    -------
    t : ndarray [s]
    tj : ndarray [°C]

    Notes
    -----
    Superposition on a linear network (physics reference §8.2), time-scale separation
    for the sink (§8.4 approach 1). Losses fixed (take them at the junction limit).
    """
    r_all, t_all = _augmented(r, tau, rth_cs, r_sa, c_sink, n_devices)
    t_pk = float(peak_time)
    jc_tau = _f(tau)
    big = float(np.nanmax(jc_tau)) if np.any(np.isfinite(jc_tau)) else 0.0
    if t_end is None:
        t_end = max(2.0 * t_pk, t_pk + 5.0 * big, 1e-3)
    t = np.linspace(-0.05 * t_end, t_end, int(n_points))
    t = np.unique(np.concatenate([t, [0.0, t_pk]]))
    base = float(p_run) * float(np.sum(r_all))
    dp = float(p_peak) - float(p_run)
    rise = dp * (zth(t, r_all, t_all) - zth(t - t_pk, r_all, t_all))
    return t, float(ta) + base + rise
