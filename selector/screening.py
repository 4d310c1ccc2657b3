"""Screening rules: which switches can serve a channel at all, and why the others cannot.

Every rule has a stable id (:data:`RULES`, in funnel order) and a sentence template that
is filled with the numbers of the part and the channel ("needs 4.5 V gate drive for its
guaranteed Rds(on); the controller gives 3.3 V"). :func:`screen_channel` evaluates every
(switch, parallel count) row of the inventory for one channel
(:func:`selector.evaluate.evaluate_switches`), applies every rule vectorised, and
returns the rows that pass, the rows that fail with all their reasons, and the funnel
(count of rejected rows per first failing rule). The reason sentences are written when
they are first read (:attr:`ScreenResult.rejected`): a pick on a large inventory needs
none of them.

Rules, in funnel order
----------------------
``kind_side``            the switch kind cannot work on the channel's side (P-MOSFET low side)
``voltage``              blocking voltage incl. overshoot > voltage_derating·v_rating
``gate_drive_level``     the gate level the topology can give does not reach the part's
                         guaranteed Rds(on) point (or Vce(sat) gate voltage), incl. "no
                         suitable gate driver in the inventory"
``gate_overvoltage``     |Vgs| the gate would see > derated vgs_max
``threshold_cold``       gate level < 1.5 × V_th,max at the coldest ambient
``current_continuous``   worst device current > i_rating
``current_peak``         start-up/inrush peak per device > i_pulse (i_rating if blank)
``avalanche``            the part needs a freewheel diode (no or too small avalanche
                         rating, IGBT, PWM) and no diode in the inventory fits the channel
``switching_data``       the losses cannot be computed from the part's data
``thermal_runaway``      loss grows faster with temperature than even the best cooling
                         removes it (loop gain ≥ 1 with an ideal sink and the best interface,
                         or alone in air if that is better)
``thermal_no_option``    even an ideal heatsink with the best interface (or free air)
                         cannot keep the junction at T_lim at the hottest ambient
``surge``                the same, once the start-up peak's extra rise is added

A part failing several rules is counted in the funnel under its first failing rule; all
its reasons are kept in ``rejected``. Side "any": both sides are screened; a (part, count)
passes if it passes on one side (preferring no gate-driver IC, then the low side), and is
rejected only when it fails on both (its reasons name the side).
"""

from __future__ import annotations

import copy
import dataclasses
import difflib
import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from selector import checks, drive
from selector.frames import object_column
from selector.models import Channel, Conditions, Settings

__all__ = [
    "CHECK_RULES",
    "RULES",
    "ScreenResult",
    "Screened",
    "diode_candidates",
    "driver_candidates",
    "explain_part",
    "row_checks",
    "screen_channel",
]

#: Rule id -> sentence template (filled with formatted numbers), in funnel order.
RULES: dict[str, str] = {
    "kind_side": "{detail}",
    "voltage": (
        "must block {v_peak} ({how}) but {derating} × its {v_rating} rating allows "
        "only {limit}"
    ),
    "gate_drive_level": "needs {need} gate drive for its guaranteed {what}; {have}",
    "gate_overvoltage": (
        "its gate would see {vgs} ({how}), above its limit {limit} ({factor} × "
        "vgs_max {vgs_max})"
    ),
    "threshold_cold": (
        "its gate threshold rises to {vth_cold} at {t_min} (vth_max {vth_max} at "
        "25 °C); the gate gets {vgs}, less than {factor} × that"
    ),
    "current_continuous": (
        "carries {i_dev} per device with {count} in parallel, above its continuous "
        "rating {i_rating}"
    ),
    "current_peak": (
        "sees {i_peak} per device at start-up with {count} in parallel ({how}), above "
        "its {limit_name} {limit}"
    ),
    "avalanche": "{why}, so it needs a freewheel diode, and {diodes}",
    "switching_data": "its losses cannot be computed: {reason}",
    "thermal_runaway": (
        "runs away thermally: its loss grows by {p1} per K of junction temperature, "
        "and even the best cooling ({r_best}, {how}) leaves a loop gain of {gain} ≥ 1"
    ),
    "thermal_no_option": (
        "no cooling the inventory allows keeps it at its limit {t_lim}, not even an "
        "ideal heatsink with the best interface: {detail}"
    ),
    "surge": (
        "the start-up peak adds {rise} to the junction; even with the best cooling "
        "({how}) it reaches {tj}, above its limit {t_lim}"
    ),
}

#: Rules that are value/limit checks, with their unit and sense ("max": value ≤ limit).
CHECK_RULES: dict[str, tuple[str, str]] = {
    "voltage": ("V", "max"),
    "gate_drive_level": ("V", "min"),
    "gate_overvoltage": ("V", "max"),
    "threshold_cold": ("V", "min"),
    "current_continuous": ("A", "max"),
    "current_peak": ("A", "max"),
    "avalanche": ("J", "max"),
}

Evaluator = Callable[..., pd.DataFrame]


# ------------------------------------------------------------------------- formatting
def _q(x: Any, unit: str) -> str:
    """A number with its unit, 3 significant digits, small values with a prefix."""
    try:
        v = float(x)
    except (TypeError, ValueError):
        return "?"
    if math.isnan(v):
        return "?"
    if math.isinf(v):
        return f"{'−' if v < 0 else ''}∞ {unit}".strip()
    scale = {"J": True, "Ω": True, "W": True, "H": True, "s": True, "A": True}
    if scale.get(unit) and v != 0 and abs(v) < 1:
        if abs(v) >= 1e-3 and not (unit == "A" and abs(v) >= 0.1):
            return f"{v * 1e3:.3g} m{unit}"
        if abs(v) < 1e-3:
            return f"{v * 1e6:.3g} µ{unit}"
    if abs(v) >= 100:
        return f"{v:.0f} {unit}".strip()
    return f"{v:.3g} {unit}".strip()


def _g(x: float) -> str:
    return f"{x:g}"


# --------------------------------------------------------------------------- results
@dataclass
class Screened:
    """Accepted and rejected rows of a small table (diodes, drivers)."""

    passed: pd.DataFrame
    rejected: pd.DataFrame  # part, reason


class _SentenceJob:
    """The reason sentences of one side table's rejected rows, written on demand.

    Writing a sentence with its numbers for every rejected row costs far more than the
    screening itself on a large inventory, and a pick reads none of them; so the rows
    keep their fail matrix and the columns the sentences need, and the sentences are
    written (and kept) when an explanation is read.
    """

    def __init__(
        self,
        t: pd.DataFrame,
        fails: np.ndarray,
        channel: Channel,
        conditions: Conditions,
        settings: Settings,
        diode_text: str,
    ) -> None:
        self.t = t
        self.fails = fails
        self.args = (channel, conditions, settings, diode_text)
        self._done: dict[int, tuple[str, ...]] = {}

    def reasons(self, rows: Any) -> list[tuple[str, ...]]:
        """Every failing rule's sentence (funnel order) of each row in ``rows``."""
        rows = np.asarray(rows, dtype=int)
        todo = np.array(sorted({int(r) for r in rows} - set(self._done)), dtype=int)
        if todo.size:
            rule_ids = list(RULES)
            sent = np.full((todo.size, len(rule_ids)), "", dtype=object)
            f = self.fails[todo]
            for j, rule in enumerate(rule_ids):
                hit = np.flatnonzero(f[:, j])
                if hit.size:
                    sent[hit, j] = _sentences(self.t.iloc[todo[hit]], rule, *self.args)
            for k, r in enumerate(todo.tolist()):
                self._done[r] = tuple(x for x in sent[k] if x)
        return [self._done[int(r)] for r in rows]


