"""Per-channel candidate combinations for the integer program.

A *candidate* is one way to build one copy of one channel: a switch part, how many of it
in parallel, the thermal interface under each device and how the devices are cooled
(their own heatsink, free air, or the shared sink of a heatsink group). The optimizer
(:mod:`selector.optimize`) picks exactly one candidate per channel; everything it needs
to know about a candidate is one row of the *candidate table* below.

Candidate table (one DataFrame for all channels, RangeIndex 0..N-1)
-------------------------------------------------------------------

==================  =======  ===========================================================
column              type     meaning
==================  =======  ===========================================================
channel             str      channel name (as in the design)
switch              str      switch part id
count               int      devices in parallel in one copy (n)
interface           str      interface part under every device ("" = none, free air)
heatsink            str      the channel's own heatsink part ("" = none: air or group)
mount               str      "sink" (own sink), "air" (no sink, RθJA) or "group"
                             (the heatsink group's shared sink, chosen by the model)
package             str      switch package (sink and interface fit)
kind, side, tab     str      switch kind, the side it sits on, what its tab is tied to
topology            str      drive topology named by the screening rules
needs_diode         bool     the copy needs a freewheel diode (chosen by the model)
driver_kind         str      gate-driver kind the topology needs ("" = none;
                             "high_side|isolated" = either)
driver_need         str      the optimizer's key for the driver options (kind and
                             the v_out window, e.g. "low_side@4.5-14"; "" = use
                             driver_kind)
insulating          bool     the interface insulates the tab from the sink
tab_node            str      circuit node the tab sits on ("" = tab isolated in the
                             package); see "Tab nodes" below
node_per_copy       bool     the node is different in every copy of the channel
cost                float    price of one copy: n·switch + n·interface + own sink
p_dev_w             float    [W] die loss of one device at T_lim and ambient_max
p_total_w           float    [W] n·p_dev_w, heat of one copy
dev_rise_k          float    [K] p_dev·(RθJC + RθCS) + surge rise (0 for air)
h_k                 float    [K] sink-rise budget T_lim − Ta,max − dev_rise (NaN: air)
margin_k            float    [K] thermal margin at the limit losses; for "group" rows
                             the budget h_k (the model subtracts the shared sink's rise)
t_lim_c             float    [°C] junction limit tj_max − junction_margin
rth_jc_k_per_w      float    [K/W]
rth_cs_k_per_w      float    [K/W] interface (NaN for air)
rth_sa_k_per_w      float    [K/W] own sink at its operating rise (NaN otherwise)
==================  =======  ===========================================================

Resources of one copy: ``count`` switches, ``count`` interfaces (when given) and one
heatsink (``mount == "sink"``). The optimizer multiplies them by the channel's
``quantity``.

Tab nodes (electrical isolation, physics.md §7.3)
-------------------------------------------------
A device whose tab is tied to a circuit node (drain, collector or source) puts that node
on the sink unless its interface insulates. Node labels: ``"gnd"`` (source tab of a
low-side N-MOSFET), ``"rail:<V>"`` (drain/collector on the supply rail of a high-side
N-MOSFET/IGBT, source of a high-side P-MOSFET), and ``"<channel>:load"`` (the switched
load node; different in every copy). On one shared sink the uninsulated devices may hold
one node only. Parallel devices of one copy share their node, so a channel alone on its
own sink never needs an insulating interface (the sink is then live; the notes say so).

Building (:func:`build_selection`)
----------------------------------
From the screening's passed rows (switch × count, evaluated at the junction limit) ×
the interfaces that fit the package: the sink-rise budget ``h_k`` of each option comes
from :func:`selector.evaluate.interface_options`. Ungrouped channels get free-air builds
(only when ``tj_no_sink_peak_c ≤ t_lim`` and every device stands alone) and own-sink
builds; the cheapest adequate sinks are found by one vectorised comparison of the
options against the price-sorted sink frontier (adequate: fits the package, positions ≥
count, stock ≥ quantity, ``sink_max_power(sink, h_k) ≥ count·p_dev``). Grouped channels'
builds carry no sink: the group's sink options (the frontier of the sinks that fit the
members' packages) go to the model with ``Pmax(k, s) = sink_max_power(s, h_k)``.

Pruning (what is kept, and why the cheapest board survives)
-----------------------------------------------------------
*Safe* below means: the part's stock (switch, interface, sink, and the cheapest
accessory) is unlimited or covers what the whole board could ever use, so choosing it
can never break a stock limit, whatever the other channels take.

* Interfaces: per package and insulating class, Pareto layers on (price, RθCS, −t_max);
  the first 2 are kept (stock 0 is out).
* Sinks: per package (own sinks) or per group, Pareto layers on (price, −positions,
  −power taken at every rise of a grid over the design's range, −fit per package; two
  power laws keep their order between the ends of the grid); the first 2 are kept.
* Ungrouped channel: within each class of accessory needs, builds are taken in order of
  cost (larger margin first at equal cost), at most ``per_part`` (3) per switch part,
  until ``keep_parts`` (5) switch parts are in and one safe build is in; every dearer
  build could be swapped for that safe one without breaking a limit, so the cheapest
  cost is never lost (the search stops examining options once no cheaper one is left).
* Grouped channel, per group:
  1. a cost window: UB = the cost of a safe group build (every member on safe parts,
     all tabs insulated or one member's live, on a safe sink; found by a search over
     sinks and heat levels); LB_c = each member's cheapest build. A build of member c
     costing more than UB − Σ_{c'≠c} LB_c' − (cheapest sink), or a sink costing more
     than UB − Σ LB_c, cannot be in an optimal board (swapping the group to the safe
     build would be cheaper and still feasible). ``ranking_slack`` (10 % of UB) is added
     so that near-optimal alternatives survive for the ranking;
  2. builds no sink fits or carries alone (heat, positions, several live copies) are out;
  3. per-sink bound: on sink s every member needs Pmax(k, s) ≥ its own heat plus the
     least heat the others bring (and the positions likewise), which bounds the group's
     cost on s from below; sinks and builds that cannot reach UB + slack on any sink are
     out;
  4. dominance on (cost, heat, −budget, devices, live tab) within each class of package
     and accessory needs: builds of one switch part dominated by another build of the
     same part go first, then the first ``group_layers`` (2) Pareto layers are kept. A
     dropped build is dominated by builds of at least two *other* switch parts (a chain
     of dominating builds never repeats a part), so it is needed only when both are out
     of stock.
"""

from __future__ import annotations

import dataclasses
import math
from collections.abc import MutableMapping
from dataclasses import dataclass, field
from typing import Any

import numpy as np
import pandas as pd

from selector import evaluate as _evaluate
from selector import heatsinks as _heatsinks
from selector.frames import object_column as _obj

CANDIDATE_COLUMNS: dict[str, str] = {
    "channel": "str",
    "switch": "str",
    "count": "int",
    "interface": "str",
    "heatsink": "str",
    "mount": "str",
    "package": "str",
    "kind": "str",
    "side": "str",
    "tab": "str",
    "topology": "str",
    "needs_diode": "bool",
    "driver_kind": "str",
    "driver_need": "str",
    "insulating": "bool",
    "tab_node": "str",
    "node_per_copy": "bool",
    "cost": "float",
    "p_dev_w": "float",
    "p_total_w": "float",
    "dev_rise_k": "float",
    "h_k": "float",
    "margin_k": "float",
    "t_lim_c": "float",
    "rth_jc_k_per_w": "float",
    "rth_cs_k_per_w": "float",
    "rth_sa_k_per_w": "float",
}

MOUNTS = ("sink", "air", "group")

#: Columns of the passed rows that :func:`selector.evaluate.interface_options` reads.
_INTERFACE_INPUT = (
    "package",
    "count",
    "p_dev_w",
    "surge_dp_w",
    "rth_jc_k_per_w",
    "surge_rise_k",
    "t_lim_c",
)

#: Sink-capacity entries (rows × sinks, 8 bytes each) the group stage keeps between its
#: passes instead of recomputing them (16 M entries = 128 MB).
PMAX_CACHE_ENTRIES = 16_000_000

#: Entries a caller's memo (see :func:`build_selection`) keeps at most.
MEMO_ENTRIES = 256

#: Defaults used when a hand-built table leaves a column out.
_DEFAULTS = {
    "str": "",
    "int": 1,
    "bool": False,
    "float": np.nan,
}


