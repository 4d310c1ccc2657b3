"""One channel × every switch × every parallel count, evaluated as one table.

:func:`evaluate_switches` gives, for each switch of the inventory and each device count
n, the losses at the junction limit, the largest total thermal resistance the part may
see, its junction temperature alone in air, and the extra rise during the channel's
start-up surge. :func:`interface_options` extends that table by every thermal interface
that fits the package (the sink-rise budget each option leaves), and
:func:`junction_report` gives the final junction temperatures of a chosen build
(:func:`device_rise` is the junction-over-sink rise both use).

All values SI; temperatures °C, differences K (physics reference §5–§8).
"""

from __future__ import annotations

import dataclasses
from typing import Any

import numpy as np
import pandas as pd

from . import thermal
from .models import Channel, Conditions, Settings

#: Columns of :func:`evaluate_switches`, in order (contracts: thermal and evaluation).
EVALUATION_COLUMNS: tuple[str, ...] = (
    "part",
    "kind",
    "package",
    "tab",
    "count",
    "price",
    "stock",
    "tj_max_c",
    "t_lim_c",
    "rth_jc_k_per_w",
    "rth_ja_k_per_w",
    "vgs_used_v",
    "rds25_ohm",
    "i_dev_a",
    "i_dev_peak_a",
    "p_cond_w",
    "p_sw_w",
    "p_coss_w",
    "p_gate_w",
    "p_dev_w",
    "p0_w",
    "p1_w_per_k",
    "r_ja_max_k_per_w",
    "surge_rise_k",
    "surge_dp_w",
    "surge_method",
    "tj_no_sink_c",
    "tj_no_sink_peak_c",
    "runaway_no_sink",
    "gain_no_sink",
    "sw_method",
    "loss_ok",
    "loss_reason",
    "loss_assumed",
    "loss_notes",
)

#: Columns of :func:`interface_options` besides the evaluation row index.
INTERFACE_COLUMNS: tuple[str, ...] = (
    "row",
    "interface",
    "interface_price",
    "insulating",
    "rth_cs_k_per_w",
    "dev_rise_k",
    "h_k",
    "p_total_w",
    "rth_sa_max_k_per_w",
)


def _col(df: pd.DataFrame, name: str, default: Any = np.nan) -> np.ndarray:
    if name in df.columns:
        return df[name].to_numpy()
    return np.full(
        len(df), default, dtype=object if isinstance(default, str) else float
    )


def _num(df: pd.DataFrame, name: str) -> np.ndarray:
    if name in df.columns:
        s = df[name]
        if s.dtype == np.float64:  # numeric already: no coercion pass
            return s.to_numpy()
        return pd.to_numeric(s, errors="coerce").to_numpy(dtype=float)
    return np.full(len(df), np.nan)


def _loss_table(
    switches,
    rds_points,
    channel,
    conditions,
    settings,
    counts,
    tj,
    driver,
    driver_voltage,
    shared=None,
) -> dict[str, np.ndarray]:
    """Loss arrays of shape (C, N): every count (rows) × every switch (columns).

    ``shared``: a dict kept between the calls on one switch table, so that its
    channel-independent preparation (part ids, kinds, Rds(on) look-up) is done once.
    """
    # late import: keeps thermal usable on its own
    from .losses import _switch_losses

    c = np.asarray(counts, dtype=float)[:, None]
    lt = _switch_losses(
        switches,
        rds_points,
        channel,
        settings,
        c,
        np.asarray(tj, dtype=float)[None, :],
        driver=driver,
        driver_voltage=driver_voltage,
        shared=shared,
    )
    shape = (c.shape[0], len(switches))
    out: dict[str, np.ndarray] = {}
    for k in _LOSS_FLOAT_FIELDS:
        out[k] = np.broadcast_to(np.asarray(getattr(lt, k), dtype=float), shape)
    for k in ("sw_method", "missing", "assumed", "notes"):
        out[k] = np.broadcast_to(np.asarray(getattr(lt, k, ""), dtype=object), shape)
    return out


_LOSS_FLOAT_FIELDS = (
    "p_cond",
    "p_sw",
    "p_coss",
    "p_gate",
    "p_dev",
    "p0",
    "p1",
    "i_dev",
    "i_dev_peak",
    "rds25",
    "vgs_used",
)