class _TextJob:
    """Reasons already written (one tuple per row)."""

    def __init__(self, texts: list[tuple[str, ...]]) -> None:
        self.texts = texts

    def reasons(self, rows: Any) -> list[tuple[str, ...]]:
        return [self.texts[int(r)] for r in np.asarray(rows, dtype=int)]


_REJECTED_PUBLIC = (
    "part", "count", "kind", "package", "price", "side", "rule", "reason", "rules",
    "reasons",
)  # fmt: skip


@dataclass
class ScreenResult:
    """What :func:`screen_channel` returns for one channel.

    Fields
    ------
    channel : the channel's name.
    passed : evaluate_switches rows (one per part and count) that pass every rule, plus
        ``side``, ``topology``, ``driver_kind`` ("" none, "low_side",
        "high_side|isolated" = either, "isolated"), ``driver_v_min``/``driver_v_max``
        [V] (the v_out window a driver must lie in), ``vgs_on_v`` [V] (gate level the
        losses were evaluated at), ``clamp``, ``divider_r2_ohm``, ``needs_diode``,
        ``avalanche_ok``, ``diode_vf_v``, ``notes`` ("; "-joined) and the check columns
        ``<rule>_value``/``<rule>_limit`` of :data:`CHECK_RULES` (see :func:`row_checks`).
    rejected_rows : one row per failed (part, count): part, count, kind, package, price,
        side, ``rule`` (first failing rule) and ``rules`` (every failing rule, funnel
        order), without the sentences (cheap to build, see :attr:`rejected`).
    funnel : rule id -> rejected rows counted under their first failing rule, every
        rule of :data:`RULES` in order (zeros included).
    total : rows screened (parts × counts).
    diodes : freewheel diodes from the inventory that fit the channel (empty if none
        or not needed); ``diode_rejected`` the others with reasons.
    notes : channel-level sentences (assumptions, cautions, missing diode).
    jobs : where the sentences of ``rejected_rows`` come from (internal).

    :attr:`rejected` is ``rejected_rows`` plus ``reason`` (the first failing rule's
    sentence) and ``reasons`` (every sentence); the sentences are written on first use.
    """

    channel: str
    passed: pd.DataFrame
    rejected_rows: pd.DataFrame
    funnel: dict[str, int]
    total: int = 0
    diodes: pd.DataFrame = field(default_factory=pd.DataFrame)
    diode_rejected: pd.DataFrame = field(default_factory=pd.DataFrame)
    notes: list[str] = field(default_factory=list)
    jobs: list[Any] = field(default_factory=list, repr=False)
    _rejected: pd.DataFrame | None = field(default=None, repr=False, compare=False)

    @property
    def rejected_counts(self) -> dict[str, int]:
        """The funnel without the rules that rejected nothing."""
        return {k: v for k, v in self.funnel.items() if v}

    def reasons_at(self, positions: Any) -> list[tuple[str, tuple[str, ...]]]:
        """(reason, reasons) of the rejected rows at these positions."""
        rr = self.rejected_rows
        pos = np.asarray(positions, dtype=int)
        if "_refs" not in rr.columns:  # a table given with its sentences written
            reason = rr["reason"] if "reason" in rr else pd.Series([""] * len(rr))
            reasons = rr["reasons"] if "reasons" in rr else pd.Series([()] * len(rr))
            return [(str(reason.iloc[i]), tuple(reasons.iloc[i])) for i in pos]
        jobs = rr["_job"].to_numpy()[pos]
        rows_at = rr["_row"].to_numpy()[pos]
        # a row rejected on one side refers to (its job, its row); a side "any" row
        # failing on both sides carries its references in ``_refs``
        refs = [
            r if r is not None else ((int(j), int(k), ""),)
            for r, j, k in zip(rr["_refs"].to_numpy()[pos], jobs, rows_at, strict=True)
        ]
        best = rr["_best"].to_numpy()[pos]
        want: dict[int, set[int]] = {}
        for rs in refs:
            for job, row, _side in rs:
                want.setdefault(job, set()).add(row)
        got: dict[tuple[int, int], tuple[str, ...]] = {}
        for job, rows in want.items():
            rows_l = sorted(rows)
            for r, texts in zip(rows_l, self.jobs[job].reasons(rows_l), strict=True):
                got[(job, r)] = texts
        out = []
        for rs, b in zip(refs, best, strict=True):
            if len(rs) == 1 and not rs[0][2]:
                texts = got[(rs[0][0], rs[0][1])]
                out.append((texts[0] if texts else "", texts))
                continue
            reasons = tuple(
                f"on the {side} side: {x}"
                for job, row, side in rs
                for x in got[(job, row)]
            )
            job, row, side = rs[int(b)]
            first = got[(job, row)]
            out.append((f"on the {side} side: {first[0] if first else ''}", reasons))
        return out

    @property
    def rejected(self) -> pd.DataFrame:
        """``rejected_rows`` with ``reason`` and ``reasons`` (written on first use)."""
        if self._rejected is None:
            rr = self.rejected_rows
            if "_refs" not in rr.columns:
                self._rejected = rr
            else:
                texts = self.reasons_at(np.arange(len(rr)))
                out = rr.drop(
                    columns=["_refs", "_best", "_first", "_job", "_row"],
                    errors="ignore",
                )
                out = out.copy()
                out["reason"] = [a for a, _ in texts]
                out["reasons"] = [b for _, b in texts]
                cols = [c for c in _REJECTED_PUBLIC if c in out.columns]
                self._rejected = out[
                    cols + [c for c in out.columns if c not in cols]
                ].reset_index(drop=True)
        return self._rejected


def row_checks(row: Mapping[str, Any]) -> list[dict[str, Any]]:
    """The checks of one passed row as [{rule, value, limit, margin, unit, ok}, ...].

    For ``ChannelPick.details["checks"]``; rules whose value is blank (not applicable)
    are left out.
    """
    out = []
    for rule, (unit, sense) in CHECK_RULES.items():
        v = row.get(f"{rule}_value", np.nan)
        lim = row.get(f"{rule}_limit", np.nan)
        if v is None or lim is None or pd.isna(v) or pd.isna(lim):
            continue
        v, lim = float(v), float(lim)
        margin = lim - v if sense == "max" else v - lim
        out.append(
            {
                "rule": rule,
                "value": v,
                "limit": lim,
                "margin": margin,
                "unit": unit,
                "ok": bool(margin >= -1e-9),
            }
        )
    return out


# ----------------------------------------------------------------- diodes and drivers
def _num(df: pd.DataFrame, name: str) -> np.ndarray:
    if name not in df:
        return np.full(len(df), np.nan)
    return pd.to_numeric(df[name], errors="coerce").to_numpy(dtype=float)