def candidate_frame(rows: list[dict] | pd.DataFrame) -> pd.DataFrame:
    """A candidate table with every column of :data:`CANDIDATE_COLUMNS`.

    Missing columns get their default ("" / 1 / False / NaN); ``p_total_w`` defaults to
    ``count·p_dev_w``. The index is reset to 0..N-1 (the optimizer's candidate ids).
    """
    df = pd.DataFrame(rows) if not isinstance(rows, pd.DataFrame) else rows
    n = len(df)
    cols: dict[str, Any] = {}  # every column built as an array, the frame made once
    for col, kind in CANDIDATE_COLUMNS.items():
        if col not in df.columns:
            if col == "p_total_w" and "p_dev_w" in df.columns and "count" in df.columns:
                v = _num(df, "count") * _num(df, "p_dev_w")
            else:
                v = np.full(n, _DEFAULTS[kind], dtype=object if kind == "str" else None)
        else:
            v = df[col].to_numpy()
        if kind == "str":  # plain objects: arrow strings make row selection slow
            v = np.asarray(v, dtype=object).copy()
            v[pd.isna(v)] = ""
            v = pd.Series(v, index=pd.RangeIndex(n), dtype=object)
        elif kind == "int":
            v = np.asarray(v).astype(int)
        elif kind == "bool":
            v = np.asarray(v, dtype=object)
            v = np.where(pd.isna(v), False, v).astype(bool)
        else:
            v = np.asarray(v, dtype=float)
        cols[col] = v
    extra = [c for c in df.columns if c not in CANDIDATE_COLUMNS]
    order = list(df.columns) + [c for c in CANDIDATE_COLUMNS if c not in df.columns]
    for c in extra:
        cols[c] = pd.Series(df[c].to_numpy(), index=pd.RangeIndex(n), dtype=df[c].dtype)
    return pd.DataFrame({c: cols[c] for c in order}, index=pd.RangeIndex(n))


# ======================================================================================
# building the candidates from the screened rows (see "Pruning" in the module docstring)
# ======================================================================================


@dataclass(frozen=True)
class PruneSettings:
    """How many alternatives the pruning keeps (see "Pruning" in the module docstring)."""

    keep_parts: int = 5
    per_part: int = 3
    group_layers: int = 2
    ranking_slack: float = 0.10  # cost window slack for ranked alternatives (× UB)
    sink_alternatives: int = 3
    interface_layers: int = 2
    sink_layers: int = 2
    chunk: int = 50_000  # options compared against the sinks at once


def pareto_layers(values: np.ndarray, max_layers: int, block: int = 512) -> np.ndarray:
    """Non-dominated sorting: layer 1, 2, … of every item; ``max_layers + 1`` beyond.

    ``values`` is (N, d) with *lower is better* in every column (NaN counts as worst).
    Item j dominates i when ``values[j] ≤ values[i]`` in every column (ties broken by
    order, so one of two equal items dominates the other). Layer 1 is the set no item
    dominates; layer L is that set once layers 1..L−1 are removed. Items are sorted
    lexicographically, so only earlier items can dominate; each pass compares blocks
    against the non-dominated set found so far (numpy broadcasting).
    """
    v = np.asarray(values, dtype=float)
    if v.ndim == 1:
        v = v[:, None]
    n = len(v)
    layer = np.full(n, max_layers + 1, dtype=int)
    if n == 0:
        return layer
    v = np.where(np.isnan(v), np.inf, v)
    order = np.lexsort(v.T[::-1])
    vs = v[order]
    remaining = np.arange(n)
    for lay in range(1, max_layers + 1):
        if remaining.size == 0:
            break
        nd = _nondominated_sorted(vs[remaining], block)
        layer[order[remaining[nd]]] = lay
        remaining = remaining[~nd]
    return layer


def _dominated_by(sky: np.ndarray, x: np.ndarray) -> np.ndarray:
    """For each row of ``x``: some row of ``sky`` is ≤ it in every column."""
    out = np.zeros(len(x), dtype=bool)
    for s0 in range(0, len(sky), 2048):
        s = sky[s0 : s0 + 2048]
        acc = s[None, :, 0] <= x[:, None, 0]
        for j in range(1, x.shape[1]):
            acc &= s[None, :, j] <= x[:, None, j]
        out |= acc.any(axis=1)
    return out


def _nondominated_sorted(v: np.ndarray, block: int) -> np.ndarray:
    """Mask of rows of lexicographically sorted ``v`` not dominated by an earlier row."""
    n, d = v.shape
    keep = np.zeros(n, dtype=bool)
    sky = np.empty((0, d))
    tri = np.tril(np.ones((block, block), dtype=bool), k=-1)
    for start in range(0, n, block):
        x = v[start : start + block]
        dom = _dominated_by(sky, x) if len(sky) else np.zeros(len(x), dtype=bool)
        le = x[None, :, 0] <= x[:, None, 0]
        for j in range(1, d):
            le &= x[None, :, j] <= x[:, None, j]
        dom |= (le & tri[: len(x), : len(x)]).any(axis=1)
        keep[start : start + len(x)] = ~dom
        sky = np.vstack([sky, x[~dom]])
    return keep


def local_front(keys: np.ndarray, values: np.ndarray, chunk: int = 4096) -> np.ndarray:
    """Mask of the items no other item *with the same key* dominates (lower is better).

    Used per switch part: among the builds of one part (counts × interfaces) only the
    non-dominated ones stay, so that a chain of dominating builds never repeats a part
    (see :func:`pareto_layers`). Vectorised by padding each key's items to a block.
    """
    v = np.asarray(values, dtype=float)
    if v.ndim == 1:
        v = v[:, None]
    n, d = v.shape
    keep = np.ones(n, dtype=bool)
    if n == 0:
        return keep
    v = np.where(np.isnan(v), np.inf, v)
    keys = np.asarray(keys)
    codes, _ = pd.factorize(keys if keys.dtype.kind in "iu" else keys.astype(object))
    order = np.lexsort(tuple(v.T[::-1]) + (codes,))
    c_sorted = codes[order]
    starts = np.flatnonzero(np.r_[True, c_sorted[1:] != c_sorted[:-1]])
    sizes = np.diff(np.r_[starts, n])
    pos = np.arange(n) - np.repeat(starts, sizes)
    m = int(sizes.max())
    if m == 1:
        return keep
    for g0 in range(0, len(starts), chunk):
        g1 = min(g0 + chunk, len(starts))
        lo, hi = starts[g0], (starts[g1] if g1 < len(starts) else n)
        idx = order[lo:hi]
        gi = np.repeat(np.arange(g1 - g0), sizes[g0:g1])
        block = np.full((g1 - g0, m, d), np.inf)
        block[gi, pos[lo:hi]] = v[idx]
        valid = np.zeros((g1 - g0, m), dtype=bool)
        valid[gi, pos[lo:hi]] = True
        # le[g, i, j]: item j (earlier in the sort, valid) dominates item i
        le = (block[:, None, :, :] <= block[:, :, None, :]).all(axis=3)
        le &= valid[:, None, :]
        le &= np.tril(np.ones((m, m), dtype=bool), k=-1)[None]
        dominated = le.any(axis=2)
        keep[idx] = ~dominated[gi, pos[lo:hi]]
    return keep


def fit_items(fits: Any) -> tuple[str, ...]:
    """Packages of a ``fits`` cell (tuple or ``;``-separated text), upper case."""
    return tuple(_evaluate._fit_items(fits))


def _num(df: pd.DataFrame, col: str, default: float = np.nan) -> np.ndarray:
    if col not in df.columns:
        return np.full(len(df), default, dtype=float)
    return pd.to_numeric(df[col], errors="coerce").to_numpy(dtype=float)


def _text(df: pd.DataFrame, col: str) -> np.ndarray:
    """A text column as an object array, blanks as ""."""
    if col not in df.columns:
        return np.full(len(df), "", dtype=object)
    v = df[col].to_numpy(dtype=object)
    blank = pd.isna(v)
    if pd.api.types.infer_dtype(v, skipna=True) in ("string", "empty"):
        out = v.copy()
        out[blank] = ""
        return out
    return np.array(
        ["" if b else str(x) for x, b in zip(v, blank, strict=True)], object
    )


def _upper(text: np.ndarray) -> np.ndarray:
    """Upper-case text (object array, "" for blanks), each distinct value once."""
    codes, uniq = _evaluate._package_codes(pd.Series(text, dtype=object))
    return np.append(np.asarray(uniq, dtype=object), "")[codes]


def _strs(col: pd.Series) -> pd.Series:
    """A column as plain object text ("" for blanks), without a detour through arrow
    strings (what ``astype(str)`` makes in pandas ≥ 3); the column itself if it is
    already object text."""
    if col.dtype == bool:
        return pd.Series(
            np.where(col.to_numpy(), "True", "False").astype(object),
            index=col.index,
            dtype=object,
        )
    v = col.to_numpy(dtype=object)
    if col.dtype == object and pd.api.types.infer_dtype(v, skipna=False) == "string":
        return col
    return pd.Series(_text(col.to_frame("x"), "x"), index=col.index, dtype=object)


def stock_allows(stock: np.ndarray, units) -> np.ndarray:
    """True where the stock (NaN = unlimited) covers ``units``."""
    stock = np.asarray(stock, dtype=float)
    return np.isnan(stock) | (stock >= np.asarray(units, dtype=float) - 1e-9)


