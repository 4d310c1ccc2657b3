"""Device losses of power switches, vectorised over the rows of a switch table.

What is here
------------
* on-resistance at the gate drive (:func:`rds_at_drive`) and over junction temperature
  (:func:`rds_alpha`, :func:`rds_factor`, the model registry :data:`RDS_MODELS`);
* MOSFET conduction with worst-case sharing between paralleled devices
  (:func:`parallel_sharing`, :func:`mosfet_conduction_loss`);
* MOSFET switching by the gate-charge method (:func:`gate_charge_intervals`) or from
  datasheet rise/fall times (:func:`transition_loss`), the output-capacitance energy
  (:func:`coss_energy`) and the gate-drive power (:func:`gate_drive_power`);
* IGBT conduction and switching-energy scaling (:func:`igbt_vce`,
  :func:`igbt_switching_energy`);
* the freewheel diode (:func:`freewheel_diode_loss`, :func:`diode_requirements`) and the
  unclamped-turn-off avalanche energy (:func:`avalanche_energy`, :func:`eas_at_start`);
* :func:`switch_losses`, which puts all of it together for one channel and every row of
  the switch table, returning a :class:`LossTable` of per-device arrays.

Units are SI throughout (V, A, Ω, W, J, s, F, C, H, Hz); temperatures in °C.

Sources are the physics reference (``shared/reference/physics.md``, cited by section) and
the books it names: [MUR] Mohan, Undeland, Robbins, *Power Electronics*, 3rd ed. (2003);
[EM] Erickson, Maksimović, *Fundamentals of Power Electronics*, 3rd ed. (2020);
[BAL] Baliga, *Fundamentals of Power Semiconductor Devices* (2008). Tags follow the
reference: [b] common practice of the trade, [c] from memory (proposed defaults are [c]
too), [derived] algebra on the model stated before it.
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from dataclasses import dataclass, fields
from types import MappingProxyType
from typing import Any, NamedTuple

import numpy as np
import pandas as pd

from selector.models import Channel, Conditions, Settings

__all__ = [
    "COSS_TEST_VOLTAGE",
    "DiodeNeed",
    "IGBT_ENERGY_TEST_TJ",
    "IGBT_VCE_HOT_RATIO",
    "LossTable",
    "PLATEAU_OVERDRIVE",
    "QGD_TEST_FRACTION",
    "RDS_MODELS",
    "RdsTemperatureModel",
    "Sharing",
    "SwitchingIntervals",
    "T_REF",
    "T_RDS_HOT",
    "avalanche_energy",
    "avalanche_time",
    "avalanche_voltage",
    "coss_energy",
    "default_rds_hot_ratio",
    "diode_requirements",
    "eas_at_start",
    "freewheel_diode_loss",
    "gate_charge_intervals",
    "gate_drive_power",
    "gate_power_shares",
    "igbt_conduction_loss",
    "igbt_two_point_fit",
    "igbt_switching_energy",
    "igbt_vce",
    "load_transition_factor",
    "mosfet_conduction_loss",
    "parallel_sharing",
    "plateau_voltage",
    "qgd_at_voltage",
    "qgs2_from_qgs",
    "rc_intervals",
    "rds_alpha",
    "rds_at_drive",
    "rds_factor",
    "rds_lowest_vgs",
    "rds_model_factor",
    "switch_losses",
    "transition_loss",
    "zener_clamp",
]

# ----------------------------------------------------------------------------- constants

#: [°C] reference junction temperature of datasheet Rds(on), vce_sat.
T_REF = 25.0
#: [°C] temperature at which the inventory's ``rds_hot_ratio`` is defined (overview).
T_RDS_HOT = 125.0
#: [V] test voltage assumed for ``coss`` when the sheet gives none (typical datasheet
#: test condition; [c] proposed). Marked assumed on every result that uses it.
COSS_TEST_VOLTAGE = 25.0
#: [-] Q_gd is taken as measured at this fraction of v_rating when the sheet gives no
#: test voltage; above it Q_gd is scaled by V/V_test (physics §2.2; fraction [c]).
QGD_TEST_FRACTION = 0.5
#: [V] plateau estimate above vth_max when v_plateau is blank ([c] proposed).
PLATEAU_OVERDRIVE = 1.0
#: [-] IGBT V_CE(sat)(125 °C)/V_CE(sat)(25 °C) used with 25 °C-only data: trench and
#: field-stop types have a positive coefficient at rated current ([c] proposed, §3.1).
IGBT_VCE_HOT_RATIO = 1.2
#: [°C] junction temperature at which IGBT e_on/e_off are taken as measured when the
#: sheet gives none: 25 °C makes the +TC_E scaling conservative ([c] proposed, §3.2).
IGBT_ENERGY_TEST_TJ = 25.0
#: [V] tolerance when matching a drive level to an Rds(on) spec point (float noise).
_VGS_TOL = 1e-6

_MOSFET_KINDS = ("nmos", "pmos")
_RESISTIVE_LOADS = ("resistive", "lamp")


# ----------------------------------------------------------------------------- results


@dataclass
class LossTable:
    """Per-device losses of every switch row, as arrays of one common broadcast shape.

    All powers are per device [W]; with ``count`` devices in parallel the channel's total
    is about ``count`` times ``p_dev`` (the worst device is reported, so a little more).
    Where ``missing`` is non-empty every die-loss field (p_cond, p_sw, p_coss, p_dev, p0,
    p1) is NaN: the row is not evaluated, and ``missing`` says why.

    Fields
    ------
    part : object array of part ids.
    p_cond : [W] conduction loss of the worst device at ``tj`` (worst-case sharing).
    p_sw : [W] switching loss (turn-on + turn-off) per device at ``tj``.
    p_coss : [W] output-capacitance loss per device (MOSFET; 0 for IGBT).
    p_gate : [W] gate-drive power per device; heats the driver/pin and the gate
        resistors, not the die (NaN when qg is blank at PWM > 0; 0 at PWM = 0).
    p_dev : [W] die loss per device at ``tj``: p_cond + p_sw + p_coss.
    p0 : [W] die loss at Tj = 25 °C.
    p1 : [W/K] slope, so that P(Tj) = p0 + p1·(Tj − 25) for Tj ≥ 25 °C (held at p0
        below 25 °C, physics §1.2 clamp).
    i_dev : [A] worst device current for current ratings (steady channel current).
    i_dev_peak : [A] the same for the channel's peak current.
    i_sw : [A] current each device switches: I·min(1, parallel_switching_factor/N).
    rds25 : [Ω] guaranteed Rds(on),max at 25 °C at the spec point used (NaN for IGBTs
        and where no point qualifies).
    vgs_used : [V] gate voltage of that spec point (NaN where none).
    alpha : [1/K] linear temperature coefficient applied to the conduction loss.
    sw_method : "off" (no PWM), "gate_charge", "rise_fall_times", "igbt_energy" or
        "no_data".
    missing : "" when the data suffice, else the reasons, "; "-joined.
    assumed : "" or items "column=value: reason", "; "-joined (see
        :meth:`assumed_records`).
    notes : "" or flags worth showing (extrapolation above a test current, ...).
    """

    part: np.ndarray
    p_cond: np.ndarray
    p_sw: np.ndarray
    p_coss: np.ndarray
    p_gate: np.ndarray
    p_dev: np.ndarray
    p0: np.ndarray
    p1: np.ndarray
    i_dev: np.ndarray
    i_dev_peak: np.ndarray
    i_sw: np.ndarray
    rds25: np.ndarray
    vgs_used: np.ndarray
    alpha: np.ndarray
    sw_method: np.ndarray
    missing: np.ndarray
    assumed: np.ndarray
    notes: np.ndarray

    @property
    def ok(self) -> np.ndarray:
        """True where the data suffice (``missing`` is empty)."""
        return self.missing == ""

    def to_frame(self) -> pd.DataFrame:
        """Flattened table with unit-suffixed columns (one row per element)."""
        names = {
            "p_cond": "p_cond_w",
            "p_sw": "p_sw_w",
            "p_coss": "p_coss_w",
            "p_gate": "p_gate_w",
            "p_dev": "p_dev_w",
            "p0": "p0_w",
            "p1": "p1_w_per_k",
            "i_dev": "i_dev_a",
            "i_dev_peak": "i_dev_peak_a",
            "i_sw": "i_sw_a",
            "rds25": "rds25_ohm",
            "vgs_used": "vgs_used_v",
            "alpha": "alpha_per_k",
        }
        return pd.DataFrame(
            {
                names.get(f.name, f.name): np.ravel(getattr(self, f.name))
                for f in fields(self)
            }
        )

    def assumed_records(self) -> list[dict[str, Any]]:
        """The ``assumed`` items as ``{part, column, value, reason}`` dicts (unique)."""
        out: list[dict[str, Any]] = []
        seen: set[tuple[str, str]] = set()
        for part, text in zip(np.ravel(self.part), np.ravel(self.assumed), strict=True):
            if not text:
                continue
            for item in str(text).split("; "):
                head, _, reason = item.partition(": ")
                column, _, value = head.partition("=")
                key = (str(part), item)
                if key in seen:
                    continue
                seen.add(key)
                out.append(
                    {"part": part, "column": column, "value": value, "reason": reason}
                )
        return out


class Sharing(NamedTuple):
    """Worst-case current sharing of N paralleled MOSFETs (physics §7.1).

    ``i_worst`` [A]: current of the best device (R_min, all others R_max), for ratings.
    ``i_hot`` [A]: current of the device with the largest loss.
    ``r_hot_ratio`` [-]: that device's R/R_max.
    """

    i_worst: np.ndarray
    i_hot: np.ndarray
    r_hot_ratio: np.ndarray


class SwitchingIntervals(NamedTuple):
    """The four gate-charge switching intervals [s] (physics §2.2)."""

    t_ri: np.ndarray  # turn-on, current rise (V_th → V_pl)
    t_fv: np.ndarray  # turn-on, voltage fall (plateau)
    t_rv: np.ndarray  # turn-off, voltage rise (plateau)
    t_fi: np.ndarray  # turn-off, current fall (V_pl → V_th)

    @property
    def t_on(self) -> np.ndarray:
        return self.t_ri + self.t_fv

    @property
    def t_off(self) -> np.ndarray:
        return self.t_rv + self.t_fi


@dataclass(frozen=True)
class DiodeNeed:
    """What a freewheel diode across one channel's inductive load must carry and block.

    Fields
    ------
    needed : the load is inductive or a motor (a diode or a rated avalanche is needed).
    v_rrm_min : [V] least repetitive reverse voltage rating: diode_voltage_factor·supply.
    i_avg : [A] average forward current the diode carries.
    i_avg_min : [A] least I_F(AV) rating: i_avg / diode_current_derating.
    i_peak : [A] repetitive peak forward current (the load current at turn-off).
    i_rms_sq : [A²] mean square forward current (for the r_F·I² term).
    q_event : [C] charge through the diode per on/off turn-off event (I0·τ); 0 for PWM.
    f_events : [1/s] on/off turn-off events per second (0 for PWM or steady).
    """

    needed: bool
    v_rrm_min: float
    i_avg: float
    i_avg_min: float
    i_peak: float
    i_rms_sq: float
    q_event: float
    f_events: float

    def loss(self, vf, r_f=0.0) -> np.ndarray:
        """Average diode loss [W] for forward drop ``vf`` [V] and slope ``r_f`` [Ω].

        P_D = V_F·I_avg + r_F·I_rms² (physics §3.4/§4.1 [b]); vectorised over ``vf``.
        """
        return _f(vf) * self.i_avg + _f(r_f) * self.i_rms_sq

    def energy_per_event(self, vf) -> np.ndarray:
        """Diode energy per solenoid turn-off [J]: E_D ≈ V_F·I0·τ (physics §4.1 [derived])."""
        return _f(vf) * self.q_event

    def to_dict(self) -> dict[str, float | bool]:
        return {f.name: getattr(self, f.name) for f in fields(self)}


# ----------------------------------------------------------------------------- helpers


def _f(x) -> np.ndarray:
    return np.asarray(x, dtype=float)


def _col(df: pd.DataFrame, name: str) -> np.ndarray:
    """Float column of ``df`` (NaN where blank or where the column is absent)."""
    if name not in df.columns:
        return np.full(len(df), np.nan)
    return pd.to_numeric(df[name], errors="coerce").to_numpy(
        dtype=float, na_value=np.nan
    )


def _float_columns(df: pd.DataFrame, names) -> dict[str, np.ndarray]:
    """Float columns of ``df`` by name, the same values as :func:`_col` for each name.

    A ``float64`` column is taken as it is (no numeric coercion pass); other columns go
    through :func:`_col` (coercion, NaN for blank); absent ones are all NaN.
    """
    out: dict[str, np.ndarray] = {}
    cols = df.columns
    unique = cols.is_unique
    for name in names:
        if name in out:
            continue
        if unique and name in cols:
            s = df[name]
            if s.dtype == np.float64:
                out[name] = s.to_numpy()
                continue
        out[name] = _col(df, name)
    return out


def _text_array(values) -> np.ndarray | None:
    """``values`` as an object array when every element is a ``str`` or blank (NaN,
    None): then ``astype(str)`` would keep them as they are. Otherwise None."""
    if isinstance(values, (pd.Series, pd.Index)):
        a = values.to_numpy(dtype=object)
    else:
        a = np.asarray(values, dtype=object).reshape(-1)
    if a.size and pd.api.types.infer_dtype(a, skipna=True) != "string":
        return None
    return a


def _round_sig(x, digits: int = 3) -> np.ndarray:
    """Round to ``digits`` significant digits (what the messages print)."""
    x = _f(x)
    with np.errstate(divide="ignore", invalid="ignore"):
        mag = np.where(np.isfinite(x) & (x != 0), np.floor(np.log10(np.abs(x))), 0.0)
        scale = 10.0 ** (mag - (digits - 1))
        return np.where(np.isfinite(x), np.round(x / scale) * scale, x)


_SW_METHODS = np.array(
    ["off", "gate_charge", "rise_fall_times", "igbt_energy", "no_data"], dtype=object
)


class _Messages:
    """Per-element messages collected as masks; the text is built once per combination.

    ``add(mask, text, *values)`` records a message for the elements where ``mask`` is
    true; ``{}`` placeholders in ``text`` are filled with the element's ``values``
    (``%.3g`` of the value rounded to 3 significant digits). :meth:`build` returns an
    object array of "; "-joined texts. Values are rounded only where their mask is
    set, and formatting happens only for the distinct combinations (hash-factorised),
    so the cost does not grow with the number of rows beyond a few vectorised passes.
    """

    def __init__(self, shape: tuple[int, ...]):
        self.shape = shape
        self.items: list[tuple[np.ndarray, str, list[np.ndarray]]] = []

    def add(self, mask, text: str, *values) -> None:
        mask = np.broadcast_to(np.asarray(mask, dtype=bool), self.shape)
        if mask.any():
            vals = [np.broadcast_to(_f(x), self.shape) for x in values]
            self.items.append((mask, text, vals))

    def mask(self) -> np.ndarray:
        """True where at least one message was recorded."""
        out = np.zeros(self.shape, dtype=bool)
        for m, _, _ in self.items:
            out |= m
        return out

    def build(self) -> np.ndarray:
        if not self.items:
            out = np.empty(self.shape, dtype=object)
            out.fill("")
            return out
        # Each message is keyed on the smallest shape it varies over (a per-row
        # message on (1, n), not on (counts, n)); the keys broadcast when combined.
        cols: list[np.ndarray] = []
        texts: list[list[str]] = []
        for m, text, vals in self.items:
            m = _compact(m)
            vals = [_compact(x) for x in vals]
            shape = np.broadcast_shapes(m.shape, *(x.shape for x in vals))
            m = np.broadcast_to(m, shape)
            if not vals:
                col = m.astype(np.int64)
                texts.append(["", text])
            else:
                col = np.zeros(shape, dtype=np.int64)
                idx = np.flatnonzero(m)
                # distinct value tuples among the flagged elements (NaN is a value)
                codes = np.zeros(idx.size, dtype=np.int64)
                uniqs = []
                for x in vals:
                    x = np.ravel(np.broadcast_to(x, shape))[idx]
                    c, u = pd.factorize(_round_sig(x), use_na_sentinel=False)
                    codes = codes * len(u) + c
                    uniqs.append(u)
                codes, ukey = pd.factorize(codes)
                col.reshape(-1)[idx] = codes + 1
                digits = []
                for u in reversed(uniqs):
                    digits.append(u[ukey % len(u)])
                    ukey = ukey // len(u)
                tuples = zip(*digits[::-1], strict=True)
                texts.append(
                    [""] + [text.format(*(f"{x:.3g}" for x in t)) for t in tuples]
                )
            cols.append(col)
        radix = [len(t) for t in texts]
        n_keys = float(np.prod(np.asarray(radix, dtype=float)))
        if n_keys < 2.0**62:
            key = np.zeros((1,) * len(self.shape), dtype=np.int64)
            for col, r in zip(cols, radix, strict=True):
                key = key * r + col
            if n_keys <= max(4 * key.size, 1 << 16):  # small key space: a table
                seen = np.zeros(int(n_keys), dtype=bool)
                seen[key] = True
                ukey = np.flatnonzero(seen)
                inv = (np.cumsum(seen) - 1)[key]
            else:  # hash; the order of the combinations is irrelevant
                inv, ukey = pd.factorize(key.reshape(-1))
                inv = inv.reshape(key.shape)
            digits = []
            for r in reversed(radix):
                digits.append(ukey % r)
                ukey = ukey // r
            combos = np.stack(digits[::-1], axis=1)
        else:  # pragma: no cover - needs an extreme number of distinct messages
            full = [np.broadcast_to(c, self.shape).reshape(-1) for c in cols]
            combos, inv = np.unique(np.stack(full, axis=1), axis=0, return_inverse=True)
            inv = np.asarray(inv).reshape(self.shape)
        joined = np.array(
            [
                "; ".join(texts[j][c] for j, c in enumerate(row) if c)
                for row in combos.tolist()
            ],
            dtype=object,
        )
        if inv.shape == self.shape:
            return joined[inv]
        out = np.empty(self.shape, dtype=object)
        out[...] = joined[inv]  # broadcasts the key's shape to the full one
        return out


def _compact(a: np.ndarray) -> np.ndarray:
    """View of ``a`` of length 1 along every axis it was broadcast on (stride 0)."""
    return a[
        tuple(
            slice(0, 1) if st == 0 and sz > 1 else slice(None)
            for st, sz in zip(a.strides, a.shape, strict=True)
        )
    ]


# ----------------------------------------------------------------------------- Rds(on)


class _RdsLookup:
    """Spec points of a set of queried parts, indexed once for repeated look-ups.

    Part ids (as text, like ``astype(str)``) of the points and of the queries are
    factorised together; each point becomes one int64 key ``code·W + rank`` where
    ``rank`` (1..K) is the position of its |V_GS| among the K distinct levels, so the
    keys sort by part, then by V_GS. Duplicate (part, V_GS) points keep their largest
    Rds(on). A query (part, level) is then one :func:`numpy.searchsorted`. Points with a
    blank Rds(on) or V_GS, or a blank part id, are ignored.
    """

    def __init__(self, rds_points: pd.DataFrame | None, parts):
        if isinstance(parts, pd.Series) and isinstance(parts.dtype, pd.StringDtype):
            query = parts.reset_index(drop=True)  # text already: no conversion
        elif isinstance(parts, np.ndarray) and parts.dtype == object:
            query = parts.reshape(-1)  # a Series only if the slow path needs one
        else:
            query = np.asarray(parts, dtype=object).reshape(-1)
        self.n = len(query)
        self.keys = np.empty(0, dtype=np.int64)
        #: part ids matched as plain text (every id a str or blank)
        self.text = True
        if self.n == 0 or rds_points is None or len(rds_points) == 0:
            self.query = np.full(self.n, -1, dtype=np.int64)
            return
        names_t = _text_array(rds_points["part"])
        query_t = _text_array(query) if names_t is not None else None
        self.text = query_t is not None
        if query_t is not None:
            # all text already (the usual case): astype(str) would change nothing, so
            # factorise the plain object arrays (no conversion to and from text arrays)
            codes, uniques = pd.factorize(np.concatenate([names_t, query_t]))
            n_names = names_t.size
        else:
            if not isinstance(query, pd.Series):
                query = pd.Series(query)
            names = rds_points["part"].astype(str).reset_index(drop=True)
            if not isinstance(query.dtype, pd.StringDtype):
                query = query.astype(str)
            codes, uniques = pd.factorize(pd.concat([names, query], ignore_index=True))
            n_names = len(names)
        codes = codes.astype(np.int64, copy=False)
        self.n_codes = len(uniques)
        self.query = codes[n_names:]
        code = codes[:n_names]
        pts = _float_columns(rds_points, ("vgs", "rds_on"))
        vgs = np.abs(pts["vgs"])
        rds = pts["rds_on"]
        keep = (code >= 0) & np.isfinite(rds) & ~np.isnan(vgs)
        if not keep.any():
            return
        code, vgs, rds = code[keep], vgs[keep], rds[keep]
        level_code, levels = pd.factorize(vgs)
        order = np.argsort(levels, kind="stable")
        rank = np.empty(order.size, dtype=np.int64)
        rank[order] = np.arange(1, order.size + 1)
        self.levels = np.asarray(levels, dtype=float)[order]  # sorted |V_GS| [V]
        self.width = order.size + 1
        key = code * self.width + rank[level_code]
        order = np.argsort(key)
        key = key[order]
        start = np.flatnonzero(np.concatenate(([True], key[1:] != key[:-1])))
        self.keys = key[start]
        self.rds = np.maximum.reduceat(rds[order], start)

    def at_drive(self, vgs) -> tuple[np.ndarray, np.ndarray]:
        """(rds25, vgs_used) at drive level(s) ``vgs`` [V]; see :func:`rds_at_drive`."""
        v = np.abs(np.broadcast_to(_f(vgs), (self.n,)))
        rds = np.full(self.n, np.nan)
        used = np.full(self.n, np.nan)
        if self.keys.size == 0:
            return rds, used
        with np.errstate(invalid="ignore"):
            reach = np.where(np.isfinite(v), v + _VGS_TOL, -np.inf)
        # highest level index ≤ the drive, per query: levels[0..r-1] qualify
        r = np.searchsorted(self.levels, reach, side="right")
        pos = np.searchsorted(self.keys, self.query * self.width + r, side="right") - 1
        at = np.maximum(pos, 0)
        hit = (
            (self.query >= 0) & (pos >= 0) & (self.keys[at] // self.width == self.query)
        )
        rds[hit] = self.rds[at[hit]]
        used[hit] = self.levels[self.keys[at[hit]] % self.width - 1]
        return rds, used

    def lowest(self) -> np.ndarray:
        """Lowest listed |V_GS| per queried part [V]; see :func:`rds_lowest_vgs`."""
        out = np.full(self.n, np.nan)
        if self.keys.size == 0:
            return out
        owner = self.keys // self.width
        first = np.concatenate(([True], owner[1:] != owner[:-1]))
        low = np.full(self.n_codes, np.nan)
        low[owner[first]] = self.levels[self.keys[first] % self.width - 1]
        ok = self.query >= 0
        out[ok] = low[self.query[ok]]
        return out


def rds_at_drive(rds_points: pd.DataFrame, parts, vgs) -> tuple[np.ndarray, np.ndarray]:
    """Guaranteed Rds(on),max at 25 °C for each part at a given gate-drive level.

    For every part, the highest listed spec point V_GS,k ≤ |vgs| is chosen and its
    R_DS(on),max returned. Never interpolated between points, never extrapolated below
    the lowest listed point (NaN there: the part is not admissible at that drive).

    Parameters
    ----------
    rds_points : DataFrame
        Columns ``part``, ``vgs`` [V] and ``rds_on`` [Ω] (one row per spec point; the
        sign of ``vgs`` is ignored, so P-channel points may be written negative).
        Rows with a blank value are ignored; duplicate points keep the largest Rds(on).
    parts : array-like, shape (n,)
        Part ids to look up (repeats allowed).
    vgs : float or array-like broadcast to (n,) [V]
        The lowest on-state gate-source voltage the drive guarantees (sign ignored).

    Returns
    -------
    rds25 : ndarray (n,) [Ω]
        R_DS(on),max at the chosen point; NaN where no point is at or below |vgs|.
    vgs_used : ndarray (n,) [V]
        The chosen point's |V_GS|; NaN where none.

    Notes
    -----
    Rule of physics reference §1.3 [b]: datasheets guarantee R_DS(on),max only at the
    listed V_GS points; V_GS(th) says nothing about full conduction. A drive level within
    1 µV of a point counts as reaching it (float noise). Vectorised: part ids are
    factorised once and the points sorted by (part, V_GS), so each look-up is a
    :func:`numpy.searchsorted` (no loop over parts).
    """
    return _RdsLookup(rds_points, parts).at_drive(vgs)


def rds_lowest_vgs(rds_points: pd.DataFrame, parts) -> np.ndarray:
    """Lowest listed |V_GS| spec point per part [V] (NaN where the part has none).

    Used in messages ("needs 4.5 V for its guaranteed Rds(on)"), physics §1.3 [b].
    Points with a blank Rds(on) are ignored.
    """
    return _RdsLookup(rds_points, parts).lowest()


def rds_alpha(rds_hot_ratio, t_hot: float = T_RDS_HOT) -> np.ndarray:
    """Linear Rds(on) temperature coefficient α_L [1/K] fitted to one hot point (M1).

    α_L = (k − 1)/(T1 − 25), k = R(T1)/R(25 °C).

    Parameters
    ----------
    rds_hot_ratio : array-like [-]
        k; the inventory's ``rds_hot_ratio`` is defined at T1 = 125 °C.
    t_hot : float [°C]
        T1, the temperature of the ratio (150 °C or 175 °C when read from a curve).

    Returns
    -------
    ndarray [1/K]

    Notes
    -----
    Model M1 of physics reference §1.2 [b]: the simplest form and the one the closed-form
    electro-thermal solution of §6.1 uses. Physics of the positive coefficient (mobility
    falling with temperature): [BAL] ch. on power MOSFETs [c: BAL]. Check value E2:
    k = 2.0 at 150 °C → α_L = 0.008 /K.
    """
    return (_f(rds_hot_ratio) - 1.0) / (t_hot - T_REF)


def rds_factor(tj, alpha) -> np.ndarray:
    """R(Tj)/R(25 °C) of the linear model M1, clamped to 1 below 25 °C.

    f = 1 + α_L·max(Tj − 25, 0).

    Parameters
    ----------
    tj : array-like [°C]
        Junction temperature.
    alpha : array-like [1/K]
        α_L from :func:`rds_alpha`.

    Notes
    -----
    Physics reference §1.2 [b]: below 25 °C the models disagree strongly, so the 25 °C
    value is kept (conservative). M1 with α_L is the "linear" model of [BAL] fitted to
    one datasheet point.
    """
    return 1.0 + _f(alpha) * np.maximum(_f(tj) - T_REF, 0.0)


@dataclass(frozen=True)
class RdsTemperatureModel:
    """One R_DS(on)(Tj) model of physics reference §1.2, fitted to one hot point.

    ``fit(k, t1)`` returns the model parameter from k = R(T1)/R(25 °C); ``ratio(tj, p)``
    returns R(Tj)/R(25 °C) without clamping. ``tag`` is the reference's source tag.
    """

    name: str
    formula: str
    fit: Callable[[Any, float], np.ndarray]
    ratio: Callable[[Any, Any], np.ndarray]
    tag: str


def _m1_fit(k, t1):
    return (_f(k) - 1.0) / (t1 - T_REF)


def _m1_ratio(tj, a):
    return 1.0 + _f(a) * (_f(tj) - T_REF)


def _m2_fit(k, t1):
    return _f(k) ** (1.0 / (t1 - T_REF)) - 1.0


def _m2_ratio(tj, a):
    return (1.0 + _f(a)) ** (_f(tj) - T_REF)


def _m3_fit(k, t1):
    return np.log(_f(k)) / np.log((t1 + 273.15) / (T_REF + 273.15))


def _m3_ratio(tj, n):
    return ((_f(tj) + 273.15) / (T_REF + 273.15)) ** _f(n)


#: The three interchangeable models of physics reference §1.2. M1 is the one
#: :func:`switch_losses` uses (it gives the closed form of §6.1).
RDS_MODELS: Mapping[str, RdsTemperatureModel] = MappingProxyType(
    {
        "M1": RdsTemperatureModel(
            "M1", "R = R25·[1 + α_L·(Tj − 25)]", _m1_fit, _m1_ratio, "[b] linear"
        ),
        "M2": RdsTemperatureModel(
            "M2",
            "R = R25·(1 + α_E)^(Tj − 25)",
            _m2_fit,
            _m2_ratio,
            "[b] makers' loss-calculation notes",
        ),
        "M3": RdsTemperatureModel(
            "M3",
            "R = R25·(T_K/298.15)^n",
            _m3_fit,
            _m3_ratio,
            "[c: BAL] mobility power law",
        ),
    }
)


def rds_model_factor(
    tj, rds_hot_ratio, model: str = "M1", t_hot: float = T_RDS_HOT, clamp: bool = True
) -> np.ndarray:
    """R(Tj)/R(25 °C) by model M1, M2 or M3 fitted to k = R(T1)/R(25 °C).

    Parameters
    ----------
    tj : array-like [°C]
    rds_hot_ratio : array-like [-]
        k at ``t_hot``.
    model : "M1" | "M2" | "M3"
        See :data:`RDS_MODELS` (physics reference §1.2).
    t_hot : float [°C]
        T1 of the ratio.
    clamp : bool
        Hold the ratio at 1 below 25 °C (physics §1.2 [b], conservative).

    Notes
    -----
    Check values E2 (physics §11): k150 = 2.0 gives 1.6000 / 1.5157 / 1.5593 at 100 °C
    and 0.4800 / 0.6974 / 0.6146 at −40 °C before the clamp [derived].
    """
    try:
        m = RDS_MODELS[model]
    except KeyError:
        raise ValueError(
            f"unknown Rds(on) temperature model {model!r}; use one of {sorted(RDS_MODELS)}"
        ) from None
    r = m.ratio(tj, m.fit(rds_hot_ratio, t_hot))
    return np.where(_f(tj) < T_REF, 1.0, r) if clamp else r


def default_rds_hot_ratio(v_rating) -> np.ndarray:
    """Proposed Rds(125 °C)/Rds(25 °C) when the sheet has none [-].

    1.8 (α_L = 0.8 %/K, k150 = 2.0) for V_DSS ≤ 100 V, 2.2 (α_L = 1.2 %/K, k150 = 2.5)
    above, and where the rating is unknown (physics reference §1.2, proposed [c]; these
    sit at or above the typical upper bound of the class table, so hot losses are not
    underestimated). The inventory reader applies the same rule.
    """
    v = _f(v_rating)
    return np.where(v <= 100.0, 1.8, 2.2)


# ----------------------------------------------------------------------------- conduction


def parallel_sharing(current, count, rds_min_ratio) -> Sharing:
    """Worst-case static current sharing of N paralleled MOSFETs.

    With device k at resistance R_k, I_k = I·G_k/ΣG_j [b]. Device 1 at R1, others at
    R_max:

    * ratings: R1 = R_min → I_worst = I/[1 + (N − 1)·ρ], ρ = R_min/R_max [derived];
    * thermal: the largest loss I1²·R1 occurs at
      R1 = min(R_max, max(R_min, R_max/(N − 1))) [derived, checked by brute force]
      → I_hot = I/[1 + (N − 1)·r], r = R1/R_max. For N = 2 that is equal sharing at R_max.

    Parameters
    ----------
    current : array-like [A]
        Channel current I.
    count : array-like [-]
        N ≥ 1 devices in parallel.
    rds_min_ratio : float or array-like [-]
        ρ = R_min/R_max; proposed default 0.7 (Settings.rds_min_ratio) when no
        distribution data exist [c].

    Returns
    -------
    Sharing
        (i_worst [A], i_hot [A], r_hot_ratio [-]).

    Notes
    -----
    Physics reference §7.1 and check values E11 (I = 30 A, ρ = 0.8, N = 2: 16.667 A;
    N = 3, I = 45 A: I1 = 17.308 A at 0.8·R_max). Electro-thermal feedback improves the
    sharing only slightly on a common sink and is not relied on [b]. The temperature
    factor is common to all devices, so the ratios hold at any Tj.
    """
    i, n, rho = np.broadcast_arrays(_f(current), _f(count), _f(rds_min_ratio))
    m = n - 1.0
    with np.errstate(divide="ignore", invalid="ignore"):
        r_hot = np.minimum(1.0, np.maximum(rho, np.where(m > 0, 1.0 / m, np.inf)))
    r_hot = np.where(m > 0, r_hot, 1.0)
    i_worst = i / (1.0 + m * np.minimum(rho, 1.0))
    i_hot = i / (1.0 + m * r_hot)
    return Sharing(i_worst=i_worst, i_hot=i_hot, r_hot_ratio=r_hot)


def mosfet_conduction_loss(current, duty, rds) -> np.ndarray:
    """MOSFET conduction loss P_c = D·I²·R_DS(on) [W] for a rectangular current.

    Parameters
    ----------
    current : array-like [A]
        On-state current I of the device.
    duty : array-like [-]
        On-time fraction D (1 = always on).
    rds : array-like [Ω]
        On-resistance at the junction temperature and gate drive.

    Notes
    -----
    I_rms² = D·I² for a rectangular pulse train (physics §1.1 [b]; [MUR] ch. on
    conduction losses). Ripple would add D·ΔI²/12 (not modelled: the channel gives no
    ripple). Check value E1: 10 A, 10 mΩ, D = 1 → 1.000 W.
    """
    return _f(duty) * _f(current) ** 2 * _f(rds)


# ----------------------------------------------------------------------------- switching


def plateau_voltage(v_th, current, g_fs) -> np.ndarray:
    """Miller plateau at the application current [V]: V_pl ≈ V_th + I/g_fs.

    Parameters: ``v_th`` [V] threshold, ``current`` [A], ``g_fs`` [S] forward
    transconductance. Physics reference §2.2 [b]; E4: 2.0 + 3/3 = 3.0 V.
    """
    return _f(v_th) + _f(current) / _f(g_fs)


def qgs2_from_qgs(qgs, v_pl, v_th) -> np.ndarray:
    """Gate charge from threshold to plateau Q_gs2 ≈ Q_gs·(V_pl − V_th)/V_pl [C].

    Parameters: ``qgs`` [C] charge 0 → plateau, ``v_pl`` [V], ``v_th`` [V].
    Physics reference §2.2 [b] (the gate charge below threshold only delays switching).
    """
    v_pl = _f(v_pl)
    return _f(qgs) * (v_pl - _f(v_th)) / v_pl


def qgd_at_voltage(qgd, v, v_test) -> np.ndarray:
    """Plateau charge at the application voltage [C]: Q_gd·max(1, V/V_test).

    Q_gd is measured at V_test; a higher application voltage scales it up, a lower one
    keeps the datasheet value (conservative). Physics reference §2.2 [b].
    """
    return _f(qgd) * np.maximum(1.0, _f(v) / _f(v_test))


def gate_charge_intervals(
    v_drv, r_g, v_th, v_pl, q_gs2, q_gd, v_low=0.0, i_lim=np.inf
) -> SwitchingIntervals:
    """Switching intervals by the constant-gate-current (gate-charge) method.

    ============================  ======================================  ===============
    interval                       gate current                            duration
    ============================  ======================================  ===============
    on, current rise V_th → V_pl   I_g1 = (V_drv − (V_th + V_pl)/2)/R_G    t_ri = Q_gs2/I_g1
    on, voltage fall (plateau)     I_g2 = (V_drv − V_pl)/R_G               t_fv = Q_gd/I_g2
    off, voltage rise (plateau)    I_g3 = (V_pl − V_low)/R_G               t_rv = Q_gd/I_g3
    off, current fall V_pl → V_th  I_g4 = ((V_pl + V_th)/2 − V_low)/R_G    t_fi = Q_gs2/I_g4
    ============================  ======================================  ===============

    Each I_g is limited to ``i_lim`` (a current-limited driver output).

    Parameters
    ----------
    v_drv, v_low : array-like [V]
        Driver on and off levels.
    r_g : array-like [Ω]
        Total gate-loop resistance R_drv + R_G,ext + R_G,int.
    v_th, v_pl : array-like [V]
        Threshold and plateau voltage.
    q_gs2, q_gd : array-like [C]
        Charge from threshold to plateau, and on the plateau.
    i_lim : array-like [A]
        Driver output current limit (inf: resistive only).

    Returns
    -------
    SwitchingIntervals
        (t_ri, t_fv, t_rv, t_fi) [s]; inf where a gate current is ≤ 0 (the drive cannot
        pass the plateau).

    Notes
    -----
    Physics reference §2.2 [b]; the linear-ramp energy model follows [MUR] (switching
    characteristics of power MOSFETs). Check value E4: R_G = 141.5 Ω, 5 V drive, V_th 2 V,
    V_pl 3 V, Q_gs2 2 nC, Q_gd 6 nC → 113.20 / 424.50 / 283.00 / 113.20 ns.
    """
    v_drv, r_g, v_th, v_pl, q_gs2, q_gd, v_low, i_lim = np.broadcast_arrays(
        *map(_f, (v_drv, r_g, v_th, v_pl, q_gs2, q_gd, v_low, i_lim))
    )

    def _t(q, ig):
        ig = np.minimum(ig, i_lim)
        with np.errstate(divide="ignore", invalid="ignore"):
            return np.where(ig > 0, q / np.where(ig > 0, ig, 1.0), np.inf)

    return SwitchingIntervals(
        t_ri=_t(q_gs2, (v_drv - 0.5 * (v_th + v_pl)) / r_g),
        t_fv=_t(q_gd, (v_drv - v_pl) / r_g),
        t_rv=_t(q_gd, (v_pl - v_low) / r_g),
        t_fi=_t(q_gs2, (0.5 * (v_pl + v_th) - v_low) / r_g),
    )


def rc_intervals(v_drv, r_g, c_iss, v_th, v_pl) -> dict[str, np.ndarray]:
    """Sub-plateau intervals of the exponential (RC) gate model [s].

    τ = R_G·C_iss; t_d,on = τ·ln(V_drv/(V_drv − V_th)); t_ri = τ·ln((V_drv − V_th)/
    (V_drv − V_pl)); t_d,off = τ·ln(V_drv/V_pl); t_fi = τ·ln(V_pl/V_th).

    Parameters: ``v_drv`` [V], ``r_g`` [Ω], ``c_iss`` [F], ``v_th``, ``v_pl`` [V].
    Physics reference §2.2 [b; derived, same model]; a cross-check of the
    constant-current form (E4: t_ri 114.75 ns, t_d,on 144.56 ns).
    """
    v_drv, v_th, v_pl = _f(v_drv), _f(v_th), _f(v_pl)
    tau = _f(r_g) * _f(c_iss)
    return {
        "tau": tau,
        "t_d_on": tau * np.log(v_drv / (v_drv - v_th)),
        "t_ri": tau * np.log((v_drv - v_th) / (v_drv - v_pl)),
        "t_d_off": tau * np.log(v_drv / v_pl),
        "t_fi": tau * np.log(v_pl / v_th),
    }


def load_transition_factor(load) -> np.ndarray:
    """Energy per transition as a fraction of V·I·t: ½ (clamped inductive) or ⅙ (resistive).

    Clamped inductive switching (inductive, motor; also capacitive, conservatively): the
    full current flows while the voltage swings, E = ½·V·I·t [c: MUR]. Resistive loads
    (resistive, lamp): voltage and current ramp together, E = V·I·t/6 [derived]
    (physics reference §2.1).
    """
    load = np.asarray(load, dtype=object)
    return np.where(np.isin(load, _RESISTIVE_LOADS), 1.0 / 6.0, 0.5)


def transition_loss(v, i, t_on, t_off, frequency, factor=0.5) -> np.ndarray:
    """Switching loss of linear transitions P_sw = k·V·I·(t_on + t_off)·f [W].

    Parameters
    ----------
    v : array-like [V]
        Off-state voltage.
    i : array-like [A]
        Switched current.
    t_on, t_off : array-like [s]
        Turn-on and turn-off transition times (t_ri + t_fv, t_rv + t_fi; or datasheet
        t_rise, t_fall).
    frequency : array-like [Hz]
    factor : array-like [-]
        ½ for clamped inductive switching, ⅙ for resistive (:func:`load_transition_factor`).

    Notes
    -----
    Physics reference §2.1 [c: MUR] and §2.2 [b]: E_on = ½·V·I·(t_ri + t_fv),
    E_off = ½·V·I·(t_rv + t_fi). E4: 16.810 µJ·25 kHz = 0.4203 W. Diode recovery
    (Q_rr·V) is not included: with a Schottky freewheel diode it is ≈ 0 [c: EM].
    """
    return _f(factor) * _f(v) * _f(i) * (_f(t_on) + _f(t_off)) * _f(frequency)


def coss_energy(coss, v, v_ref=COSS_TEST_VOLTAGE) -> np.ndarray:
    """Energy dumped into the channel at hard turn-on from C_oss [J].

    Junction model C_oss(v) = C_oss(V_ref)·√(V_ref/v), so
    E_oss(V) = ∫₀^V v·C_oss(v) dv = (2/3)·C_oss(V_ref)·√V_ref·V^1.5 (= 4/3 of ½·C_oss(V)·V²).

    Parameters
    ----------
    coss : array-like [F]
        Output capacitance at the test voltage.
    v : array-like [V]
        Off-state voltage at turn-on.
    v_ref : array-like [V]
        Test voltage of ``coss``; 25 V assumed when the sheet has none
        (:data:`COSS_TEST_VOLTAGE`, [c], marked assumed).

    Notes
    -----
    Physics reference §2.3 [b; derived]. Not for IGBTs: their E_on includes it [b].
    E5: 300 pF at 25 V, 12 V → 41.57 nJ.
    """
    return (2.0 / 3.0) * _f(coss) * np.sqrt(_f(v_ref)) * np.maximum(_f(v), 0.0) ** 1.5


def gate_drive_power(qg, v_on, frequency, v_off=0.0) -> np.ndarray:
    """Gate-drive power P_G = Q_g·(V_on − V_off)·f [W].

    Parameters: ``qg`` [C] total gate charge at V_on (the 10 V value for a lower drive
    overestimates, conservatively), ``v_on``, ``v_off`` [V], ``frequency`` [Hz].

    Dissipated in the gate-loop resistances in proportion to their share
    (:func:`gate_power_shares`), not in the channel; the driver supplies Q_g·f.
    Physics reference §2.4 [b]; E5: 15 nC·5 V·25 kHz = 1.875 mW.
    """
    return _f(qg) * (_f(v_on) - _f(v_off)) * _f(frequency)


def gate_power_shares(p_gate, resistances: Mapping[str, Any]) -> dict[str, np.ndarray]:
    """Split the gate-drive power over the gate-loop resistances: P_x = P_G·R_x/R_G [W].

    ``resistances`` maps a name (e.g. "pin", "external", "internal") to its [Ω].
    Physics reference §2.4 [b]; E5: 40/100/1.5 Ω of 1.875 mW → 0.530/1.325/0.020 mW.
    """
    total = sum(_f(r) for r in resistances.values())
    return {k: _f(p_gate) * _f(r) / total for k, r in resistances.items()}


# ----------------------------------------------------------------------------- IGBT


def igbt_vce(current, vce_sat, vce_sat_i) -> np.ndarray:
    """Conservative on-state voltage from one V_CE(sat) point [V].

    v_CE(i) = V_CE(sat)·max(1, i/I_test).

    Parameters: ``current`` [A], ``vce_sat`` [V] at ``vce_sat_i`` [A].

    Notes
    -----
    Physics reference §3.1 [derived]: the threshold-plus-slope form V_CE0 + r_CE·i lies
    below V_CE(sat) for i < I_test (V_CE0 > 0), so the flat value bounds it there; above
    I_test the chord through the origin bounds a convex curve. Flag i > I_test
    (extrapolation).
    """
    return _f(vce_sat) * np.maximum(1.0, _f(current) / _f(vce_sat_i))


def igbt_two_point_fit(i1, v1, i2, v2) -> tuple[np.ndarray, np.ndarray]:
    """V_CE0 [V] and r_CE [Ω] of the line through two output-curve points.

    r_CE = (V2 − V1)/(I2 − I1), V_CE0 = V1 − r_CE·I1. Physics §3.1 [b]; E6:
    (5 A, 1.25 V), (20 A, 2.10 V) → 0.9667 V, 56.67 mΩ.
    """
    r = (_f(v2) - _f(v1)) / (_f(i2) - _f(i1))
    return _f(v1) - r * _f(i1), r


def igbt_conduction_loss(current, duty, vce0, r_ce) -> np.ndarray:
    """IGBT conduction loss P_c = D·(V_CE0·I + r_CE·I²) [W] (rectangular current).

    Parameters: ``current`` [A], ``duty`` [-], ``vce0`` [V], ``r_ce`` [Ω].
    Physics reference §3.1 [b; c]; E6: 8 A, D = 0.6 → 6.816 W. The single-point rule is
    ``vce0 = 0``, ``r_ce = vce_sat/I_test`` above I_test, or ``vce0 = vce_sat`` below.
    """
    i = _f(current)
    return _f(duty) * (_f(vce0) * i + _f(r_ce) * i**2)


def igbt_switching_energy(
    e_ref, current, i_ref, v, v_ref, tj, t_ref, k_i=1.0, k_v=1.35, tc=0.003
) -> np.ndarray:
    """IGBT switching energy scaled from its datasheet test point [J].

    E = E_ref·(I/I_ref)^K_i·(V/V_ref)^K_v·[1 + TC_E·(Tj − T_ref)].

    Parameters
    ----------
    e_ref : array-like [J]
        E_on + E_off at the test point.
    current, i_ref : array-like [A]
        Switched current and test current.
    v, v_ref : array-like [V]
        Off-state voltage and test voltage.
    tj, t_ref : array-like [°C]
        Junction temperature and test temperature.
    k_i, k_v, tc : float
        Exponents and temperature coefficient [1/K]; typical K_i ≈ 1, K_v ≈ 1.3–1.4,
        TC_E ≈ 0.003 /K (Settings.igbt_ki/kv/tc) [c, unverified memory].

    Notes
    -----
    Physics reference §3.2 [c]; flag extrapolation above I_ref [b]. E6: 1.5 mJ at
    400 V/20 A/150 °C → 0.41933 mJ at 325 V/8 A/125 °C.
    """
    return (
        _f(e_ref)
        * (_f(current) / _f(i_ref)) ** k_i
        * (_f(v) / _f(v_ref)) ** k_v
        * (1.0 + tc * (_f(tj) - _f(t_ref)))
    )


# ----------------------------------------------------------------------------- avalanche


def avalanche_voltage(v_rating, factor=1.3) -> np.ndarray:
    """Assumed avalanche voltage V_BR,av ≈ factor·V_DSS [V] (physics §4.2, 1.2–1.4 [c])."""
    return _f(factor) * _f(v_rating)


def avalanche_energy(inductance, current, v_br, supply, r_coil=0.0) -> np.ndarray:
    """Energy absorbed by an unclamped switch at inductive turn-off [J].

    Coil resistance neglected (conservative, ``r_coil = 0``) [b]:
    E_AS = ½·L·I0²·V_BR/(V_BR − V_DD).
    With coil resistance R, a = V_BR − V_DD (exact for constant V_BR) [derived]:
    E = V_BR·(L/R)·[I0 − (a/R)·ln(1 + I0·R/a)].

    Parameters
    ----------
    inductance : array-like [H]
    current : array-like [A]
        I0 at turn-off.
    v_br : array-like [V]
        Avalanche voltage (:func:`avalanche_voltage`).
    supply : array-like [V]
        V_DD.
    r_coil : array-like [Ω]
        Load resistance in the decay loop (0 = neglected).

    Returns
    -------
    ndarray [J]; inf where V_BR ≤ V_DD (the current would not decay).

    Notes
    -----
    Physics reference §4.2 (checked there by numerical integration); E7: 0.1 H, 1 A,
    75 V, 24 V → 73.53 mJ; with 24 Ω → 56.40 mJ.
    """
    ind, i0, vbr, vdd, r = np.broadcast_arrays(
        *map(_f, (inductance, current, v_br, supply, r_coil))
    )
    a = vbr - vdd
    with np.errstate(divide="ignore", invalid="ignore"):
        conservative = 0.5 * ind * i0**2 * vbr / a
        rr = np.where(r > 0, r, 1.0)
        exact = vbr * (ind / rr) * (i0 - (a / rr) * np.log1p(i0 * rr / a))
    e = np.where(r > 0, exact, conservative)
    return np.where(a > 0, e, np.inf)


def avalanche_time(inductance, current, v_br, supply, r_coil=0.0) -> np.ndarray:
    """Duration of the avalanche [s]: L·I0/a (R = 0), (L/R)·ln(1 + I0·R/a) with R.

    a = V_BR − V_DD. Physics reference §4.2 [derived]; E7: 1.961 ms and 1.607 ms.
    """
    ind, i0, vbr, vdd, r = np.broadcast_arrays(
        *map(_f, (inductance, current, v_br, supply, r_coil))
    )
    a = vbr - vdd
    with np.errstate(divide="ignore", invalid="ignore"):
        rr = np.where(r > 0, r, 1.0)
        t = np.where(r > 0, (ind / rr) * np.log1p(i0 * rr / a), ind * i0 / a)
    return np.where(a > 0, t, np.inf)


def eas_at_start(eas25, tj_max, tj_start) -> np.ndarray:
    """Single-pulse avalanche rating derated to the starting junction temperature [J].

    E_AS(Tj0) = E_AS,25·(Tj,max − Tj0)/(Tj,max − 25), clipped to [0, E_AS,25]: linear
    to zero at Tj,max when the sheet has no E_AS-vs-Tj curve (physics §4.2 [b]; the safe
    energy falls with temperature [a:BLACK]). E7: 100 mJ, 175 °C, 85 °C → 60.0 mJ.
    """
    tmax = _f(tj_max)
    frac = (tmax - _f(tj_start)) / (tmax - T_REF)
    return _f(eas25) * np.clip(frac, 0.0, 1.0)


def zener_clamp(inductance, current, v_z, v_f, supply) -> dict[str, np.ndarray]:
    """Diode + Zener clamp across a coil (R neglected) [derived, physics §4.1].

    Returns ``energy_zener`` = ½·L·I0²·V_Z/(V_Z + V_F) [J], ``v_switch`` =
    V_supply + V_Z + V_F [V] the switch must block, ``t_decay`` ≈ L·I0/(V_Z + V_F) [s].
    E7(c): 0.1 H, 1 A, 33 V, 0.9 V, 24 V → 48.67 mJ, 57.9 V.
    """
    ind, i0, vz, vf = _f(inductance), _f(current), _f(v_z), _f(v_f)
    return {
        "energy_zener": 0.5 * ind * i0**2 * vz / (vz + vf),
        "v_switch": _f(supply) + vz + vf,
        "t_decay": ind * i0 / (vz + vf),
    }


# ----------------------------------------------------------------------------- diode


def _event_frequency(channel: Channel) -> float:
    period = channel.on_time + channel.off_time
    return 1.0 / period if channel.on_time > 0 and channel.off_time > 0 else 0.0


def diode_requirements(channel: Channel, settings: Settings) -> DiodeNeed:
    """Ratings a freewheel diode across the channel's load needs, and its duty.

    * PWM (pwm_frequency > 0), load current continuous (L/R ≫ 1/f): the diode carries the
      load current during the off time: I_avg = (1 − D)·I, I_rms² = (1 − D)·I² [b].
    * On/off switching (solenoid, pwm_frequency = 0): each turn-off the current decays
      as I0·e^(−t/τ), τ = L/R_coil, R_coil = V/I: charge I0·τ and ∫i² = I0²·τ/2 per event;
      I_avg = I0·τ·f_events with f_events = 1/(on_time + off_time) [derived].
    * V_RRM ≥ diode_voltage_factor·V_supply (1.5×), I_F(AV) rating ≥ I_avg /
      diode_current_derating (0.8), repetitive peak ≥ the load current at turn-off
      (the channel's peak current, e.g. a motor at stall) [b].

    Parameters
    ----------
    channel : Channel
        supply [V], current [A], peak_current [A], duty [-], pwm_frequency [Hz],
        inductance [H], on_time/off_time [s], load.
    settings : Settings
        diode_voltage_factor, diode_current_derating.

    Returns
    -------
    DiodeNeed
        ``needed`` is False for loads that are not inductive or motors (all zeros).

    Notes
    -----
    Physics reference §4.1 and §10 (derating) [b]. The diode's forward-recovery and the
    Q_rr·V it adds to the switch turn-on are not modelled: choose a Schottky or fast
    diode [c: EM]. Check values E5 (0.720 W) and E7(a) (3.75 mJ, V_RRM ≥ 48 V).
    """
    if not channel.needs_freewheel:
        return DiodeNeed(False, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0, 0.0)
    i = float(channel.current)
    v_rrm = settings.diode_voltage_factor * float(channel.supply)
    peak = float(channel.peak)
    if channel.pwm_frequency > 0:
        d_off = 1.0 - float(channel.duty)
        i_avg, i_sq, q_ev, f_ev = d_off * i, d_off * i * i, 0.0, 0.0
    else:
        tau = (
            float(channel.inductance) * i / channel.supply
            if channel.supply > 0
            else 0.0
        )
        f_ev = _event_frequency(channel)
        q_ev = i * tau
        i_avg = q_ev * f_ev
        i_sq = 0.5 * i * i * tau * f_ev
    return DiodeNeed(
        needed=True,
        v_rrm_min=v_rrm,
        i_avg=i_avg,
        i_avg_min=i_avg / settings.diode_current_derating,
        i_peak=peak,
        i_rms_sq=i_sq,
        q_event=q_ev,
        f_events=f_ev,
    )


def freewheel_diode_loss(channel: Channel, vf, r_f=0.0) -> np.ndarray:
    """Average loss of the freewheel diode across the channel's load [W].

    PWM inductive/motor load: P_D = (1 − D)·(V_F·I + r_F·I²) [b].
    On/off solenoid: P_D = (V_F·I0·τ + r_F·I0²·τ/2)·f_events, τ = L/R_coil [derived].

    Parameters
    ----------
    channel : Channel
    vf : array-like [V]
        Forward drop (V_F0 of a threshold-plus-slope fit, or the sheet's V_F).
    r_f : array-like [Ω]
        Forward slope resistance (0 when only V_F is known).

    Notes
    -----
    Physics reference §4.1 [b; derived]; zero for loads that need no diode. Vectorised
    over ``vf`` (e.g. the diode inventory). E5: 0.45 V, 0.05 Ω, D = 0.6, 3 A → 0.720 W.
    """
    need = diode_requirements(channel, Settings())
    return need.loss(vf, r_f)


# ----------------------------------------------------------------------------- engine


def switch_losses(
    switches: pd.DataFrame,
    rds_points: pd.DataFrame,
    channel: Channel,
    conditions: Conditions,
    settings: Settings,
    count=1,
    tj=25.0,
    *,
    driver: bool = False,
    driver_voltage: float | None = None,
) -> LossTable:
    """Per-device losses of every switch row for one channel (vectorised).

    Parameters
    ----------
    switches : DataFrame, n rows
        Inventory switch table (overview column names, SI values). Used: part, kind,
        v_rating, rds_hot_ratio, vth_max, v_plateau, qg, qgs, qgd, rg_int, t_rise,
        t_fall, coss, vce_sat, vce_sat_i, e_on, e_off, e_test_v, e_test_i (absent
        columns count as blank).
    rds_points : DataFrame
        (part, vgs [V], rds_on [Ω]) spec points, see :func:`rds_at_drive`.
    channel : Channel
        supply V [V], current I [A], peak_current [A], duty D, pwm_frequency f [Hz],
        load, drive [V].
    conditions : Conditions
        Accepted for the common engine signature; the losses do not depend on it.
    settings : Settings
        Engineering defaults (pin/driver resistances, rg_int_default, rds_min_ratio,
        parallel_switching_factor, igbt_kv/ki/tc).
    count : int array-like, broadcast against the rows
        N ≥ 1 devices in parallel.
    tj : array-like [°C], broadcast against the rows
        Junction temperature at which p_cond, p_sw, p_dev are reported.
    driver : bool
        True: a gate driver (Settings.driver_resistance + gate_resistor_driver) at
        ``driver_voltage`` (or ``channel.drive`` when that is None).
    driver_voltage : float or None [V]
        A driver's on level; implies ``driver=True``. None with ``driver=False``: the
        controller pin drives the gate at ``channel.drive`` through
        Settings.pin_resistance + gate_resistor_pin.

    Returns
    -------
    LossTable
        Arrays of shape broadcast((n,), count, tj).

    Notes
    -----
    MOSFET (physics §1–§2, §7.1):

    * R25 at the highest spec point ≤ drive level (§1.3 [b]); M1 temperature model
      fitted to rds_hot_ratio at 125 °C, clamped below 25 °C (§1.2 [b]); blank ratio →
      :func:`default_rds_hot_ratio` (assumed); a ratio below 1 is taken as 1.
    * Conduction of the worst device: P_c = D·I_hot²·r·R25·f(Tj) with the sharing of
      :func:`parallel_sharing` (§7.1 [derived]); ``i_dev`` = I_worst for ratings.
    * PWM (f > 0), gate-charge method when qgd, (qgs or qg) and (v_plateau or vth_max)
      exist (§2.2 [b]): V_pl = v_plateau, else vth_max + 1 V (assumed, [c]);
      V_th = vth_max where below V_pl, else 0 (then Q_gs2 = Q_gs, an upper bound) —
      a real threshold below vth_max lengthens the two sub-plateau intervals (the
      smaller part of the total when Q_gd ≳ Q_gs2), so these are the least certain;
      Q_gs = qgs, else qg − qgd (an upper bound, assumed); Q_gd scaled by
      max(1, V/(0.5·v_rating)) — no test voltage in the sheet, assumed [b; c];
      R_G = N·R_source + R_series + rg_int (one pin or driver output shared by the N
      gates, each with its own series resistor [derived]); rg_int blank →
      Settings.rg_int_default (assumed). A plateau at or above the drive level: the
      drive cannot switch the part (``missing``).
    * Otherwise datasheet t_rise + t_fall (§2.1 [c: MUR]) — only with a gate driver: the
      times are measured with a strong driver, and a pin is tens of times slower (E4:
      52×), so with pin drive the part is ``missing`` gate-charge data instead of being
      guessed.
    * Transition energy k·V·i_sw·t with k = ½ for inductive, motor and capacitive loads,
      ⅙ for resistive loads and lamps (:func:`load_transition_factor`); i_sw =
      I·min(1, parallel_switching_factor/N) (§7.1 proposed [c]). Switching loss is
      temperature-independent (§2.2 [b]).
    * Coss: E_oss from :func:`coss_energy` with coss at 25 V (assumed) per device per
      period; p_gate = qg·V_drv·f per device (driver side; the R_G,int share, about
      rg_int/R_G of it, is neglected in p_dev).
    * Rule for missing data: at any PWM frequency > 0 a part without the data its
      switching loss needs (a switching method, and coss) is ``missing``. The
      Settings.switching_loss_floor share is not used for this: without the data there
      is no upper bound of the switching loss to compare with it. At f = 0 switching
      and gate losses are 0 (a few transitions a minute are negligible).

    IGBT (physics §3): V_CE from the single-point rule of :func:`igbt_vce` at the worst
    device current I_worst (the loss rises with current, so the best-sharing device is
    the hottest), P_c = D·I·v_CE(I), hot factor 1 + 0.002·(Tj − 25)
    (:data:`IGBT_VCE_HOT_RATIO`, assumed, [c]); switching energy scaled by
    :func:`igbt_switching_energy` from (e_test_v, e_test_i) at 25 °C test temperature
    (assumed, conservative with TC_E > 0) to (V, i_sw, Tj); no Coss term [b].
    Flags in ``notes``: current above vce_sat_i or e_test_i (extrapolation).

    Linear coefficients: p0 = P_c25 + P_sw25 + P_oss, p1 = α·P_c25 (+ TC_E·P_sw25 for
    IGBTs), so P(Tj) = p0 + p1·(Tj − 25) for Tj ≥ 25 °C, exactly what ``p_dev`` is.
    """
    return _switch_losses(
        switches,
        rds_points,
        channel,
        settings,
        count,
        tj,
        driver=driver,
        driver_voltage=driver_voltage,
    )


class _SwitchRows:
    """Per-row data of a switch table that no channel changes (part ids, kind, the
    Rds(on) look-up), prepared once and shared by the loss evaluations of one table."""

    def __init__(self, switches: pd.DataFrame, rds_points: pd.DataFrame | None):
        n = len(switches)
        if "part" in switches:
            part_col = switches["part"]
            self.part = part_col.to_numpy(dtype=object)
            if not isinstance(part_col.dtype, pd.StringDtype):
                part_col = self.part
        else:
            self.part = part_col = np.full(n, "", dtype=object)
        if "kind" in switches:
            self.is_mos, self.is_igbt = _kind_flags(switches["kind"])
        else:
            self.is_mos = self.is_igbt = np.zeros(n, dtype=bool)
        self.rds = _RdsLookup(rds_points, part_col)
        self.cols = _float_columns(switches, _LOSS_COLUMNS)


#: Float columns of the switch table read by :func:`_switch_losses`.
_LOSS_COLUMNS = (
    "v_rating", "rds_hot_ratio", "vce_sat", "vce_sat_i", "qg", "v_plateau", "vth_max",
    "qgs", "qgd", "rg_int", "t_rise", "t_fall", "e_on", "e_off", "e_test_v",
    "e_test_i", "coss",
)  # fmt: skip


def _kind_flags(kind: pd.Series) -> tuple[np.ndarray, np.ndarray]:
    """(is MOSFET, is IGBT) per row of the ``kind`` column.

    Kinds are compared after ``astype(str).str.strip().str.lower()``; blanks are
    neither. The text operations run once per distinct kind, not once per row.
    """
    codes, uniques = pd.factorize(kind.to_numpy(dtype=object))
    uniques = np.asarray(uniques, dtype=object)
    # plain lower-case ASCII words are their own normal form; only the others need
    # the text operations
    plain = np.array(
        [isinstance(u, str) and u.isascii() and u.isalnum() and u == u.lower()
         for u in uniques],
        dtype=bool,
    )  # fmt: skip
    mos = np.isin(uniques, _MOSFET_KINDS) & plain
    igbt = (uniques == "igbt") & plain
    if not plain.all():
        norm = pd.Series(uniques[~plain], dtype=object)
        norm = norm.astype(str).str.strip().str.lower()
        mos[~plain] = norm.isin(_MOSFET_KINDS).to_numpy(dtype=bool)
        igbt[~plain] = norm.eq("igbt").to_numpy(dtype=bool, na_value=False)
    blank = codes < 0
    codes = np.where(blank, 0, codes)
    if len(uniques) == 0:
        return np.zeros(len(codes), dtype=bool), np.zeros(len(codes), dtype=bool)
    return mos[codes] & ~blank, igbt[codes] & ~blank


def _switch_losses(
    switches: pd.DataFrame,
    rds_points: pd.DataFrame,
    channel: Channel,
    settings: Settings,
    count=1,
    tj=25.0,
    *,
    driver: bool = False,
    driver_voltage: float | None = None,
    shared: dict | None = None,
) -> LossTable:
    """:func:`switch_losses`; ``shared`` (a dict kept by the caller between calls on
    the same switch table and points) holds the :class:`_SwitchRows` of the table."""
    n = len(switches)
    count_a = _f(count)
    tj_a = _f(tj)
    if np.any(~np.isfinite(count_a)) or np.any(count_a < 1) or np.any(count_a % 1):
        raise ValueError("count must be a whole number of devices ≥ 1")
    shape = np.broadcast_shapes((n,), count_a.shape, tj_a.shape)

    def bc(a):
        return np.broadcast_to(a, shape)

    rows = shared.get("rows") if shared is not None else None
    if rows is None:
        rows = _SwitchRows(switches, rds_points)
        if shared is not None:
            shared["rows"] = rows
    part, is_mos, is_igbt = rows.part, rows.is_mos, rows.is_igbt
    col = rows.cols
    known = is_mos | is_igbt

    use_driver = bool(driver) or driver_voltage is not None
    v_drv = abs(float(driver_voltage if driver_voltage is not None else channel.drive))
    if use_driver:
        r_src, r_ser = settings.driver_resistance, settings.gate_resistor_driver
        src_name, ser_name = "driver_resistance", "gate_resistor_driver"
    else:
        r_src, r_ser = settings.pin_resistance, settings.gate_resistor_pin
        src_name, ser_name = "pin_resistance", "gate_resistor_pin"

    v = float(channel.supply)
    i_load = float(channel.current)
    i_peak = float(channel.peak)
    duty = float(channel.duty)
    f = float(channel.pwm_frequency)
    pwm = f > 0
    k_load = float(load_transition_factor(channel.load))
    resistive = channel.load in _RESISTIVE_LOADS

    missing = _Messages(shape)
    assumed = _Messages(shape)
    notes = _Messages(shape)

    # ---- per-row data (n,)
    v_rating = col["v_rating"]
    k_hot = col["rds_hot_ratio"]
    k_blank = is_mos & ~np.isfinite(k_hot)
    k_hot = np.where(k_blank, default_rds_hot_ratio(v_rating), k_hot)
    k_low = is_mos & (k_hot < 1.0)
    alpha_mos = rds_alpha(np.maximum(k_hot, 1.0))
    alpha_igbt = (IGBT_VCE_HOT_RATIO - 1.0) / (T_RDS_HOT - T_REF)
    alpha = np.where(is_igbt, alpha_igbt, np.where(is_mos, alpha_mos, np.nan))

    rds25, vgs_used = rows.rds.at_drive(v_drv)
    rds25 = np.where(is_mos, rds25, np.nan)
    vgs_used = np.where(is_mos, vgs_used, np.nan)

    # ---- sharing (shape)
    share = parallel_sharing(i_load, count_a, settings.rds_min_ratio)
    share_pk = parallel_sharing(i_peak, count_a, settings.rds_min_ratio)
    i_worst = bc(share.i_worst)
    i_sw = bc(i_load * np.minimum(1.0, settings.parallel_switching_factor / count_a))

    # ---- conduction at 25 °C (shape)
    pc_mos = duty * bc(share.i_hot) ** 2 * bc(share.r_hot_ratio) * rds25
    vce_sat = col["vce_sat"]
    vce_i = col["vce_sat_i"]
    pc_igbt = duty * i_worst * igbt_vce(i_worst, vce_sat, vce_i)
    pc25 = np.where(is_igbt, pc_igbt, np.where(is_mos, pc_mos, np.nan))

    # ---- switching (shape)
    psw25 = np.zeros(shape)
    p_coss = np.zeros(shape)
    p_gate = np.zeros(shape)
    beta = np.zeros(shape)  # temperature coefficient of the switching loss [1/K]
    method = np.zeros(n, dtype=np.int8)  # index into _SW_METHODS

    qg = col["qg"]
    v_pl_sheet = col["v_plateau"]
    vth_max = col["vth_max"]
    blocked = is_mos & np.isfinite(v_pl_sheet) & (v_pl_sheet >= v_drv)
    v_pl = v_pl_sheet
    if pwm:
        # -- MOSFET gate-charge method
        qgs = col["qgs"]
        qgd = col["qgd"]
        qgs_bound = ~np.isfinite(qgs) & np.isfinite(qg) & np.isfinite(qgd) & (qg > qgd)
        qgs_eff = np.where(np.isfinite(qgs), qgs, np.where(qgs_bound, qg - qgd, np.nan))
        v_pl_est = ~np.isfinite(v_pl_sheet) & np.isfinite(vth_max)
        v_pl = np.where(v_pl_est, vth_max + PLATEAU_OVERDRIVE, v_pl_sheet)
        v_th = np.where(np.isfinite(vth_max) & (vth_max < v_pl), vth_max, 0.0)
        gc_ok = (
            is_mos
            & np.isfinite(qgd)
            & np.isfinite(qgs_eff)
            & np.isfinite(v_pl)
            & (v_pl > 0)
        )
        q_gs2 = qgs2_from_qgs(qgs_eff, v_pl, v_th)
        v_test = QGD_TEST_FRACTION * v_rating
        qgd_scaled = gc_ok & (v > v_test)
        q_gd = np.where(qgd_scaled, qgd_at_voltage(qgd, v, v_test), qgd)
        rg_int = col["rg_int"]
        rg_blank = gc_ok & ~np.isfinite(rg_int)
        rg_int = np.where(np.isfinite(rg_int), rg_int, settings.rg_int_default)
        r_g = count_a * r_src + r_ser + rg_int
        ivl = gate_charge_intervals(v_drv, r_g, v_th, v_pl, q_gs2, q_gd)
        blocked = blocked | (gc_ok & (v_pl >= v_drv))
        with np.errstate(invalid="ignore"):  # 0 A × inf s where blocked (NaN later)
            e_gc = k_load * v * i_sw * (ivl.t_on + ivl.t_off)

        # -- MOSFET datasheet times (only with a gate driver)
        t_r = col["t_rise"]
        t_f = col["t_fall"]
        has_t = is_mos & np.isfinite(t_r) & np.isfinite(t_f)
        use_t = has_t & ~gc_ok & use_driver
        t_pin = has_t & ~gc_ok & ~use_driver
        e_t = k_load * v * i_sw * (t_r + t_f)

        # -- IGBT energies
        e_on, e_off = col["e_on"], col["e_off"]
        e_v, e_i = col["e_test_v"], col["e_test_i"]
        e_ok = is_igbt & np.isfinite(e_on + e_off + e_v + e_i) & (e_v > 0) & (e_i > 0)
        e_ig = igbt_switching_energy(
            e_on + e_off,
            i_sw,
            e_i,
            v,
            e_v,
            IGBT_ENERGY_TEST_TJ,
            IGBT_ENERGY_TEST_TJ,
            settings.igbt_ki,
            settings.igbt_kv,
            settings.igbt_tc,
        )

        method = np.select([gc_ok, use_t, e_ok], [1, 2, 3], default=4).astype(np.int8)
        e_sw = np.where(gc_ok, e_gc, np.where(use_t, e_t, np.where(e_ok, e_ig, np.nan)))
        psw25 = e_sw * f
        beta = bc(np.where(is_igbt, settings.igbt_tc, 0.0))

        coss = col["coss"]
        coss_blank = is_mos & ~np.isfinite(coss)
        p_coss = bc(np.where(is_mos, coss_energy(coss, v) * f, 0.0))
        p_gate = bc(np.where(known, gate_drive_power(qg, v_drv, f), np.nan))

        # -- reasons, assumptions, flags
        missing.add(
            t_pin,
            "only datasheet t_rise/t_fall, which hold for a strong gate driver; for "
            f"pin drive ({r_src:g} Ω + {r_ser:g} Ω) the switching loss needs gate charge "
            "(qgd, qgs or qg, v_plateau or vth_max)",
        )
        missing.add(
            is_mos & ~gc_ok & ~has_t,
            "no switching data for PWM: needs qgd with qgs (or qg) and v_plateau (or "
            "vth_max), or t_rise and t_fall",
        )
        missing.add(coss_blank, "coss blank: output-capacitance loss unknown")
        missing.add(
            is_igbt & ~e_ok,
            "no switching energies for PWM: needs e_on, e_off, e_test_v and e_test_i",
        )
        assumed.add(
            gc_ok & v_pl_est,
            "v_plateau={} V: estimated as vth_max + "
            f"{PLATEAU_OVERDRIVE:g} V (proposed, from memory)",
            v_pl,
        )
        assumed.add(
            gc_ok & qgs_bound,
            "qgs={} nC: qg − qgd, an upper bound of the charge below the plateau",
            qgs_eff * 1e9,
        )
        assumed.add(
            qgd_scaled,
            "qgd_test_v={} V: qgd taken as measured at half v_rating and scaled with "
            "the supply (common practice)",
            v_test,
        )
        assumed.add(
            rg_blank,
            f"rg_int={settings.rg_int_default:g} Ω: Settings.rg_int_default (from memory)",
        )
        assumed.add(
            gc_ok,
            f"{src_name}={r_src:g} Ω: Settings.{src_name}, gate-loop source resistance",
        )
        assumed.add(
            gc_ok, f"{ser_name}={r_ser:g} Ω: Settings.{ser_name}, series gate resistor"
        )
        assumed.add(
            is_mos & ~coss_blank,
            f"coss_test_v={COSS_TEST_VOLTAGE:g} V: coss taken as given at "
            f"{COSS_TEST_VOLTAGE:g} V (no test voltage in the sheet)",
        )
        assumed.add(
            e_ok,
            f"e_test_tj={IGBT_ENERGY_TEST_TJ:g} °C: switching energies taken as measured "
            f"at {IGBT_ENERGY_TEST_TJ:g} °C (conservative with igbt_tc > 0)",
        )
        assumed.add(
            e_ok, f"igbt_kv={settings.igbt_kv:g}: voltage exponent (from memory)"
        )
        assumed.add(
            e_ok, f"igbt_ki={settings.igbt_ki:g}: current exponent (from memory)"
        )
        assumed.add(
            e_ok,
            f"igbt_tc={settings.igbt_tc:g} /K: energy temperature coefficient "
            "(from memory)",
        )
        assumed.add(
            bc(count_a > 1) & bc(gc_ok | use_t | e_ok),
            f"parallel_switching_factor={settings.parallel_switching_factor:g}: each "
            "device switches I/N times this factor (proposed)",
        )
        notes.add(
            use_t,
            "switching loss from datasheet t_rise/t_fall: valid only if the driver is at "
            "least as strong as the datasheet test circuit",
        )
        notes.add(known & ~np.isfinite(qg), "qg blank: gate-drive power unknown")
        ext = bc(e_ok) & (i_sw > bc(e_i))
        notes.add(
            ext,
            "switched current {} A above the energy test current {} A: energies "
            "extrapolated",
            i_sw,
            bc(e_i),
        )
        notes.add(
            bc(gc_ok) & bc(count_a > 1),
            "one pin/driver output drives every gate of the group through its own "
            "resistor",
        )
        if resistive:
            notes.add(gc_ok | use_t, "resistive load: transitions counted as V·I·t/6")

    missing.add(
        blocked,
        "plateau {} V at or above the "
        f"{v_drv:g} V drive: the drive cannot switch it on",
        v_pl,
    )

    # ---- conduction reasons and flags
    low = rows.rds.lowest()
    missing.add(is_mos & ~np.isfinite(low), "no Rds(on) spec point")
    missing.add(
        is_mos & np.isfinite(low) & ~np.isfinite(rds25),
        "needs {} V gate drive for its guaranteed Rds(on); "
        f"the drive gives {v_drv:g} V",
        low,
    )
    missing.add(
        is_igbt & ~(np.isfinite(vce_sat) & np.isfinite(vce_i) & (vce_i > 0)),
        "no vce_sat and vce_sat_i for the conduction loss",
    )
    missing.add(~known, "unknown switch kind")
    assumed.add(
        k_blank,
        "rds_hot_ratio={}: physics reference §1.2 proposed default (from memory)",
        k_hot,
    )
    notes.add(k_low, "rds_hot_ratio below 1 taken as 1")
    assumed.add(
        is_igbt,
        f"vce_sat_hot_ratio={IGBT_VCE_HOT_RATIO:g}: V_CE(sat) at 125 °C over 25 °C "
        "(proposed, from memory)",
    )
    assumed.add(
        bc(count_a > 1) & bc(known),
        f"rds_min_ratio={settings.rds_min_ratio:g}: R_min/R_max for current sharing "
        "(proposed, from memory)",
    )
    over = bc(is_igbt) & (i_worst > bc(vce_i))
    notes.add(
        over,
        "device current {} A above the vce_sat test current {} A: V_CE scaled in "
        "proportion",
        i_worst,
        bc(vce_i),
    )

    # ---- temperature and totals
    bad = missing.mask()
    pc25 = np.where(bad, np.nan, pc25)
    psw25 = np.where(bad, np.nan, psw25)
    p_coss = np.where(bad, np.nan, p_coss)
    alpha_b = bc(alpha)
    p0 = pc25 + psw25 + p_coss
    p1 = alpha_b * pc25 + beta * psw25
    dt = np.maximum(bc(tj_a) - T_REF, 0.0)
    p_cond = pc25 * (1.0 + alpha_b * dt)
    p_sw = psw25 * (1.0 + beta * dt)
    p_dev = p_cond + p_sw + p_coss

    return LossTable(
        part=bc(part).copy(),
        p_cond=p_cond,
        p_sw=p_sw,
        p_coss=p_coss,
        p_gate=np.array(bc(p_gate), dtype=float),
        p_dev=p_dev,
        p0=p0,
        p1=p1,
        i_dev=np.array(bc(share.i_worst), dtype=float),
        i_dev_peak=np.array(bc(share_pk.i_worst), dtype=float),
        i_sw=np.array(i_sw, dtype=float),
        rds25=np.array(bc(rds25), dtype=float),
        vgs_used=np.array(bc(vgs_used), dtype=float),
        alpha=np.array(alpha_b, dtype=float),
        sw_method=_SW_METHODS[bc(method)],
        missing=missing.build(),
        assumed=assumed.build(),
        notes=notes.build(),
    )