def diode_candidates(
    diodes: pd.DataFrame,
    channel: Channel,
    settings: Settings | None = None,
    conditions: Conditions | None = None,
) -> Screened:
    """Freewheel diodes of the inventory that are rated for the channel.

    Rules (physics §4.1, §10; common practice):

    * V_RRM ≥ Settings.diode_voltage_factor·V_supply (1.5×);
    * I_F(AV) ≥ I_avg/Settings.diode_current_derating (average from
      :func:`selector.losses.diode_requirements`: (1 − D)·I for PWM, I0·τ·f for slow
      on/off), and I_F(AV) ≥ the on-state load current: the diode takes the whole load
      current at every turn-off. A motor switched off at stall gives a short pulse that a
      diode's surge rating (many times I_F(AV)) covers;
    * with ``conditions``: T_j = Ta_max + P_D·rth_ja ≤ tj_max − junction_margin where the
      diode has rth_ja and tj_max (P_D = V_F·I_avg);
    * stock 0 is out (blank stock = no limit).

    Returns
    -------
    Screened: ``passed`` (the diode rows plus ``p_diode_w``, ``tj_diode_c``) and
    ``rejected`` (part, reason with the numbers). Both empty when the load needs no diode.
    """
    from selector.losses import diode_requirements

    settings = settings or Settings()
    cols = ["part", "reason"]
    if diodes is None or len(diodes) == 0 or not channel.needs_freewheel:
        empty = diodes.iloc[0:0] if diodes is not None else pd.DataFrame()
        return Screened(empty, pd.DataFrame({c: [] for c in cols}))
    need = diode_requirements(channel, settings)
    v_rrm = _num(diodes, "v_rrm")
    i_avg = _num(diodes, "i_avg")
    vf = _num(diodes, "vf")
    stock = _num(diodes, "stock")
    i_min = max(need.i_avg_min, channel.current)
    p = np.asarray(need.loss(np.nan_to_num(vf, nan=checks.DIODE_VF_DEFAULT)), float)
    p = np.broadcast_to(p, (len(diodes),))
    reasons: list[list[str]] = [[] for _ in range(len(diodes))]
    tj = np.full(len(diodes), np.nan)
    if conditions is not None:
        tj = conditions.ambient_max + p * _num(diodes, "rth_ja")
        t_lim = _num(diodes, "tj_max") - conditions.junction_margin
    for i in range(len(diodes)):
        if not (v_rrm[i] >= need.v_rrm_min):
            reasons[i].append(
                f"V_RRM {_q(v_rrm[i], 'V')} is below {_g(settings.diode_voltage_factor)}"
                f" × the {_q(channel.supply, 'V')} supply = {_q(need.v_rrm_min, 'V')}"
            )
        if not (i_avg[i] >= i_min - 1e-12):
            reasons[i].append(
                f"I_F(AV) {_q(i_avg[i], 'A')} is below the {_q(i_min, 'A')} it must "
                "carry (the load current at turn-off, or the average with "
                f"{_g(settings.diode_current_derating)} derating)"
            )
        if conditions is not None and np.isfinite(tj[i]) and np.isfinite(t_lim[i]):
            if tj[i] > t_lim[i]:
                reasons[i].append(
                    f"its junction would reach {_q(tj[i], '°C')} "
                    f"({_q(p[i], 'W')} × RθJA), above its limit {_q(t_lim[i], '°C')}"
                )
        if stock[i] == 0:
            reasons[i].append("none in stock")
    ok = np.array([not r for r in reasons], dtype=bool)
    passed = diodes[ok].copy()
    passed["p_diode_w"] = p[ok]
    passed["tj_diode_c"] = tj[ok]
    rej = pd.DataFrame(
        {
            "part": diodes["part"].to_numpy()[~ok],
            "reason": ["; ".join(r) for r, k in zip(reasons, ok, strict=True) if not k],
        }
    )
    return Screened(passed, rej)


def driver_candidates(drivers: pd.DataFrame, need: Any, channel: Channel) -> Screened:
    """Gate drivers of the inventory that serve a drive need.

    Parameters
    ----------
    drivers : inventory drivers (part, kind, v_out [V], v_supply_max [V], stock).
    need : a :class:`selector.drive.DriveNeed`, or a passed screening row (mapping with
        ``driver_kind``, ``driver_v_min``, ``driver_v_max``).
    channel : the channel (supply [V] for high-side drivers).

    Rules: kind among the need's driver kinds; v_out ≥ the part's needed gate level and
    ≤ its derated gate limit; a ``high_side`` driver must stand the supply
    (v_supply_max ≥ supply, when given); stock 0 is out. A ``high_side`` driver on a
    steady-on channel must hold the gate up indefinitely (charge pump): the inventory
    does not say which do, so those pass with a note to check.

    Returns
    -------
    Screened (passed rows plus ``note``; rejected part + reason).
    """
    if isinstance(need, drive.DriveNeed):
        kinds = tuple(need.driver_kinds)
        v_min, v_max = need.gate_min, need.gate_max
    else:
        kinds = tuple(k for k in str(need.get("driver_kind", "") or "").split("|") if k)
        v_min = float(need.get("driver_v_min", np.nan))
        v_max = float(need.get("driver_v_max", np.nan))
    if drivers is None or len(drivers) == 0:
        d = drivers if drivers is not None else pd.DataFrame()
        return Screened(d.iloc[0:0], pd.DataFrame({"part": [], "reason": []}))
    v_out = _num(drivers, "v_out")
    vs = _num(drivers, "v_supply_max")
    stock = _num(drivers, "stock")
    dk = drivers["kind"].astype(object).to_numpy()
    reasons: list[list[str]] = [[] for _ in range(len(drivers))]
    steady = drive._steady_high(channel)
    notes = np.full(len(drivers), "", dtype=object)
    for i in range(len(drivers)):
        if dk[i] not in kinds:
            want = " or ".join(kinds) if kinds else "none (no driver is needed)"
            reasons[i].append(f"kind {dk[i]}; this part needs {want}")
            continue
        if np.isfinite(v_min) and not v_out[i] >= v_min:
            reasons[i].append(
                f"v_out {_q(v_out[i], 'V')} is below the {_q(v_min, 'V')} the part needs"
            )
        if np.isfinite(v_max) and v_out[i] > v_max + 1e-9:
            reasons[i].append(
                f"v_out {_q(v_out[i], 'V')} is above the part's gate limit {_q(v_max, 'V')}"
            )
        if dk[i] == "high_side" and np.isfinite(vs[i]) and vs[i] < channel.supply:
            reasons[i].append(
                f"v_supply_max {_q(vs[i], 'V')} is below the {_q(channel.supply, 'V')} supply"
            )
        if stock[i] == 0:
            reasons[i].append("none in stock")
        if dk[i] == "high_side" and steady:
            notes[i] = (
                "the channel stays on: this high-side driver must have a charge pump "
                "(a bootstrap-only driver cannot hold the gate up); check its datasheet"
            )
    ok = np.array([not r for r in reasons], dtype=bool)
    passed = drivers[ok].copy()
    passed["note"] = notes[ok]
    rej = pd.DataFrame(
        {
            "part": drivers["part"].to_numpy()[~ok],
            "reason": ["; ".join(r) for r, k in zip(reasons, ok, strict=True) if not k],
        }
    )
    return Screened(passed, rej)


# ------------------------------------------------------------------------- evaluation
def _with_switches(inventory: Any, mask: np.ndarray) -> Any:
    """A shallow copy of the inventory holding only the masked switches."""
    sw = inventory.switches[mask]
    rp = getattr(inventory, "rds_points", None)
    if rp is not None and len(rp):
        keep = pd.Index(rp["part"].to_numpy(object), dtype=object).isin(
            sw["part"].to_numpy(object)
        )
        rp = rp[keep]
    if dataclasses.is_dataclass(inventory) and not isinstance(inventory, type):
        return dataclasses.replace(inventory, switches=sw, rds_points=rp)
    inv = copy.copy(inventory)
    inv.switches = sw
    inv.rds_points = rp
    return inv


def _default_evaluator() -> Evaluator:
    from selector.evaluate import evaluate_switches

    return evaluate_switches