def tab_nodes(
    kind, side, tab, channel: str, supply: float
) -> tuple[np.ndarray, np.ndarray]:
    """Circuit node of each device's tab, and whether it differs per copy.

    physics.md §7.3 (common practice): the tab of TO-220/TO-247/D2PAK is the drain
    (collector). Low side: drain = the switched load node, source = ground. High-side
    N-MOSFET/IGBT: drain = supply rail, source = load node. High-side P-MOSFET: source =
    supply rail, drain = load node. An unknown tab is taken as drain (conservative); an
    isolated tab has no node.

    Returns
    -------
    labels : "" (isolated), "gnd", "rail:<V>V" or "<channel>:load".
    per_copy : True for the load node (every copy has its own).
    """
    kind = np.asarray(kind, dtype=object)
    side = np.asarray(side, dtype=object)
    t = pd.Series(np.asarray(tab, dtype=object), dtype=object)
    t = t.where(t.notna(), "").astype(str).str.lower()
    tab = t.where(~t.isin(["", "nan", "none"]), "drain").to_numpy(dtype=object)
    n = len(tab)
    load = f"{channel}:load"
    rail = f"rail:{float(supply):g}V"
    drainish = np.isin(tab, ["drain", "collector"])
    sourceish = np.isin(tab, ["source", "emitter"])
    high = side == "high"
    pmos = kind == "pmos"
    out = np.full(n, "", dtype=object)
    # drain tab
    out[drainish & ~high] = load
    out[drainish & high & pmos] = load
    out[drainish & high & ~pmos] = rail
    # source tab
    out[sourceish & ~high] = "gnd"
    out[sourceish & high & ~pmos] = load
    out[sourceish & high & pmos] = rail
    return out, out == load


def interface_frontier(interfaces: pd.DataFrame, layers: int = 2) -> pd.DataFrame:
    """Interfaces worth considering, with ``fits`` cut to the packages where they are.

    Per package and insulating class: Pareto layers on (price, rth_cs, −t_max); stock 0
    and a missing rth_cs are out.
    """
    if interfaces is None or len(interfaces) == 0:
        return pd.DataFrame(
            columns=["part", "price", "stock", "fits", "rth_cs", "insulating"]
        )
    df = interfaces.reset_index(drop=True).copy()
    price = _num(df, "price")
    rcs = _num(df, "rth_cs")
    stock = _num(df, "stock")
    tmax = _num(df, "t_max")
    ins = (
        df["insulating"].fillna(False).astype(bool).to_numpy()
        if "insulating" in df
        else np.zeros(len(df), bool)
    )
    ok = np.isfinite(rcs) & (stock != 0)
    fits = [fit_items(f) for f in df["fits"]] if "fits" in df else [()] * len(df)
    keep_fits: list[list[str]] = [[] for _ in range(len(df))]
    packages = sorted({p for f in fits for p in f})
    for p in packages:
        for cls in (False, True):
            idx = np.array(
                [i for i in range(len(df)) if ok[i] and ins[i] == cls and p in fits[i]],
                dtype=int,
            )
            if idx.size == 0:
                continue
            vals = np.column_stack(
                [
                    price[idx],
                    rcs[idx],
                    -np.where(np.isnan(tmax[idx]), np.inf, tmax[idx]),
                ]
            )
            lay = pareto_layers(vals, layers)
            for i in idx[lay <= layers]:
                keep_fits[i].append(p)
    df["fits"] = [tuple(f) for f in keep_fits]
    df["insulating"] = ins
    return df[[bool(f) for f in keep_fits]].reset_index(drop=True)


def sink_frontier(
    table: pd.DataFrame,
    packages: list[str],
    rise_lo: float,
    rise_hi: float,
    *,
    layers: int = 2,
    min_stock: int = 1,
) -> np.ndarray:
    """Row positions of the sinks worth considering for ``packages``, cheapest first.

    A sink is dropped when ``layers`` others are no dearer, have at least its positions,
    fit every one of ``packages`` it fits and take at least its power at every rise of a
    geometric grid over [rise_lo, rise_hi] (power laws keep their order between the
    ends of the grid). Sinks fitting none of the packages, or with stock below
    ``min_stock``, are out.
    """
    if table is None or len(table) == 0 or not packages:
        return np.zeros(0, dtype=int)
    price = _num(table, "price")
    stock = _num(table, "stock")
    pos = _num(table, "positions", 1.0)
    fits = [fit_items(f) for f in table["fits"]]
    fmat = np.array([[p in f for p in packages] for f in fits], dtype=bool).reshape(
        len(table), len(packages)
    )
    ok = fmat.any(axis=1) & stock_allows(stock, min_stock)
    idx = np.flatnonzero(ok)
    if idx.size == 0:
        return idx
    lo = max(float(rise_lo), 0.5)
    hi = max(float(rise_hi), lo * 1.01)
    grid = np.geomspace(lo, hi, 6)
    cap = _heatsinks.sink_max_power(table.iloc[idx], grid)
    cap = np.where(np.isfinite(cap), cap, 1e12)
    vals = np.column_stack(
        [price[idx], -np.nan_to_num(pos[idx], nan=1.0), -cap, -fmat[idx].astype(float)]
    )
    lay = pareto_layers(vals, layers)
    kept = idx[lay <= layers]
    return kept[np.argsort(price[kept], kind="stable")]


#: Candidate-stage rule id -> sentence (rows counted once, under the first that applies).
CANDIDATE_RULES: dict[str, str] = {
    "stock": "not enough in stock for every copy and parallel device",
    "interface": "every interface that fits is out of stock or leaves no sink budget",
    "no_interface": "no thermal interface fits its package for the shared heatsink",
    "no_heatsink": "too hot in free air, and no heatsink in stock keeps it cool enough",
    "group_sink": "no sink of its heatsink group fits it or carries its heat",
}


@dataclass
class ChannelCandidates:
    """Candidates of one channel, and what the candidate stage dropped.

    ``dropped``: :data:`CANDIDATE_RULES` id -> count of screened (switch, count) rows, or
    (switch, count, interface) options, that could not be built; ``pruned``: candidates
    left out as dominated (see "Pruning"). ``passed`` are the screening's rows
    (``table["row"]`` indexes them).
    """

    channel: str
    table: pd.DataFrame
    dropped: dict[str, int] = field(default_factory=dict)
    passed: pd.DataFrame = field(default_factory=pd.DataFrame)
    pruned: int = 0
    base: pd.DataFrame | None = (
        None  # grouped: full rows, joined back after the group stage
    )


@dataclass
class CandidateSet:
    """Everything :func:`selector.optimize.solve` needs, plus what the report needs."""

    problem: Any  # selector.optimize.SelectionProblem
    channels: dict[str, ChannelCandidates]
    sink_table: pd.DataFrame
    interfaces: pd.DataFrame
    group_sinks: dict[str, pd.DataFrame] = field(default_factory=dict)
    #: group -> (its members' builds that some sink carries on its own, the sinks that
    #: fit them): what an explanation of a group that cannot share one sink needs
    group_pool: dict[str, tuple[pd.DataFrame, pd.DataFrame]] = field(
        default_factory=dict
    )


def _count(d: dict[str, int], key: str, n: int) -> None:
    if n:
        d[key] = d.get(key, 0) + int(n)


def _driver_need(kind: np.ndarray, vmin: np.ndarray, vmax: np.ndarray) -> np.ndarray:
    """The optimizer's driver key "kind@vmin-vmax" per row ("" without a driver)."""
    out = np.full(len(kind), "", dtype=object)
    keys = pd.DataFrame({"k": kind, "lo": vmin, "hi": vmax})
    for (k, lo, hi), idx in keys.groupby(
        ["k", "lo", "hi"], dropna=False
    ).indices.items():
        if k:
            a = "" if not np.isfinite(lo) else f"{lo:g}"
            b = "" if not np.isfinite(hi) else f"{hi:g}"
            out[idx] = f"{k}@{a}-{b}"
    return out