def evaluate_switches(
    inventory: Any,
    channel: Channel,
    conditions: Conditions,
    settings: Settings | None = None,
    counts: Any = None,
    *,
    driver: bool = False,
    driver_voltage: float | None = None,
) -> pd.DataFrame:
    """Losses and thermal limits of every switch, for 1..max_parallel devices.

    For every switch row and device count n (all devices of the channel in parallel,
    sharing its current):

    - losses per device at the junction limit :math:`T_{lim} = T_{j,max} - margin`
      and the highest ambient, from :func:`selector.losses.switch_losses`;
    - :math:`R^*_{ja} = (T_{lim} - T_{a,max})/P(T_{lim})`: the largest total
      junction-to-ambient resistance per device (exact boundary for the linear loss
      model, :func:`selector.thermal.required_r_total`);
    - junction temperature with no heatsink, each device alone in air with its
      ``rth_ja``, by the closed electro-thermal form (``inf`` on runaway);
    - the start-up surge: when ``peak_current > current`` and ``peak_time > 0``, the
      losses at the peak current (same T_lim, same n) and the extra junction rise
      :math:`(P_{pk} - P_{run})\\,Z_{th,jc}(t_{pk})` (Foster data when the part has
      them, else the conservative rule Zth = RθJC); ``surge_dp_w`` = P_pk − P_run so
      that the caller adds the interface term ``surge_dp_w·rth_cs``.

    Parameters
    ----------
    inventory : Inventory
        Needs ``switches`` (inventory columns, SI) and ``rds_points``.
    channel : Channel
    conditions : Conditions
        ``ambient_max`` [°C], ``junction_margin`` [K], ``max_parallel``.
    settings : Settings, optional
        Engine defaults (``thermal_cap`` for runaway detection).
    counts : iterable of int, optional
        Device counts to evaluate (default 1..conditions.max_parallel).
    driver, driver_voltage : bool, float [V] or None
        Passed to the loss model: gate driven by a driver (at ``driver_voltage``) or by
        the controller pin at ``channel.drive``.

    Returns
    -------
    DataFrame
        One row per (switch, count), switch-major, columns :data:`EVALUATION_COLUMNS`:
        the contract's columns plus ``i_dev_peak_a`` [A], ``surge_dp_w`` [W],
        ``tj_no_sink_peak_c`` [°C] = tj_no_sink_c + surge_rise_k, ``gain_no_sink`` [-],
        ``sw_method``, ``loss_assumed`` and ``loss_notes`` (from the loss table).

    Notes
    -----
    - A device on a sink with interface rth_cs rises above the sink by
      ``p_dev_w·(rth_jc + rth_cs) + surge_rise_k + surge_dp_w·rth_cs``
      (:func:`device_rise`); the sink must keep its own rise ≤ ``t_lim_c −
      ambient_max − that`` with the total power on it (see :func:`interface_options`).
    - The surge is taken from the steady running state (a restart or stall while hot),
      with the case/sink not moving during it (time-scale separation, physics reference
      §8.4). A peak with ``peak_time = 0`` is a short pulse checked against ``i_pulse``
      by the screening rules (rise 0 here).
    - A repeated on/off profile is judged as continuously on here (its periodic peak
      never exceeds the steady value; :func:`selector.thermal.on_off_rise` gives the
      relief once the sink is known).
    - ``loss_ok`` is False where the loss model lacks data (``loss_reason`` says which).

    Sources: physics reference §6.1, §6.4, §8 (derived); thermal chain [MUR] ch. 29;
    Zth per JEDEC JESD51.
    """
    settings = settings or Settings()
    sw = inventory.switches
    n_sw = len(sw)
    if counts is None:
        counts = range(1, int(conditions.max_parallel) + 1)
    counts = [int(c) for c in counts]
    if n_sw == 0 or not counts:
        return pd.DataFrame({c: pd.Series(dtype=object) for c in EVALUATION_COLUMNS})
    n_c = len(counts)

    rds_points = getattr(inventory, "rds_points", None)
    tj_max = _num(sw, "tj_max")
    t_lim = tj_max - float(conditions.junction_margin)
    ta = float(conditions.ambient_max)
    rth_jc = _num(sw, "rth_jc")
    rth_ja = _num(sw, "rth_ja")
    args = (sw, rds_points)
    kw = (conditions, settings, counts, t_lim, driver, driver_voltage, {})
    lt = _loss_table(*args, channel, *kw)
    missing = np.asarray(lt["missing"], dtype=object)

    if channel.peak_current > channel.current and channel.peak_time > 0:
        peak_channel = dataclasses.replace(channel, current=float(channel.peak_current))
        pk = _loss_table(*args, peak_channel, *kw)
        r_f, tau_f, has_zth = thermal.foster_from_switches(sw)
        sr = thermal.surge_extra_rise(
            pk["p_dev"],
            lt["p_dev"],
            float(channel.peak_time),
            r_f[None, :, :],
            tau_f[None, :, :],
            rth_jc[None, :],
            0.0,
            has_zth[None, :],
        )
        surge_rise = sr.rise
        surge_dp = np.where(sr.rise > 0, pk["p_dev"] - lt["p_dev"], 0.0)
        surge_method = sr.method
        miss_pk = np.asarray(pk["missing"], dtype=object)
        extra = (missing == "") & (miss_pk != "")
        if extra.any():
            missing = missing.copy()
            missing[extra] = "at the peak current: " + miss_pk[extra]
    else:
        shape = (n_c, n_sw)
        surge_rise = np.zeros(shape)
        surge_dp = np.zeros(shape)
        method = (
            thermal.SURGE_SHORT
            if channel.peak_current > channel.current
            else thermal.SURGE_NONE
        )
        surge_method = np.full(shape, method, dtype=object)

    def flat(a: np.ndarray) -> np.ndarray:
        # (C, N) -> switch-major rows: part 0 n=1..C, part 1 n=1..C, ...
        return np.ascontiguousarray(np.asarray(a).T).reshape(-1)

    def rep(a: np.ndarray) -> np.ndarray:
        return np.repeat(np.asarray(a), n_c)

    p_dev = flat(lt["p_dev"])
    p0 = flat(lt["p0"])
    p1 = flat(lt["p1"])
    t_lim_r = rep(t_lim)
    rth_ja_r = rep(rth_ja)
    r_ja_max = thermal.required_r_total(t_lim_r, ta, p_dev)
    air = thermal.junction_temperature_linear(
        ta, rth_ja_r, p0, p1, t_cap=float(settings.thermal_cap)
    )
    surge_rise = flat(surge_rise)
    missing = flat(missing)

    out = {
        "part": rep(_col(sw, "part", "")),
        "kind": rep(_col(sw, "kind", "")),
        "package": rep(_col(sw, "package", "")),
        "tab": rep(_col(sw, "tab", "")),
        "count": np.tile(np.asarray(counts, dtype=int), n_sw),
        "price": rep(_num(sw, "price")),
        "stock": rep(_num(sw, "stock")),
        "tj_max_c": rep(tj_max),
        "t_lim_c": t_lim_r,
        "rth_jc_k_per_w": rep(rth_jc),
        "rth_ja_k_per_w": rth_ja_r,
        "vgs_used_v": flat(lt["vgs_used"]),
        "rds25_ohm": flat(lt["rds25"]),
        "i_dev_a": flat(lt["i_dev"]),
        "i_dev_peak_a": flat(lt["i_dev_peak"]),
        "p_cond_w": flat(lt["p_cond"]),
        "p_sw_w": flat(lt["p_sw"]),
        "p_coss_w": flat(lt["p_coss"]),
        "p_gate_w": flat(lt["p_gate"]),
        "p_dev_w": p_dev,
        "p0_w": p0,
        "p1_w_per_k": p1,
        "r_ja_max_k_per_w": r_ja_max,
        "surge_rise_k": surge_rise,
        "surge_dp_w": flat(surge_dp),
        "surge_method": flat(surge_method),
        "tj_no_sink_c": air.tj,
        "tj_no_sink_peak_c": air.tj + surge_rise,
        "runaway_no_sink": air.runaway,
        "gain_no_sink": air.gain,
        "sw_method": flat(lt["sw_method"]),
        "loss_ok": missing == "",
        "loss_reason": missing,
        "loss_assumed": flat(lt["assumed"]),
        "loss_notes": flat(lt["notes"]),
    }
    return _frame(out, EVALUATION_COLUMNS)


