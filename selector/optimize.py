"""The selection integer program (PuLP with CBC, or HiGHS) and ranked alternatives.

Input is a :class:`SelectionProblem`: the candidate table of :mod:`selector.candidates`
(one row per way to build one copy of one channel), the parts with price and stock, the
sink options of every heatsink group and the accessory options (freewheel diodes, gate
drivers). The model:

* ``x_k`` binary per candidate; exactly one candidate per channel. A channel's
  ``quantity`` multiplies its cost and its use of every part.
* stock: for every part with a finite stock, the units used by all channels (switches
  ``quantity·n``, interfaces ``quantity·n``, own heatsinks ``quantity``, group sinks 1,
  diodes and drivers ``quantity``) stay within it. Stock NaN means unlimited.
* heatsink groups, disaggregated (hull) form without big-M constants: ``y_gs`` binary
  (exactly one sink per group), ``q_gs ≥ 0`` the heat through sink s,
  ``Σ_s q_gs = Σ_{c∈g} quantity_c Σ_k x_k·p_total_k``, ``q_gs ≤ Qcap_g·y_gs`` and, for
  every member channel c and sink s, ``q_gs ≤ Σ_{k∈c} x_k·Pmax(k, s)``, where
  ``Pmax(k, s)`` is the largest total power at which sink s keeps its rise within the
  candidate's budget ``h_k`` (heatsinks.sink_max_power). Because only the chosen sink
  carries heat and the sink's rise grows with its power, this is exact: every member's
  junction stays at or below its limit (physics.md §7.2, sufficient form with every
  device at its T_lim loss). Candidates that fit no sink (package, or ``h_k ≤ 0``) are
  left out; a package that does not fit sink s forbids ``x_k`` together with ``y_gs``.
* positions: the devices on a group sink (``Σ quantity·n``) fit its ``positions``.
* electrical isolation (physics.md §7.3): on a group sink the uninsulated devices may
  hold one circuit node only (``z_gL ≥`` use of node L by a channel, ``Σ_L z_gL ≤ 1``);
  a node that differs per copy rules out an uninsulated candidate for a channel with
  more than one copy on the sink.
* accessories: a candidate that needs a freewheel diode (or a driver of a kind) takes
  one diode (driver) per copy from the channel's options, stock-limited. When the role is
  not enforced (no drivers in the inventory) the need stays a note.

Objective: lowest total cost; ties are broken by the larger thermal margin. The
tie-break value T [K] is the smallest channel margin plus a tenth of the mean channel
margin (for a group member, margin = its budget h_k minus a lower bound of the shared
sink's rise, ``Σ_s r_tie_s·q_gs``). It enters as ``−ε·T`` with ``ε·(T_max − T_min) ≤
0.4·u``, u being the smallest price unit of the inventory (0.01 when prices carry cents),
so the margin can never outweigh a cost difference of one price unit. The solver stops at
an absolute gap of 0.5·u: then the cost is proven optimal (costs lie on the lattice of u),
while the margin tie-break is best effort.

Ranked alternatives: after each solve a coarse no-good cut forbids the same *signature*
again: the switch part of every channel, the own-sink part (or "none") of every
ungrouped channel and the sink part of every group. Two solutions are therefore distinct
when at least one channel uses a different switch part or a different heatsink part;
solutions that only change a count, an interface, a diode or a driver are not offered as
alternatives. The indicators are the sums of ``x`` over the candidates of a channel with
that part (0/1 because one candidate per channel is chosen) and the group ``y_gs``.
"""

from __future__ import annotations

import contextlib
import math
import os
import sys
import time
import warnings
from collections import defaultdict
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from selector.errors import SolverError

SOLVERS = ("cbc", "highs")
ROLE_TABLE = {"diode": "diodes", "driver": "drivers"}
PART_TABLES = ("switches", "interfaces", "heatsinks", "diodes", "drivers")
TIEBREAK_SHARE = 0.4  # ε·range(T) ≤ 0.4·u
GAP_ABS_SHARE = 0.5  # absolute gap 0.5·u proves the cost optimal
MEAN_WEIGHT = 0.1  # weight of the mean channel margin in T


@dataclass
class GroupSinks:
    """Sink options of one heatsink group.

    Fields
    ------
    group : group name.
    sinks : heatsink part ids (the columns of ``pmax``).
    rows : candidate ids of the group's channels (the rows of ``pmax``).
    pmax : [W] shape (len(rows), len(sinks)); largest total group power at which the
        sink's rise stays within the candidate's budget ``h_k``; 0 (or less) where the
        pair is not allowed (package does not fit, or ``h_k ≤ 0``).
    r_tie : [K/W] per sink, a lower bound of its RθSA over the group's operating range
        (used only for the margin tie-break); defaults to ``h/pmax`` at the largest
        budget.
    """

    group: str
    sinks: list[str]
    rows: np.ndarray
    pmax: np.ndarray
    r_tie: np.ndarray | None = None