def _evaluate_side(
    evaluate: Evaluator,
    inventory: Any,
    plan: pd.DataFrame,
    channel: Channel,
    conditions: Conditions,
    settings: Settings,
    counts: Any,
) -> pd.DataFrame:
    """evaluate_switches once per distinct gate level of the plan, rows in switch order."""
    vgs = plan["vgs_on_v"].to_numpy(dtype=float)
    drv = plan["uses_driver"].to_numpy(dtype=bool)
    key = np.where(np.isfinite(vgs), np.round(vgs, 9), -1.0)
    frames = []
    for k, d in sorted(set(zip(key.tolist(), drv.tolist(), strict=True))):
        mask = (key == k) & (drv == d)
        sub = _with_switches(inventory, mask)
        if (
            k < 0
        ):  # the drive failed: evaluate at the channel's level (kept for reasons)
            ev = evaluate(sub, channel, conditions, settings, counts)
        elif d:
            ev = evaluate(
                sub,
                channel,
                conditions,
                settings,
                counts,
                driver=True,
                driver_voltage=k,
            )
        else:
            ev = evaluate(
                sub,
                dataclasses.replace(channel, drive=float(k)),
                conditions,
                settings,
                counts,
            )
        frames.append(ev)
    if not frames:
        return pd.DataFrame()
    ev = pd.concat(frames, ignore_index=True)
    order = pd.Series(np.arange(len(plan)), index=plan["part"].to_numpy())
    ev["_order"] = ev["part"].map(order).to_numpy()
    return ev.sort_values(["_order", "count"], kind="stable").reset_index(drop=True)


def _best_interface(interfaces: Any) -> dict[str, float]:
    """Package (upper case) -> smallest rth_cs [K/W] among interfaces with stock."""
    if interfaces is None or len(interfaces) == 0 or "rth_cs" not in interfaces:
        return {}
    best: dict[str, float] = {}
    stock = _num(interfaces, "stock")
    rcs = _num(interfaces, "rth_cs")
    fits = interfaces["fits"].to_numpy() if "fits" in interfaces else [()] * len(rcs)
    for f, r, s in zip(fits, rcs, stock, strict=True):
        if not np.isfinite(r) or s == 0:
            continue
        if isinstance(f, str):
            items = [x.strip() for x in f.replace(",", ";").split(";")]
        elif f is None or (isinstance(f, float) and math.isnan(f)):
            items = []
        else:
            items = [str(x).strip() for x in f]
        for p in items:
            if p:
                best[p.upper()] = min(best.get(p.upper(), math.inf), float(r))
    return best


# ------------------------------------------------------------------------ rule engine
_DRIVE_WHAT = {"nmos": "Rds(on)", "pmos": "Rds(on)", "igbt": "Vce(sat)"}


def _side_table(
    inventory: Any,
    channel: Channel,
    conditions: Conditions,
    settings: Settings,
    side: str,
    evaluate: Evaluator,
    counts: Any,
    clamp: bool,
    diodes_ok: Screened,
) -> pd.DataFrame:
    """Every (part, count) row on one side with check columns and fail flags."""
    sw = inventory.switches.reset_index(drop=True)
    drivers = getattr(inventory, "drivers", None)
    plan = drive.drive_table(
        sw,
        inventory.rds_points,
        channel,
        side,
        settings,
        drivers,
        ambient_min=conditions.ambient_min,
        clamp=clamp,
    )
    plan.insert(0, "part", sw["part"].to_numpy())
    ev = _evaluate_side(
        evaluate, inventory, plan, channel, conditions, settings, counts
    )
    if len(ev) == 0:
        return ev
    pos = ev["_order"].to_numpy(dtype=int)
    swr = sw.iloc[pos].reset_index(drop=True)
    pr = plan.iloc[pos].reset_index(drop=True)
    pr = pr.drop(columns=["part"])
    t = pd.concat(
        [ev.drop(columns=["_order", *(c for c in pr.columns if c in ev.columns)]), pr],
        axis=1,
    )
    n = len(t)
    add: dict[str, Any] = {}  # new columns, joined to t once at the end

    # ---- electrical checks
    vf = (
        float(np.nanmax(_num(diodes_ok.passed, "vf")))
        if len(diodes_ok.passed) and np.isfinite(_num(diodes_ok.passed, "vf")).any()
        else checks.DIODE_VF_DEFAULT
    )
    vchk = checks.voltage_check(swr, channel, conditions, settings, diode_vf=vf)
    i_dev = t["i_dev_a"].to_numpy(dtype=float)
    cchk = checks.continuous_current_check(swr, i_dev)
    pchk = checks.peak_current_check(swr, channel, i_dev)
    achk = checks.avalanche_check(swr, channel, settings, t["t_lim_c"].to_numpy(float))
    add["diode_vf_v"] = vf if channel.needs_freewheel else np.nan
    add["voltage_value"], add["voltage_limit"] = vchk.value, vchk.limit
    add["gate_drive_level_value"] = t["available_v"].to_numpy()
    add["gate_drive_level_limit"] = t["gate_min_v"].to_numpy()
    add["gate_overvoltage_value"] = t["vgs_applied_v"].to_numpy()
    add["gate_overvoltage_limit"] = t["vgs_limit_v"].to_numpy()
    add["threshold_cold_value"] = t["vgs_on_v"].to_numpy()
    add["threshold_cold_limit"] = t["threshold_need_v"].to_numpy()
    add["current_continuous_value"], add["current_continuous_limit"] = (
        cchk.value,
        cchk.limit,
    )
    add["current_peak_value"], add["current_peak_limit"] = pchk.value, pchk.limit
    add["avalanche_value"] = np.where(channel.needs_freewheel, achk.value, np.nan)
    add["avalanche_limit"] = np.where(channel.needs_freewheel, achk.limit, np.nan)
    add["avalanche_exact_j"] = achk.extra.get("e_exact_j", np.zeros(n))
    add["avalanche_ok"] = achk.ok & channel.needs_freewheel
    add["_av_reason"] = achk.extra["reason"]
    add["_av_p"] = achk.extra.get("p_avg_w", np.zeros(n))
    add["_eas_tj0"] = achk.extra.get("eas_tj0_j", np.full(n, np.nan))
    add["_vbr"] = achk.extra.get("v_br_v", np.full(n, np.nan))
    add["_i_warn"] = cchk.extra["warn"]
    add["_pk_from_rating"] = pchk.extra["from_rating"]
    add["_v_rating"] = _num(swr, "v_rating")
    add["_i_rating"] = _num(swr, "i_rating")
    add["_vgs_max"] = _num(swr, "vgs_max")
    add["_vth_max"] = _num(swr, "vth_max")
    needs_diode = channel.needs_freewheel & (~achk.ok | (channel.pwm_frequency > 0))
    add["needs_diode"] = np.asarray(needs_diode, dtype=bool) & channel.needs_freewheel

    # ---- thermal
    best = _best_interface(getattr(inventory, "interfaces", None))
    # per distinct package, then spread to the rows
    p_codes, p_uniq = pd.factorize(t["package"].to_numpy(dtype=object))
    cs = np.array(
        [best.get(str(p).upper(), np.inf) for p in p_uniq] + [np.inf], dtype=float
    )[np.where(p_codes < 0, len(p_uniq), p_codes)]
    rjc = t["rth_jc_k_per_w"].to_numpy(float)
    rja = t["rth_ja_k_per_w"].to_numpy(float)
    r_sink = rjc + cs
    r_air = np.where(np.isfinite(rja), rja, np.inf)
    p1 = t["p1_w_per_k"].to_numpy(float)
    p_dev = t["p_dev_w"].to_numpy(float)
    surge = np.nan_to_num(t["surge_rise_k"].to_numpy(float), nan=0.0)
    dp = (
        np.nan_to_num(t["surge_dp_w"].to_numpy(float), nan=0.0)
        if "surge_dp_w" in t
        else 0.0
    )
    h = t["t_lim_c"].to_numpy(float) - conditions.ambient_max
    with np.errstate(invalid="ignore"):
        r_best = np.fmin(r_sink, r_air)
        gain = np.where(np.isfinite(r_best), p1 * r_best, np.inf)
        rise_sink = p_dev * r_sink
        rise_air = p_dev * r_air
        steady_ok = (rise_sink <= h) | (rise_air <= h)
        rise_sink_pk = rise_sink + surge + dp * np.where(np.isfinite(cs), cs, 0.0)
        rise_air_pk = rise_air + surge
        surge_ok = (rise_sink_pk <= h) | (rise_air_pk <= h)
    known = np.isfinite(p_dev) & np.isfinite(p1)
    add["_r_sink"], add["_r_air"], add["_cs"] = r_sink, r_air, cs
    add["_gain"], add["_h"] = gain, h
    add["_rise_best"] = np.fmin(rise_sink, rise_air)
    add["_rise_best_pk"] = np.fmin(rise_sink_pk, rise_air_pk)
    add["_sink_better"] = rise_sink <= rise_air

    # Follow-on failures are not repeated: a kind that cannot sit on this side has no
    # drive to check, and losses at a drive level that failed are not the part's fault.
    usable = t["kind_side_ok"].to_numpy(bool)
    level_ok = usable & t["gate_drive_level_ok"].to_numpy(bool)
    driven = level_ok & np.isfinite(t["vgs_on_v"].to_numpy(float))
    loss_ok = t["loss_ok"].to_numpy(dtype=bool)
    known &= loss_ok & driven
    fails = {
        "kind_side": ~usable,
        "voltage": ~vchk.ok,
        "gate_drive_level": usable & ~level_ok,
        "gate_overvoltage": usable & ~t["gate_overvoltage_ok"].to_numpy(bool),
        "threshold_cold": level_ok & ~t["threshold_cold_ok"].to_numpy(bool),
        "current_continuous": ~cchk.ok,
        "current_peak": ~pchk.ok,
        "avalanche": add["needs_diode"] & (len(diodes_ok.passed) == 0),
        "switching_data": driven & ~loss_ok,
        "thermal_runaway": known & (gain >= 1.0),
        "thermal_no_option": known & (gain < 1.0) & ~steady_ok,
        "surge": known & (gain < 1.0) & steady_ok & ~surge_ok,
    }
    for rule in RULES:
        add[f"_fail_{rule}"] = fails[rule]
    full = {k: np.broadcast_to(np.asarray(v), (n,)) for k, v in add.items()}
    t = t.drop(columns=[k for k in full if k in t.columns])
    return pd.concat([t, pd.DataFrame(full, index=t.index)], axis=1)


