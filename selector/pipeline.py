"""The one entry point of the page and the command line: design + inventory -> answer.

:func:`select` runs the whole chain for a design:

1. screening: every (switch, parallel count) of the inventory against every rule, per
   channel (:func:`selector.screening.screen_channel`);
2. candidates: interfaces, own heatsinks or free air, shared sinks of heatsink groups,
   pruned (:func:`selector.candidates.build_selection`);
3. the integer program and its ranked alternatives (:func:`selector.optimize.solve`);
4. the final evaluation of every returned solution by the engine, independently of the
   optimizer: the coupled electro-thermal steady state at ambient_max (each device with
   its own loss model P(Tj) = p0 + p1·(Tj − 25), the actual sink law at its actual rise,
   every device of a heatsink group on its sink together), the start-up surge on top,
   the losses at the final junction temperature, the rule checks, the drive topology,
   the assumed values and the curves for the page.

When there is no feasible selection the result says why, per channel: how many rows each
rule removed and the nearest miss with its numbers.

Results are engineering estimates from the inventory's data and the stated defaults;
they do not replace a bench test. Heatsinks run hot enough to burn; inductive loads need
their clamp; anything tied to mains voltage follows local electrical codes and licensed
practice.
"""

from __future__ import annotations

import copy
import dataclasses
import math
import time
from collections.abc import MutableMapping
from typing import Any

import numpy as np
import pandas as pd

from selector import candidates as _cand
from selector import heatsinks as _heatsinks
from selector import optimize as _opt
from selector import screening as _screening
from selector import thermal as _th
from selector.errors import DesignError, Location
from selector.evaluate import junction_report
from selector.models import (
    ChannelPick,
    Design,
    LossBreakdown,
    NearMiss,
    SelectionResult,
    Settings,
    Solution,
)

CURVE_POINTS = 21  # ambient points of the Tj-over-ambient curve
HOT_SINK_C = (
    60.0  # [°C] above this a sink gets the hot-surface caution (common practice)
)
SINK_HELD_J_PER_K = 1e12  # [J/K] stands for "sink does not move during a surge"
SCREEN_CACHE_ENTRIES = 256  # channel screenings a caller's cache keeps at most
TIME_LIMIT_DIAGNOSIS = 5.0  # [s] per sub-problem when looking for the infeasible part

__all__ = [
    "evaluate_solution",
    "format_result",
    "plain_text",
    "screen_all",
    "select",
    "why",
]


# --------------------------------------------------------------------------------------
# the chain


_TABLES = (
    "switches",
    "heatsinks",
    "interfaces",
    "diodes",
    "drivers",
    "rds_points",
    "sink_airflow",
)


def plain_text(inventory):
    """The inventory with its text columns as plain object arrays.

    pandas ≥ 3 holds text as arrow strings (hand-built tables; the reader's Rds(on)
    points), whose row selection and conversion cost more than the arithmetic on a
    large inventory. Returns the same
    object when nothing needs converting, else a shallow copy with converted tables (the
    caller's tables are left as they are).
    """
    changed = {}
    for name in _TABLES:
        df = getattr(inventory, name, None)
        if not isinstance(df, pd.DataFrame):
            continue
        cols = [
            c
            for c in df.columns
            if df[c].dtype != object and pd.api.types.is_string_dtype(df[c].dtype)
        ]
        if cols:
            df = df.copy(deep=False)
            for c in cols:
                df[c] = df[c].astype(object)
            changed[name] = df
    if not changed:
        return inventory
    if dataclasses.is_dataclass(inventory) and not isinstance(inventory, type):
        return dataclasses.replace(inventory, **changed)
    out = copy.copy(inventory)
    for name, df in changed.items():
        setattr(out, name, df)
    return out


def screen_all(
    inventory,
    design: Design,
    settings: Settings | None = None,
    cache: MutableMapping | None = None,
) -> dict:
    """Channel name -> :class:`selector.screening.ScreenResult` for every channel.

    ``cache`` (optional, owned by the caller and tied to this one inventory) keeps each
    channel's screening under (channel, conditions, settings), all frozen dataclasses:
    after an edit of one channel only that channel is screened again.
    """
    settings = settings or Settings()
    out = {}
    for c in design.channels:
        key = (c, design.conditions, settings)
        sc = cache.get(key) if cache is not None else None
        if sc is None:
            sc = _screening.screen_channel(inventory, c, design.conditions, settings)
            if cache is not None:
                if len(cache) >= SCREEN_CACHE_ENTRIES:
                    cache.pop(next(iter(cache)))  # oldest first
                cache[key] = sc
        out[c.name] = sc
    return out


def _funnel(screen, cands: _cand.ChannelCandidates | None) -> dict[str, int]:
    out: dict[str, int] = {}
    if screen is not None:
        out.update({k: int(v) for k, v in screen.funnel.items() if v})
    if cands is not None:
        for k, v in cands.dropped.items():
            if v:
                out[k] = out.get(k, 0) + int(v)
    return out