@dataclass
class SelectionProblem:
    """Everything the integer program needs, as plain tables.

    Fields
    ------
    channels : DataFrame with ``name``, ``quantity``, ``group`` ("" = none), design order.
    candidates : the candidate table (:mod:`selector.candidates`), RangeIndex.
    parts : DataFrame with ``table`` (switches, interfaces, heatsinks, diodes, drivers),
        ``part``, ``price``, ``stock`` (NaN = unlimited) and ``positions`` (heatsinks).
    groups : group name -> :class:`GroupSinks`.
    accessories : DataFrame with ``channel``, ``role`` ("diode" or "driver"), ``need``
        ("freewheel" or a driver kind) and ``part``: the parts that serve the need.
    enforce : roles whose needs must be met with a part; others become notes.
    """

    channels: pd.DataFrame
    candidates: pd.DataFrame
    parts: pd.DataFrame
    groups: dict[str, GroupSinks] = field(default_factory=dict)
    accessories: pd.DataFrame = field(
        default_factory=lambda: pd.DataFrame(
            columns=["channel", "role", "need", "part"]
        )
    )
    enforce: frozenset[str] = frozenset({"diode", "driver"})

    def quantity(self, channel: str) -> int:
        row = self.channels.loc[self.channels["name"] == channel]
        return int(row["quantity"].iloc[0])

    def price(self, table: str, part: str) -> float:
        p = self.parts
        row = p.loc[(p["table"] == table) & (p["part"] == part)]
        if row.empty:
            raise KeyError(f"{table}/{part}")
        return float(row["price"].iloc[0])


@dataclass
class RawSolution:
    """One solution of the integer program (before the final engine evaluation)."""

    choice: dict[str, int]  # channel -> candidate id
    group_sinks: dict[str, str]  # group -> heatsink part
    accessories: dict[str, dict[str, str]]  # channel -> role -> part
    cost: float
    tiebreak: float  # [K] value of T (see the module docstring)
    proven_optimal: bool
    seconds: float
    signature: tuple = ()

    def to_dict(self) -> dict[str, Any]:
        return {
            "choice": dict(self.choice),
            "group_sinks": dict(self.group_sinks),
            "accessories": {k: dict(v) for k, v in self.accessories.items()},
            "cost": self.cost,
            "tiebreak": self.tiebreak,
            "proven_optimal": self.proven_optimal,
            "seconds": self.seconds,
        }


@dataclass
class OptimizeResult:
    """What :func:`solve` returns.

    ``status``: "optimal" (the best solution is proven optimal), "feasible" (found, not
    proven: time limit), "infeasible" (no assignment meets every limit), "no_candidates"
    (a channel has no usable candidate; ``unusable`` says why).
    """

    status: str
    solutions: list[RawSolution]
    solver: str
    seconds: float
    size: dict[str, int] = field(default_factory=dict)
    messages: list[str] = field(default_factory=list)
    unusable: dict[str, dict[str, int]] = field(default_factory=dict)


# --------------------------------------------------------------------------------------
# solver


@contextlib.contextmanager
def _quiet_stdout():
    """Silence C-level stdout (HiGHS prints a banner even with msg=False)."""
    try:
        sys.stdout.flush()
        fd = sys.stdout.fileno()
    except (AttributeError, OSError, ValueError):  # no real stdout (tests, page)
        yield
        return
    saved = os.dup(fd)
    try:
        with open(os.devnull, "w") as devnull:
            os.dup2(devnull.fileno(), fd)
            yield
    finally:
        sys.stdout.flush()
        os.dup2(saved, fd)
        os.close(saved)


def make_solver(
    name: str = "cbc",
    *,
    time_limit: float | None = 30.0,
    gap_abs: float | None = None,
    gap_rel: float | None = 0.0,
    threads: int | None = None,
    msg: bool = False,
):
    """Build the PuLP solver object: the one place that knows solver names.

    Parameters
    ----------
    name : "cbc" (PuLP's bundled CBC) or "highs" (``pulp.HiGHS`` through highspy).
    time_limit : [s] stop the search after this long (None = no limit).
    gap_abs, gap_rel : stop once the incumbent is within this absolute / relative gap
        of the bound (see the module docstring for the absolute gap used).
    threads : solver threads (None = solver default).

    Raises
    ------
    SolverError
        The solver is unknown or not installed.
    """
    import pulp

    key = (name or "cbc").lower()
    if key not in SOLVERS:
        raise SolverError(
            f"unknown solver '{name}'; choose one of {', '.join(SOLVERS)}"
        )
    kwargs: dict[str, Any] = {"msg": msg}
    if time_limit is not None:
        kwargs["timeLimit"] = max(float(time_limit), 0.01)
    if gap_abs is not None:
        kwargs["gapAbs"] = float(gap_abs)
    if gap_rel is not None:
        kwargs["gapRel"] = float(gap_rel)
    if threads is not None:
        kwargs["threads"] = int(threads)
    if key == "cbc":
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", DeprecationWarning)
            solver = pulp.PULP_CBC_CMD(**kwargs)
        if not solver.available():
            raise SolverError(
                "the CBC solver bundled with PuLP is missing; reinstall PuLP "
                "(pip install 'pulp>=3.3,<4') or use --solver highs"
            )
        return solver
    if not hasattr(pulp, "HiGHS"):
        raise SolverError("this PuLP has no HiGHS interface; use --solver cbc")
    solver = pulp.HiGHS(**kwargs)
    if not solver.available():
        raise SolverError(
            "the HiGHS solver is not installed (pip install highspy); use --solver cbc"
        )
    return solver