try:  # pandas ≥ 3.0: a frame straight from its blocks (one per dtype)
    from pandas.api.internals import create_dataframe_from_blocks as _from_blocks
except ImportError:  # pragma: no cover - older pandas
    _from_blocks = None


def _frame(columns: dict[str, np.ndarray], order: tuple[str, ...]) -> pd.DataFrame:
    """DataFrame with text columns kept as ``object`` (no per-cell string inference).

    The columns are stacked into one 2-D block per dtype and the frame is made from
    those blocks: the same frame as ``pd.DataFrame`` of the columns, without its
    per-column checks (a fixed cost that dominates small tables).
    """
    arrays = [np.asarray(columns[name]) for name in order]
    if _from_blocks is not None and arrays and arrays[0].ndim == 1:
        n = len(arrays[0])
        groups: dict[np.dtype, list[int]] = {}
        for i, a in enumerate(arrays):
            if a.ndim != 1 or len(a) != n or a.dtype.kind not in "biufO":
                break
            groups.setdefault(a.dtype, []).append(i)
        else:
            blocks = []
            for dtype, where in groups.items():
                block = np.empty((len(where), n), dtype=dtype)
                for j, i in enumerate(where):
                    block[j] = arrays[i]
                blocks.append((block, np.asarray(where, dtype=np.intp)))
            return _from_blocks(blocks, index=pd.RangeIndex(n), columns=pd.Index(order))
    data = {}
    for name, a in zip(order, arrays, strict=True):
        data[name] = pd.Series(a, dtype=object, copy=False) if a.dtype == object else a
    return pd.DataFrame(data, columns=list(order), copy=False)