def select(
    inventory,
    design: Design,
    *,
    settings: Settings | None = None,
    top: int = 3,
    solver: str = "cbc",
    time_limit: float = 30.0,
    prune: _cand.PruneSettings | None = None,
    screen_cache: MutableMapping | None = None,
) -> SelectionResult:
    """The cheapest safe selection for the whole design, with ranked alternatives.

    Parameters
    ----------
    inventory : Inventory (:func:`selector.inventory.load_inventory`).
    design : Design (:func:`selector.design.load_design`).
    settings : engineering defaults (:class:`selector.models.Settings`).
    top : how many distinct solutions to rank (a different switch part or heatsink part
        in at least one channel; see :mod:`selector.optimize`).
    solver : "cbc" (bundled with PuLP) or "highs".
    time_limit : [s] budget of the integer program; an answer found when it runs out is
        marked not proven optimal.
    prune : how many alternatives the candidate stage keeps.
    screen_cache : a dict the caller keeps for this inventory (see :func:`screen_all`
        and the ``memo`` of :func:`selector.candidates.build_selection`); the page passes
        one so that a re-run after one edit screens and builds only what changed.

    Returns
    -------
    SelectionResult
        ``status`` "optimal", "feasible" (not proven: time limit), "infeasible" or
        "no_candidates"; ``solutions`` best first; ``rejected`` the funnel per channel;
        ``infeasible`` the reasons and nearest miss per channel when nothing fits.

    Raises
    ------
    SolverError
        The solver is missing, or the time limit ended before any answer.
    InputError
        A heatsink row the engine cannot use (named by the heatsink module).
    """
    settings = settings or Settings()
    t0 = time.perf_counter()
    inventory = plain_text(inventory)
    screens = screen_all(inventory, design, settings, screen_cache)
    cset = _cand.build_selection(
        inventory, design, screens, settings, prune, memo=screen_cache
    )
    rejected = {
        c.name: _funnel(screens.get(c.name), cset.channels.get(c.name))
        for c in design.channels
    }
    cand_tables = {
        name: cc.table.reset_index(drop=True) for name, cc in cset.channels.items()
    }
    res = _opt.solve(cset.problem, top=top, solver=solver, time_limit=time_limit)
    messages = list(res.messages)
    solutions: list[Solution] = []
    cache: dict = {}
    for rank, raw in enumerate(res.solutions, start=1):
        sol = evaluate_solution(
            inventory, design, settings, screens, cset, raw, rank, cache
        )
        if rank > 1:
            sol.differs_from_best = _opt.describe_differences(
                cset.problem, res.solutions[0], raw
            )
        solutions.append(sol)
    infeasible: dict[str, dict[str, Any]] = {}
    if not solutions:
        infeasible = explain_infeasible(
            inventory, design, settings, screens, cset, res, solver
        )
    assumptions = _assumptions(solutions)
    result = SelectionResult(
        status=res.status,
        solutions=solutions,
        rejected=rejected,
        infeasible=infeasible,
        assumptions=assumptions,
        messages=messages,
        candidates=cand_tables,
        solver=solver,
        solve_seconds=res.seconds,
    )
    result.messages.append(
        f"{sum(len(t) for t in cand_tables.values())} candidates after pruning; "
        f"model {res.size.get('variables', 0)} variables, {res.size.get('rows', 0)} rows; "
        f"total {time.perf_counter() - t0:.2f} s"
    )
    return result


# --------------------------------------------------------------------------------------
# final evaluation of one solution (independent of the optimizer's numbers)


def _row(df: pd.DataFrame, col: str, part: str) -> pd.Series | None:
    if df is None or len(df) == 0 or col not in df.columns:
        return None
    hit = df[df[col].astype(str) == str(part)]
    return None if hit.empty else hit.iloc[0]


def _f(x: Any, default: float = math.nan) -> float:
    try:
        v = float(x)
    except (TypeError, ValueError):
        return default
    return v


_SINK_LAW_COLUMNS = ("r_ref", "rise_ref", "n", "r_nat_ref", "rise_nat_ref", "n_nat")


def _sink_law(sink_table: pd.DataFrame, part: str):
    """(one-row table, rise function P -> ΔT) of a heatsink of the operating table."""
    one = sink_table[sink_table["part"].astype(str) == str(part)].iloc[[0]]
    # the law's parameters once, as arrays: the rise is asked for many times
    law = {c: one[c].to_numpy(float) for c in _SINK_LAW_COLUMNS if c in one.columns}

    def rise(p: float) -> float:
        return float(
            np.asarray(
                _heatsinks.sink_rise(law, np.asarray(float(p)), outer=False)
            ).reshape(-1)[0]
        )

    return one, rise


@dataclasses.dataclass
class _Build:
    """One channel's chosen build, with what the final evaluation needs."""

    channel: Any
    cand: pd.Series
    row: pd.Series  # screening row
    quantity: int
    count: int
    rth_cs: float
    sink: str | None
    group: str


def _builds(inventory, design, cset, raw) -> dict[str, _Build]:
    out = {}
    cand = cset.problem.candidates
    for ch in design.channels:
        k = raw.choice[ch.name]
        c = cand.loc[k]
        passed = cset.channels[ch.name].passed
        row = passed.iloc[int(c["row"])]
        rcs = math.nan
        if c["interface"]:
            ir = _row(inventory.interfaces, "part", c["interface"])
            rcs = _f(ir["rth_cs"]) if ir is not None else math.nan
        group = ch.heatsink_group or ""
        sink = raw.group_sinks.get(group) if group else (c["heatsink"] or None)
        out[ch.name] = _Build(
            ch, c, row, int(ch.quantity), int(c["count"]), rcs, sink, group
        )
    return out


def _drive_args(row: pd.Series, channel) -> tuple[Any, dict]:
    uses = bool(row.get("uses_driver", False))
    vgs = _f(row.get("vgs_on_v"))
    if uses and math.isfinite(vgs):
        return channel, {"driver": True, "driver_voltage": vgs}
    if math.isfinite(vgs):
        return dataclasses.replace(channel, drive=vgs), {}
    return channel, {}


def _loss_at(inventory, design, settings, b: _Build, tj: float) -> LossBreakdown:
    """Per-device losses at the final junction temperature (engine, not optimizer)."""
    from selector.losses import switch_losses

    sw = inventory.switches[
        inventory.switches["part"].astype(str) == str(b.cand["switch"])
    ]
    ch, kw = _drive_args(b.row, b.channel)
    lt = switch_losses(
        sw, inventory.rds_points, ch, design.conditions, settings, b.count, tj, **kw
    )

    def first(a) -> float:
        return _f(np.asarray(a, dtype=float).reshape(-1)[0], 0.0)

    return LossBreakdown(
        conduction=first(lt.p_cond),
        switching=first(lt.p_sw),
        coss=first(lt.p_coss),
        gate_drive=first(lt.p_gate) if np.isfinite(first(lt.p_gate)) else 0.0,
    )


