"""Voltage, current and avalanche checks of power switches, vectorised over switches.

Every check returns a :class:`Check`: value, limit, margin, unit and ok per switch row
(numpy arrays), so the screening can reject with numbers and the bill of materials can
show the margins.

Decisions documented here (physics.md §4, §10; common practice):

* **Turn-off current** I_off: the on-state current; for a motor the stall current
  (``peak_current``), because a motor can be switched off while stalled (§4.5).
* **Voltage**: the switch must block V_supply + the wiring overshoot
  Settings.overshoot_per_amp·I_off for every load (loop inductance, §4.1), plus the clamp
  diode's forward drop V_F for inductive and motor loads (the diode clamps the drain at
  V_supply + V_F). Limit: v_rating·voltage_derating (§10, 0.8). An unclamped inductive
  turn-off drives the part into avalanche, which the avalanche check covers.
* **Avalanche** (§4.2, E7): E = ½·L·I_off²·V_BR/(V_BR − V_supply) with
  V_BR = Settings.avalanche_factor·v_rating; the exact form with the coil resistance
  R = V_supply/I_off is reported beside it. Accepted when E ≤ avalanche_acceptance·E_AS(Tj0)
  with E_AS derated linearly to zero at tj_max (no curve in the inventory). Tj0 is the
  junction at turn-off: the design limit T_lim (the selection keeps Tj below it). Never
  accepted for IGBTs (not avalanche-rated), for parts without ``eas``, or with PWM
  (repetitive avalanche every cycle). Slow on/off cycling (a valve every minute) counts
  each turn-off as a single event; its average power E·f is reported.
* **Peak current**: peak per device against ``i_pulse`` (the pulsed rating), or against
  ``i_rating`` when ``i_pulse`` is blank (conservative). Lamps without a given
  ``peak_current`` are assumed to start at :data:`LAMP_INRUSH_FACTOR` (12) × the running
  current (§4.3, E12: cold filament, 10–15×). The heating during a long peak (motor
  stall) is the thermal evaluation's surge rise, not this check.
* **Continuous current**: the worst device current must not exceed ``i_rating`` (the
  package and bond wires, whatever the cooling): above it the part is rejected. Above
  :data:`CURRENT_DERATING` (0.8) × i_rating it passes with a warning (§10: 0.6–0.8;
  the thermal check governs).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from selector.models import Channel, Conditions, Settings

__all__ = [
    "CURRENT_DERATING",
    "Check",
    "DIODE_VF_DEFAULT",
    "LAMP_INRUSH_FACTOR",
    "avalanche_check",
    "avalanche_energy",
    "avalanche_energy_exact",
    "avalanche_time",
    "avalanche_time_exact",
    "continuous_current_check",
    "eas_at",
    "freewheel_energy_per_event",
    "peak_current",
    "peak_current_check",
    "turn_off_current",
    "voltage_check",
    "zener_clamp_energy",
]

#: [-] lamp cold-filament inrush k = I_peak/I_hot when peak_current is not given (§4.3).
LAMP_INRUSH_FACTOR = 12.0
#: [-] warn above this fraction of i_rating (physics §10, MIL-DTL-917; common practice).
CURRENT_DERATING = 0.8
#: [V] clamp diode forward drop assumed before a diode is chosen (silicon ≤ 1 V at
#: rated current; common practice).
DIODE_VF_DEFAULT = 1.0


@dataclass
class Check:
    """One check over many switch rows.

    ``sense`` = "max": the value must not exceed the limit (margin = limit − value);
    "min": the value must reach the limit (margin = value − limit). ``extra`` holds
    companion arrays (e.g. the exact avalanche energy).
    """

    rule: str
    value: np.ndarray
    limit: np.ndarray
    unit: str
    ok: np.ndarray
    sense: str = "max"
    extra: dict[str, np.ndarray] = field(default_factory=dict)

    @property
    def margin(self) -> np.ndarray:
        if self.sense == "max":
            return self.limit - self.value
        return self.value - self.limit

    def record(self, i: int) -> dict[str, Any]:
        """The check of row ``i`` as {rule, value, limit, margin, unit, ok}."""
        return {
            "rule": self.rule,
            "value": float(self.value[i]),
            "limit": float(self.limit[i]),
            "margin": float(self.margin[i]),
            "unit": self.unit,
            "ok": bool(self.ok[i]),
        }


def _arr(x) -> np.ndarray:
    return np.asarray(x, dtype=float)


def _col(df: pd.DataFrame, name: str) -> np.ndarray:
    if name not in df:
        return np.full(len(df), np.nan)
    s = df[name]
    if s.dtype == np.float64:  # numeric already: no coercion pass
        return s.to_numpy()
    return pd.to_numeric(s, errors="coerce").to_numpy(dtype=float)


# --------------------------------------------------------------------------- physics
def avalanche_energy(inductance, current, v_br, v_dd):
    """Energy a switch absorbs in one unclamped inductive turn-off, coil R neglected.

    E_AS = ½·L·I0²·V_BR/(V_BR − V_DD)

    Parameters
    ----------
    inductance : [H] load inductance L.
    current : [A] current at turn-off I0.
    v_br : [V] avalanche (clamping) voltage of the switch.
    v_dd : [V] supply.

    Returns
    -------
    [J] energy; inf where V_BR ≤ V_DD (the switch cannot stop the current).
    Conservative (R → 0 of :func:`avalanche_energy_exact`). Source: physics.md §4.2
    (common practice; makers' avalanche notes), E7(b): 0.1 H, 1 A, 75 V, 24 V → 73.53 mJ.
    """
    L, i, vb, vd = _arr(inductance), _arr(current), _arr(v_br), _arr(v_dd)
    with np.errstate(divide="ignore", invalid="ignore"):
        e = 0.5 * L * i * i * vb / (vb - vd)
    return np.where(vb > vd, e, np.inf)


def avalanche_time(inductance, current, v_br, v_dd):
    """[s] avalanche duration with coil R neglected: t_av = L·I0/(V_BR − V_DD).

    Source: physics.md §4.2 [derived]; E7(b) 1.961 ms.
    """
    L, i, vb, vd = _arr(inductance), _arr(current), _arr(v_br), _arr(v_dd)
    with np.errstate(divide="ignore", invalid="ignore"):
        t = L * i / (vb - vd)
    return np.where(vb > vd, t, np.inf)


def avalanche_energy_exact(inductance, current, v_br, v_dd, resistance):
    """Avalanche energy with the coil resistance, exact for a constant V_BR.

    E = V_BR·(L/R)·[I0 − (a/R)·ln(1 + I0·R/a)],  a = V_BR − V_DD

    Parameters
    ----------
    inductance : [H]; current : [A] I0; v_br, v_dd : [V]; resistance : [Ω] coil R.

    Returns
    -------
    [J]; inf where a ≤ 0. Source: physics.md §4.2 [derived, checked numerically];
    E7(b): R = 24 Ω → 56.40 mJ.
    """
    L, i, vb, vd, r = (_arr(x) for x in (inductance, current, v_br, v_dd, resistance))
    a = vb - vd
    with np.errstate(divide="ignore", invalid="ignore"):
        e = vb * (L / r) * (i - (a / r) * np.log1p(i * r / a))
    small = r * i < 1e-9 * np.abs(a)  # R → 0: the series limit is the simple form
    e = np.where(small, avalanche_energy(L, i, vb, vd), e)
    return np.where(a > 0, e, np.inf)


def avalanche_time_exact(inductance, current, v_br, v_dd, resistance):
    """[s] t_av = (L/R)·ln(1 + I0·R/a), a = V_BR − V_DD (physics §4.2; E7 1.607 ms)."""
    L, i, vb, vd, r = (_arr(x) for x in (inductance, current, v_br, v_dd, resistance))
    a = vb - vd
    with np.errstate(divide="ignore", invalid="ignore"):
        t = (L / r) * np.log1p(i * r / a)
    return np.where(a > 0, t, np.inf)


def eas_at(eas25, tj_max, tj0):
    """Single-pulse avalanche rating derated to a starting junction temperature.

    E_AS(Tj0) = E_AS,25·(Tj,max − Tj0)/(Tj,max − 25), clipped at 0

    Parameters
    ----------
    eas25 : [J] rating at 25 °C start; tj_max : [°C]; tj0 : [°C] starting junction.

    Returns
    -------
    [J]. Linear to zero at Tj,max when the datasheet gives no curve. Source: physics.md
    §4.2 (common practice; Blackburn, PESC 1988, for the fall with temperature);
    E7: 100 mJ, 175 °C, 85 °C → 60.0 mJ.
    """
    e, tm, t0 = _arr(eas25), _arr(tj_max), _arr(tj0)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = e * (tm - t0) / (tm - 25.0)
    return np.clip(out, 0.0, None)


def freewheel_energy_per_event(vf, current, inductance, resistance):
    """[J] energy a freewheel diode takes per turn-off: E_D ≈ V_F·I0·τ, τ = L/R.

    Assumes V_F ≪ I0·R (the coil resistance takes most of ½·L·I0²). Source: physics.md
    §4.1 [derived]; E7(a): 0.9 V, 1 A, 0.1 H, 24 Ω → 3.75 mJ.
    """
    return _arr(vf) * _arr(current) * _arr(inductance) / _arr(resistance)


def zener_clamp_energy(inductance, current, v_z, v_f):
    """[J] energy in a diode + Zener clamp: ½·L·I0²·V_Z/(V_Z + V_F), coil R neglected.

    The switch then blocks V_supply + V_Z + V_F. Source: physics.md §4.1 [derived];
    E7(c): 33 V Zener, 0.9 V → 48.67 mJ.
    """
    L, i, vz, vf = _arr(inductance), _arr(current), _arr(v_z), _arr(v_f)
    return 0.5 * L * i * i * vz / (vz + vf)


# ------------------------------------------------------------------ channel quantities
def turn_off_current(channel: Channel) -> float:
    """[A] current at turn-off: the stall current for a motor, else the on-state current."""
    if channel.load == "motor":
        return channel.peak
    return channel.current


def peak_current(channel: Channel) -> tuple[float, str]:
    """([A] start-up peak of the channel, how it was found).

    Lamps without a given ``peak_current`` start at :data:`LAMP_INRUSH_FACTOR` × current
    (physics §4.3, E12; common practice 10–15×).
    """
    if channel.load == "lamp" and channel.peak_current <= 0:
        return (
            LAMP_INRUSH_FACTOR * channel.current,
            f"cold-filament inrush assumed {LAMP_INRUSH_FACTOR:g} × the running current",
        )
    if channel.load == "motor":
        if channel.peak_current > 0:
            return channel.peak, "motor stall current"
        return channel.current, "no stall current given; the running current is used"
    if channel.peak_current > channel.current:
        return channel.peak_current, "start-up peak"
    return channel.current, "no peak above the on-state current"


# ----------------------------------------------------------------------------- checks
def voltage_check(
    switches: pd.DataFrame,
    channel: Channel,
    conditions: Conditions,
    settings: Settings,
    *,
    diode_vf: float = DIODE_VF_DEFAULT,
) -> Check:
    """Blocking voltage: V_supply + overshoot (+ V_F for inductive/motor) ≤ derating·v_rating.

    Parameters
    ----------
    switches : rows with ``v_rating`` [V].
    channel : supply [V], load kind, currents [A].
    conditions : voltage_derating [-].
    settings : overshoot_per_amp [V/A].
    diode_vf : [V] clamp diode forward drop (inductive and motor loads).

    Returns
    -------
    Check "voltage" [V], sense "max"; ``extra["overshoot_v"]``. Source: physics.md §4.1,
    §10 (peak incl. spikes ≤ 0.8·rating, common practice).
    """
    i_off = turn_off_current(channel)
    v = channel.supply + settings.overshoot_per_amp * i_off
    if channel.needs_freewheel:
        v += diode_vf
    rating = _col(switches, "v_rating")
    limit = conditions.voltage_derating * rating
    value = np.full(len(switches), v)
    ok = np.nan_to_num(limit, nan=-np.inf) >= value - 1e-9
    return Check(
        "voltage",
        value,
        limit,
        "V",
        ok,
        extra={
            "overshoot_v": np.full(len(switches), settings.overshoot_per_amp * i_off)
        },
    )


def avalanche_check(
    switches: pd.DataFrame, channel: Channel, settings: Settings, tj0
) -> Check:
    """Unclamped turn-off of an inductive or motor load against the avalanche rating.

    Parameters
    ----------
    switches : rows with kind, v_rating [V], eas [J], tj_max [°C].
    channel : supply [V], inductance [H], currents [A], pwm_frequency [Hz].
    settings : avalanche_factor (V_BR/v_rating), avalanche_acceptance.
    tj0 : [°C] junction temperature at turn-off (array or scalar).

    Returns
    -------
    Check "avalanche" [J], sense "max": value = conservative E (coil R neglected),
    limit = acceptance·E_AS(Tj0). ``ok`` False where the part may not absorb it (see
    module doc). extra: ``e_exact_j``, ``v_br_v``, ``eas_tj0_j``, ``p_avg_w`` (E·f for
    slow cycling), ``reason`` (object: "", "igbt", "no_eas", "pwm", "energy").
    For resistive, lamp and capacitive loads the check is not applicable: value 0, ok.
    Source: physics.md §4.2, E7 (common practice; acceptance 0.8 proposed).
    """
    n = len(switches)
    if not channel.needs_freewheel or channel.inductance <= 0:
        z = np.zeros(n)
        return Check(
            "avalanche",
            z,
            z.copy(),
            "J",
            np.ones(n, dtype=bool),
            extra={"reason": np.full(n, "", dtype=object), "e_exact_j": z.copy()},
        )
    i0 = turn_off_current(channel)
    v_rating = _col(switches, "v_rating")
    v_br = settings.avalanche_factor * v_rating
    e = avalanche_energy(channel.inductance, i0, v_br, channel.supply)
    e_exact = avalanche_energy_exact(
        channel.inductance, i0, v_br, channel.supply, channel.supply / i0
    )
    eas = _col(switches, "eas")
    e_tj0 = eas_at(eas, _col(switches, "tj_max"), tj0)
    limit = settings.avalanche_acceptance * e_tj0
    kind = switches["kind"].to_numpy(dtype=object)
    reason = np.full(n, "", dtype=object)
    energy_ok = np.nan_to_num(limit, nan=-np.inf) >= e
    reason[~energy_ok] = "energy"
    reason[np.isnan(eas)] = "no_eas"
    if channel.pwm_frequency > 0:
        reason[:] = "pwm"
    reason[kind == "igbt"] = "igbt"
    period = channel.on_time + channel.off_time
    f_events = 1.0 / period if period > 0 else 0.0
    return Check(
        "avalanche",
        e,
        np.nan_to_num(limit, nan=0.0),
        "J",
        reason == "",
        extra={
            "e_exact_j": e_exact,
            "v_br_v": v_br,
            "eas_tj0_j": e_tj0,
            "p_avg_w": e * f_events,
            "reason": reason,
        },
    )


def continuous_current_check(switches: pd.DataFrame, i_dev) -> Check:
    """Worst device current against ``i_rating`` (reject above; warn above 0.8×).

    Parameters
    ----------
    switches : rows with ``i_rating`` [A] (continuous at 25 °C case).
    i_dev : [A] worst device current per row (parallel sharing included).

    Returns
    -------
    Check "current_continuous" [A], sense "max"; ``extra["warn"]`` (bool) above
    :data:`CURRENT_DERATING`·i_rating. Source: physics.md §10 (MIL-DTL-917; common
    practice: the thermal check governs, the rating is a sanity bound).
    """
    i = np.broadcast_to(_arr(i_dev), (len(switches),)).astype(float)
    rating = _col(switches, "i_rating")
    ok = np.isnan(rating) | (i <= rating + 1e-12)
    warn = ok & ~np.isnan(rating) & (i > CURRENT_DERATING * rating)
    return Check("current_continuous", i, rating, "A", ok, extra={"warn": warn})


def peak_current_check(switches: pd.DataFrame, channel: Channel, i_dev) -> Check:
    """Start-up or inrush peak per device against ``i_pulse`` (``i_rating`` if blank).

    The peak shares between parallel devices like the steady current:
    I_peak,dev = i_dev·I_peak/I. Lamps without peak_current: 12 × current (§4.3).

    Returns
    -------
    Check "current_peak" [A], sense "max"; ``extra["from_rating"]`` (bool) where
    i_rating stood in for a blank i_pulse. Source: physics.md §4.3–§4.6 (I_DM, common
    practice).
    """
    ipk, _how = peak_current(channel)
    i = np.broadcast_to(_arr(i_dev), (len(switches),)).astype(float) * (
        ipk / channel.current
    )
    pulse = _col(switches, "i_pulse")
    rating = _col(switches, "i_rating")
    from_rating = np.isnan(pulse)
    limit = np.where(from_rating, rating, pulse)
    ok = np.isnan(limit) | (i <= limit + 1e-12)
    return Check("current_peak", i, limit, "A", ok, extra={"from_rating": from_rating})