# --------------------------------------------------------------------------------------
# preparation


def price_unit(prices) -> float:
    """Smallest price unit u = 10^-d of a list of prices (d ≤ 6; 1 when all integer).

    Every total cost is then a multiple of u, which the tie-break and the stopping gap
    rely on. Prices with more than 6 decimals give u = 1e-6 (then approximately so).
    """
    p = np.asarray([float(v) for v in prices if v is not None and math.isfinite(v)])
    if p.size == 0:
        return 1.0
    for d in range(7):
        s = p * 10.0**d
        if np.all(np.abs(s - np.round(s)) <= 1e-6 * np.maximum(1.0, np.abs(s)) + 1e-9):
            return 10.0**-d
    return 1e-6


def _stock_map(parts: pd.DataFrame) -> dict[tuple[str, str], float]:
    out: dict[tuple[str, str], float] = {}
    for t, p, s in zip(parts["table"], parts["part"], parts["stock"], strict=True):
        out[(str(t), str(p))] = float(s) if s is not None else math.nan
    return out


@dataclass
class _Prepared:
    """Derived, index-friendly data shared by the PuLP model and the checks."""

    names: list[str]
    quantity: dict[str, int]
    group_of: dict[str, str]
    members: dict[str, list[str]]
    usable: np.ndarray  # bool per candidate
    cand_of: dict[str, np.ndarray]  # channel -> usable candidate ids
    unusable: dict[str, dict[str, int]]
    needs: list[list[tuple[str, str]]]  # per candidate: enforced (role, need)
    notes_needs: list[list[tuple[str, str]]]  # per candidate: not enforced
    options: dict[tuple[str, str, str], list[str]]  # (channel, role, need) -> parts
    pmax: dict[str, dict[int, np.ndarray]]  # group -> cand id -> pmax row
    qcap: dict[str, float]
    r_tie: dict[str, np.ndarray]
    unit: float
    t_span: float


def _candidate_needs(row_diode: bool, row_driver: str) -> list[tuple[str, str]]:
    out = []
    if row_diode:
        out.append(("diode", "freewheel"))
    if row_driver:
        out.append(("driver", str(row_driver)))
    return out