def _thermal(
    builds: list[_Build], ta: float, sink_rise, settings: Settings
) -> tuple[list[np.ndarray], list[np.ndarray], float, list[np.ndarray]]:
    """Coupled steady state of the devices of ``builds`` (all on one sink, or in air).

    Returns per build: steady Tj of its devices, Tj with the surge, the sink
    temperature (NaN in air) and the device losses.
    """
    p0, p1, rjc, rcs, sr, dp, rja, owner = [], [], [], [], [], [], [], []
    for i, b in enumerate(builds):
        # a group sink carries every copy; an own sink carries one copy (each copy has
        # its own), and in free air every device stands alone
        n = b.quantity * b.count if (sink_rise is not None and b.group) else b.count
        p0 += [_f(b.row["p0_w"])] * n
        p1 += [_f(b.row["p1_w_per_k"])] * n
        rjc += [_f(b.row["rth_jc_k_per_w"])] * n
        rcs += [0.0 if math.isnan(b.rth_cs) else b.rth_cs] * n
        sr += [_f(b.row.get("surge_rise_k"), 0.0)] * n
        dp += [_f(b.row.get("surge_dp_w"), 0.0)] * n
        rja += [_f(b.row.get("rth_ja_k_per_w"))] * n
        owner += [i] * n
    owner = np.asarray(owner)
    sr = np.nan_to_num(np.asarray(sr), nan=0.0)
    dp = np.nan_to_num(np.asarray(dp), nan=0.0)
    if sink_rise is None:
        rep = junction_report(
            p0,
            p1,
            rjc,
            ta,
            rth_ja=rja,
            surge_rise=sr,
            surge_dp=dp,
            t_cap=settings.thermal_cap,
        )
    else:
        rep = junction_report(
            p0,
            p1,
            rjc,
            ta,
            rth_cs=rcs,
            surge_rise=sr,
            surge_dp=dp,
            sink_rise=sink_rise,
            t_cap=settings.thermal_cap,
        )
    tj = [rep.tj[owner == i] for i in range(len(builds))]
    pk = [rep.tj_peak[owner == i] for i in range(len(builds))]
    pw = [rep.p[owner == i] for i in range(len(builds))]
    return tj, pk, float(rep.ts), pw


def _curve(builds: list[_Build], which: int, design, sink_rise, settings) -> dict:
    """Hottest steady junction of build ``which`` over the ambient range."""
    c = design.conditions
    amb = np.linspace(c.ambient_min, c.ambient_max, CURVE_POINTS)
    tj = []
    for a in amb:
        s, _, _, _ = _thermal(builds, float(a), sink_rise, settings)
        v = float(np.max(s[which])) if len(s[which]) else math.nan
        tj.append(v if math.isfinite(v) else None)
    return {"ambient_c": [float(a) for a in amb], "tj_c": tj}


def _transient(
    inventory, b: _Build, design, p_run: float, sink_one, r_sa: float
) -> dict:
    ch = b.channel
    if not (ch.peak_current > ch.current and ch.peak_time > 0):
        return {}
    sw = inventory.switches[
        inventory.switches["part"].astype(str) == str(b.cand["switch"])
    ]
    r, tau, has = _th.foster_from_switches(sw)
    rjc = _f(b.row["rth_jc_k_per_w"])
    if bool(has[0]):
        ok = np.isfinite(r[0]) & np.isfinite(tau[0])
        rr, tt = r[0][ok], tau[0][ok]
    else:
        rr, tt = np.array([rjc]), np.array([0.0])
    dp = _f(b.row.get("surge_dp_w"), 0.0)
    cap = math.nan
    if sink_one is not None and "heat_capacity_j_per_k" in sink_one:
        cap = _f(sink_one["heat_capacity_j_per_k"].iloc[0])
    if b.sink is not None and not (math.isfinite(cap) and cap > 0):
        # Heat capacity unknown: hold the sink at its steady temperature through the
        # surge, the same time-scale separation the feasibility check uses (physics
        # reference §8.4, approach 1: a sink's time constant is minutes).
        cap = SINK_HELD_J_PER_K
    if b.sink is None:
        rcs, rsa, n = 0.0, max(_f(b.row.get("rth_ja_k_per_w")) - rjc, 0.0), 1
    else:
        rcs, rsa = (0.0 if math.isnan(b.rth_cs) else b.rth_cs), r_sa
        n = b.quantity * b.count if b.group else b.count
    t, tj = _th.surge_profile(
        design.conditions.ambient_max,
        p_run,
        p_run + dp,
        ch.peak_time,
        rr,
        tt,
        rth_cs=rcs,
        r_sa=rsa,
        c_sink=cap if math.isfinite(cap) and cap > 0 else None,
        n_devices=n,
        n_points=200,
    )
    return {"t_s": [float(x) for x in t], "tj_c": [float(x) for x in tj]}


def _assumed_for(inventory, parts: list[tuple[str, str]]) -> list[dict[str, Any]]:
    a = getattr(inventory, "assumed", None)
    if a is None or len(a) == 0:
        return []
    out = []
    for table, part in parts:
        if not part:
            continue
        hit = a[
            (a["table"].astype(str) == table) & (a["part"].astype(str) == str(part))
        ]
        for r in hit.to_dict("records"):
            out.append(
                {
                    "table": table,
                    "part": str(part),
                    "column": str(r.get("column", "")),
                    "value": r.get("value"),
                    "reason": str(r.get("reason", "")),
                }
            )
    return out


def _driver_text(need: str) -> str:
    kind, _, window = need.partition("@")
    lo, _, hi = window.partition("-")
    text = kind.replace("|", " or ").replace("_", "-")
    if lo or hi:
        text += f" (v_out {lo or '?'}–{hi or '?'} V)"
    return text