_SENTENCE_COLUMNS = (
    "part", "kind", "package", "side", "count", "t_lim_c", "tj_max_c", "p_dev_w",
    "p1_w_per_k", "rth_jc_k_per_w", "surge_rise_k", "loss_reason", "drive_case",
    "driver_kind", "gate_min_v", "vgs_limit_v", "vgs_on_v", "vth_cold_v", "diode_vf_v",
    "voltage_value", "voltage_limit", "gate_overvoltage_value", "gate_overvoltage_limit",
    "current_continuous_value", "current_continuous_limit", "current_peak_value",
    "current_peak_limit", "avalanche_value", "avalanche_limit", "avalanche_exact_j",
    "_v_rating", "_vgs_max", "_vth_max", "_pk_from_rating", "_av_reason", "_vbr", "_cs",
    "_r_sink", "_r_air", "_gain", "_h", "_sink_better", "_rise_best_pk",
)  # fmt: skip
_NOTE_COLUMNS = (
    "drive_notes", "_i_warn", "current_continuous_value", "_i_rating",
    "_pk_from_rating", "needs_diode", "avalanche_ok", "avalanche_value",
    "avalanche_limit", "t_lim_c", "_av_p", "runaway_no_sink", "loss_notes",
)  # fmt: skip


def _sentences(
    t: pd.DataFrame,
    rule: str,
    channel: Channel,
    conditions: Conditions,
    settings: Settings,
    diode_text: str,
) -> list[str]:
    """The sentence of ``rule`` for every row of ``t`` (the rows that fail it)."""
    tpl = RULES[rule]
    out = []
    for r in t[[c for c in _SENTENCE_COLUMNS if c in t]].to_dict("records"):
        f: dict[str, Any]
        if rule == "kind_side":
            f = {
                "detail": "a P-MOSFET on the low side needs its gate pulled below "
                "ground; use an N-MOSFET there (or put this part on the high side)"
            }
        elif rule == "voltage":
            how = f"{_q(channel.supply, 'V')} supply + {_q(r['voltage_value'] - channel.supply - (r['diode_vf_v'] if channel.needs_freewheel else 0), 'V')} wiring overshoot"
            if channel.needs_freewheel:
                how += f" + {_q(r['diode_vf_v'], 'V')} clamp diode"
            f = {
                "v_peak": _q(r["voltage_value"], "V"),
                "how": how,
                "derating": _g(conditions.voltage_derating),
                "v_rating": _q(r["_v_rating"], "V"),
                "limit": _q(r["voltage_limit"], "V"),
            }
        elif rule == "gate_drive_level":
            case = r["drive_case"]
            need = r["gate_min_v"]
            dk = r["driver_kind"]
            kinds = (
                " or ".join(k.replace("_", "-") for k in dk.split("|")) if dk else ""
            )
            if case == "pin":
                have = f"the controller gives {_q(channel.drive, 'V')}"
            elif case == "supply_low":
                have = f"a level shifter gives at most the {_q(channel.supply, 'V')} supply"
            else:
                lead = (
                    "a microcontroller pin cannot drive a high-side N-MOSFET, and "
                    if r["kind"] == "nmos" and r["side"] == "high"
                    else f"the controller gives {_q(channel.drive, 'V')}, and "
                )
                have = (
                    lead + f"no {kinds} gate driver in the inventory gives "
                    f"{_q(need, 'V')}–{_q(r['vgs_limit_v'], 'V')}"
                )
            f = {
                "need": _q(need, "V"),
                "what": _DRIVE_WHAT.get(r["kind"], "Rds(on)"),
                "have": have,
            }
        elif rule == "gate_overvoltage":
            if r["drive_case"] == "driver_too_high":
                how = "the lowest-output suitable gate driver in the inventory"
            elif r["kind"] == "pmos" and r["side"] == "high":
                how = (
                    f"its gate pulled to 0 V below a {_q(channel.supply, 'V')} source, "
                    "no Vgs clamp"
                )
            else:
                how = f"the controller's {_q(channel.drive, 'V')}"
            factor = (
                drive.IGBT_GATE_DERATING
                if r["kind"] == "igbt"
                else settings.vgs_derating
            )
            f = {
                "vgs": _q(r["gate_overvoltage_value"], "V"),
                "how": how,
                "limit": _q(r["gate_overvoltage_limit"], "V"),
                "factor": _g(factor),
                "vgs_max": _q(r["_vgs_max"], "V"),
            }
        elif rule == "threshold_cold":
            f = {
                "vth_cold": _q(r["vth_cold_v"], "V"),
                "t_min": _q(conditions.ambient_min, "°C"),
                "vth_max": _q(r["_vth_max"], "V"),
                "vgs": _q(r["vgs_on_v"], "V"),
                "factor": _g(drive.THRESHOLD_FACTOR),
            }
        elif rule == "current_continuous":
            f = {
                "i_dev": _q(r["current_continuous_value"], "A"),
                "count": int(r["count"]),
                "i_rating": _q(r["current_continuous_limit"], "A"),
            }
        elif rule == "current_peak":
            _ipk, how = checks.peak_current(channel)
            f = {
                "i_peak": _q(r["current_peak_value"], "A"),
                "count": int(r["count"]),
                "how": how,
                "limit_name": "continuous rating (no i_pulse given)"
                if r["_pk_from_rating"]
                else "pulsed rating",
                "limit": _q(r["current_peak_limit"], "A"),
            }
        elif rule == "avalanche":
            reason = r["_av_reason"]
            e = _q(r["avalanche_value"], "J")
            if reason == "igbt":
                why = f"an IGBT is not avalanche-rated and the coil's {e} turn-off energy has nowhere else to go"
            elif reason == "no_eas":
                why = f"it has no avalanche rating (eas blank) for the coil's {e} turn-off energy"
            elif reason == "pwm":
                why = (
                    f"at {_g(channel.pwm_frequency)} Hz PWM the coil's energy returns "
                    "every cycle (repetitive avalanche is not allowed)"
                )
            else:
                why = (
                    f"the coil's turn-off energy {e} (V_BR ≈ {_q(r['_vbr'], 'V')}; "
                    f"{_q(r['avalanche_exact_j'], 'J')} with the coil resistance) exceeds "
                    f"{_g(settings.avalanche_acceptance)} × E_AS at "
                    f"{_q(r['t_lim_c'], '°C')} = {_q(r['avalanche_limit'], 'J')}"
                )
            f = {"why": why, "diodes": diode_text}
        elif rule == "switching_data":
            f = {"reason": r["loss_reason"] or "the loss model lacks data"}
        elif rule == "thermal_runaway":
            if r["_r_sink"] <= r["_r_air"]:
                how = (
                    f"RθJC {_q(r['rth_jc_k_per_w'], 'K/W')} + best interface "
                    f"{_q(r['_cs'], 'K/W')} on an ideal sink"
                )
            elif np.isfinite(r["_cs"]):
                how = "alone in air"
            else:
                how = f"alone in air; no interface in the inventory fits its {r['package']}"
            f = {
                "p1": _q(r["p1_w_per_k"], "W"),
                "r_best": _q(min(r["_r_sink"], r["_r_air"]), "K/W"),
                "how": how,
                "gain": f"{r['_gain']:.2f}",
            }
        elif rule == "thermal_no_option":
            if r["_h"] <= 0:
                detail = (
                    f"its limit (tj_max {_q(r['tj_max_c'], '°C')} − "
                    f"{_g(conditions.junction_margin)} K margin) is not above the hottest "
                    f"ambient {_q(conditions.ambient_max, '°C')}"
                )
            else:
                parts = []
                if np.isfinite(r["_cs"]):
                    parts.append(
                        f"on an ideal sink its {_q(r['p_dev_w'], 'W')} per device "
                        f"through RθJC {_q(r['rth_jc_k_per_w'], 'K/W')} + the best "
                        f"interface {_q(r['_cs'], 'K/W')} is a "
                        f"{_q(r['p_dev_w'] * r['_r_sink'], 'K')} rise"
                    )
                else:
                    parts.append(
                        f"no interface in the inventory fits its {r['package']} "
                        "package, so it cannot go on a heatsink"
                    )
                if np.isfinite(r["_r_air"]):
                    parts.append(
                        f"alone in air (RθJA {_q(r['_r_air'], 'K/W')}) its "
                        f"{_q(r['p_dev_w'], 'W')} rise "
                        f"{_q(r['p_dev_w'] * r['_r_air'], 'K')}"
                    )
                detail = (
                    "; ".join(parts)
                    + f"; the budget between its limit and the hottest ambient "
                    f"{_q(conditions.ambient_max, '°C')} is {_q(r['_h'], 'K')}"
                )
            f = {"t_lim": _q(r["t_lim_c"], "°C"), "detail": detail}
        elif rule == "surge":
            f = {
                "rise": _q(r["surge_rise_k"], "K"),
                "how": "ideal sink, best interface"
                if r["_sink_better"]
                else "alone in air",
                "tj": _q(conditions.ambient_max + r["_rise_best_pk"], "°C"),
                "t_lim": _q(r["t_lim_c"], "°C"),
            }
        else:  # pragma: no cover - every rule is handled above
            f = {}
        out.append(tpl.format(**f))
    return out