def device_rise(p_dev, rth_jc, rth_cs, surge_rise=0.0, surge_dp=0.0) -> np.ndarray:
    """Rise of a junction above its heatsink, surge included [K].

    .. math::

        ΔT_{js} = P_{dev}(R_{θJC} + R_{θCS}) + ΔT_{surge} + ΔP_{surge} R_{θCS}

    Parameters
    ----------
    p_dev : array-like [W]
        Device loss at the junction limit.
    rth_jc, rth_cs : array-like [K/W]
    surge_rise : array-like [K]
        ``surge_rise_k`` of :func:`evaluate_switches` (junction-to-case part).
    surge_dp : array-like [W]
        ``surge_dp_w``: extra loss during the surge; the interface is treated as fast
        (no heat capacity), which is conservative.

    Notes
    -----
    Series chain (physics reference §5.1, [MUR] ch. 29) plus the surge of §8.4
    approach 1 (the sink does not move during the surge).
    """
    rth_cs = np.asarray(rth_cs, dtype=float)
    return (
        np.asarray(p_dev, dtype=float) * (np.asarray(rth_jc, dtype=float) + rth_cs)
        + np.asarray(surge_rise, dtype=float)
        + np.asarray(surge_dp, dtype=float) * rth_cs
    )


def _empty_frame(order: tuple[str, ...]) -> pd.DataFrame:
    return pd.DataFrame({c: pd.Series(dtype=object) for c in order})


def _package_codes(packages: pd.Series) -> tuple[np.ndarray, pd.Index]:
    """Codes of the upper-cased package names (-1 where blank) and their uniques.

    The same as factorising ``packages.astype(str).str.upper()``, but the text is
    converted only once per distinct name (the column repeats each switch's package).
    """
    raw, names = pd.factorize(packages.to_numpy(dtype=object))
    if not all(isinstance(x, str) for x in names):  # mixed types: convert every cell
        return pd.factorize(packages.astype(str).str.upper())
    upper, uniques = pd.factorize(
        pd.Series(names, dtype=object).astype(str).str.upper()
    )
    upper = np.append(upper, -1)  # raw code -1 (blank) stays -1
    return upper[raw], uniques


def _fit_items(fits: Any) -> list[str]:
    if isinstance(fits, str):
        items = [s.strip() for s in fits.replace(",", ";").split(";")]
    elif fits is None or (isinstance(fits, float) and np.isnan(fits)):
        items = []
    else:
        items = [str(s).strip() for s in fits]
    return [s.upper() for s in items if s]