def evaluate_solution(
    inventory,
    design: Design,
    settings: Settings,
    screens: dict,
    cset,
    raw,
    rank: int = 1,
    cache: dict | None = None,
) -> Solution:
    """The final engine evaluation of one optimizer answer (see the module docstring).

    Junction temperatures here come from the engine's coupled solution with the actual
    sink law, not from the optimizer's budgets; a test checks that they stay within
    the limits for every ranked solution. ``cache`` (a dict shared between the ranked
    solutions of one board) keeps the evaluation of builds they have in common.
    """
    cache = cache if cache is not None else {}
    c_clusters = cache.setdefault("clusters", {})
    c_picks = cache.setdefault("picks", {})
    cond = design.conditions
    ta = cond.ambient_max
    builds = _builds(inventory, design, cset, raw)
    sink_table = cset.sink_table
    problem = cset.problem

    # thermal clusters: each group's sink, each own sink (per copy), each air build
    results: dict[str, dict[str, Any]] = {}
    clusters: list[tuple[list[str], str | None]] = []
    for g, members in design.groups().items():
        clusters.append((list(members), raw.group_sinks.get(g)))
    for name, b in builds.items():
        if not b.group:
            clusters.append(([name], b.sink))
    key_of: dict[str, tuple] = {}
    for names, sink in clusters:
        ckey = (tuple((n, int(raw.choice[n])) for n in names), sink)
        for n in names:
            key_of[n] = ckey
        if ckey in c_clusters:
            results.update(c_clusters[ckey])
            continue
        blist = [builds[n] for n in names]
        one, rise = (None, None) if sink is None else _sink_law(sink_table, sink)
        tj, pk, ts, pw = _thermal(blist, ta, rise, settings)
        for i, n in enumerate(names):
            p_dev = float(np.max(pw[i])) if len(pw[i]) else math.nan
            sink_rise_k = ts - ta if math.isfinite(ts) else math.nan
            r_sa = math.nan
            if one is not None and math.isfinite(sink_rise_k) and sink_rise_k > 0:
                r_sa = float(
                    np.asarray(
                        _heatsinks.sink_rth(one, np.asarray(sink_rise_k), outer=False)
                    ).reshape(-1)[0]
                )
            results[n] = {
                "tj": float(np.max(tj[i])),
                "tj_peak": float(np.max(pk[i])),
                "ts": ts if math.isfinite(ts) else None,
                "p_dev": p_dev,
                "r_sa": r_sa,
                "one": one,
                "curve": _curve(blist, i, design, rise, settings),
                "devices_on_sink": int(sum(x.quantity * x.count for x in blist))
                if sink is not None and blist[0].group
                else blist[0].count,
            }

        c_clusters[ckey] = {n: results[n] for n in names}

    picks: list[ChannelPick] = []
    for ch in design.channels:
        pkey = (
            key_of[ch.name],
            ch.name,
            tuple(sorted(raw.accessories.get(ch.name, {}).items())),
        )
        if pkey in c_picks:
            picks.append(copy.deepcopy(c_picks[pkey]))
            continue
        b = builds[ch.name]
        r = results[ch.name]
        c = b.cand
        acc = raw.accessories.get(ch.name, {})
        diode = acc.get("diode")
        driver = acc.get("driver")
        q = b.quantity
        cost = q * float(c["cost"])
        for role, part in acc.items():
            cost += q * problem.price(_opt.ROLE_TABLE[role], part)
        loss = _loss_at(inventory, design, settings, b, r["tj"])
        t_lim = _f(b.row["t_lim_c"])
        notes: list[str] = []
        row_notes = str(b.row.get("notes", "") or "")
        notes += [s for s in row_notes.split("; ") if s]
        surge = r["tj_peak"] - r["tj"]
        if surge > 0.05:
            notes.append(
                f"the start-up peak ({ch.peak:g} A for {ch.peak_time:g} s) adds "
                f"{surge:.1f} K: steady {r['tj']:.1f} °C, peak {r['tj_peak']:.1f} °C"
            )
        node = str(c["tab_node"])
        if b.sink is not None and node and not bool(c["insulating"]):
            where = (
                f"the shared heatsink of group '{b.group}'"
                if b.group
                else "the heatsink"
            )
            notes.append(
                f"{where} is live: it is tied to the tab's node ({node}); keep it clear of "
                "other metal and of fingers, or use an insulating interface"
            )
        if b.group and bool(c["insulating"]):
            notes.append(
                f"insulating interface {c['interface']} under each device: its tab "
                f"({c['tab'] or 'drain'}) must not touch the shared sink (physics §7.3)"
            )
        need = str(c.get("driver_need", "") or c.get("driver_kind", "") or "")
        if need and "driver" not in problem.enforce:
            notes.append(
                f"needs a {_driver_text(need)} gate driver; the inventory lists no drivers, "
                "so add one to the bill of materials"
            )
        if driver:
            dn = _screening.driver_candidates(
                inventory.drivers[inventory.drivers["part"].astype(str) == driver],
                {
                    "driver_kind": str(c["driver_kind"]),
                    "driver_v_min": _f(b.row.get("driver_v_min")),
                    "driver_v_max": _f(b.row.get("driver_v_max")),
                },
                ch,
            )
            if len(dn.passed) and str(dn.passed["note"].iloc[0]):
                notes.append(str(dn.passed["note"].iloc[0]))
        if diode:
            notes.append(f"freewheel diode {diode} across the load (one per copy)")
        sink_row = None
        if b.sink is not None:
            sink_row = _row(sink_table, "part", b.sink)
            if sink_row is not None and str(sink_row.get("warning", "")):
                notes.append(f"heatsink {b.sink}: {sink_row['warning']}")
            if r["ts"] is not None and r["ts"] > HOT_SINK_C:
                notes.append(_heatsinks.HOT_SURFACE_CAUTION)
        screen = screens.get(ch.name)
        if screen is not None:
            for s in screen.notes:
                if s not in notes:
                    notes.append(s)

        checks = _screening.row_checks(b.row.to_dict())
        for chk in checks:
            if chk["rule"] == "avalanche" and diode:
                # the freewheel diode clamps the turn-off: no avalanche happens
                chk["ok"] = True
                chk["note"] = f"not needed: freewheel diode {diode} clamps the turn-off"
        tj_worst = max(r["tj"], r["tj_peak"])
        checks.append(
            {
                "rule": "junction",
                "value": tj_worst,
                "limit": t_lim,
                "margin": t_lim - tj_worst,
                "unit": "°C",
                "ok": bool(tj_worst <= t_lim + 1e-6),
            }
        )
        if b.sink is not None and sink_row is not None:
            pos = _f(sink_row.get("positions"), 1.0)
            dev = r["devices_on_sink"]
            checks.append(
                {
                    "rule": "positions",
                    "value": float(dev),
                    "limit": pos,
                    "margin": pos - dev,
                    "unit": "",
                    "ok": bool(dev <= pos),
                }
            )
        if c["interface"]:
            ir = _row(inventory.interfaces, "part", c["interface"])
            tmax = _f(ir.get("t_max")) if ir is not None else math.nan
            if math.isfinite(tmax) and r["ts"] is not None:
                t_case = r["ts"] + (r["p_dev"] + _f(b.row.get("surge_dp_w"), 0.0)) * (
                    0.0 if math.isnan(b.rth_cs) else b.rth_cs
                )
                checks.append(
                    {
                        "rule": "interface_temperature",
                        "value": t_case,
                        "limit": tmax,
                        "margin": tmax - t_case,
                        "unit": "°C",
                        "ok": bool(t_case <= tmax + 1e-6),
                    }
                )
        if diode and screen is not None and len(screen.diodes):
            dr = _row(screen.diodes, "part", diode)
            dlim = (
                _f(dr.get("tj_max")) - cond.junction_margin
                if dr is not None
                else math.nan
            )
            dtj = _f(dr.get("tj_diode_c")) if dr is not None else math.nan
            if math.isfinite(dlim) and math.isfinite(dtj):
                checks.append(
                    {
                        "rule": "diode_junction",
                        "value": dtj,
                        "limit": dlim,
                        "margin": dlim - dtj,
                        "unit": "°C",
                        "ok": bool(dtj <= dlim + 1e-6),
                    }
                )

        chain = {
            "rth_jc": _f(b.row["rth_jc_k_per_w"]),
            "rth_cs": None if math.isnan(b.rth_cs) else b.rth_cs,
            "rth_sa": None if math.isnan(r["r_sa"]) else r["r_sa"],
            "rth_ja": _f(b.row.get("rth_ja_k_per_w")),
            "sink_method": str(sink_row["method"])
            if sink_row is not None
            else "free air (rth_ja)",
            "sink_rise_k": (r["ts"] - ta) if r["ts"] is not None else None,
            "devices_on_sink": r["devices_on_sink"] if b.sink is not None else None,
            "tj_steady_c": r["tj"],
            "tj_peak_c": r["tj_peak"],
        }
        losses = loss.to_dict()
        losses["p_gate"] = loss.gate_drive
        losses["at_tj_c"] = r["tj"]
        losses["p_dev_at_limit"] = _f(b.row["p_dev_w"])
        drive = {
            "topology": str(c["topology"] or b.row.get("topology", "")),
            "needs": str(c["driver_kind"]) or None,
            "driver": driver,
            "side": str(c["side"]),
            "gate_v": _f(b.row.get("vgs_on_v")),
            "notes": [s for s in str(b.row.get("notes", "") or "").split("; ") if s],
        }
        assumed = _assumed_for(
            inventory,
            [
                ("switches", str(c["switch"])),
                ("interfaces", str(c["interface"])),
                ("heatsinks", b.sink or ""),
                ("diodes", diode or ""),
                ("drivers", driver or ""),
            ],
        )
        details: dict[str, Any] = {
            "inputs": dataclasses.asdict(ch),
            "chain": chain,
            "losses": losses,
            "drive": drive,
            "checks": checks,
            "assumed": assumed,
            "tj_curve": r["curve"],
            "group": b.group or None,
            "mount": str(c["mount"]),
            "tab_node": node or None,
            "insulating": bool(c["insulating"]),
        }
        tr = _transient(inventory, b, design, r["p_dev"], r["one"], r["r_sa"])
        if tr:
            details["transient"] = tr
        pick = ChannelPick(
            channel=ch.name,
            switch=str(c["switch"]),
            switch_count=b.count,
            heatsink=b.sink,
            interface=str(c["interface"]) or None,
            diode=diode,
            driver=driver,
            quantity=q,
            cost=cost,
            tj_at_ambient_max=tj_worst,
            tj_limit=t_lim,
            sink_temperature=r["ts"],
            loss=loss,
            notes=notes,
            details=details,
        )
        c_picks[pkey] = pick
        picks.append(copy.deepcopy(pick))
    total = sum(p.cost for p in picks) + sum(
        problem.price("heatsinks", s) for s in raw.group_sinks.values()
    )
    return Solution(
        rank=rank,
        total_cost=round(total, 6),
        channels=picks,
        proven_optimal=raw.proven_optimal,
        group_sinks=dict(raw.group_sinks),
    )