def _base_rows(channel, passed: pd.DataFrame, quantity: int) -> pd.DataFrame:
    """The screened rows with the columns every candidate carries."""
    n = len(passed)
    kind = _text(passed, "kind")
    side = _text(passed, "side")
    if not np.any(side != ""):
        side = np.full(
            n, channel.side if channel.side != "any" else "low", dtype=object
        )
    nodes, per_copy = tab_nodes(
        kind, side, _text(passed, "tab"), channel.name, channel.supply
    )
    dk = _text(passed, "driver_kind")
    base = pd.DataFrame(
        {
            "channel": _obj(channel.name, n),
            "row": np.arange(n),
            "switch": _obj(_text(passed, "part")),
            "count": passed["count"].to_numpy(dtype=int),
            "package": _obj(_upper(_text(passed, "package"))),
            "kind": _obj(kind),
            "side": _obj(side),
            "tab": _obj(_text(passed, "tab")),
            "topology": _obj(_text(passed, "topology")),
            "needs_diode": passed["needs_diode"].fillna(False).astype(bool).to_numpy()
            if "needs_diode" in passed
            else np.zeros(n, bool),
            "driver_kind": _obj(dk),
            "driver_need": _obj(
                _driver_need(
                    dk, _num(passed, "driver_v_min"), _num(passed, "driver_v_max")
                )
            ),
            "tab_node": _obj(nodes),
            "node_per_copy": per_copy,
            "switch_price": _num(passed, "price"),
            "switch_stock": _num(passed, "stock"),
            "p_dev_w": _num(passed, "p_dev_w"),
            "t_lim_c": _num(passed, "t_lim_c"),
            "rth_jc_k_per_w": _num(passed, "rth_jc_k_per_w"),
            "rth_ja_k_per_w": _num(passed, "rth_ja_k_per_w"),
            "surge_rise_k": np.nan_to_num(_num(passed, "surge_rise_k"), nan=0.0),
            "surge_dp_w": np.nan_to_num(_num(passed, "surge_dp_w"), nan=0.0),
            "tj_no_sink_c": _num(passed, "tj_no_sink_c"),
            "tj_no_sink_peak_c": _num(passed, "tj_no_sink_peak_c")
            if "tj_no_sink_peak_c" in passed
            else _num(passed, "tj_no_sink_c"),
            "runaway_no_sink": passed["runaway_no_sink"]
            .fillna(False)
            .astype(bool)
            .to_numpy()
            if "runaway_no_sink" in passed
            else np.zeros(n, bool),
        }
    )
    base["p_total_w"] = base["count"] * base["p_dev_w"]
    return base


def _air_rows(base: pd.DataFrame) -> pd.DataFrame:
    """Each device alone in free air with its rth_ja (surge included)."""
    tj = base["tj_no_sink_peak_c"].to_numpy(float)
    ok = (
        np.isfinite(tj)
        & (tj <= base["t_lim_c"].to_numpy(float) + 1e-9)
        & ~base["runaway_no_sink"].to_numpy(bool)
    )
    air = base[ok].copy()
    air["mount"] = _obj("air", len(air), air.index)
    air["interface"] = _obj("", len(air), air.index)
    air["heatsink"] = _obj("", len(air), air.index)
    air["insulating"] = False
    air["tab_node"] = _obj("", len(air), air.index)  # alone in air: no shared metal
    air["node_per_copy"] = False
    air["cost"] = air["count"] * air["switch_price"]
    air["dev_rise_k"] = 0.0
    air["h_k"] = np.nan
    air["margin_k"] = air["t_lim_c"] - air["tj_no_sink_peak_c"]
    air["rth_cs_k_per_w"] = np.nan
    air["rth_sa_k_per_w"] = np.nan
    air["interface_stock"] = np.nan
    air["sink_stock"] = np.nan
    return air


#: Columns a grouped channel's builds carry through the group stage; the rest of the
#: row is joined back (on ``row``) only for the builds kept.
LIGHT_COLUMNS = (
    "channel",
    "row",
    "switch",
    "count",
    "package",
    "needs_diode",
    "driver_need",
    "tab_node",
    "node_per_copy",
    "switch_stock",
    "switch_price",
    "p_dev_w",
    "p_total_w",
)


def _interface_rows(
    base: pd.DataFrame,
    passed: pd.DataFrame,
    interfaces: pd.DataFrame,
    conditions,
    quantity: int,
    columns: tuple[str, ...] | None = None,
) -> tuple[pd.DataFrame, int]:
    """(switch, count) × every interface that fits, with the sink budget h.

    ``columns``: carry only these columns of ``base`` (large inventories).
    """
    if len(interfaces) == 0 or len(base) == 0:
        return base.iloc[0:0].assign(interface="", insulating=False), 0
    io = _evaluate.interface_options(
        passed.reset_index(drop=True), interfaces, conditions
    )
    if len(io) == 0:
        return base.iloc[0:0].assign(interface="", insulating=False), 0
    rows = io["row"].to_numpy(dtype=int)
    src = base if columns is None else base[list(columns)]
    opt = src.iloc[rows].reset_index(drop=True)
    istock = dict(
        zip(interfaces["part"].astype(str), _num(interfaces, "stock"), strict=True)
    )
    opt["interface"] = _obj(
        _strs(io["interface"]).to_numpy(dtype=object), index=opt.index
    )
    opt["interface_price"] = io["interface_price"].to_numpy(float)
    i_codes, i_uniq = pd.factorize(opt["interface"].to_numpy(dtype=object))
    opt["interface_stock"] = np.array(
        [istock.get(p, np.nan) for p in i_uniq] + [np.nan], dtype=float
    )[np.where(i_codes < 0, len(i_uniq), i_codes)]
    opt["insulating"] = io["insulating"].to_numpy(bool)
    opt["rth_cs_k_per_w"] = io["rth_cs_k_per_w"].to_numpy(float)
    opt["dev_rise_k"] = io["dev_rise_k"].to_numpy(float)
    opt["h_k"] = io["h_k"].to_numpy(float)
    opt["base_cost"] = opt["count"] * (opt["switch_price"] + opt["interface_price"])
    good = (opt["h_k"].to_numpy(float) > 0) & stock_allows(
        opt["interface_stock"], quantity * opt["count"]
    )
    return opt[good].reset_index(drop=True), int((~good).sum())


def _own_sink_rows(
    opt: pd.DataFrame,
    table: pd.DataFrame,
    frontier: dict[str, np.ndarray],
    alternatives: int,
    chunk: int,
    quantity: int = 1,
) -> tuple[pd.DataFrame, int]:
    """The cheapest adequate own sinks of every option (vectorised, per package)."""
    out = []
    unmatched = 0
    price = _num(table, "price")
    pos = _num(table, "positions", 1.0)
    stock = _num(table, "stock")
    for pkg, grp in opt.groupby("package", sort=False):
        f = frontier.get(pkg, np.zeros(0, dtype=int))
        f = f[stock_allows(stock[f], quantity)]
        if f.size == 0:
            unmatched += len(grp)
            continue
        ft = table.iloc[f]
        g = grp.reset_index(drop=True)
        for s0 in range(0, len(g), chunk):
            part = g.iloc[s0 : s0 + chunk]
            h = part["h_k"].to_numpy(float)
            q = part["p_total_w"].to_numpy(float)
            n = part["count"].to_numpy(float)
            cap = _heatsinks.sink_max_power(ft, h)  # (S, M)
            ok = (
                (cap >= q[None, :]) & (pos[f][:, None] >= n[None, :]) & (h[None, :] > 0)
            )
            rank = np.cumsum(ok, axis=0)
            sel = ok & (rank <= alternatives)
            si, mi = np.nonzero(sel)
            unmatched += int((~ok.any(axis=0)).sum())
            if si.size == 0:
                continue
            rows = part.iloc[mi].reset_index(drop=True)
            sinks = f[si]
            st = table.iloc[sinks]
            rise = _heatsinks.sink_rise(
                st, rows["p_total_w"].to_numpy(float), outer=False
            )
            rows["heatsink"] = _obj(
                table["part"].astype(str).to_numpy(dtype=object)[sinks],
                index=rows.index,
            )
            rows["sink_stock"] = _num(table, "stock")[sinks]
            rows["mount"] = _obj("sink", len(rows), rows.index)
            rows["cost"] = rows["base_cost"].to_numpy(float) + price[sinks]
            rows["margin_k"] = rows["h_k"].to_numpy(float) - rise
            with np.errstate(divide="ignore", invalid="ignore"):
                rows["rth_sa_k_per_w"] = _heatsinks.sink_rth(
                    st, np.maximum(rise, 1e-6), outer=False
                )
            out.append(rows)
    if not out:
        return opt.iloc[0:0].assign(
            heatsink="",
            mount="sink",
            cost=0.0,
            margin_k=0.0,
            rth_sa_k_per_w=0.0,
            sink_stock=np.nan,
        ), unmatched
    return pd.concat(out, ignore_index=True), unmatched


def _prefix_rule(
    cost: np.ndarray,
    margin: np.ndarray,
    klass: np.ndarray,
    parts: np.ndarray,
    safe: np.ndarray,
    prune: PruneSettings,
) -> tuple[np.ndarray, dict[str, float]]:
    """The cost-order rule on plain arrays: (keep mask, stop cost per class)."""
    n = len(cost)
    keep = np.zeros(n, dtype=bool)
    stops: dict[str, float] = {}
    if n == 0:
        return keep, stops
    order = np.lexsort((-np.nan_to_num(margin, nan=-np.inf), cost))
    k_codes, k_uniq = pd.factorize(pd.Series(klass[order], dtype=object))
    p_codes, _ = pd.factorize(pd.Series(parts[order], dtype=object))
    for ki, k in enumerate(k_uniq):
        idx = order[k_codes == ki]
        pc = p_codes[k_codes == ki]
        # rank of each item within its part (items are in cost order)
        srt = np.argsort(pc, kind="stable")
        first = np.r_[True, pc[srt][1:] != pc[srt][:-1]]
        grp_start = np.maximum.accumulate(np.where(first, np.arange(len(srt)), 0))
        rank = np.empty(len(srt), dtype=int)
        rank[srt] = np.arange(len(srt)) - grp_start
        distinct = np.cumsum(rank == 0)
        done = (distinct >= prune.keep_parts) & (np.cumsum(safe[idx]) > 0)
        if done.any():
            stop = int(np.argmax(done))
            stops[str(k)] = float(cost[idx[stop]])
        else:
            stop = len(idx) - 1
            stops[str(k)] = math.inf
        sel = idx[: stop + 1][rank[: stop + 1] < prune.per_part]
        keep[sel] = True
    return keep, stops