def interface_options(
    evaluated: pd.DataFrame, interfaces: pd.DataFrame, conditions: Conditions
) -> pd.DataFrame:
    """Every (switch, count) row × every interface that fits its package.

    For each pair, with n devices each on its own interface on one shared sink:

    - ``dev_rise_k`` from :func:`device_rise` (surge included);
    - ``h_k``: the largest rise the sink may have, the smaller of
      t_lim − ambient_max − dev_rise (junction) and, where the interface gives a
      ``t_max``, t_max − ambient_max − (p_dev + surge_dp)·rth_cs (the interface's hot
      face, taken at the case temperature: conservative);
    - ``p_total_w`` = n·p_dev: the heat the sink must carry;
    - ``rth_sa_max_k_per_w`` = h/(n·p_dev): the largest RθSA at that rise
      (:func:`selector.thermal.required_rth_sa`, exact for the linear loss model).

    Parameters
    ----------
    evaluated : DataFrame
        Output of :func:`evaluate_switches`.
    interfaces : DataFrame
        Inventory interfaces: ``part``, ``price``, ``fits`` (tuple of packages or a
        ``;``-separated string), ``rth_cs`` [K/W], ``insulating``, optional ``t_max``
        [°C].
    conditions : Conditions

    Returns
    -------
    DataFrame
        Columns :data:`INTERFACE_COLUMNS`; ``row`` is the positional index into
        ``evaluated``. Rows whose loss is unknown are kept (NaN results) so that the
        caller can report them.

    Notes
    -----
    Series chain and lumped sink (physics reference §5.1, §6.4, §7.2, derived; [MUR]
    ch. 29). The heatsink's own figure at its rise and airflow is the heatsink
    module's job.
    """
    if len(evaluated) == 0 or len(interfaces) == 0:
        return _empty_frame(INTERFACE_COLUMNS)
    codes, uniques = _package_codes(evaluated["package"])
    lookup = {u: i for i, u in enumerate(uniques)}
    rows, which = [], []
    recs = interfaces.to_dict("records")
    for j, d in enumerate(recs):
        want = [lookup[p] for p in _fit_items(d.get("fits")) if p in lookup]
        if not want:
            continue
        fits = np.zeros(len(uniques) + 1, dtype=bool)  # last slot: blank package
        fits[want] = True
        idx = np.flatnonzero(fits[codes])
        rows.append(idx)
        which.append(np.full(idx.size, j))
    if not rows:
        return _empty_frame(INTERFACE_COLUMNS)
    row = np.concatenate(rows)
    j = np.concatenate(which)

    def per_interface(name: str, default: Any) -> np.ndarray:
        if name not in interfaces.columns:
            return np.full(len(interfaces), default)
        return interfaces[name].to_numpy(dtype=object)

    def num(name: str) -> np.ndarray:
        return pd.to_numeric(
            pd.Series(per_interface(name, np.nan)), errors="coerce"
        ).to_numpy(float)

    rcs_i, tmax_i, price_i = num("rth_cs"), num("t_max"), num("price")
    ins_i = pd.Series(per_interface("insulating", False)).fillna(False).astype(bool)
    name_i = per_interface("part", "")

    # per (switch, count) row: rise = a + b·rth_cs, h_interface = t_max − Ta − b·rth_cs
    ta = float(conditions.ambient_max)
    col = {
        c: evaluated[c].to_numpy(dtype=float)
        for c in (
            "p_dev_w",
            "surge_dp_w",
            "rth_jc_k_per_w",
            "surge_rise_k",
            "t_lim_c",
            "count",
        )
    }
    a_row = col["p_dev_w"] * col["rth_jc_k_per_w"] + col["surge_rise_k"]
    b_row = col["p_dev_w"] + col["surge_dp_w"]
    q_row = col["count"] * col["p_dev_w"]
    head_row = col["t_lim_c"] - ta

    rth_cs = rcs_i[j]
    b = b_row[row]
    q = q_row[row]
    rise = a_row[row] + b * rth_cs
    h = head_row[row] - rise
    if np.isfinite(tmax_i).any():
        t_max = tmax_i[j]
        h = np.where(np.isfinite(t_max), np.minimum(h, t_max - ta - b * rth_cs), h)
    with np.errstate(divide="ignore", invalid="ignore"):
        r_sa = h / q
    flat = ~(q > 0)  # no heat to carry: no limit (h ≥ 0) or no sink works (h < 0)
    if flat.any():
        r_sa[flat] = np.where(h[flat] >= 0, np.inf, -np.inf)
    blank = np.isnan(q) | np.isnan(h)
    if blank.any():
        r_sa[blank] = np.nan
    return _frame(
        {
            "row": row,
            "interface": name_i[j],
            "interface_price": price_i[j],
            "insulating": ins_i.to_numpy()[j],
            "rth_cs_k_per_w": rth_cs,
            "dev_rise_k": rise,
            "h_k": h,
            "p_total_w": q,
            "rth_sa_max_k_per_w": r_sa,
        },
        INTERFACE_COLUMNS,
    )