def _assumptions(solutions: list[Solution]) -> list[dict[str, Any]]:
    seen = set()
    out = []
    for s in solutions:
        for p in s.channels:
            for a in p.details.get("assumed", []):
                key = (a["table"], a["part"], a["column"])
                if key not in seen:
                    seen.add(key)
                    out.append(dict(a))
    return out


# --------------------------------------------------------------------------------------
# why nothing fits


def _q(v: float, unit: str, digits: int = 3) -> str:
    if v is None or not math.isfinite(v):
        return "∞" if v is not None and v > 0 else "?"
    return f"{v:.{digits}g} {unit}"


def _screen_near_miss(screen) -> NearMiss | None:
    """The rejected row that got furthest through the rules."""
    rej = screen.rejected_rows
    if rej is None or len(rej) == 0:
        return None
    order = {r: i for i, r in enumerate(_screening.RULES)}
    r = pd.DataFrame(
        {
            "_pos": rej["rule"].map(order).fillna(-1).to_numpy(),
            "_n": rej["rules"].map(len).to_numpy() if "rules" in rej else 1,
            "price": rej["price"].to_numpy(),
        }
    )
    at = int(
        r.sort_values(
            ["_pos", "_n", "price"], ascending=[False, True, True], kind="stable"
        ).index[0]
    )
    best = rej.iloc[at]
    ((reason, _reasons),) = screen.reasons_at([at])
    text = f"best is {int(best['count'])} × {best['part']}: {reason}"
    return NearMiss(
        screen.channel,
        text,
        {
            "part": str(best["part"]),
            "count": int(best["count"]),
            "rule": str(best["rule"]),
        },
    )