def prepare(problem: SelectionProblem) -> _Prepared:
    """Check the tables and derive what the model needs; mark unusable candidates."""
    ch = problem.channels
    cand = problem.candidates
    names = [str(n) for n in ch["name"]]
    if len(set(names)) != len(names):
        raise ValueError("channel names must be unique")
    quantity = {str(n): int(q) for n, q in zip(ch["name"], ch["quantity"], strict=True)}
    group_of = {
        str(n): str(g or "") for n, g in zip(ch["name"], ch["group"], strict=True)
    }
    members: dict[str, list[str]] = defaultdict(list)
    for n in names:
        if group_of[n]:
            members[group_of[n]].append(n)
    for g in members:
        if g not in problem.groups:
            raise ValueError(f"heatsink group '{g}' has no sink options")

    n_cand = len(cand)
    if not cand.index.equals(pd.RangeIndex(n_cand)):
        raise ValueError("the candidate table needs a RangeIndex (candidate_frame)")
    usable = np.ones(n_cand, dtype=bool)
    unusable: dict[str, dict[str, int]] = {n: {} for n in names}

    def drop(k: int, reason: str) -> None:
        if usable[k]:
            usable[k] = False
            c = str(cand.at[k, "channel"])
            unusable.setdefault(c, {})
            unusable[c][reason] = unusable[c].get(reason, 0) + 1

    chan_col = cand["channel"].astype(str).to_numpy()
    mount = cand["mount"].astype(str).to_numpy()
    for k in range(n_cand):
        c = chan_col[k]
        if c not in quantity:
            usable[k] = False
            continue
        grouped = bool(group_of[c])
        if grouped != (mount[k] == "group"):
            raise ValueError(
                f"candidate {k} of channel '{c}': mount '{mount[k]}' does not match "
                f"the channel's heatsink group '{group_of[c]}'"
            )

    # accessories
    options: dict[tuple[str, str, str], list[str]] = defaultdict(list)
    acc = problem.accessories
    if acc is not None and len(acc):
        for c, r, nd, p in zip(
            acc["channel"], acc["role"], acc["need"], acc["part"], strict=True
        ):
            key = (str(c), str(r), str(nd))
            if str(p) not in options[key]:
                options[key].append(str(p))
    needs: list[list[tuple[str, str]]] = []
    notes_needs: list[list[tuple[str, str]]] = []
    driver_key = np.where(
        cand["driver_need"].astype(str).to_numpy() != "",
        cand["driver_need"].astype(str).to_numpy(),
        cand["driver_kind"].astype(str).to_numpy(),
    )
    for k, (nd, dk) in enumerate(zip(cand["needs_diode"], driver_key, strict=True)):
        all_needs = _candidate_needs(bool(nd), str(dk or ""))
        enforced = [n for n in all_needs if n[0] in problem.enforce]
        needs.append(enforced)
        notes_needs.append([n for n in all_needs if n[0] not in problem.enforce])
        for role, need in enforced:
            if not options.get((chan_col[k], role, need)):
                what = (
                    "freewheel diode"
                    if role == "diode"
                    else "gate driver (" + need.split("@")[0].replace("|", " or ") + ")"
                )
                drop(k, f"no suitable {what} in the inventory")

    # group sinks
    pmax: dict[str, dict[int, np.ndarray]] = {}
    qcap: dict[str, float] = {}
    r_tie: dict[str, np.ndarray] = {}
    touching = (cand["tab_node"].astype(str).to_numpy() != "") & ~cand[
        "insulating"
    ].to_numpy(dtype=bool)
    per_copy = cand["node_per_copy"].to_numpy(dtype=bool)
    p_total = cand["p_total_w"].to_numpy(dtype=float)
    h = cand["h_k"].to_numpy(dtype=float)
    for g, opts in problem.groups.items():
        rows = np.asarray(opts.rows, dtype=int)
        pm = np.asarray(opts.pmax, dtype=float).reshape(len(rows), len(opts.sinks))
        pm = np.where(np.isnan(pm), 0.0, pm)
        pmax[g] = {}
        for i, k in enumerate(rows):
            pmax[g][int(k)] = pm[i]
        for k in np.flatnonzero(np.isin(chan_col, members.get(g, []))):
            c = chan_col[k]
            row = pmax[g].get(int(k))
            if row is None or not np.any(row > 0):
                drop(int(k), "fits no sink of its heatsink group")
            elif touching[k] and per_copy[k] and quantity[c] > 1:
                drop(
                    int(k),
                    "uninsulated tab: its copies put different nodes on the group sink",
                )
        # the largest power a group can put on its sink
        qc = 0.0
        for c in members.get(g, []):
            ks = np.flatnonzero((chan_col == c) & usable)
            if ks.size:
                qc += quantity[c] * float(np.max(p_total[ks]))
        qcap[g] = max(qc, 1e-9)
        if opts.r_tie is not None:
            rt = np.asarray(opts.r_tie, dtype=float)
        else:
            # R at the largest allowed budget: min over candidates of h_k / Pmax(k, s)
            ok = (pm > 0) & np.isfinite(pm) & (h[rows][:, None] > 0)
            with np.errstate(divide="ignore", invalid="ignore"):
                chord = np.where(ok, h[rows][:, None] / np.where(ok, pm, 1.0), np.inf)
            rt = np.min(chord, axis=0) if rows.size else np.zeros(len(opts.sinks))
        r_tie[g] = np.where(np.isfinite(rt) & (rt > 0), rt, 0.0)

    cand_of = {n: np.flatnonzero((chan_col == n) & usable) for n in names}

    # tie-break span: margins in [−Mmax, Mmax]
    marg = cand["margin_k"].to_numpy(dtype=float)
    finite = marg[np.isfinite(marg)]
    mmax = float(np.max(np.abs(finite))) if finite.size else 1.0
    t_span = 2.0 * (1.0 + MEAN_WEIGHT) * max(mmax, 1.0)

    prices = list(problem.parts["price"].astype(float)) if len(problem.parts) else []
    unit = price_unit(prices)
    return _Prepared(
        names=names,
        quantity=quantity,
        group_of=group_of,
        members=dict(members),
        usable=usable,
        cand_of=cand_of,
        unusable={k: v for k, v in unusable.items() if v},
        needs=needs,
        notes_needs=notes_needs,
        options=dict(options),
        pmax=pmax,
        qcap=qcap,
        r_tie=r_tie,
        unit=unit,
        t_span=t_span,
    )


# --------------------------------------------------------------------------------------
# the PuLP model


@dataclass
class _Model:
    prob: Any
    x: dict[int, Any]
    y: dict[tuple[str, str], Any]
    q: dict[tuple[str, str], Any]
    a: dict[tuple[str, str, str, str], Any]  # (channel, role, need, part)
    mu: Any
    cost_expr: Any
    t_expr: Any
    n_cuts: int = 0


def _lin(terms):
    """A PuLP expression from (variable, coefficient) pairs; repeated variables add up.

    (``pulp.LpAffineExpression(list)`` keeps only the last coefficient of a repeated
    variable, which would silently corrupt cuts and margin rows.)
    """
    import pulp

    acc: dict[Any, float] = {}
    for v, c in terms:
        acc[v] = acc.get(v, 0.0) + c
    return pulp.LpAffineExpression(list(acc.items()))