def _row_notes(t: pd.DataFrame, channel: Channel, settings: Settings) -> list[str]:
    """The "; "-joined notes of every passed row (rows without any note get "")."""
    n = len(t)

    def col(name: str, default: Any) -> np.ndarray:
        return t[name].to_numpy() if name in t else np.full(n, default, dtype=object)

    any_note = (
        (col("drive_notes", "").astype(bool))
        | col("_i_warn", False).astype(bool)
        | (
            col("_pk_from_rating", False).astype(bool)
            & (channel.peak > channel.current)
        )
        | col("needs_diode", False).astype(bool)
        | col("avalanche_ok", False).astype(bool)
        | col("runaway_no_sink", False).astype(bool)
        | col("loss_notes", "").astype(bool)
    )
    notes = np.full(n, "", dtype=object)
    rows = np.flatnonzero(any_note)
    if rows.size:
        notes[rows] = _row_notes_of(t.iloc[rows], channel, settings)
    return notes.tolist()


def _row_notes_of(t: pd.DataFrame, channel: Channel, settings: Settings) -> list[str]:
    """The notes of these rows, "; "-joined in a fixed order (see :func:`_row_notes`).

    Built item by item over the rows it concerns (the fixed texts shared, the ones
    with numbers formatted only where they apply), then joined.
    """
    n = len(t)

    def col(name: str, default: Any = None) -> np.ndarray:
        return t[name].to_numpy() if name in t else np.full(n, default, dtype=object)

    def flag(name: str) -> np.ndarray:
        v = col(name, False)
        return np.asarray(pd.notna(v) & v.astype(bool), dtype=bool)

    def text(values: np.ndarray) -> np.ndarray:
        v = np.asarray(values, dtype=object)
        keep = pd.notna(v) & v.astype(bool)
        out = np.full(n, "", dtype=object)
        out[keep] = [str(x) for x in v[keep]]
        return out

    items: list[np.ndarray] = [text(col("drive_notes", ""))]

    warn = np.full(n, "", dtype=object)
    w = np.flatnonzero(flag("_i_warn"))
    if w.size:
        i_val, i_rat = col("current_continuous_value"), col("_i_rating")
        warn[w] = [
            f"runs at {_q(i_val[i], 'A')} per device, above "
            f"{_g(checks.CURRENT_DERATING)} × its {_q(i_rat[i], 'A')} rating"
            for i in w
        ]
    items.append(warn)

    peak = np.full(n, "", dtype=object)
    if channel.peak > channel.current:
        peak[flag("_pk_from_rating")] = (
            "no pulsed rating (i_pulse): the peak was checked against i_rating"
        )
    items.append(peak)

    diode = np.full(n, "", dtype=object)
    needs = flag("needs_diode")
    diode[needs] = "needs a freewheel diode across the load"
    av = np.flatnonzero(~needs & flag("avalanche_ok"))
    if av.size:
        av_val, av_lim, av_p = (
            col("avalanche_value"),
            col("avalanche_limit"),
            col("_av_p"),
        )
        t_lim = col("t_lim_c")
        diode[av] = [
            f"may absorb the coil's {_q(av_val[i], 'J')} turn-off energy in "
            f"avalanche (≤ {_g(settings.avalanche_acceptance)} × E_AS at "
            f"{_q(t_lim[i], '°C')} = {_q(av_lim[i], 'J')}"
            + (f"; {_q(av_p[i], 'W')} on average" if av_p[i] > 0 else "")
            + "); a freewheel diode is still the gentler choice"
            for i in av
        ]
    items.append(diode)

    runaway = np.full(n, "", dtype=object)
    runaway[flag("runaway_no_sink")] = (
        "needs a heatsink: alone in air it runs away thermally"
    )
    items.append(runaway)
    items.append(text(col("loss_notes", "")))

    # join the non-empty items of each row with "; ", per distinct combination
    stacked = np.column_stack(items)
    codes = np.zeros(n, dtype=np.int64)
    for item in items:  # one integer per distinct combination, kept compact
        c, u = pd.factorize(item)
        codes = pd.factorize(codes * (len(u) + 1) + (c + 1))[0]
    uniq = np.unique(codes)
    first_row = np.full(len(uniq), -1)
    first_row[codes[::-1]] = np.arange(n)[::-1]
    joined = np.array(
        ["; ".join(x for x in stacked[r] if x) for r in first_row], dtype=object
    )
    return joined[codes].tolist()