def _thermal_near_miss(
    inventory, design, channel, cc: _cand.ChannelCandidates, sink_table
) -> NearMiss | None:
    """Closest thermal miss of a channel whose screened rows found no build."""
    passed = cc.passed
    if passed is None or len(passed) == 0:
        return None
    cond = design.conditions
    q = int(channel.quantity)
    stock = _cand._num(passed, "stock")
    count = passed["count"].to_numpy(dtype=float)
    enough = _cand.stock_allows(stock, q * count)
    if not enough.any():
        i = int(np.argmin(np.nan_to_num(passed["price"].to_numpy(float), nan=np.inf)))
        r = passed.iloc[i]
        text = (
            f"every part that passes the rules is short of stock: best is "
            f"{int(r['count'])} × {r['part']}, which needs {q * int(r['count'])} and "
            f"{int(_f(r['stock']))} are in stock"
        )
        return NearMiss(
            channel.name, text, {"part": str(r["part"]), "stock": _f(r["stock"])}
        )
    pas = passed[enough].reset_index(drop=True)
    best: dict[str, Any] | None = None
    # free air
    if not channel.heatsink_group:
        tj = (
            pas["tj_no_sink_peak_c"].to_numpy(float)
            if "tj_no_sink_peak_c" in pas
            else pas["tj_no_sink_c"].to_numpy(float)
        )
        ex = tj - pas["t_lim_c"].to_numpy(float)
        if np.isfinite(ex).any():
            i = int(np.nanargmin(np.where(np.isfinite(ex), ex, np.nan)))
            r = pas.iloc[i]
            best = {
                "excess": float(ex[i]),
                "text": f"best is {int(r['count'])} × {r['part']} in free air: junction "
                f"{_q(tj[i], '°C')}, limit {_q(_f(r['t_lim_c']), '°C')}",
                "values": {
                    "part": str(r["part"]),
                    "count": int(r["count"]),
                    "tj_c": float(tj[i]),
                    "t_lim_c": _f(r["t_lim_c"]),
                },
            }
    itf = inventory.interfaces
    if itf is not None and len(itf):
        itf = itf[_cand._num(itf, "stock") != 0]
    io = (
        _cand._evaluate.interface_options(pas, itf, cond)
        if itf is not None and len(itf) and len(sink_table)
        else pd.DataFrame()
    )
    if len(io):
        sinks = sink_table[
            _cand.stock_allows(_cand._num(sink_table, "stock"), 1)
        ].reset_index(drop=True)
        fits = [_cand.fit_items(f) for f in sinks["fits"]]
        pos = _cand._num(sinks, "positions", 1.0)
        rows = pas.iloc[io["row"].to_numpy(int)].reset_index(drop=True)
        n = rows["count"].to_numpy(float) * (q if channel.heatsink_group else 1)
        ptot = n * rows["p_dev_w"].to_numpy(float)
        h = io["h_k"].to_numpy(float)
        pk = [str(p).upper() for p in rows["package"]]
        if len(sinks):
            rise = _heatsinks.sink_rise(sinks, ptot)  # (S, M)
            ok = np.array([[p in f for p in pk] for f in fits], dtype=bool).reshape(
                len(sinks), len(pk)
            )
            ok &= pos[:, None] >= n[None, :]
            ex = np.where(ok, rise - h[None, :], np.inf)
            if np.isfinite(ex).any():
                s_i, m_i = np.unravel_index(int(np.argmin(ex)), ex.shape)
                e = float(ex[s_i, m_i])
                if best is None or e < best["excess"]:
                    r = rows.iloc[m_i]
                    t_lim = _f(r["t_lim_c"])
                    tj = t_lim + e
                    need = h[m_i] / ptot[m_i] if ptot[m_i] > 0 else math.inf
                    rs = float(rise[s_i, m_i])
                    have = float(
                        np.asarray(
                            _heatsinks.sink_rth(
                                sinks.iloc[[s_i]],
                                np.asarray(max(rs, 1e-6)),
                                outer=False,
                            )
                        ).reshape(-1)[0]
                    )
                    sink = str(sinks["part"].iloc[s_i])
                    text = (
                        f"best is {int(r['count'])} × {r['part']} on {sink} with "
                        f"{io['interface'].iloc[m_i]}: junction about {_q(tj, '°C')}, limit "
                        f"{_q(t_lim, '°C')}; it needs RθSA ≤ {need:.2f} K/W, the best sink "
                        f"in stock has {have:.2f} K/W"
                    )
                    best = {
                        "excess": e,
                        "text": text,
                        "values": {
                            "part": str(r["part"]),
                            "count": int(r["count"]),
                            "heatsink": sink,
                            "interface": str(io["interface"].iloc[m_i]),
                            "tj_c": tj,
                            "t_lim_c": t_lim,
                            "rth_sa_needed": float(need),
                            "rth_sa_best": float(have),
                        },
                    }
    if best is None:
        pk = sorted({str(p) for p in pas["package"]})
        return NearMiss(
            channel.name,
            "no heatsink and no thermal interface in stock fit its parts' packages "
            f"({', '.join(pk)}), and none of them stays cool enough in free air",
            {"packages": pk},
        )
    return NearMiss(channel.name, best["text"], best["values"])


def _group_near_miss(g: str, members: list[str], quantity: dict[str, int], cset) -> str:
    """Why the channels of a heatsink group cannot share one sink, with the numbers."""
    text = f"channels {', '.join(repr(m) for m in members)} cannot share one heatsink"
    rows, sinks = cset.group_pool.get(g, (pd.DataFrame(), pd.DataFrame()))
    if len(rows) == 0 or len(sinks) == 0:
        return text + ": no heatsink in stock fits their packages"
    q_min = 0.0
    dev_min = 0
    h_max = math.inf
    for m in members:
        sub = rows[rows["channel"] == m]
        if len(sub) == 0:
            continue
        q_min += quantity[m] * float(sub["p_total_w"].min())
        dev_min += int(quantity[m] * sub["count"].min())
        h_max = min(h_max, float(sub["h_k"].max()))
    parts = []
    if math.isfinite(h_max) and q_min > 0:
        cap = np.asarray(_heatsinks.sink_max_power(sinks, np.asarray([h_max]))).reshape(
            -1
        )
        i = int(np.argmax(cap))
        have = h_max / cap[i] if cap[i] > 0 else math.inf
        parts.append(
            f"with their coolest builds they put {q_min:.1f} W on it and the tightest "
            f"junction leaves {h_max:.0f} K of sink rise, so it needs RθSA ≤ "
            f"{h_max / q_min:.2f} K/W; the best sink in stock ({sinks['part'].iloc[i]}) "
            f"has {have:.2f} K/W there"
        )
    pos = _cand._num(sinks, "positions", 1.0)
    if dev_min > np.nanmax(pos):
        parts.append(
            f"they need at least {dev_min} positions, the largest sink has "
            f"{int(np.nanmax(pos))}"
        )
    touching = (rows["tab_node"].astype(str) != "") & ~rows["insulating"].astype(bool)
    if not (~touching).any():
        parts.append("no insulating interface fits their packages")
    return text + (": " + "; ".join(parts) if parts else "")