@dataclasses.dataclass(frozen=True)
class JunctionReport:
    """Final junction temperatures of one build (for the report of a chosen solution).

    Fields
    ------
    tj : [°C] steady junction temperature of each device (``inf`` on runaway).
    tj_peak : [°C] with the surge on top (equal to ``tj`` without a surge).
    p : [W] steady loss of each device at ``tj``.
    ts : [°C] sink temperature (NaN without a sink).
    runaway : bool.
    """

    tj: np.ndarray
    tj_peak: np.ndarray
    p: np.ndarray
    ts: float
    runaway: bool


def junction_report(
    p0,
    p1,
    rth_jc,
    ta: float,
    *,
    rth_cs=None,
    r_sa: float | None = None,
    rth_ja=None,
    surge_rise=0.0,
    surge_dp=0.0,
    sink_rise=None,
    t_cap: float = thermal.DEFAULT_T_CAP,
) -> JunctionReport:
    """Steady and surge junction temperatures of the devices of one build.

    With a sink (``r_sa`` or ``sink_rise`` given) every device listed sits on it,
    coupled through the sink (:func:`selector.thermal.shared_sink_junctions`); the
    devices of a heatsink group are simply listed together. Without a sink each device
    stands alone in air with ``rth_ja`` (:func:`selector.thermal.junction_temperature_linear`).

    Parameters
    ----------
    p0, p1 : array-like [W], [W/K], shape (M,)
        Linear loss model of each device (``p0_w``, ``p1_w_per_k``).
    rth_jc : array-like [K/W], shape (M,)
    ta : float [°C]
        Ambient (normally ambient_max).
    rth_cs : array-like [K/W], shape (M,), optional
        Interface under each device (with a sink).
    r_sa : float [K/W], optional
        Sink-to-ambient resistance at the operating point.
    rth_ja : array-like [K/W], optional
        For devices in air.
    surge_rise, surge_dp : array-like [K], [W]
        ``surge_rise_k`` and ``surge_dp_w`` of :func:`evaluate_switches`.
    sink_rise : callable, optional
        ``sink_rise(total_power) -> rise [K]`` for a sink whose resistance depends on
        its rise (passed to :func:`selector.thermal.shared_sink_junctions`).
    t_cap : float [°C]

    Notes
    -----
    Physics reference §6.1, §7.2 (derived), surge per §8.4 approach 1.
    """
    p0 = np.atleast_1d(np.asarray(p0, dtype=float))
    p1 = np.broadcast_to(np.asarray(p1, dtype=float), p0.shape)
    rth_jc = np.broadcast_to(np.asarray(rth_jc, dtype=float), p0.shape)
    surge_rise = np.broadcast_to(np.asarray(surge_rise, dtype=float), p0.shape)
    surge_dp = np.broadcast_to(np.asarray(surge_dp, dtype=float), p0.shape)
    if r_sa is None and sink_rise is None:
        if rth_ja is None:
            raise ValueError("junction_report needs rth_ja for devices in air")
        sol = thermal.junction_temperature_linear(ta, rth_ja, p0, p1, t_cap=t_cap)
        tj = np.asarray(sol.tj, dtype=float)
        return JunctionReport(
            tj=tj,
            tj_peak=tj + surge_rise,
            p=np.asarray(sol.p, dtype=float),
            ts=float("nan"),
            runaway=bool(np.any(sol.runaway)),
        )
    rcs = np.broadcast_to(
        np.asarray(0.0 if rth_cs is None else rth_cs, dtype=float), p0.shape
    )
    sol = thermal.shared_sink_junctions(
        p0, p1, rth_jc + rcs, r_sa, ta, t_cap=t_cap, sink_rise=sink_rise
    )
    tj = np.asarray(sol.tj, dtype=float)
    return JunctionReport(
        tj=tj,
        tj_peak=tj + surge_rise + surge_dp * rcs,
        p=np.asarray(sol.p, dtype=float),
        ts=float(sol.ts),
        runaway=bool(np.any(sol.runaway)),
    )