def _safe_mask(cand: pd.DataFrame, board_demand: dict[str, float]) -> np.ndarray:
    return (
        stock_allows(cand["switch_stock"], board_demand["switches"])
        & (
            cand["interface"].eq("").to_numpy()
            | stock_allows(cand["interface_stock"], board_demand["interfaces"])
        )
        & (
            cand["heatsink"].eq("").to_numpy()
            | stock_allows(cand["sink_stock"], board_demand["heatsinks"])
        )
    )


def _cost_order(
    cand: pd.DataFrame, prune: PruneSettings, board_demand: dict[str, float]
) -> tuple[np.ndarray, dict[str, float]]:
    """:func:`_prefix_rule` on a candidate table: (keep mask, stop cost per class)."""
    return _prefix_rule(
        cand["cost"].to_numpy(float),
        cand["margin_k"].to_numpy(float),
        _need_class(cand),
        cand["switch"].to_numpy(dtype=object),
        _safe_mask(cand, board_demand),
        prune,
    )


def _prune_ungrouped(
    cand: pd.DataFrame, prune: PruneSettings, board_demand: dict[str, float]
) -> tuple[pd.DataFrame, dict[str, float]]:
    """The cost-order rule for an ungrouped channel (see "Pruning").

    Returns the kept candidates (cheapest first) and, per class of accessory needs, the
    cost at which the rule stopped (inf where it never stopped).
    """
    if len(cand) == 0:
        return cand, {}
    keep, stops = _cost_order(cand, prune, board_demand)
    kept = cand[keep]
    kept = kept.sort_values(
        ["cost", "margin_k"], ascending=[True, False], kind="stable"
    )
    return kept.reset_index(drop=True), stops


def _need_class(df: pd.DataFrame) -> np.ndarray:
    d = df["needs_diode"].to_numpy(dtype=bool).astype(int)
    codes, uniq = pd.factorize(df["driver_need"].to_numpy(dtype=object))
    # the same text label for the same needs in every table: "<diode>/<driver need>"
    labels = np.array(
        [f"{flag}/{u}" for u in uniq for flag in (False, True)] + ["False/", "True/"],
        dtype=object,
    )
    codes = np.where(codes < 0, len(uniq), codes)
    return labels[codes * 2 + d]