def explain_infeasible(
    inventory, design, settings, screens, cset, res, solver
) -> dict[str, dict[str, Any]]:
    """Per channel: reasons, funnel and nearest miss (only channels that are at fault)."""
    out: dict[str, dict[str, Any]] = {}
    problem = cset.problem
    bad = [c for c in design.channels if len(cset.channels[c.name].table) == 0]
    quantity = {c.name: int(c.quantity) for c in design.channels}
    groups = design.groups()
    for ch in bad:
        g = ch.heatsink_group
        pool = (
            cset.group_pool.get(g, (pd.DataFrame(), None))[0] if g else pd.DataFrame()
        )
        if g and len(pool) and (pool["channel"] == ch.name).any():
            # it has builds of its own; the group stage left none of them
            text = _group_near_miss(g, list(groups[g]), quantity, cset)
            out[ch.name] = {
                "reasons": [text],
                "funnel": _funnel(screens.get(ch.name), cset.channels[ch.name]),
                "nearest_miss": {"description": text, "values": {"group": g}},
            }
            continue
        sc = screens.get(ch.name)
        cc = cset.channels[ch.name]
        funnel = _funnel(sc, cc)
        reasons = []
        if sc is not None and len(sc.passed) == 0:
            reasons.append(
                f"no switch in the inventory passes the rules for '{ch.name}' "
                f"({sc.total} part × count rows screened)"
            )
            nm = _screen_near_miss(sc)
        else:
            reasons.append(
                f"{len(cc.passed)} part × count rows pass the rules, but none can be built "
                "with the heatsinks, interfaces and stock at hand"
            )
            nm = _thermal_near_miss(inventory, design, ch, cc, cset.sink_table)
        for rid, n in funnel.items():
            what = _cand.CANDIDATE_RULES.get(rid)
            reasons.append(
                f"{n} part × count rows removed by rule '{rid}'"
                + (f" ({what})" if what else "")
            )
        out[ch.name] = {
            "reasons": reasons,
            "funnel": funnel,
            "nearest_miss": None
            if nm is None
            else {"description": nm.description, "values": nm.values},
        }
        if nm is not None:
            reasons.append(nm.description)
    if res.status == "no_candidates":
        # candidates exist but none is usable (e.g. an accessory nobody stocks)
        prep = _opt.prepare(problem)
        for ch in design.channels:
            if ch.name in out or prep.cand_of[ch.name].size:
                continue
            reasons = [
                f"{n} of its builds: {why}"
                for why, n in res.unusable.get(ch.name, {}).items()
            ] or ["none of its builds can be used"]
            out[ch.name] = {
                "reasons": reasons,
                "funnel": _funnel(screens.get(ch.name), cset.channels[ch.name]),
                "nearest_miss": None,
            }
    if bad or res.status != "infeasible":
        return out
    # every channel has candidates: find the part of the board that fails on its own
    found = False
    for g, members in groups.items():
        sub = _opt.subproblem(problem, list(members))
        r = _opt.solve(sub, top=1, solver=solver, time_limit=TIME_LIMIT_DIAGNOSIS)
        if not r.solutions:
            found = True
            text = _group_near_miss(g, list(members), quantity, cset)
            for m in members:
                out[m] = {
                    "reasons": [text],
                    "funnel": _funnel(screens.get(m), cset.channels[m]),
                    "nearest_miss": {"description": text, "values": {"group": g}},
                }
    if found:
        return out
    # stock shared across channels
    cand = problem.candidates
    qty = dict(zip(problem.channels["name"], problem.channels["quantity"], strict=True))
    need: dict[tuple[str, str], float] = {}
    for c in problem.channels["name"]:
        sub = cand[cand["channel"] == c]
        k = sub["cost"].idxmin()
        r = cand.loc[k]
        for table, part, units in (
            ("switches", r["switch"], qty[c] * r["count"]),
            ("interfaces", r["interface"], qty[c] * r["count"]),
            ("heatsinks", r["heatsink"], qty[c]),
        ):
            if part:
                need[(table, part)] = need.get((table, part), 0) + units
    stock = {
        (t, p): s
        for t, p, s in zip(
            problem.parts["table"],
            problem.parts["part"],
            problem.parts["stock"],
            strict=True,
        )
    }
    short = [
        f"{p} ({t}): the cheapest builds need {int(u)}, {int(stock[(t, p)])} in stock"
        for (t, p), u in need.items()
        if (t, p) in stock and not math.isnan(stock[(t, p)]) and u > stock[(t, p)]
    ]
    text = (
        "each channel can be built on its own, but not all together: the stock of the "
        "parts they compete for runs out" + (": " + "; ".join(short) if short else "")
    )
    for c in design.channels:
        out[c.name] = {
            "reasons": [text],
            "funnel": _funnel(screens.get(c.name), cset.channels[c.name]),
            "nearest_miss": None,
        }
    return out


# --------------------------------------------------------------------------------------
# why / text