def build_model(problem: SelectionProblem, prep: _Prepared | None = None) -> _Model:
    """Build the PuLP model of the module docstring (no solve)."""
    import pulp

    prep = prep or prepare(problem)
    cand = problem.candidates
    prob = pulp.LpProblem("selection", pulp.LpMinimize)
    qty = prep.quantity

    sw = cand["switch"].astype(str).to_numpy()
    itf = cand["interface"].astype(str).to_numpy()
    hs = cand["heatsink"].astype(str).to_numpy()
    mount = cand["mount"].astype(str).to_numpy()
    count = cand["count"].to_numpy(dtype=int)
    cost = cand["cost"].to_numpy(dtype=float)
    p_total = cand["p_total_w"].to_numpy(dtype=float)
    h = cand["h_k"].to_numpy(dtype=float)
    marg = np.nan_to_num(cand["margin_k"].to_numpy(dtype=float), nan=0.0)
    chan = cand["channel"].astype(str).to_numpy()
    node = cand["tab_node"].astype(str).to_numpy()
    touching = (node != "") & ~cand["insulating"].to_numpy(dtype=bool)

    x: dict[int, Any] = {}
    for c in prep.names:
        for k in prep.cand_of[c]:
            x[int(k)] = prob.add_variable(f"x_{int(k)}", 0, 1, pulp.LpBinary)

    rows: list[tuple[Any, str]] = []

    def add(expr, sense, rhs, name):
        rows.append((pulp.LpConstraint(expr, sense, name, rhs), name))

    # one candidate per channel
    for i, c in enumerate(prep.names):
        add(_lin([(x[int(k)], 1.0) for k in prep.cand_of[c]]), 0, 1.0, f"one_{i}")

    # resource uses: (table, part) -> list of (var, units)
    use: dict[tuple[str, str], list[tuple[Any, float]]] = defaultdict(list)
    for k, var in x.items():
        qk = qty[chan[k]]
        use[("switches", sw[k])].append((var, float(qk * count[k])))
        if itf[k]:
            use[("interfaces", itf[k])].append((var, float(qk * count[k])))
        if mount[k] == "sink" and hs[k]:
            use[("heatsinks", hs[k])].append((var, float(qk)))

    # groups
    y: dict[tuple[str, str], Any] = {}
    q: dict[tuple[str, str], Any] = {}
    margin_terms: dict[str, list[tuple[Any, float]]] = {}
    parts = problem.parts
    pos_map = {}
    if "positions" in parts.columns:
        for t, p, v in zip(
            parts["table"], parts["part"], parts["positions"], strict=True
        ):
            if t == "heatsinks":
                pos_map[str(p)] = float(v) if v is not None and np.isfinite(v) else 1.0
    for gi, (g, opts) in enumerate(problem.groups.items()):
        mem = prep.members.get(g, [])
        if not mem:
            continue
        sinks = list(opts.sinks)
        for si, s in enumerate(sinks):
            y[(g, s)] = prob.add_variable(f"y_{gi}_{si}", 0, 1, pulp.LpBinary)
            q[(g, s)] = prob.add_variable(f"q_{gi}_{si}", 0, None)
            use[("heatsinks", s)].append((y[(g, s)], 1.0))
        add(_lin([(y[(g, s)], 1.0) for s in sinks]), 0, 1.0, f"gsink_{gi}")
        heat = [(q[(g, s)], 1.0) for s in sinks]
        devices = []
        for c in mem:
            for k in prep.cand_of[c]:
                k = int(k)
                heat.append((x[k], -float(qty[c] * p_total[k])))
                devices.append((x[k], float(qty[c] * count[k])))
        add(_lin(heat), 0, 0.0, f"gheat_{gi}")
        qcap = prep.qcap[g]
        for si, s in enumerate(sinks):
            add(
                _lin([(q[(g, s)], 1.0), (y[(g, s)], -qcap)]), -1, 0.0, f"gcap_{gi}_{si}"
            )
        # per member channel and sink: q_gs ≤ Σ_k x_k·min(Pmax, Qcap); fit rows
        for ci, c in enumerate(mem):
            ks = [int(k) for k in prep.cand_of[c]]
            pm = np.array([prep.pmax[g][k] for k in ks]).reshape(len(ks), len(sinks))
            pm = np.minimum(np.maximum(pm, 0.0), qcap)
            for si, s in enumerate(sinks):
                col = pm[:, si]
                bad = [ks[j] for j in range(len(ks)) if col[j] <= 0]
                if bad:
                    add(
                        _lin([(x[k], 1.0) for k in bad] + [(y[(g, s)], 1.0)]),
                        -1,
                        1.0,
                        f"gfit_{gi}_{ci}_{si}",
                    )
                if np.all(col >= qcap):
                    continue  # never binding
                terms = [(q[(g, s)], 1.0)]
                terms += [
                    (x[ks[j]], -float(col[j])) for j in range(len(ks)) if col[j] > 0
                ]
                add(_lin(terms), -1, 0.0, f"gpow_{gi}_{ci}_{si}")
        # positions
        add(
            _lin(devices + [(y[(g, s)], -pos_map.get(s, 1.0)) for s in sinks]),
            -1,
            0.0,
            f"gpos_{gi}",
        )
        # isolation: one uninsulated node per sink
        labels: dict[str, list[tuple[str, int]]] = defaultdict(list)
        for c in mem:
            for k in prep.cand_of[c]:
                if touching[int(k)]:
                    labels[node[int(k)]].append((c, int(k)))
        if len(labels) >= 2:
            zs = []
            for li, (_lab, items) in enumerate(sorted(labels.items())):
                z = prob.add_variable(f"z_{gi}_{li}", 0, 1)
                zs.append((z, 1.0))
                by_c: dict[str, list[int]] = defaultdict(list)
                for c, k in items:
                    by_c[c].append(k)
                for ci, (_c, ks) in enumerate(by_c.items()):
                    add(
                        _lin([(x[k], 1.0) for k in ks] + [(z, -1.0)]),
                        -1,
                        0.0,
                        f"gnode_{gi}_{li}_{ci}",
                    )
            add(_lin(zs), -1, 1.0, f"gnodes_{gi}")
        # margin proxy of each member: h_k − Σ_s r_tie_s·q_gs
        rt = prep.r_tie[g]
        for c in mem:
            margin_terms[c] = [(x[int(k)], float(h[int(k)])) for k in prep.cand_of[c]]
            margin_terms[c] += [
                (q[(g, s)], -float(rt[si])) for si, s in enumerate(sinks) if rt[si] > 0
            ]

    # accessories
    a: dict[tuple[str, str, str, str], Any] = {}
    acc_i = 0
    for c in prep.names:
        need_keys = sorted({n for k in prep.cand_of[c] for n in prep.needs[int(k)]})
        for role, need in need_keys:
            parts_ok = prep.options.get((c, role, need), [])
            terms = []
            for p in parts_ok:
                v = prob.add_variable(f"a_{acc_i}", 0, 1, pulp.LpBinary)
                acc_i += 1
                a[(c, role, need, p)] = v
                terms.append((v, 1.0))
                use[(ROLE_TABLE[role], p)].append((v, float(qty[c])))
            terms += [
                (x[int(k)], -1.0)
                for k in prep.cand_of[c]
                if (role, need) in prep.needs[int(k)]
            ]
            add(_lin(terms), 0, 0.0, f"acc_{acc_i}_{len(rows)}")

    # stock
    stock = _stock_map(parts)
    for si, ((table, part), terms) in enumerate(sorted(use.items())):
        s = stock.get((table, part), math.nan)
        if not math.isfinite(s):
            continue
        if sum(u for _, u in _max_use(terms)) <= s + 1e-9:
            continue
        add(_lin(terms), -1, float(s), f"stock_{si}")

    # objective
    price = {
        (str(t), str(p)): float(v)
        for t, p, v in zip(parts["table"], parts["part"], parts["price"], strict=True)
    }
    cost_terms = [(var, float(qty[chan[k]] * cost[k])) for k, var in x.items()]
    for (_g, s), var in y.items():
        cost_terms.append((var, price.get(("heatsinks", s), 0.0)))
    for (c, role, _need, p), var in a.items():
        cost_terms.append((var, float(qty[c]) * price.get((ROLE_TABLE[role], p), 0.0)))
    cost_expr = _lin(cost_terms)

    mmax = prep.t_span / (2.0 * (1.0 + MEAN_WEIGHT))
    mu = prob.add_variable("mu", None, mmax)
    mean_terms: list[tuple[Any, float]] = []
    nch = max(len(prep.names), 1)
    for i, c in enumerate(prep.names):
        if c in margin_terms:
            mt = margin_terms[c]
        else:
            mt = [(x[int(k)], float(marg[int(k)])) for k in prep.cand_of[c]]
        add(_lin(mt + [(mu, -1.0)]), 1, 0.0, f"mu_{i}")
        mean_terms += [(v, MEAN_WEIGHT * coef / nch) for v, coef in mt]
    t_expr = _lin([(mu, 1.0)] + mean_terms)
    eps = TIEBREAK_SHARE * prep.unit / prep.t_span
    prob.setObjective(cost_expr - eps * t_expr)
    for con, name in rows:
        prob.addConstraint(con, name)
    return _Model(prob, x, y, q, a, mu, cost_expr, t_expr)


