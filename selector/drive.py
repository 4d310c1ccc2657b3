"""Gate drive: which circuit a switch needs on a given side, and whether its gate is safe.

Two layers:

* :func:`drive_needs` — one switch kind on one side of one channel, as a plain scalar
  decision (a :class:`DriveNeed`): the topology, the gate-driver kinds that can serve it,
  the gate level it applies and the notes a designer needs. It is the clear version and
  the test oracle.
* :func:`drive_table` — the same decision vectorised over a switches table, plus the
  checks of physics §9 as value/limit columns: drive level against the guaranteed
  Rds(on) point (§1.3) or Vce(sat) gate voltage (§3.3), applied |Vgs| against the
  derated maximum, and the cold threshold.

Topologies (physics §9, common practice):

=====================  ======  ===============================================================
kind                   side    topology
=====================  ======  ===============================================================
N-MOSFET, IGBT         low     "direct from the pin" when the channel's drive level reaches
                               the part's guaranteed point, else "gate driver" (a
                               ``low_side`` driver from the inventory whose v_out reaches it)
N-MOSFET               high    "bootstrap or isolated high-side supply" when the channel is
                               PWM with duty < 1 (the bootstrap capacitor recharges every
                               off-time); a steady-on or slowly cycled channel needs
                               "charge pump or isolated high-side supply". Either way a
                               ``high_side`` or ``isolated`` driver; a pin cannot do it.
P-MOSFET               high    "level shifter" (an NPN or small N-MOSFET pulls the gate down,
                               R1 gate–source pulls it up); "level shifter with Vgs clamp"
                               when supply > vgs_derating·vgs_max (divider R1/R2 sets Vgs).
                               "direct from the pin" only when the supply is not above the
                               pin's level.
P-MOSFET               low     not usable: the gate would have to go below ground.
IGBT                   high    "isolated high-side supply" (an ``isolated`` driver).
=====================  ======  ===============================================================

The Vgs clamp of the P-MOSFET level shifter: with ``clamp=True`` (the default) the tool
assumes the level shifter includes a resistive divider whenever the supply exceeds the
derated gate limit. The divider is designed for |Vgs| = vgs_derating·vgs_max (R1 =
10 kΩ gate–source, R2 from the gate to the pull-down transistor), V_GS = −V·R1/(R1 + R2)
(physics §9, E14); that level is then checked against the part's guaranteed Rds(on)
points like any other drive level. With ``clamp=False`` the gate sees the whole supply and
a part whose limit is below it is refused for gate over-voltage. The divider values are
nominal at the channel's supply; a supply with a wide tolerance needs the check at both
ends (physics §9).

Derating of the gate: MOSFETs |Vgs| ≤ Settings.vgs_derating·vgs_max (MIL-DTL-917 FET
derating, 0.7). IGBTs: the universal +15 V drive of a ±20 V gate would break the 0.7 FET
rule, so IGBT gates use :data:`IGBT_GATE_DERATING` (0.8, i.e. 16 V of 20 V; common
practice, proposed).

Cold threshold: V_th,max(Ta_min) = vth_max + vth_tempco·(Ta_min − 25) (physics §9, E14);
the gate level must be at least :data:`THRESHOLD_FACTOR` (1.5, proposed) times it — the
"well above threshold" sanity check of §9. The guaranteed-point rule (§1.3) is the real
turn-on guarantee and is checked separately.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from selector.frames import object_column
from selector.losses import _RdsLookup, rds_at_drive
from selector.models import Channel, Settings

__all__ = [
    "DIVIDER_R1",
    "DriveNeed",
    "IGBT_GATE_DERATING",
    "THRESHOLD_FACTOR",
    "TOPOLOGIES",
    "divider_for",
    "divider_gate_voltage",
    "divider_power",
    "drive_needs",
    "drive_table",
    "gate_limit",
    "guaranteed_points",
    "spec_point_at",
    "vth_at",
]

DIRECT = "direct from the pin"
GATE_DRIVER = "gate driver"
BOOTSTRAP = "bootstrap or isolated high-side supply"
CHARGE_PUMP = "charge pump or isolated high-side supply"
LEVEL_SHIFTER = "level shifter"
LEVEL_SHIFTER_CLAMP = "level shifter with Vgs clamp"
ISOLATED = "isolated high-side supply"
NOT_USABLE = "not usable"
TOPOLOGIES = (
    DIRECT,
    GATE_DRIVER,
    BOOTSTRAP,
    CHARGE_PUMP,
    LEVEL_SHIFTER,
    LEVEL_SHIFTER_CLAMP,
    ISOLATED,
    NOT_USABLE,
)

#: [-] IGBT gate-emitter derating (|V_GE| ≤ 0.8·V_GE,max); proposed, common practice.
IGBT_GATE_DERATING = 0.8
#: [-] the gate level must be ≥ this × V_th,max at the coldest ambient (proposed).
THRESHOLD_FACTOR = 1.5
#: [Ω] gate–source resistor of the P-MOSFET level shifter (common practice).
DIVIDER_R1 = 10e3
#: [Hz] above this, pin drive switches slowly enough to deserve a note (physics §2.5).
PIN_PWM_NOTE_HZ = 5e3

HIGH_DRIVERS = ("high_side", "isolated")


# ------------------------------------------------------------------------ small physics
def vth_at(vth25, t, tempco):
    """Gate threshold at temperature ``t``.

    V_th(T) = V_th(25 °C) + k_th·(T − 25)

    Parameters
    ----------
    vth25 : [V] threshold at 25 °C (array-like).
    t : [°C] temperature.
    tempco : [V/K] k_th, negative for silicon MOSFETs (≈ −3…−7 mV/K).

    Returns
    -------
    [V] the threshold at ``t``. Source: physics.md §9 (sign published by Dodge, "Power
    MOSFET Tutorial"; magnitude from memory). E14: 2.5 V at −5 mV/K → 2.825 V at −40 °C.
    """
    return np.asarray(vth25, dtype=float) + tempco * (np.asarray(t, dtype=float) - 25.0)


def divider_gate_voltage(supply, r1, r2):
    """Gate–source voltage a P-MOSFET level-shifter divider applies when on.

    V_GS = −V_supply·R1/(R1 + R2), with R1 gate–source and R2 from the gate to the
    pull-down transistor (saturated, 0 V).

    Parameters
    ----------
    supply : [V] load supply (the source potential).
    r1, r2 : [Ω] divider resistors.

    Returns
    -------
    [V] V_GS (negative). Source: physics.md §9, common practice; E14: R1 = 10 kΩ,
    R2 = 15 kΩ → −0.4·V_S.
    """
    s = np.asarray(supply, dtype=float)
    return -s * r1 / (r1 + r2)


def divider_power(supply, r1, r2):
    """[W] dissipation of the divider while the switch is on: V²/(R1 + R2).

    Source: Ohm's law; physics.md E14 (18 V → 12.96 mW, 30 V → 36.0 mW for 25 kΩ).
    """
    s = np.asarray(supply, dtype=float)
    return s * s / (r1 + r2)


def divider_for(supply, vgs, r1=DIVIDER_R1):
    """[Ω] R2 that gives |V_GS| = ``vgs`` at ``supply`` with R1 gate–source.

    R2 = R1·(V_supply/|V_GS| − 1); 0 where |V_GS| ≥ V_supply (no divider needed).
    """
    s = np.asarray(supply, dtype=float)
    v = np.abs(np.asarray(vgs, dtype=float))
    with np.errstate(divide="ignore", invalid="ignore"):
        r2 = r1 * (s / v - 1.0)
    return np.where(v >= s, 0.0, r2)


def gate_limit(kind, vgs_max, settings: Settings):
    """[V] largest gate-source magnitude allowed: derating × vgs_max.

    MOSFETs: Settings.vgs_derating (MIL-DTL-917 Table XIX, 0.7); IGBTs:
    :data:`IGBT_GATE_DERATING` (0.8, common practice: +15 V on a ±20 V gate).
    """
    k = np.asarray(kind, dtype=object)
    factor = np.where(k == "igbt", IGBT_GATE_DERATING, settings.vgs_derating)
    return factor * np.asarray(vgs_max, dtype=float)


# ------------------------------------------------------------------- guaranteed points
def guaranteed_points(rds_points: pd.DataFrame) -> pd.DataFrame:
    """The usable Rds(on) spec points (part, vgs [V], rds_on [Ω]), blanks dropped."""
    if rds_points is None or len(rds_points) == 0:
        return pd.DataFrame({"part": [], "vgs": [], "rds_on": []})
    rp = rds_points[["part", "vgs", "rds_on"]]
    return rp[rp["vgs"].notna() & rp["rds_on"].notna()]


def spec_point_at(
    rds_points: pd.DataFrame, parts, vgs
) -> tuple[np.ndarray, np.ndarray]:
    """(Rds(on),max [Ω], spec V_GS [V]) of the highest guaranteed point ≤ ``vgs``.

    Never interpolated, never extrapolated below the lowest point (physics §1.3 rules
    2–3; E3); NaN where the part has no point at or below ``vgs`` (a NaN ``vgs`` finds
    none). A thin wrapper of :func:`selector.losses.rds_at_drive`.
    """
    parts = np.asarray(parts, dtype=object)
    v = np.broadcast_to(np.asarray(vgs, dtype=float), parts.shape)
    r, used = rds_at_drive(rds_points, parts, np.nan_to_num(v, nan=0.0))
    return np.asarray(r, dtype=float), np.asarray(used, dtype=float)


def _lowest_point(
    rds_points: pd.DataFrame, parts, look: _RdsLookup | None = None
) -> np.ndarray:
    """Lowest |V_GS| of the guaranteed points of each part [V] (NaN where none).

    The points are grouped by part id once (factorised), the smallest |V_GS| of each
    group taken with one sort, and the queried ids looked up in the group index.
    ``look``: the look-up of the same points and parts, whose :meth:`lowest` is the
    same answer when the ids are plain text and no Rds(on) is infinite (it drops
    infinite ones, this function keeps them).
    """
    parts = np.asarray(parts, dtype=object).reshape(-1)
    out = np.full(parts.size, np.nan)
    if rds_points is None or len(rds_points) == 0 or parts.size == 0:
        return out
    vgs = rds_points["vgs"]
    rds = rds_points["rds_on"]
    if vgs.dtype != np.float64 or rds.dtype != np.float64:
        return _lowest_point_frame(rds_points, parts)
    vgs = vgs.to_numpy()
    rds = rds.to_numpy()
    if look is not None and look.text and not np.isinf(rds).any():
        return look.lowest()
    keep = ~np.isnan(vgs) & ~np.isnan(rds)
    code, names = pd.factorize(rds_points["part"].to_numpy(dtype=object)[keep])
    has = code >= 0  # blank part ids form no group
    if not has.any():
        return out
    code, v = code[has], np.abs(vgs[keep][has])
    order = np.lexsort((v, code))  # by part, then |V_GS|
    code, v = code[order], v[order]
    first = np.flatnonzero(np.concatenate(([True], code[1:] != code[:-1])))
    low = np.full(len(names), np.nan)
    low[code[first]] = v[first]
    at = pd.Index(names, dtype=object).get_indexer(parts)
    hit = at >= 0
    out[hit] = low[at[hit]]
    return out


def _lowest_point_frame(rds_points: pd.DataFrame, parts) -> np.ndarray:
    """:func:`_lowest_point` with pandas grouping (columns of any dtype)."""
    rp = guaranteed_points(rds_points)
    low = (
        rp["vgs"].abs().groupby(rp["part"]).min() if len(rp) else pd.Series(dtype=float)
    )
    return pd.Series(np.asarray(parts, dtype=object)).map(low).to_numpy(dtype=float)


# ---------------------------------------------------------------------- scalar version
@dataclass(frozen=True)
class DriveNeed:
    """The gate-drive circuit one switch kind needs on one side of a channel.

    Fields
    ------
    kind, side : the switch kind (nmos, pmos, igbt) and side (low, high).
    topology : one of :data:`TOPOLOGIES`.
    driver_kinds : driver kinds from the inventory that can serve it (empty: no driver IC).
    gate_min : [V] gate level the part needs (lowest guaranteed Rds(on) point, or the
        IGBT's vce_sat_vge); NaN when not known.
    gate_max : [V] derated gate limit; NaN when not known.
    vgs_on : [V] gate-source magnitude the topology applies when no driver is used
        (pin level, supply or divider level); NaN when it is the driver's v_out.
    clamp : the level shifter includes a divider (Vgs clamp).
    divider : (R1, R2) [Ω] of that divider, else None.
    usable : False when the kind cannot work on that side at all.
    notes : sentences for the designer.
    """

    kind: str
    side: str
    topology: str
    driver_kinds: tuple[str, ...] = ()
    gate_min: float = math.nan
    gate_max: float = math.nan
    vgs_on: float = math.nan
    clamp: bool = False
    divider: tuple[float, float] | None = None
    usable: bool = True
    notes: tuple[str, ...] = field(default_factory=tuple)

    @property
    def needs_driver(self) -> str | None:
        """The first driver kind that serves it, or None when no driver IC is needed."""
        return self.driver_kinds[0] if self.driver_kinds else None


def _steady_high(channel: Channel) -> bool:
    """True when a bootstrap capacitor could not stay charged (no regular off-time)."""
    return not (channel.pwm_frequency > 0 and channel.duty < 1)


def drive_needs(
    kind: str,
    side: str,
    channel: Channel,
    settings: Settings | None = None,
    *,
    gate_min: float = math.nan,
    vgs_max: float = math.nan,
    clamp: bool = True,
) -> DriveNeed:
    """The drive topology for one switch kind on one side of ``channel``.

    Parameters
    ----------
    kind : "nmos", "pmos" or "igbt".
    side : "low" or "high" (a channel's "any" is resolved by the caller, who tries both).
    channel : the channel (supply [V], drive [V], duty, pwm_frequency [Hz]).
    settings : engineering defaults (vgs_derating).
    gate_min : [V] the part's lowest guaranteed Rds(on) point, or the IGBT's
        vce_sat_vge; NaN if unknown (15 V assumed for an IGBT, physics §3.3).
    vgs_max : [V] the part's gate absolute maximum; NaN if unknown.
    clamp : whether a P-MOSFET level shifter may include a Vgs divider (see module doc).

    Returns
    -------
    DriveNeed. Assumptions: the channel's ``drive`` is the lowest level the controller
    guarantees at the gate with no static gate current (physics §9: V_GS,on ≈ V_DD,min);
    the pull-down of a level shifter saturates to 0 V. Sources: physics.md §1.3, §3.3,
    §9 (common practice).
    """
    settings = settings or Settings()
    if side not in ("low", "high"):
        raise ValueError(f"side must be 'low' or 'high'; got {side!r}")
    if kind == "igbt" and not math.isfinite(gate_min):
        gate_min = 15.0
    limit = float(gate_limit(kind, vgs_max, settings))
    notes: list[str] = []
    if kind == "pmos" and side == "low":
        return DriveNeed(
            kind,
            side,
            NOT_USABLE,
            gate_min=gate_min,
            gate_max=limit,
            usable=False,
            notes=(
                "a P-MOSFET on the low side needs its gate pulled below ground; "
                "use an N-MOSFET there",
            ),
        )
    if side == "low":  # nmos or igbt
        if not math.isfinite(gate_min) or channel.drive >= gate_min:
            if channel.pwm_frequency > PIN_PWM_NOTE_HZ:
                notes.append(
                    f"a pin drives the gate at {channel.pwm_frequency:g} Hz: switching is "
                    "slow (tens of mA of gate current); the switching loss accounts for it"
                )
            return DriveNeed(
                kind,
                side,
                DIRECT,
                gate_min=gate_min,
                gate_max=limit,
                vgs_on=channel.drive,
                notes=tuple(notes),
            )
        return DriveNeed(
            kind,
            side,
            GATE_DRIVER,
            ("low_side",),
            gate_min=gate_min,
            gate_max=limit,
            notes=(
                f"the controller's {channel.drive:g} V does not reach the "
                f"{gate_min:g} V the part needs: a low-side gate driver",
            ),
        )
    if kind == "igbt":
        return DriveNeed(
            kind,
            side,
            ISOLATED,
            ("isolated",),
            gate_min=gate_min,
            gate_max=limit,
            notes=(
                "a high-side IGBT needs an isolated driver with its own floating supply",
            ),
        )
    if kind == "nmos":
        if _steady_high(channel):
            topo = CHARGE_PUMP
            notes.append(
                "the gate must sit above the supply for as long as the load is on: a "
                "bootstrap capacitor cannot hold it (no regular off-time); use a "
                "high-side driver with a charge pump or an isolated driver"
            )
        else:
            topo = BOOTSTRAP
            notes.append(
                f"bootstrap supply recharges every off-time at {channel.pwm_frequency:g} Hz "
                "(C_boot ≥ about 10·Qg/ΔV allowed)"
            )
        return DriveNeed(
            kind,
            side,
            topo,
            HIGH_DRIVERS,
            gate_min=gate_min,
            gate_max=limit,
            notes=tuple(notes),
        )
    # pmos, high side
    if channel.supply <= channel.drive:
        return DriveNeed(
            kind,
            side,
            DIRECT,
            gate_min=gate_min,
            gate_max=limit,
            vgs_on=channel.supply,
            notes=(
                "the pin pulls the gate between 0 V and the supply directly (the load "
                "supply is not above the pin's level)",
            ),
        )
    vgs = channel.supply
    divider = None
    use_clamp = False
    notes.append(
        "level shifter: an NPN or small N-MOSFET pulls the gate down, "
        f"R1 = {DIVIDER_R1 / 1e3:g} kΩ gate–source pulls it up; turn-off through R1 is slow"
    )
    if clamp and math.isfinite(limit) and channel.supply > limit:
        use_clamp = True
        vgs = limit
        r2 = float(divider_for(channel.supply, vgs))
        divider = (DIVIDER_R1, r2)
        p = float(divider_power(channel.supply, DIVIDER_R1, r2))
        notes.append(
            f"Vgs clamp: divider R2 = {r2 / 1e3:.3g} kΩ from the gate to the pull-down "
            f"sets Vgs = −{vgs:.3g} V at {channel.supply:g} V (≤ "
            f"{settings.vgs_derating:g} × vgs_max); it dissipates {p * 1e3:.3g} mW while on"
        )
    if channel.pwm_frequency > 0:
        notes.append(
            f"PWM at {channel.pwm_frequency:g} Hz through a level shifter: turn-off via R1 "
            "is slow; check the switching loss, or use a push-pull stage"
        )
    return DriveNeed(
        kind,
        side,
        LEVEL_SHIFTER_CLAMP if use_clamp else LEVEL_SHIFTER,
        gate_min=gate_min,
        gate_max=limit,
        vgs_on=vgs,
        clamp=use_clamp,
        divider=divider,
        notes=tuple(notes),
    )


# ------------------------------------------------------------------ vectorised version
def _usable_drivers(drivers: pd.DataFrame | None, channel: Channel) -> pd.DataFrame:
    """Drivers with stock (NaN = unlimited) and, for high_side, a supply rating ≥ supply."""
    cols = ["part", "kind", "v_out", "v_supply_max", "stock", "price"]
    if drivers is None or len(drivers) == 0:
        return pd.DataFrame({c: [] for c in cols})
    d = drivers.copy()
    for c in ("v_supply_max", "stock"):
        if c not in d:
            d[c] = np.nan
    stock = pd.to_numeric(d["stock"], errors="coerce")
    ok = d["v_out"].notna() & (stock.isna() | (stock > 0))
    vmax = pd.to_numeric(d["v_supply_max"], errors="coerce")
    ok &= (d["kind"] != "high_side") | vmax.isna() | (vmax >= channel.supply)
    return d[ok]


def _float_col(df: pd.DataFrame, name: str) -> np.ndarray:
    """A column as float64 (text coerced to NaN); all NaN when the column is absent."""
    if name not in df:
        return np.full(len(df), np.nan)
    return pd.to_numeric(df[name], errors="coerce").to_numpy(dtype=float)


def _usable_driver_arrays(
    drivers: pd.DataFrame | None, channel: Channel
) -> tuple[np.ndarray, np.ndarray]:
    """(v_out [V], kind) of :func:`_usable_drivers`, read as arrays (no table copy)."""
    if drivers is None or len(drivers) == 0:
        return np.empty(0), np.empty(0, dtype=object)

    def num(name: str) -> np.ndarray:
        return _float_col(drivers, name)

    stock = num("stock")
    vmax = num("v_supply_max")
    kind = drivers["kind"].to_numpy(dtype=object)
    v_out = drivers["v_out"]
    with np.errstate(invalid="ignore"):
        ok = v_out.notna().to_numpy(dtype=bool) & (np.isnan(stock) | (stock > 0))
        ok &= (kind != "high_side") | np.isnan(vmax) | (vmax >= channel.supply)
    return v_out[ok].to_numpy(dtype=float), kind[ok]


def drive_table(
    switches: pd.DataFrame,
    rds_points: pd.DataFrame,
    channel: Channel,
    side: str,
    settings: Settings | None = None,
    drivers: pd.DataFrame | None = None,
    *,
    ambient_min: float = 25.0,
    clamp: bool = True,
) -> pd.DataFrame:
    """Drive topology and gate checks for every switch on one side of a channel.

    Parameters
    ----------
    switches : inventory switches (part, kind, vgs_max, vth_max, vce_sat_vge; SI).
    rds_points : (part, vgs [V], rds_on [Ω]) guaranteed points.
    channel : the channel; ``drive`` [V] is the level the controller guarantees.
    side : "low" or "high".
    settings : vgs_derating, vth_tempco [V/K].
    drivers : the inventory's drivers (kind, v_out [V], v_supply_max [V], stock); a part
        whose topology needs a driver can use those of the right kind whose v_out lies
        between the part's needed level and its gate limit.
    ambient_min : [°C] coldest ambient (threshold check).
    clamp : P-MOSFET level shifters may include a Vgs divider (module doc).

    Returns
    -------
    DataFrame with the switches' index and columns

    * ``topology``, ``driver_kind`` ("" = none, "low_side", "high_side|isolated",
      "isolated"), ``uses_driver`` (bool), ``clamp`` (bool), ``divider_r2_ohm``;
    * ``gate_min_v`` (needed level), ``available_v`` (the most the topology can give:
      pin level, supply/divider level, or the best fitting driver's v_out),
      ``vgs_on_v`` (the level losses are evaluated at: pin/supply/divider level, or the
      lowest v_out of the drivers that fit, so any of them does at least as well),
      ``vgs_point_v`` (guaranteed point used at that level), ``vgs_applied_v``
      (|Vgs| the gate sees), ``vgs_limit_v``, ``driver_v_min``, ``driver_v_max``
      (the v_out window a driver must lie in), ``vth_cold_v``, ``threshold_need_v``;
    * booleans ``kind_side_ok``, ``gate_drive_level_ok``, ``gate_overvoltage_ok``,
      ``threshold_cold_ok``; ``drive_case`` (a short code of why drive failed:
      "", "pin", "no_driver", "driver_too_high", "supply_low"); ``drive_notes``.

    Notes
    -----
    Vectorised over switches (and over switches × drivers, a small table). The logic is
    that of :func:`drive_needs`, checked against it in the tests. Sources: physics.md
    §1.3, §3.3, §9, E3, E14.
    """
    settings = settings or Settings()
    n = len(switches)
    idx = switches.index
    kind = switches["kind"].to_numpy(dtype=object)
    parts = switches["part"].to_numpy(dtype=object)

    def col(name: str) -> np.ndarray:
        return _float_col(switches, name)

    vgs_max = col("vgs_max")
    vth_max = col("vth_max")
    vce_vge = col("vce_sat_vge")
    look = _RdsLookup(rds_points, parts)  # spec points of these parts, indexed once
    is_igbt = kind == "igbt"
    is_pmos = kind == "pmos"
    is_nmos = kind == "nmos"
    gate_min = np.where(
        is_igbt,
        np.where(np.isnan(vce_vge), 15.0, vce_vge),
        _lowest_point(rds_points, parts, look),
    )
    limit = gate_limit(kind, vgs_max, settings)
    drive = float(channel.drive)
    supply = float(channel.supply)

    topology = np.full(n, NOT_USABLE, dtype=object)
    driver_kind = np.full(n, "", dtype=object)
    vgs_on = np.full(n, np.nan)
    kind_side_ok = np.ones(n, dtype=bool)
    clamp_arr = np.zeros(n, dtype=bool)
    r2 = np.full(n, np.nan)

    if side == "low":
        kind_side_ok = ~is_pmos
        direct = (is_nmos | is_igbt) & ~(drive < gate_min)  # NaN gate_min: direct
        topology = np.where(direct, DIRECT, np.where(is_pmos, NOT_USABLE, GATE_DRIVER))
        driver_kind = np.where(direct | is_pmos, "", "low_side").astype(object)
        vgs_on = np.where(direct, drive, np.nan)
    elif side == "high":
        steady = _steady_high(channel)
        topology = np.where(
            is_igbt,
            ISOLATED,
            np.where(is_nmos, CHARGE_PUMP if steady else BOOTSTRAP, ""),
        ).astype(object)
        driver_kind = np.where(
            is_igbt, "isolated", np.where(is_nmos, "|".join(HIGH_DRIVERS), "")
        ).astype(object)
        if supply <= drive:
            topology[is_pmos] = DIRECT
            vgs_on[is_pmos] = supply
        else:
            use_clamp = is_pmos & clamp & np.isfinite(limit) & (supply > limit)
            topology[is_pmos] = LEVEL_SHIFTER
            topology[use_clamp] = LEVEL_SHIFTER_CLAMP
            vgs_on[is_pmos] = supply
            vgs_on[use_clamp] = limit[use_clamp]
            clamp_arr = use_clamp
            r2 = np.where(use_clamp, divider_for(supply, limit), np.nan)
    else:
        raise ValueError(f"side must be 'low' or 'high'; got {side!r}")
    driver_kind = np.asarray(driver_kind, dtype=object)
    uses_driver = driver_kind != ""

    # ---- drivers: fit = kind allowed & v_out within [gate_min, limit]
    v_out, dkind = _usable_driver_arrays(drivers, channel)
    available = np.where(uses_driver, np.nan, vgs_on)
    drv_min = np.full(n, np.nan)
    drive_case = np.full(n, "", dtype=object)
    too_high_v = np.full(n, np.nan)
    if uses_driver.any():
        allowed = np.zeros((n, len(v_out)), dtype=bool)
        dk_code, dk_names = pd.factorize(driver_kind)  # a few distinct "a|b" texts
        for k in ("low_side", "high_side", "isolated"):
            has_k = np.array([k in dk.split("|") for dk in dk_names], dtype=bool)
            allowed |= has_k[dk_code][:, None] & (dkind == k)[None, :]
        reach = allowed & (v_out[None, :] >= np.nan_to_num(gate_min, nan=0.0)[:, None])
        lim = np.where(np.isnan(limit), np.inf, limit)
        fits = reach & (v_out[None, :] <= lim[:, None])
        with np.errstate(all="ignore"):
            vo = np.broadcast_to(v_out, allowed.shape)
            lowest_fit = np.where(fits, vo, np.inf).min(axis=1, initial=np.inf)
            best_any = np.where(allowed, vo, -np.inf).max(axis=1, initial=-np.inf)
            lowest_reach = np.where(reach, vo, np.inf).min(axis=1, initial=np.inf)
        has_fit = np.isfinite(lowest_fit)
        sel = uses_driver & has_fit
        vgs_on[sel] = lowest_fit[sel]
        available[sel] = lowest_fit[sel]
        drv_min[sel] = lowest_fit[sel]
        nofit = uses_driver & ~has_fit
        too_high = nofit & np.isfinite(lowest_reach)
        too_high_v[too_high] = lowest_reach[too_high]
        drive_case[too_high] = "driver_too_high"
        drive_case[nofit & ~too_high] = "no_driver"
        # what "available" means when nothing fits: the best allowed driver, if any
        got = nofit & np.isfinite(best_any)
        available[got] = best_any[got]
    drv_max = np.where(uses_driver, limit, np.nan)

    # ---- checks
    # spec_point_at(rds_points, parts, vgs_on), on the look-up built once above
    vgs_point = look.at_drive(np.nan_to_num(vgs_on, nan=0.0))[1]
    vgs_point = np.where(is_igbt, np.nan, vgs_point)
    level_val = np.where(uses_driver & np.isnan(vgs_on), available, vgs_on)
    # a driver that reaches the level but exceeds the gate limit is a gate over-voltage,
    # not a drive-level failure
    gate_level_ok = kind_side_ok & (
        (drive_case == "driver_too_high")
        | (
            (drive_case != "no_driver")
            & (np.isnan(gate_min) | (np.nan_to_num(level_val, nan=-np.inf) >= gate_min))
        )
    )
    pin_fail = ~uses_driver & ~gate_level_ok & kind_side_ok
    drive_case[pin_fail] = np.where(is_pmos[pin_fail], "supply_low", "pin")
    applied = np.where(
        is_pmos & (side == "high"), np.where(clamp_arr, limit, supply), vgs_on
    )
    applied = np.where(drive_case == "driver_too_high", too_high_v, applied)
    ov_ok = np.isnan(limit) | np.isnan(applied) | (applied <= limit + 1e-9)
    vth_cold = vth_at(vth_max, ambient_min, settings.vth_tempco)
    need_th = THRESHOLD_FACTOR * vth_cold
    th_ok = np.isnan(need_th) | np.isnan(vgs_on) | (vgs_on >= need_th - 1e-12)

    notes = _notes(kind, gate_min, vgs_max, side, channel, settings, clamp)

    def text(values: Any) -> pd.Series:  # plain objects: arrow strings cost more later
        return object_column(values, index=idx)

    return pd.DataFrame(
        {
            "side": text(side),
            "topology": text(topology),
            "driver_kind": text(driver_kind),
            "uses_driver": uses_driver,
            "clamp": clamp_arr,
            "divider_r2_ohm": r2,
            "gate_min_v": gate_min,
            "available_v": level_val,
            "vgs_on_v": vgs_on,
            "vgs_point_v": vgs_point,
            "vgs_applied_v": applied,
            "vgs_limit_v": limit,
            "driver_v_min": np.where(uses_driver, gate_min, np.nan),
            "driver_v_max": drv_max,
            "driver_v_used": drv_min,
            "vth_cold_v": vth_cold,
            "threshold_need_v": need_th,
            "kind_side_ok": kind_side_ok,
            "gate_drive_level_ok": gate_level_ok,
            "gate_overvoltage_ok": ov_ok,
            "threshold_cold_ok": th_ok,
            "drive_case": text(drive_case),
            "drive_notes": text(notes),
        },
        index=idx,
    )


def _notes(
    kind: np.ndarray,
    gate_min: np.ndarray,
    vgs_max: np.ndarray,
    side: str,
    channel: Channel,
    settings: Settings,
    clamp: bool,
) -> np.ndarray:
    """Designer notes per row from :func:`drive_needs`, once per distinct input."""

    def key(x: float) -> float | None:
        return None if np.isnan(x) else round(float(x), 9)

    kind = np.asarray(kind, dtype=object)
    gate_min = np.asarray(gate_min, dtype=float)
    vgs_max = np.asarray(vgs_max, dtype=float)
    # distinct (kind, gate_min, vgs_max) rows, in order of first appearance; the
    # notes are built once per distinct rounded key, from its first row's values
    codes = np.zeros(len(kind), dtype=np.int64)
    for a in (kind, gate_min, vgs_max):
        c, u = pd.factorize(a, use_na_sentinel=False)
        codes = codes * max(len(u), 1) + c
    combo, first = np.unique(codes, return_index=True)
    order = np.argsort(first, kind="stable")
    inverse = np.searchsorted(combo, codes)
    cache: dict[tuple, str] = {}
    text = np.empty(len(combo), dtype=object)
    for j in order:
        i = first[j]
        k, g, vm = kind[i], gate_min[i], vgs_max[i]
        kk = (k, key(g), key(vm))
        if kk not in cache:
            if k not in ("nmos", "pmos", "igbt"):
                cache[kk] = ""
            else:
                need = drive_needs(
                    k, side, channel, settings, gate_min=g, vgs_max=vm, clamp=clamp
                )
                cache[kk] = "; ".join(need.notes)
        text[j] = cache[kk]
    return text[inverse]