def why(
    inventory,
    design: Design,
    channel_name: str,
    part: str,
    *,
    settings: Settings | None = None,
) -> str:
    """Why a part was, or was not, chosen for a channel: the rules, then the board.

    Raises
    ------
    DesignError
        The design has no channel of that name.
    """
    settings = settings or Settings()
    inventory = plain_text(inventory)
    try:
        channel = design.channel(channel_name)
    except KeyError:
        names = ", ".join(repr(c.name) for c in design.channels)
        raise DesignError(
            f"no channel named '{channel_name}' in the design (channels: {names})",
            Location(file=design.source or None, channel=channel_name),
        ) from None
    lines = _screening.explain_part(
        inventory, channel, design.conditions, settings, part
    )
    sw = inventory.switches
    if part not in set(sw["part"].astype(str)):
        return "\n".join(lines)
    screens = screen_all(inventory, design, settings)
    sc = screens[channel.name]
    if len(sc.passed) == 0 or part not in set(sc.passed["part"].astype(str)):
        return "\n".join(lines)
    cset = _cand.build_selection(inventory, design, screens, settings)
    cc = cset.channels[channel.name]
    mine = cset.problem.candidates[
        (cset.problem.candidates["channel"] == channel.name)
        & (cset.problem.candidates["switch"] == part)
    ]
    if len(mine) == 0:
        only = dataclasses.replace(
            cc,
            passed=cc.passed[cc.passed["part"].astype(str) == part].reset_index(
                drop=True
            ),
        )
        nm = _thermal_near_miss(inventory, design, channel, only, cset.sink_table)
        lines.append(
            f"{part} reaches no candidate build for '{channel.name}'"
            + (f": {nm.description}" if nm is not None else "")
            + " (or cheaper builds of other parts dominate every build of it)"
        )
        return "\n".join(lines)
    res = _opt.solve(cset.problem, top=1)
    if not res.solutions:
        lines.append("the board has no feasible selection at all (see `selector pick`)")
        return "\n".join(lines)
    best = res.solutions[0]
    k = best.choice[channel.name]
    chosen = cset.problem.candidates.loc[k]
    if chosen["switch"] == part:
        lines.append(
            f"{part} is chosen for '{channel.name}' in the cheapest selection: "
            f"{int(chosen['count'])} in parallel, board total {best.cost:.2f}"
        )
        return "\n".join(lines)
    # force this part and compare
    prob = cset.problem
    keep = (prob.candidates["channel"] != channel.name) | (
        prob.candidates["switch"] == part
    )
    forced = _opt.subproblem(prob, list(prob.channels["name"]))
    forced = _restrict(forced, keep.to_numpy())
    r2 = _opt.solve(forced, top=1)
    cheapest = mine.sort_values("cost").iloc[0]
    lines.append(
        f"the cheapest selection uses {int(chosen['count'])} × {chosen['switch']} for "
        f"'{channel.name}' ({float(chosen['cost']):.2f} per copy); the cheapest build with "
        f"{part} costs {float(cheapest['cost']):.2f} per copy"
    )
    if r2.solutions:
        lines.append(
            f"with {part} the whole board would cost {r2.solutions[0].cost:.2f} instead of "
            f"{best.cost:.2f} ({r2.solutions[0].cost - best.cost:+.2f})"
        )
    else:
        lines.append(
            f"with {part} in '{channel.name}' the board has no feasible selection (stock, "
            "shared heatsink or insulation limits)"
        )
    return "\n".join(lines)


def _restrict(problem, mask: np.ndarray):
    """The problem with only the candidates where ``mask`` is True."""
    old = np.flatnonzero(mask)
    new_id = {int(k): i for i, k in enumerate(old)}
    cand = problem.candidates.iloc[old].reset_index(drop=True)
    groups = {}
    for g, opts in problem.groups.items():
        sel = [i for i, k in enumerate(opts.rows) if int(k) in new_id]
        pm = np.asarray(opts.pmax).reshape(len(opts.rows), len(opts.sinks))
        groups[g] = _opt.GroupSinks(
            g,
            list(opts.sinks),
            np.array([new_id[int(opts.rows[i])] for i in sel], dtype=int),
            pm[sel],
            opts.r_tie,
        )
    return _opt.SelectionProblem(
        problem.channels,
        cand,
        problem.parts,
        groups,
        problem.accessories,
        problem.enforce,
    )


def _fmt_money(x: float) -> str:
    return f"{x:.2f}"


def format_result(result: SelectionResult) -> str:
    """The result as readable text for the terminal."""
    out: list[str] = []
    status = {
        "optimal": "cheapest selection found and proven optimal",
        "feasible": "selection found (NOT proven optimal: the time limit ended the search)",
        "infeasible": "no feasible selection",
        "no_candidates": "no feasible selection",
    }.get(result.status, result.status)
    out.append(f"Result: {status}")
    for sol in result.solutions:
        out.append("")
        head = f"#{sol.rank}  total {_fmt_money(sol.total_cost)}"
        head += f"   smallest junction margin {sol.min_margin:.1f} K"
        if not sol.proven_optimal:
            head += "   (not proven optimal)"
        out.append(head)
        if sol.differs_from_best:
            out.append("    differs from #1: " + "; ".join(sol.differs_from_best))
        for p in sol.channels:
            build = f"{p.switch_count} × {p.switch}"
            if p.quantity > 1:
                build = f"{p.quantity} copies of {build}"
            if p.heatsink:
                g = p.details.get("group")
                build += f" on {p.heatsink}" + (f" (shared, group '{g}')" if g else "")
            else:
                build += " in free air"
            if p.interface:
                build += f", {p.interface}"
            extra = []
            if p.diode:
                extra.append(f"diode {p.diode}")
            if p.driver:
                extra.append(f"driver {p.driver}")
            if extra:
                build += ", " + ", ".join(extra)
            ts = (
                f", sink {p.sink_temperature:.0f} °C"
                if p.sink_temperature is not None
                else ""
            )
            out.append(f"  {p.channel}: {build}")
            out.append(
                f"      Tj {p.tj_at_ambient_max:.1f} °C (limit {p.tj_limit:.0f} °C){ts}, "
                f"{p.loss.total:.3g} W per device, cost {_fmt_money(p.cost)}"
            )
        for g, s in sol.group_sinks.items():
            out.append(f"  group '{g}': shared heatsink {s}")
        if sol.rank == 1:
            seen: list[str] = []
            for p in sol.channels:
                for n in p.notes:
                    if n.startswith(("Caution", "Hot surface")) and n not in seen:
                        seen.append(n)
            for n in seen:
                out.append(f"  ! {n}")
    if result.infeasible:
        out.append("")
        out.append("Why not, per channel:")
        for ch, info in result.infeasible.items():
            out.append(f"  {ch}:")
            for r in info.get("reasons", []):
                out.append(f"    - {r}")
    if result.rejected:
        out.append("")
        out.append(
            "Removed before the optimizer (rows of part × parallel count, by rule):"
        )
        for ch, counts in result.rejected.items():
            if counts:
                out.append(
                    f"  {ch}: " + ", ".join(f"{k} {v}" for k, v in counts.items())
                )
    out.append("")
    out.append(
        f"Assumed values used by the chosen parts: {len(result.assumptions)}"
        + (" (see the workbook or `selector check`)" if result.assumptions else "")
    )
    for m in result.messages:
        out.append(f"note: {m}")
    out.append(
        "Estimates from the inventory data and stated defaults: verify on the bench; "
        "follow local electrical codes and licensed practice for mains voltages."
    )
    return "\n".join(out)