def _max_use(terms):
    """Upper bound of a resource row: each variable at 1 (shared vars counted once)."""
    seen: dict[int, tuple[Any, float]] = {}
    for v, u in terms:
        key = id(v)
        if key in seen:
            seen[key] = (v, seen[key][1] + u)
        else:
            seen[key] = (v, u)
    return list(seen.values())


def model_size(model: _Model) -> dict[str, int]:
    """Variables, integer variables, rows and nonzeros of a built model."""
    prob = model.prob
    variables = prob.variables()
    nnz = 0
    for c in prob._constraints.values():
        nnz += len(c)
    return {
        "variables": len(variables),
        "integer": sum(1 for v in variables if v.cat == "Integer"),
        "rows": len(prob._constraints),
        "nonzeros": nnz,
    }


# --------------------------------------------------------------------------------------
# solving and ranked alternatives


def _signature(problem: SelectionProblem, prep: _Prepared, sol: RawSolution) -> tuple:
    cand = problem.candidates
    items = []
    for c in prep.names:
        k = sol.choice[c]
        items.append(("switch", c, str(cand.at[k, "switch"])))
        if not prep.group_of[c]:
            items.append(("sink", c, str(cand.at[k, "heatsink"])))
    for g in sorted(sol.group_sinks):
        items.append(("group", g, sol.group_sinks[g]))
    return tuple(items)