def _ungrouped_table(
    opts: pd.DataFrame,
    air: pd.DataFrame,
    sink_table: pd.DataFrame,
    own_frontier: dict[str, np.ndarray],
    prune: PruneSettings,
    board_demand: dict[str, float],
    quantity: int,
) -> tuple[pd.DataFrame, int, set, set]:
    """Own-sink candidates in order of base cost, stopping once no later option can
    pass the cost-order rule; then the rule itself.

    Returns (kept candidates, pruned count, rows whose options were examined, rows
    that got a build before the rule).
    """
    if len(opts):
        opts = opts.sort_values("base_cost", kind="stable").reset_index(drop=True)
    klass = _need_class(opts) if len(opts) else np.zeros(0, dtype=object)
    last = {k: int(i) for i, k in enumerate(klass)}  # last position of each class
    base_cost = opts["base_cost"].to_numpy(float) if len(opts) else np.zeros(0)
    air_rows = set(air["row"].tolist())
    n_air = len(air)
    air, _ = _prune_ungrouped(air, prune, board_demand)  # a superset of what survives
    found = [air]
    i = 0
    step = max(int(prune.chunk // 16), 1024)
    while i < len(opts):
        part = opts.iloc[i : i + step]
        rows, _ = _own_sink_rows(
            part,
            sink_table,
            own_frontier,
            prune.sink_alternatives,
            prune.chunk,
            quantity,
        )
        found.append(rows)
        i += len(part)
        step *= 2
        if i >= len(opts):
            break
        cur = pd.concat(found, ignore_index=True)
        _, stops = _cost_order(cur, prune, board_demand)
        nxt = base_cost[i]
        remaining = [k for k, lp in last.items() if lp >= i]
        if all(stops.get(k, math.inf) < nxt for k in remaining):
            break
    examined = set(opts["row"].iloc[:i].tolist()) if len(opts) else set()
    table = pd.concat(found, ignore_index=True)
    built = set(table["row"].tolist()) | air_rows
    kept, _ = _prune_ungrouped(table, prune, board_demand)
    return kept, len(table) + n_air - len(air) - len(kept), examined, built


def channel_candidates(
    channel,
    conditions,
    passed: pd.DataFrame,
    *,
    interfaces: pd.DataFrame,
    sink_table: pd.DataFrame,
    own_frontier: dict[str, np.ndarray],
    prune: PruneSettings,
    board_demand: dict[str, float],
) -> ChannelCandidates:
    """Candidates of one channel from its screened rows (grouped: without the sink).

    Parameters
    ----------
    channel : Channel; ``heatsink_group`` decides grouped or not, ``quantity`` the copies.
    conditions : Conditions (ambient_max for the budgets).
    passed : the screening's passed rows (``ScreenResult.passed``).
    interfaces : the interface frontier (:func:`interface_frontier`).
    sink_table : :func:`selector.heatsinks.sink_operating_table` of the inventory.
    own_frontier : package -> sink rows (:func:`sink_frontier`) for own sinks.
    prune : :class:`PruneSettings`.
    board_demand : table -> units the whole board could need (for the *safe* test).
    """
    dropped: dict[str, int] = {}
    q = int(channel.quantity)
    if passed is None or len(passed) == 0:
        return ChannelCandidates(channel.name, candidate_frame([]), dropped, passed)
    base = _base_rows(channel, passed, q)
    enough = stock_allows(base["switch_stock"], q * base["count"])
    _count(
        dropped,
        "stock",
        int((~enough).sum()),
    )
    keep_rows = np.flatnonzero(enough)
    base = base.iloc[keep_rows].reset_index(drop=True)
    # only what the interface options read: the passed rows are wide (~70 columns)
    narrow = passed[[c for c in _INTERFACE_INPUT if c in passed.columns]]
    sub_passed = narrow.reset_index(drop=True).iloc[keep_rows].reset_index(drop=True)
    grouped = bool(channel.heatsink_group)
    opts, bad_if = _interface_rows(
        base, sub_passed, interfaces, conditions, q, LIGHT_COLUMNS if grouped else None
    )
    _count(dropped, "interface", bad_if)
    all_rows = set(base["row"].tolist())
    pruned = 0
    if grouped and len(opts) == 0:  # out of stock or no interface for any row
        _count(dropped, "no_interface", len(all_rows))
        return ChannelCandidates(
            channel.name,
            candidate_frame([]),
            dropped,
            passed.reset_index(drop=True),
            0,
            base,
        )
    if grouped:
        table = opts
        table["mount"] = _obj("group", len(table), table.index)
        table["heatsink"] = _obj("", len(table), table.index)
        table["cost"] = table["base_cost"]
        table["margin_k"] = table["h_k"]
        table["rth_sa_k_per_w"] = np.nan
        table["sink_stock"] = np.nan
        lost = all_rows - set(table["row"].tolist())
        _count(
            dropped,
            "no_interface",
            len(lost),
        )
        # the group stage reduces these light rows, then joins the rest back
        return ChannelCandidates(
            channel.name, table, dropped, passed.reset_index(drop=True), 0, base
        )
    else:
        air = _air_rows(base)
        table, pruned, examined, built = _ungrouped_table(
            opts, air, sink_table, own_frontier, prune, board_demand, q
        )
        # rows not examined (cheaper builds sufficed) are not counted as "no heatsink"
        no_option = all_rows - set(opts["row"].tolist()) if len(opts) else all_rows
        lost = (examined | no_option) - built
        _count(dropped, "no_heatsink", len(lost))
    return ChannelCandidates(
        channel.name,
        candidate_frame(table),
        dropped,
        passed.reset_index(drop=True),
        pruned,
    )


def _fit_matrix(sinks: pd.DataFrame, packages) -> np.ndarray:
    """(S, M) bool: sink s fits the package of item m (vectorised over package codes)."""
    codes, uniq = pd.factorize(_upper(np.asarray(packages, dtype=object)))
    cache: dict[Any, tuple[str, ...]] = {}
    fits = []
    for f in sinks["fits"]:
        key = f if isinstance(f, (tuple, str)) else repr(f)
        if key not in cache:
            cache[key] = fit_items(f)
        fits.append(cache[key])
    table = np.array([[u in f for u in uniq] for f in fits], dtype=bool).reshape(
        len(sinks), len(uniq)
    )
    if len(uniq) == 0:
        return np.zeros((len(sinks), len(codes)), dtype=bool)
    return table[:, codes]


def _group_pmax(
    rows: pd.DataFrame, table: pd.DataFrame, sinks: np.ndarray
) -> np.ndarray:
    """[W] (len(rows), len(sinks)): sink_max_power at each row's budget, 0 where the sink
    does not fit the row's package or the budget is ≤ 0."""
    if len(rows) == 0 or sinks.size == 0:
        return np.zeros((len(rows), sinks.size))
    st = table.iloc[sinks]
    h = rows["h_k"].to_numpy(float)
    hp = np.where(h > 0, h, 0.0)
    cap = _heatsinks.sink_max_power(st, hp)  # (S, M)
    ok = _fit_matrix(st, rows["package"]) & (h[None, :] > 0)
    cap = np.where(ok, np.where(np.isfinite(cap), cap, 1e12), 0.0)
    return cap.T


def _staircase(cost: np.ndarray, better: np.ndarray) -> np.ndarray:
    """Items that improve ``better`` (larger is better) over every cheaper item."""
    order = np.argsort(cost, kind="stable")
    b = better[order]
    prev = np.maximum.accumulate(np.concatenate([[-np.inf], b[:-1]]))
    out = np.zeros(len(cost), dtype=bool)
    out[order[b > prev]] = True
    return out


def _group_upper_bound(
    rows: pd.DataFrame,
    members: list[str],
    cost_safe: np.ndarray,
    heat: np.ndarray,
    dev: np.ndarray,
    usable: np.ndarray,
    table: pd.DataFrame,
    sinks: np.ndarray,
    sink_price: np.ndarray,
    sink_pos: np.ndarray,
    n_grid: int = 40,
    per_member: int = 300,
    member_code: np.ndarray | None = None,
) -> float:
    """Cost of one feasible build of the group from *safe* parts, or inf.

    Every member takes a candidate whose tab does not touch the sink (insulated or
    isolated), whose parts and accessories have stock for the whole board, on a sink
    with such stock: whatever the other channels use, this build stays feasible, so
    the group's part of an optimal board never costs more. Search: for each sink and
    each heat level T of a grid, every member takes its cheapest candidate that
    stands T on that sink; the build is feasible when the heat adds up to ≤ T and the
    devices fit the positions.
    """
    if sinks.size == 0:
        return math.inf
    if member_code is None:  # position of each row's channel in ``members``
        pos = {m: i for i, m in enumerate(members)}
        member_code = np.array([pos.get(c, -1) for c in rows["channel"]], dtype=int)
    picks = []
    h_all = rows["h_k"].to_numpy(float)
    for k in range(len(members)):
        idx = np.flatnonzero((member_code == k) & usable & np.isfinite(cost_safe))
        if idx.size == 0:
            return math.inf
        c = cost_safe[idx]
        keep = np.zeros(idx.size, dtype=bool)
        keep[np.argsort(c, kind="stable")[:per_member]] = True
        keep |= _staircase(c, h_all[idx])
        keep |= _staircase(c, -heat[idx])
        picks.append(idx[keep])
    narrow = rows[["h_k", "package"]]  # what _group_pmax reads
    pms = [_group_pmax(narrow.iloc[ix], table, sinks) for ix in picks]  # (n_c, S)
    lo = max(sum(float(np.min(heat[ix])) for ix in picks), 1e-9)
    hi = max(float(max(np.max(p) for p in pms)), lo * 1.001)
    grid = np.geomspace(lo, hi, n_grid)
    total = np.broadcast_to(sink_price[:, None], (sinks.size, n_grid)).copy()
    q = np.zeros((sinks.size, n_grid))
    d = np.zeros((sinks.size, n_grid))
    for ix, pm in zip(picks, pms, strict=True):
        ok = pm[:, :, None] >= grid[None, None, :]  # (n, S, T)
        cc = np.where(ok, cost_safe[ix][:, None, None], np.inf)
        j = np.argmin(cc, axis=0)  # (S, T)
        best = np.take_along_axis(cc, j[None], axis=0)[0]
        total += best
        q += np.where(np.isfinite(best), heat[ix][j], np.inf)
        d += np.where(np.isfinite(best), dev[ix][j], np.inf)
    feas = np.isfinite(total) & (q <= grid[None, :] + 1e-9) & (d <= sink_pos[:, None])
    return float(np.min(total[feas])) if feas.any() else math.inf


def _reduce_group(
    rows: pd.DataFrame,
    members: list[str],
    quantity: dict[str, int],
    table: pd.DataFrame,
    sinks: np.ndarray,
    eff_lo: np.ndarray,
    eff_safe: np.ndarray,
    safe_sink: np.ndarray,
    prune: PruneSettings,
) -> tuple[np.ndarray, np.ndarray, np.ndarray, float]:
    """(kept rows, rejected rows, kept sinks, upper bound) of one heatsink group.

    Rejected: no sink of the group fits the row or carries its heat and devices on its
    own (or its copies would put several live nodes on the sink); the other rows not
    kept are dominated or outside the cost window (pruned).

    1. Cost window (exact for the cheapest cost): with UB the cost of a safe build
       (:func:`_group_upper_bound`) and LB_c the cheapest candidate of member c, a
       candidate of c costing more than UB − Σ_{c'≠c} LB_c' − (cheapest sink), or a
       sink costing more than UB − Σ LB_c, cannot be part of an optimal board; a slack
       of ``ranking_slack``·UB is added so that near-optimal alternatives survive.
    2. A candidate that no sink of the group fits, or that overloads every sink (heat
       or positions) on its own, is out.
    3. Per-sink bound (see the code comment): sinks and candidates that cannot be part
       of a group build within UB + slack on any sink are out.
    4. Dominance on (cost, heat, −budget, devices, uninsulated tab) within each class
       of package and accessory needs: first the builds of a switch part that another
       build of the same part dominates are dropped; then the first ``group_layers``
       Pareto layers are kept. A dropped build is dominated by builds of at least
       ``group_layers`` other switch parts (a chain of dominating builds never repeats
       a part), so it is needed only when all of those parts are out of stock.
    """
    q = rows["channel"].map(quantity).to_numpy(dtype=float)
    chan = rows["channel"].to_numpy()
    # members as integer codes: comparisons and look-ups over millions of rows
    m_pos = {m: i for i, m in enumerate(members)}
    ch_codes, ch_uniq = pd.factorize(pd.Series(chan, dtype=object))
    m_code = np.array([m_pos.get(c, -1) for c in ch_uniq], dtype=int)[ch_codes]
    heat = q * rows["p_total_w"].to_numpy(float)
    dev = q * rows["count"].to_numpy(float)
    touching = (_strs(rows["tab_node"]).to_numpy() != "") & ~rows[
        "insulating"
    ].to_numpy(bool)
    copies_clash = touching & rows["node_per_copy"].to_numpy(bool) & (q > 1)
    h = rows["h_k"].to_numpy(float)
    usable = (h > 0) & ~copies_clash
    price = _num(table, "price")[sinks] if sinks.size else np.zeros(0)
    pos = _num(table, "positions", 1.0)[sinks] if sinks.size else np.zeros(0)
    cost_lo = q * eff_lo
    cost_safe = q * eff_safe
    lbc = {}
    for m in members:
        sel = (m_code == m_pos[m]) & usable & np.isfinite(cost_lo)
        lbc[m] = float(np.min(cost_lo[sel])) if sel.any() else math.inf
    ub = math.inf
    ss = sinks[safe_sink[sinks]] if sinks.size else sinks
    sp = price[safe_sink[sinks]] if sinks.size else price
    spos = pos[safe_sink[sinks]] if sinks.size else pos
    # every tab insulated; or one member uninsulated (a single node on the sink)
    for live in [None, *members]:
        allowed = ~touching | ((m_code == m_pos.get(live, -2)) & ~copies_clash)
        ub = min(
            ub,
            _group_upper_bound(
                rows,
                members,
                np.where(allowed, cost_safe, np.inf),
                heat,
                dev,
                usable,
                table,
                ss,
                sp,
                spos,
                member_code=m_code,
            ),
        )
    window = np.ones(len(rows), dtype=bool)
    sink_ok = np.ones(sinks.size, dtype=bool)
    if math.isfinite(ub) and all(math.isfinite(v) for v in lbc.values()):
        slack = prune.ranking_slack * ub + 1e-9
        lb_sum = sum(lbc.values())
        min_price = float(np.min(price)) if price.size else 0.0
        per_member = {m: ub - (lb_sum - lbc[m]) - min_price + slack for m in members}
        limit = np.array([per_member[m] for m in members], dtype=float)[m_code]
        window = cost_lo <= limit
        sink_ok = price <= ub - lb_sum + slack
    kept_sinks = sinks[sink_ok]
    kpos = pos[sink_ok]
    kprice = price[sink_ok]
    chunk = max(int(2_000_000 // max(kept_sinks.size, 1)), 1000)
    st = table.iloc[kept_sinks]
    pk_codes, pk_uniq = pd.factorize(_strs(rows["package"]))
    fit_tab = _fit_matrix(st, np.asarray(pk_uniq, dtype=object))  # (S, packages)

    def pmax_chunks(idx: np.ndarray):
        """(rows, Pmax block (rows × sinks)) over ``idx`` in chunks: bounded memory."""
        for c0 in range(0, idx.size, chunk):
            ix = idx[c0 : c0 + chunk]
            hh = h[ix]
            cap = _heatsinks.sink_max_power(st, np.where(hh > 0, hh, 0.0))
            fit = fit_tab[:, pk_codes[ix]] & (hh[None, :] > 0)
            yield ix, np.where(fit, np.where(np.isfinite(cap), cap, 1e12), 0.0).T

    # 2. alone on some sink of the window
    cand_idx = np.flatnonzero(window & usable)
    possible = np.zeros(len(rows), dtype=bool)
    if cand_idx.size and kept_sinks.size:
        for ix, pm in pmax_chunks(cand_idx):
            alone = (pm >= heat[ix, None] - 1e-12) & (pm > 0)
            alone &= kpos[None, :] >= dev[ix, None]
            possible[ix[alone.any(axis=1)]] = True
    # builds of one part that another build of the same part dominates go first
    # (step 4's first half; done here because it is cheap and shrinks step 3)
    # class of (channel, package, diode need, driver need) as one integer code
    klass_all = np.zeros(len(rows), dtype=np.int64)
    for col in ("channel", "package", "needs_diode", "driver_need"):
        codes, uniq = pd.factorize(rows[col].to_numpy(dtype=object))
        klass_all = klass_all * (len(uniq) + 1) + (codes + 1)
    vals_all = np.column_stack([cost_lo, heat, -h, dev, touching.astype(float)])
    pidx = np.flatnonzero(possible)
    useful_mask = np.zeros(len(rows), dtype=bool)
    if pidx.size:
        sw_codes, sw_uniq = pd.factorize(rows["switch"].to_numpy(dtype=object)[pidx])
        own = local_front(
            klass_all[pidx] * (len(sw_uniq) + 1) + sw_codes, vals_all[pidx]
        )
        useful_mask[pidx[own]] = True
    # 3. per-sink bound: on sink s every member c needs Pmax(k, s) ≥ its own heat plus
    #    the least heat (and positions) the others can bring, so the group costs at
    #    least LB(s) = price_s + Σ_c LB_c(s); a sink with LB(s) > UB + slack is out, and
    #    a build is kept only on a sink where price_s + cost_k + Σ_{c'≠c} LB_c'(s) ≤
    #    UB + slack (an exact relaxation). Three chunked passes keep memory bounded.
    kidx = np.flatnonzero(useful_mask)
    if kidx.size and kept_sinks.size:
        n_s = kept_sinks.size
        inf = np.full(n_s, np.inf)
        minheat = {m: inf.copy() for m in members}
        mindev = {m: inf.copy() for m in members}
        # the three passes below read the same capacity blocks: keep them when they
        # are small enough (PMAX_CACHE_ENTRIES floats), else compute them each time
        blocks = (
            list(pmax_chunks(kidx)) if kidx.size * n_s <= PMAX_CACHE_ENTRIES else None
        )

        def kidx_blocks():
            return iter(blocks) if blocks is not None else pmax_chunks(kidx)

        for ix, pm in kidx_blocks():
            alone = (pm >= heat[ix, None]) & (pm > 0) & (kpos[None, :] >= dev[ix, None])
            for m in members:
                sel = m_code[ix] == m_pos[m]
                if sel.any():
                    minheat[m] = np.minimum(
                        minheat[m],
                        np.min(
                            np.where(alone[sel], heat[ix][sel, None], np.inf), axis=0
                        ),
                    )
                    mindev[m] = np.minimum(
                        mindev[m],
                        np.min(
                            np.where(alone[sel], dev[ix][sel, None], np.inf), axis=0
                        ),
                    )

        def others(values: dict[str, np.ndarray]) -> dict[str, np.ndarray]:
            """Per member: the sum over the other members, per sink."""
            return {
                m: sum((values[o] for o in members if o != m), np.zeros(n_s))
                for m in members
            }

        oh, od = others(minheat), others(mindev)
        # per row, its member's position: the per-member (sinks,) vectors become one
        # (members, sinks) matrix indexed by rows, without a Python loop over rows
        oh_m = np.stack([oh[m] for m in members])
        od_m = np.stack([od[m] for m in members])

        def ok_block(ix: np.ndarray, pm: np.ndarray) -> np.ndarray:
            o_h = oh_m[m_code[ix]]
            o_d = od_m[m_code[ix]]
            return (
                (pm >= heat[ix, None])
                & (pm > 0)
                & (pm >= heat[ix, None] + o_h)
                & (kpos[None, :] >= dev[ix, None] + o_d)
            )

        lbs = {m: inf.copy() for m in members}
        for ix, pm in kidx_blocks():
            ok = ok_block(ix, pm)
            for m in members:
                sel = m_code[ix] == m_pos[m]
                if sel.any():
                    lbs[m] = np.minimum(
                        lbs[m],
                        np.min(
                            np.where(ok[sel], cost_lo[ix][sel, None], np.inf), axis=0
                        ),
                    )
        lb_all = sum(lbs.values()) + kprice
        bound = ub + prune.ranking_slack * ub + 1e-9 if math.isfinite(ub) else math.inf
        sink_useful = (lb_all <= bound) if math.isfinite(ub) else np.isfinite(lb_all)
        olb = others(lbs)
        olb_m = np.stack([olb[m] for m in members])
        used_sink = np.zeros(n_s, dtype=bool)
        for ix, pm in kidx_blocks():
            useful = ok_block(ix, pm) & sink_useful[None, :]
            if math.isfinite(ub):
                o_lb = olb_m[m_code[ix]] + kprice[None, :]
                useful &= o_lb + cost_lo[ix, None] <= bound
            useful_mask[ix[~useful.any(axis=1)]] = False
            used_sink |= useful.any(axis=0)
        kept_sinks = kept_sinks[sink_useful & used_sink]
    # 4. dominance (builds of one part first, then layers over the parts)
    keep = np.zeros(len(rows), dtype=bool)
    idx_possible = np.flatnonzero(useful_mask)
    if idx_possible.size:
        klass = klass_all[idx_possible]
        for _, local in pd.Series(klass).groupby(klass, sort=False).indices.items():
            ids = idx_possible[local]
            lay = pareto_layers(vals_all[ids], prune.group_layers)
            keep[ids[lay <= prune.group_layers]] = True
    rejected = ~usable | (window & ~possible)
    return keep, rejected, kept_sinks, ub


def _enrich(kept: pd.DataFrame, base: pd.DataFrame | None) -> pd.DataFrame:
    """Join the columns a light group build left behind back on (by ``row``)."""
    if base is None or len(kept) == 0:
        return candidate_frame(kept)
    extra = [c for c in base.columns if c not in kept.columns or c == "row"]
    full = kept.merge(base[extra], on="row", how="left", sort=False)
    return candidate_frame(full)


def build_selection(
    inventory,
    design,
    screens: dict,
    settings=None,
    prune: PruneSettings | None = None,
    memo: MutableMapping | None = None,
) -> CandidateSet:
    """Candidates of every channel and the :class:`selector.optimize.SelectionProblem`.

    Parameters
    ----------
    inventory : Inventory (switches, heatsinks, interfaces, diodes, drivers, sink_airflow).
    design : Design (conditions, channels).
    screens : channel name -> :class:`selector.screening.ScreenResult`.
    settings : engineering defaults (unused here; the screening used them).
    prune : :class:`PruneSettings`.
    memo : optional dict the caller keeps for this one inventory: each channel's
        candidates are kept there and reused while its screening object, the
        conditions, the pruning, the board's demand and the own-sink frontier are the
        same (the page passes its screening cache).
    """
    from selector.optimize import GroupSinks, SelectionProblem
    from selector.screening import driver_candidates

    prune = prune or PruneSettings()
    cond = design.conditions
    sink_table = (
        _heatsinks.sink_operating_table(
            inventory.heatsinks,
            getattr(inventory, "sink_airflow", None),
            cond.airflow,
            cond.heatsink_derating,
        )
        if len(inventory.heatsinks)
        else pd.DataFrame(columns=list(_heatsinks.TABLE_COLUMNS))
    )
    itf = interface_frontier(inventory.interfaces, prune.interface_layers)
    channels = list(design.channels)
    groups = design.groups()
    n_dev = sum(int(c.quantity) * int(cond.max_parallel) for c in channels)
    board_demand = {
        "switches": float(n_dev),
        "interfaces": float(n_dev),
        "heatsinks": float(sum(int(c.quantity) for c in channels) + len(groups)),
    }
    packages: set[str] = set()
    t_lim_hi = cond.ambient_max + 1.0
    for c in channels:
        sc = screens.get(c.name)
        if sc is not None and len(sc.passed):
            packages |= set(_upper(_strs(sc.passed["package"]).unique()))
            t_lim_hi = max(t_lim_hi, float(np.nanmax(_num(sc.passed, "t_lim_c"))))
    rise_hi = max(t_lim_hi - cond.ambient_max, 2.0)
    own_frontier = {
        p: sink_frontier(sink_table, [p], 1.0, rise_hi, layers=prune.sink_layers)
        for p in sorted(packages)
    }
    per: dict[str, ChannelCandidates] = {}
    frontier_key = tuple((p, f.tobytes()) for p, f in sorted(own_frontier.items()))
    for c in channels:
        sc = screens.get(c.name)
        passed = sc.passed if sc is not None else pd.DataFrame()
        # a channel's candidates depend on its screening (the same object when the
        # caller's cache kept it), the conditions, the pruning, the board's demand and
        # the own-sink frontier; everything else comes from the inventory the memo is
        # tied to
        key = (
            "candidates",
            c,
            cond,
            prune,
            tuple(sorted(board_demand.items())),
            frontier_key,
            id(sc),
        )
        hit = memo.get(key) if memo is not None and sc is not None else None
        if hit is not None and hit[0] is sc:
            cc = hit[1]
        else:
            cc = channel_candidates(
                c,
                cond,
                passed,
                interfaces=itf,
                sink_table=sink_table,
                own_frontier=own_frontier,
                prune=prune,
                board_demand=board_demand,
            )
            if memo is not None and sc is not None:
                while len(memo) >= MEMO_ENTRIES:
                    memo.pop(next(iter(memo)))  # oldest first
                memo[key] = (sc, cc)
        # the group stage below replaces tables and adds to ``dropped``: a copy each
        per[c.name] = dataclasses.replace(cc, dropped=dict(cc.dropped))
    quantity = {c.name: int(c.quantity) for c in channels}
    enforce = {"diode"} | ({"driver"} if len(inventory.drivers) else set())

    # accessory options per channel and need, with their cheapest and *safe* prices
    copies = float(sum(quantity.values()))
    options: dict[tuple[str, str, str], pd.DataFrame] = {}
    for c in channels:
        t = per[c.name].table
        if len(t) == 0:
            continue
        sc = screens.get(c.name)
        if t["needs_diode"].any() and sc is not None and len(sc.diodes):
            options[(c.name, "diode", "freewheel")] = sc.diodes
        if "driver" in enforce:
            for need in sorted(set(t["driver_need"]) - {""}):
                kind, window = need.split("@", 1)
                lo, hi = window.split("-", 1) if "-" in window else ("", "")
                row = {
                    "driver_kind": kind,
                    "driver_v_min": float(lo) if lo else np.nan,
                    "driver_v_max": float(hi) if hi else np.nan,
                }
                ok = driver_candidates(inventory.drivers, row, c).passed
                if len(ok):
                    options[(c.name, "driver", need)] = ok

    price_cache: dict[tuple[str, str, str, bool], float] = {}

    def acc_price(c: str, role: str, need: str, safe: bool) -> float:
        key = (c, role, need, safe)
        if key in price_cache:
            return price_cache[key]
        o = options.get((c, role, need))
        if o is None or len(o) == 0:
            price_cache[key] = math.inf
            return math.inf
        pr = _num(o, "price")
        if safe:
            pr = pr[stock_allows(_num(o, "stock"), copies)]
        price_cache[key] = float(np.nanmin(pr)) if pr.size else math.inf
        return price_cache[key]

    def eff_costs(t: pd.DataFrame) -> tuple[np.ndarray, np.ndarray]:
        lo = t["cost"].to_numpy(float).copy()
        safe = lo.copy()
        keys = pd.DataFrame(
            {
                "c": _strs(t["channel"]).reset_index(drop=True),
                "d": t["needs_diode"].to_numpy(bool),
                "n": _strs(t["driver_need"]).reset_index(drop=True),
            }
        )
        for (c, d, n), idx in keys.groupby(["c", "d", "n"], sort=False).indices.items():
            add_lo = add_safe = 0.0
            if d:
                add_lo += acc_price(c, "diode", "freewheel", False)
                add_safe += acc_price(c, "diode", "freewheel", True)
            if n and "driver" in enforce:
                add_lo += acc_price(c, "driver", n, False)
                add_safe += acc_price(c, "driver", n, True)
            lo[idx] += add_lo
            safe[idx] += add_safe
        parts_safe = stock_allows(t["switch_stock"], board_demand["switches"]) & (
            (_strs(t["interface"]) == "").to_numpy()
            | stock_allows(t["interface_stock"], board_demand["interfaces"])
        )
        return lo, np.where(parts_safe, safe, np.inf)

    # groups: shared-sink frontier, cost window, impossible and dominated rows out
    group_frontier: dict[str, np.ndarray] = {}
    pool: dict[str, tuple[pd.DataFrame, pd.DataFrame]] = {}
    safe_sink = stock_allows(_num(sink_table, "stock"), board_demand["heatsinks"])
    for g, members in groups.items():
        rows = pd.concat([per[m].table for m in members], ignore_index=True)
        pk = sorted(_strs(rows["package"]).unique()) if len(rows) else []
        gf = sink_frontier(sink_table, pk, 1.0, rise_hi, layers=prune.sink_layers)
        if len(rows) == 0:
            group_frontier[g] = gf
            continue
        lo, safe = eff_costs(rows)
        sinks_all = sink_table.iloc[gf].reset_index(drop=True)
        keep, rejected, gf, _ub = _reduce_group(
            rows, list(members), quantity, sink_table, gf, lo, safe, safe_sink, prune
        )
        pool[g] = (rows[~rejected].reset_index(drop=True), sinks_all)
        group_frontier[g] = gf
        for m in members:
            mask = (rows["channel"] == m).to_numpy()
            _count(per[m].dropped, "group_sink", int((mask & rejected).sum()))
            per[m].pruned += int((mask & ~rejected & ~keep).sum())
            per[m].table = _enrich(rows[mask & keep], per[m].base)

    table = (
        candidate_frame(
            pd.concat([per[c.name].table for c in channels], ignore_index=True)
        )
        if channels
        else candidate_frame([])
    )
    gs: dict[str, GroupSinks] = {}
    group_sinks: dict[str, pd.DataFrame] = {}
    for g, members in groups.items():
        gf = group_frontier[g]
        rows_idx = np.flatnonzero(table["channel"].isin(members).to_numpy())
        pm = _group_pmax(table.iloc[rows_idx], sink_table, gf)
        gs[g] = GroupSinks(
            g, sink_table["part"].astype(str).to_numpy()[gf].tolist(), rows_idx, pm
        )
        group_sinks[g] = sink_table.iloc[gf].reset_index(drop=True)

    # parts, accessories
    def parts_of(tab: pd.DataFrame, name: str) -> pd.DataFrame:
        if tab is None or len(tab) == 0:
            return pd.DataFrame(
                columns=["table", "part", "price", "stock", "positions"]
            )
        return pd.DataFrame(
            {
                "table": name,
                "part": tab["part"].astype(str).to_numpy(),
                "price": _num(tab, "price"),
                "stock": _num(tab, "stock"),
                "positions": _num(tab, "positions", 1.0)
                if name == "heatsinks"
                else 1.0,
            }
        )

    parts = pd.concat(
        [
            parts_of(inventory.switches, "switches"),
            parts_of(inventory.interfaces, "interfaces"),
            parts_of(sink_table, "heatsinks"),
            parts_of(inventory.diodes, "diodes"),
            parts_of(inventory.drivers, "drivers"),
        ],
        ignore_index=True,
    )
    parts["price"] = parts["price"].fillna(0.0)
    acc_rows: list[dict[str, str]] = []
    present = set(table["channel"])
    for (c, role, need), o in options.items():
        if c not in present:
            continue
        for p in o["part"].astype(str):
            acc_rows.append({"channel": c, "role": role, "need": need, "part": p})
    accessories = pd.DataFrame(acc_rows, columns=["channel", "role", "need", "part"])
    ch = pd.DataFrame(
        {
            "name": [c.name for c in channels],
            "quantity": [int(c.quantity) for c in channels],
            "group": [c.heatsink_group or "" for c in channels],
        }
    )
    problem = SelectionProblem(ch, table, parts, gs, accessories, frozenset(enforce))
    return CandidateSet(problem, per, sink_table, itf, group_sinks, pool)