_PUBLIC_DROP = (
    "kind_side_ok",
    "gate_drive_level_ok",
    "gate_overvoltage_ok",
    "threshold_cold_ok",
    "drive_notes",
    "drive_case",
    "available_v",
)


def _finish_side(
    t: pd.DataFrame,
    channel: Channel,
    conditions: Conditions,
    settings: Settings,
    diode_text: str,
    job_id: int,
) -> tuple[pd.DataFrame, pd.DataFrame, _SentenceJob]:
    """(passed, rejected rows, sentence job) of one side's table.

    The rejected rows refer to the job (``_job`` = job_id, ``_row`` = their row in it;
    ``_refs`` None until side "any" merges them); their sentences are written only when
    read (:attr:`ScreenResult.rejected`).
    """
    rule_ids = list(RULES)
    F = np.column_stack([t[f"_fail_{r}"].to_numpy(bool) for r in rule_ids])
    bad = F.any(axis=1)
    first = np.where(bad, F.argmax(axis=1), -1)
    rej_idx = np.flatnonzero(bad)
    names = np.array(rule_ids, dtype=object)
    fr = F[rej_idx]
    rules_col: list[tuple[str, ...]] = []
    if len(rej_idx):
        # every distinct fail pattern once, then one lookup per row
        code = fr.astype(np.int64) @ (np.int64(1) << np.arange(len(rule_ids)))
        pats, inv = np.unique(code, return_inverse=True)
        named = [
            tuple(names[(int(p) >> np.arange(len(rule_ids))) & 1 == 1]) for p in pats
        ]
        rules_col = [named[k] for k in np.asarray(inv).ravel()]

    obj = object_column  # plain objects: arrow strings cost more here

    rejected = pd.DataFrame(
        {
            "part": obj(t["part"].to_numpy()[rej_idx]),
            "count": t["count"].to_numpy()[rej_idx],
            "kind": obj(t["kind"].to_numpy()[rej_idx]),
            "package": obj(t["package"].to_numpy()[rej_idx]),
            "price": t["price"].to_numpy()[rej_idx],
            "side": obj(t["side"].to_numpy()[rej_idx]),
            "rule": obj(names[first[rej_idx]] if len(rej_idx) else []),
            "rules": obj(rules_col),
            "_first": first[rej_idx],
            "_job": np.full(len(rej_idx), job_id, dtype=int),
            "_row": np.arange(len(rej_idx)),
            "_refs": pd.Series([None] * len(rej_idx), dtype=object),
            "_best": np.zeros(len(rej_idx), dtype=int),
        }
    )
    job = _SentenceJob(
        _take(t, [c for c in _SENTENCE_COLUMNS if c in t], rej_idx),
        fr,
        channel,
        conditions,
        settings,
        diode_text,
    )
    ok_idx = np.flatnonzero(~bad)
    public = [c for c in t.columns if not c.startswith("_") and c not in _PUBLIC_DROP]
    passed = _take(t, public, ok_idx)
    note_src = _take(t, [c for c in _NOTE_COLUMNS if c in t], ok_idx)
    passed["notes"] = pd.Series(_row_notes(note_src, channel, settings), dtype=object)
    return passed, rejected, job


def _take(t: pd.DataFrame, cols: list[str], rows: np.ndarray) -> pd.DataFrame:
    """These columns of these rows as a new frame, column by column.

    The side table is a join of many blocks; selecting rows from it directly makes
    pandas consolidate (copy) every column first. Text stays plain objects.
    """
    out = {}
    for c in cols:
        v = t[c].to_numpy()[rows]
        out[c] = pd.Series(v, dtype=object) if v.dtype == object else v
    return pd.DataFrame(out, index=pd.RangeIndex(len(rows)))


def _clean(passed: pd.DataFrame) -> pd.DataFrame:
    drop = [c for c in passed.columns if c.startswith("_") or c in _PUBLIC_DROP]
    return passed.drop(columns=drop).reset_index(drop=True)


def _diode_text(channel: Channel, settings: Settings, dio: Screened) -> str:
    from selector.losses import diode_requirements

    need = diode_requirements(channel, settings)
    i_min = max(need.i_avg_min, channel.current)
    text = (
        "no diode in the inventory fits this channel (it needs V_RRM ≥ "
        f"{_q(need.v_rrm_min, 'V')} and I_F(AV) ≥ {_q(i_min, 'A')})"
    )
    if len(dio.rejected):
        some = "; ".join(
            f"{p}: {r}"
            for p, r in zip(
                dio.rejected["part"][:3], dio.rejected["reason"][:3], strict=True
            )
        )
        text += f" [{some}{'; …' if len(dio.rejected) > 3 else ''}]"
    return text