def _cut_expr(problem: SelectionProblem, prep: _Prepared, model: _Model, sig: tuple):
    """Σ of the indicators that are 1 in ``sig`` (each indicator a sum of x or a y)."""
    cand = problem.candidates
    sw = cand["switch"].astype(str).to_numpy()
    hs = cand["heatsink"].astype(str).to_numpy()
    terms: list[tuple[Any, float]] = []
    for what, key, part in sig:
        if what == "switch":
            terms += [
                (model.x[int(k)], 1.0) for k in prep.cand_of[key] if sw[int(k)] == part
            ]
        elif what == "sink":
            terms += [
                (model.x[int(k)], 1.0) for k in prep.cand_of[key] if hs[int(k)] == part
            ]
        else:
            terms.append((model.y[(key, part)], 1.0))
    return _lin(terms), len(sig)


def _extract(
    problem: SelectionProblem,
    prep: _Prepared,
    model: _Model,
    seconds: float,
    proven: bool,
) -> RawSolution | None:
    choice: dict[str, int] = {}
    for c in prep.names:
        on = [int(k) for k in prep.cand_of[c] if (model.x[int(k)].value() or 0.0) > 0.5]
        if len(on) != 1:
            return None
        choice[c] = on[0]
    gs: dict[str, str] = {}
    for g, opts in problem.groups.items():
        if not prep.members.get(g):
            continue
        on = [s for s in opts.sinks if (model.y[(g, s)].value() or 0.0) > 0.5]
        if len(on) != 1:
            return None
        gs[g] = on[0]
    acc: dict[str, dict[str, str]] = {}
    for (c, role, _need, p), v in model.a.items():
        if (v.value() or 0.0) > 0.5:
            acc.setdefault(c, {})[role] = p
    cost = float(model.cost_expr.value() or 0.0)
    unit = prep.unit
    cost = round(cost / unit) * unit if unit >= 1e-6 else cost
    t = float(model.t_expr.value() or 0.0)
    sol = RawSolution(choice, gs, acc, cost, t, proven, seconds)
    sol.signature = _signature(problem, prep, sol)
    return sol


def solve(
    problem: SelectionProblem,
    *,
    top: int = 1,
    solver: str = "cbc",
    time_limit: float = 30.0,
    gap_rel: float | None = None,
    threads: int | None = None,
    msg: bool = False,
) -> OptimizeResult:
    """Solve the selection problem; return up to ``top`` distinct solutions, best first.

    Parameters
    ----------
    problem : the tables (see :class:`SelectionProblem`).
    top : how many distinct solutions to return (see "Ranked alternatives" above).
    solver : "cbc" or "highs" (:func:`make_solver`).
    time_limit : [s] budget for the whole search; the best solution may use all of
        it, each alternative gets what is left. A solve stopped by the limit returns its
        best answer marked not proven optimal (read from ``prob.sol_status``).
    gap_rel : optional relative gap at which to stop (faster, then not proven optimal
        when > 0); by default only the absolute gap of half a price unit is used.

    Raises
    ------
    SolverError
        Solver missing, or the time limit ended the first solve without any answer.
    """
    import pulp

    t0 = time.perf_counter()
    prep = prepare(problem)
    make_solver(solver, time_limit=1.0)  # fail early when the solver is missing
    empty = [c for c in prep.names if prep.cand_of[c].size == 0]
    if empty:
        return OptimizeResult(
            status="no_candidates",
            solutions=[],
            solver=solver,
            seconds=time.perf_counter() - t0,
            messages=[f"channel '{c}' has no usable candidate" for c in empty],
            unusable=prep.unusable,
        )
    model = build_model(problem, prep)
    size = model_size(model)
    solutions: list[RawSolution] = []
    messages: list[str] = []
    status = "infeasible"
    gap_abs = GAP_ABS_SHARE * prep.unit
    for r in range(max(int(top), 1)):
        left = time_limit - (time.perf_counter() - t0)
        if r > 0 and left <= 0.05:
            messages.append(
                f"time limit reached after {len(solutions)} solution(s); "
                "no further alternatives were searched"
            )
            break
        s = make_solver(
            solver,
            time_limit=max(left, 0.05) if r > 0 else time_limit,
            gap_abs=gap_abs,
            gap_rel=gap_rel if gap_rel is not None else 0.0,
            threads=threads,
            msg=msg,
        )
        ts = time.perf_counter()
        ctx = (
            _quiet_stdout()
            if solver.lower() == "highs" and not msg
            else contextlib.nullcontext()
        )
        with ctx:
            try:
                model.prob.solve(s)
            except pulp.PulpSolverError as exc:
                raise SolverError(f"the {solver} solver failed: {exc}") from exc
        secs = time.perf_counter() - ts
        sol_status = model.prob.sol_status
        if sol_status in (pulp.LpSolutionInfeasible, pulp.LpSolutionUnbounded) or (
            model.prob.status == pulp.LpStatusInfeasible
        ):
            break
        proven = sol_status == pulp.LpSolutionOptimal and not (gap_rel and gap_rel > 0)
        sol = _extract(problem, prep, model, secs, proven)
        if sol is None:
            if r == 0:
                raise SolverError(
                    f"the time limit of {time_limit:g} s ended the search before any "
                    "selection was found; allow more time"
                )
            messages.append("the time limit ended the search for further alternatives")
            break
        if r == 0:
            status = "optimal" if proven else "feasible"
            if not proven:
                messages.append(
                    "the best selection is not proven optimal (the search stopped at "
                    f"the time limit of {time_limit:g} s)"
                )
        solutions.append(sol)
        if r + 1 < top:
            expr, n = _cut_expr(problem, prep, model, sol.signature)
            model.prob.addConstraint(
                pulp.LpConstraint(expr, -1, f"cut_{r}", n - 1), f"cut_{r}"
            )
            model.n_cuts += 1
    return OptimizeResult(
        status=status,
        solutions=solutions,
        solver=solver,
        seconds=time.perf_counter() - t0,
        size=size,
        messages=messages,
        unusable=prep.unusable,
    )


# --------------------------------------------------------------------------------------
# checks and differences


def assignment_cost(problem: SelectionProblem, sol: RawSolution) -> float:
    """Total cost of a solution from the tables (independent of the model)."""
    cand = problem.candidates
    qty = {
        str(n): int(q)
        for n, q in zip(
            problem.channels["name"], problem.channels["quantity"], strict=True
        )
    }
    total = 0.0
    for c, k in sol.choice.items():
        total += qty[c] * float(cand.at[k, "cost"])
    for s in sol.group_sinks.values():
        total += problem.price("heatsinks", s)
    for c, roles in sol.accessories.items():
        for role, p in roles.items():
            total += qty[c] * problem.price(ROLE_TABLE[role], p)
    return total


def describe_differences(
    problem: SelectionProblem, best: RawSolution, other: RawSolution
) -> list[str]:
    """Short sentences saying what ``other`` changes with respect to ``best``."""
    cand = problem.candidates
    out: list[str] = []

    def build(k: int) -> str:
        r = cand.loc[k]
        s = f"{int(r['count'])} × {r['switch']}"
        if r["mount"] == "sink":
            s += f" on {r['heatsink']}"
        elif r["mount"] == "air":
            s += " in free air"
        if r["interface"]:
            s += f" with {r['interface']}"
        return s

    for c, k in other.choice.items():
        kb = best.choice.get(c)
        if kb is None or kb == k:
            continue
        out.append(f"{c}: {build(k)} instead of {build(kb)}")
    for g, s in other.group_sinks.items():
        sb = best.group_sinks.get(g)
        if sb != s:
            out.append(f"group '{g}': sink {s} instead of {sb}")
    for c, roles in other.accessories.items():
        for role, p in roles.items():
            pb = best.accessories.get(c, {}).get(role)
            if pb != p:
                out.append(f"{c}: {role} {p} instead of {pb or 'none'}")
    d = other.cost - best.cost
    out.append(f"costs {d:+.2f} against the best")
    return out


def subproblem(problem: SelectionProblem, names: list[str]) -> SelectionProblem:
    """The same problem restricted to some channels (stock, parts and options kept).

    Used to find which part of an infeasible board is infeasible on its own.
    """
    keep = set(names)
    ch = problem.channels[problem.channels["name"].isin(keep)].reset_index(drop=True)
    cand = problem.candidates
    mask = cand["channel"].isin(keep).to_numpy()
    old = np.flatnonzero(mask)
    new_id = {int(k): i for i, k in enumerate(old)}
    sub = cand.iloc[old].reset_index(drop=True)
    groups: dict[str, GroupSinks] = {}
    present = set(ch["group"])
    for g, opts in problem.groups.items():
        if g not in present:
            continue
        sel = [i for i, k in enumerate(opts.rows) if int(k) in new_id]
        rows = np.array([new_id[int(opts.rows[i])] for i in sel], dtype=int)
        pm = np.asarray(opts.pmax, dtype=float).reshape(len(opts.rows), len(opts.sinks))
        groups[g] = GroupSinks(g, list(opts.sinks), rows, pm[sel], opts.r_tie)
    acc = problem.accessories
    if acc is not None and len(acc):
        acc = acc[acc["channel"].isin(keep)].reset_index(drop=True)
    return SelectionProblem(ch, sub, problem.parts, groups, acc, problem.enforce)