def screen_channel(
    inventory: Any,
    channel: Channel,
    conditions: Conditions,
    settings: Settings | None = None,
    *,
    gate_clamp: bool = True,
    counts: Any = None,
    evaluate: Evaluator | None = None,
) -> ScreenResult:
    """Apply every rule to every (switch, parallel count) row for one channel.

    Parameters
    ----------
    inventory : Inventory (switches, rds_points, interfaces, diodes, drivers).
    channel : the channel; ``side`` "any" screens both sides.
    conditions : ambient range [°C], junction_margin [K], voltage_derating,
        max_parallel.
    settings : engineering defaults (models.Settings).
    gate_clamp : P-MOSFET level shifters may include a Vgs divider (see
        :mod:`selector.drive`); False refuses a part whose gate cannot take the supply.
    counts : parallel counts to screen (default 1..conditions.max_parallel).
    evaluate : the evaluation function (default
        :func:`selector.evaluate.evaluate_switches`); tests inject a simpler one.

    Returns
    -------
    ScreenResult (see its fields). Sources: physics.md §1.3, §3.3, §4, §6.4, §9, §10.
    """
    settings = settings or Settings()
    evaluate = evaluate or _default_evaluator()
    if counts is None:
        counts = list(range(1, int(conditions.max_parallel) + 1))
    sides = ["low", "high"] if channel.side == "any" else [channel.side]
    dio = diode_candidates(
        getattr(inventory, "diodes", None), channel, settings, conditions
    )
    notes = _channel_notes(channel, settings, dio)
    dtext = _diode_text(channel, settings, dio) if channel.needs_freewheel else ""
    sw = inventory.switches
    if sw is None or len(sw) == 0:
        return ScreenResult(
            channel.name,
            pd.DataFrame(),
            pd.DataFrame(
                columns=["part", "count", "side", "rule", "reason", "reasons"]
            ),
            {r: 0 for r in RULES},
            0,
            dio.passed,
            dio.rejected,
            notes + ["the inventory has no switches"],
        )
    results = []
    jobs: list[Any] = []
    for side in sides:
        t = _side_table(
            inventory,
            channel,
            conditions,
            settings,
            side,
            evaluate,
            counts,
            gate_clamp,
            dio,
        )
        passed, rej, job = _finish_side(
            t, channel, conditions, settings, dtext, len(jobs)
        )
        jobs.append(job)
        results.append((passed, rej))
    if len(results) == 1:
        passed, rejected = results[0]
    else:
        passed, rejected = _merge_sides(results)
    total = len(sw) * len(list(counts))
    funnel = {r: 0 for r in RULES}
    for r, c in rejected["rule"].value_counts().items():
        funnel[str(r)] = int(c)
    return ScreenResult(
        channel.name,
        _clean(passed),
        rejected.reset_index(drop=True),
        funnel,
        total,
        dio.passed,
        dio.rejected,
        notes,
        jobs,
    )


def _merge_sides(
    results: list[tuple[pd.DataFrame, pd.DataFrame]],
) -> tuple[pd.DataFrame, pd.DataFrame]:
    """Side "any": pass on either side (prefer no driver IC, then low); else fail both.

    A (part, count) failing on both sides keeps, as its first rule, the one of the side
    where it got furthest; its reasons name the side they belong to.
    """
    passed = pd.concat([p for p, _ in results], ignore_index=True)
    if len(passed):
        passed["_pref"] = passed["uses_driver"].astype(int) * 2 + (
            passed["side"] == "high"
        ).astype(int)
        passed = (
            passed.sort_values(["part", "count", "_pref"], kind="stable")
            .drop_duplicates(["part", "count"], keep="first")
            .drop(columns=["_pref"])
        )
    ok_keys = (
        set(zip(passed["part"], passed["count"], strict=True)) if len(passed) else set()
    )
    rej = pd.concat([r for _, r in results], ignore_index=True)
    if len(rej) == 0:
        return passed, rej
    parts = rej["part"].tolist()
    counts = rej["count"].tolist()
    firsts = rej["_first"].tolist()
    sides = rej["side"].tolist()
    job_of = rej["_job"].tolist()
    row_of = rej["_row"].tolist()
    groups: dict[tuple[Any, Any], list[int]] = {}
    for i, key in enumerate(zip(parts, counts, strict=True)):
        if key not in ok_keys:
            groups.setdefault(key, []).append(i)
    keep, new_refs, best = [], [], []
    for idx in groups.values():
        b = max(range(len(idx)), key=lambda k: (firsts[idx[k]], -k))
        keep.append(idx[b])
        new_refs.append(tuple((job_of[i], row_of[i], sides[i]) for i in idx))
        best.append(b)
    out = rej.iloc[keep].copy()
    out["_refs"] = new_refs
    out["_best"] = best
    rules = rej["rules"].tolist()
    out["rules"] = [
        tuple(dict.fromkeys(x for i in idx for x in rules[i]))
        for idx in groups.values()
    ]
    return passed, out.reset_index(drop=True)


def _channel_notes(channel: Channel, settings: Settings, dio: Screened) -> list[str]:
    notes = []
    ipk, how = checks.peak_current(channel)
    if channel.load in ("lamp", "motor") or ipk > channel.current:
        notes.append(f"start-up peak {_q(ipk, 'A')}: {how}")
    if channel.needs_freewheel:
        if len(dio.passed):
            notes.append(
                f"{len(dio.passed)} diode(s) in the inventory fit as freewheel diode "
                "for the parts that need one"
            )
        else:
            notes.append(
                "no diode in the inventory fits this channel: every part that needs a "
                "freewheel diode is refused (rule 'avalanche'); add a suitable diode"
            )
        notes.append(
            "Caution: an inductive load switched off without a freewheel diode or a "
            "rated clamp produces a voltage spike that can destroy the switch and start "
            "a fire; verify the turn-off waveform on the bench"
        )
    if channel.supply > 60:
        notes.append(
            f"Caution: {_q(channel.supply, 'V')} is above the 60 V DC touch-safe range; "
            "insulation, creepage and wiring must follow the applicable equipment "
            "standard, local electrical codes and licensed practice"
        )
    return notes


# ------------------------------------------------------------------------- explaining
def _counts_text(counts: list[int]) -> str:
    counts = sorted(counts)
    if len(counts) == 1:
        return f"{counts[0]} in parallel"
    if counts == list(range(counts[0], counts[-1] + 1)):
        return f"{counts[0]}–{counts[-1]} in parallel"
    return ", ".join(str(c) for c in counts) + " in parallel"


def explain_part(
    inventory: Any,
    channel: Channel,
    conditions: Conditions,
    settings: Settings | None,
    part: str,
    **kwargs: Any,
) -> list[str]:
    """Why a part can or cannot serve a channel, as sentences with the numbers.

    One line per group of parallel counts with the same outcome: the rules it fails
    (every reason, funnel order), or, for counts that pass, a line saying it passes
    every rule (with its loss and thermal budget) so that only price or the board-wide
    limits (stock, shared heatsinks, insulation) can have kept it out of a solution.
    ``kwargs`` go to :func:`screen_channel`.
    """
    sw = inventory.switches
    parts = sw["part"].astype(str).tolist() if len(sw) else []
    if part not in parts:
        close = difflib.get_close_matches(part, parts, n=3, cutoff=0.6)
        hint = f"; did you mean {', '.join(repr(c) for c in close)}?" if close else ""
        return [f"'{part}' is not in the switches table of the inventory{hint}"]
    sub = _with_switches(inventory, (sw["part"].astype(str) == part).to_numpy())
    res = screen_channel(sub, channel, conditions, settings, **kwargs)
    lines: list[str] = []
    if len(res.passed):
        p = res.passed
        first = p.iloc[0]
        drv = (
            f", with a {first['driver_kind'].replace('|', ' or ').replace('_', '-')} driver"
            if first["driver_kind"]
            else ""
        )
        lines.append(
            f"{part} passes every rule for '{channel.name}' with "
            f"{_counts_text(p['count'].astype(int).tolist())} ({first['side']} side, "
            f"{first['topology']}{drv}); with {int(first['count'])} it loses "
            f"{_q(first['p_dev_w'], 'W')} per device at its limit "
            f"{_q(first['t_lim_c'], '°C')} and may see at most "
            f"{_q(first['r_ja_max_k_per_w'], 'K/W')} junction to ambient. If it is not in "
            "the chosen parts, a cheaper candidate won or the board-wide limits (stock, "
            "shared heatsinks, insulation) ruled it out"
        )
    if len(res.rejected):
        groups: dict[tuple[str, ...], list[int]] = {}
        for rs, c in zip(res.rejected["reasons"], res.rejected["count"], strict=True):
            groups.setdefault(tuple(rs), []).append(int(c))
        for rs, cs in groups.items():
            lines.append(f"{part} with {_counts_text(cs)}: " + "; ".join(rs))
    lines.extend(res.notes)
    return lines
