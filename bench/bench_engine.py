"""Benchmark: one channel × 100,000 switches × every fitting interface × 1–4 in parallel.

Usage::

    python bench/bench_engine.py [--rows 100000] [--subset 1000] [--repeat 3]

The vectorised path (:func:`selector.evaluate.evaluate_switches` followed by
:func:`selector.evaluate.interface_options`) is timed on the whole synthetic inventory;
a plain Python loop evaluates the same candidates one by one with scalar arithmetic
(``math``, no numpy) on a subset of the switches. The loop is given an inventory of just
those switches (their rows, their Rds(on) points, all interfaces; cut outside the timing,
as the vectorised path's inventory is built outside its timing), so that its set-up
scales with what it evaluates and the per-candidate time extrapolates to the whole
inventory. Both run in this script, their results are compared (they must agree to
1e-9), and the per-candidate ratio is printed.
Targets (issue 3): ratio ≥ 50×, 100k evaluation under 1 s.

The channel is a 24 V pump motor at 6 A with a 30 A stall for 0.4 s (DC, no PWM),
so every candidate has conduction losses, the start-up surge (Foster data on part of the
switches, the conservative RθJC rule on the rest), the no-sink junction temperature and,
per interface, the sink budget and the largest RθSA. The inventory is synthetic and
seeded (``bench/gen_inventory.py``); no real parts.
"""

from __future__ import annotations

import argparse
import gc
import math
import statistics
import sys
import time
from pathlib import Path
from types import SimpleNamespace

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

import gen_inventory  # noqa: E402  (bench/gen_inventory.py, seeded generator)

from selector.evaluate import evaluate_switches, interface_options  # noqa: E402
from selector.losses import switch_losses  # noqa: E402
from selector.models import Channel, Conditions, Settings  # noqa: E402

# sheet units of the generator's headers -> SI factors
_UNIT = {
    "V": 1.0,
    "A": 1.0,
    "°C": 1.0,
    "K/W": 1.0,
    "mohm": 1e-3,
    "nC": 1e-9,
    "pF": 1e-12,
}
_UNIT["mJ"] = 1e-3
_RTH_JA = {"TO-220": 62.0, "TO-247": 40.0, "D2PAK": 40.0, "DPAK": 50.0, "SO-8": 60.0}
_FOSTER_SHARE = np.array([0.05, 0.15, 0.30, 0.50])  # of rth_jc
_FOSTER_TAU = np.array([1e-4, 1e-3, 1e-2, 1e-1])  # [s]


def synthetic_inventory(rows: int, n_interfaces: int = 12, seed: int = 11):
    """SI tables from the generator's sheet-style tables (units in the headers)."""
    raw = gen_inventory.switches(rows, seed=1)
    sw = pd.DataFrame(index=raw.index)
    points = []
    for col in raw.columns:
        name, _, unit = col.partition(" [")
        unit = unit.rstrip("]")
        values = raw[col]
        if unit:
            values = pd.to_numeric(values, errors="coerce") * _UNIT[unit]
        if name.startswith("rds_on@"):
            vgs = float(name[len("rds_on@") :].rstrip("V"))
            points.append(
                pd.DataFrame({"part": raw["part"], "vgs": vgs, "rds_on": values})
            )
            continue
        sw[name] = values
    sw["tab"] = np.where(sw["kind"] == "igbt", "collector", "drain")
    sw["rth_ja"] = sw["package"].map(_RTH_JA).astype(float)
    rng = np.random.default_rng(seed)
    has = rng.random(rows) < 0.3
    rjc = sw["rth_jc"].to_numpy(float)
    for i in range(5):
        if i < 4:
            sw[f"zth_r{i + 1}"] = np.where(has, rjc * _FOSTER_SHARE[i], np.nan)
            sw[f"zth_tau{i + 1}"] = np.where(has, _FOSTER_TAU[i], np.nan)
        else:
            sw[f"zth_r{i + 1}"] = np.nan
            sw[f"zth_tau{i + 1}"] = np.nan
    rds = pd.concat(points, ignore_index=True)
    rds = rds[np.isfinite(rds["rds_on"])].sort_values(
        ["part", "vgs"], ignore_index=True
    )
    ri = gen_inventory.interfaces(n_interfaces)
    itf = pd.DataFrame(
        {
            "part": ri["part"],
            "price": ri["price"].astype(float),
            "fits": [tuple(s.strip() for s in f.split(";")) for f in ri["fits"]],
            "rth_cs": ri["rth_cs [K/W]"].astype(float),
            "insulating": ri["insulating"].eq("yes"),
        }
    )
    return SimpleNamespace(switches=sw, rds_points=rds, interfaces=itf)


CHANNEL = Channel(
    name="pump",
    supply=24.0,
    current=6.0,
    peak_current=30.0,
    peak_time=0.4,
    load="motor",
    inductance=2e-3,
    drive=12.0,
)
CONDITIONS = Conditions(ambient_max=45.0, junction_margin=25.0, max_parallel=4)


def vectorised(inv, channel, cond, settings):
    ev = evaluate_switches(inv, channel, cond, settings)
    io = interface_options(ev, inv.interfaces, cond)
    return ev, io


# ------------------------------------------------------------------ plain Python loop


def _scalar_loss(rec, points, current, n, t, settings):
    """Die loss per device at Tj = t for a DC channel (no PWM): returns (p, p0, p1)."""
    m = n - 1
    rho = settings.rds_min_ratio
    if rec["kind"] == "igbt":
        vce, vce_i = rec["vce_sat"], rec["vce_sat_i"]
        if not (vce == vce and vce_i == vce_i and vce_i > 0):
            return math.nan, math.nan, math.nan
        i_w = current / (1.0 + m * min(rho, 1.0))
        p25 = i_w * vce * max(1.0, i_w / vce_i)
        alpha = (1.2 - 1.0) / 100.0
    else:
        best = None
        for vgs, r in points:
            if vgs <= abs(CHANNEL.drive) + 1e-6 and (best is None or vgs > best[0]):
                best = (vgs, r)
        if best is None:
            return math.nan, math.nan, math.nan
        k = rec["rds_hot_ratio"]
        if k != k:
            k = 1.8 if rec["v_rating"] <= 100.0 else 2.2
        alpha = (max(k, 1.0) - 1.0) / 100.0
        r_hot = 1.0 if m == 0 else min(1.0, max(rho, 1.0 / m))
        i_hot = current / (1.0 + m * r_hot)
        p25 = i_hot * i_hot * r_hot * best[1]
    p = p25 * (1.0 + alpha * max(t - 25.0, 0.0))
    return p, p25, alpha * p25


def plain_loop(inv, channel, cond, settings, parts):
    """Every candidate (switch, count, interface) evaluated with scalar arithmetic."""
    wanted = set(parts)
    records = {
        r["part"]: r
        for r in inv.switches[inv.switches["part"].isin(wanted)].to_dict("records")
    }
    pts: dict[str, list[tuple[float, float]]] = {}
    for rec in inv.rds_points.itertuples(index=False):
        if rec.part in wanted:
            pts.setdefault(rec.part, []).append((abs(rec.vgs), rec.rds_on))
    itfs = inv.interfaces.to_dict("records")
    ta = cond.ambient_max
    cap = settings.thermal_cap
    out = []
    for part in parts:
        rec = records[part]
        t_lim = rec["tj_max"] - cond.junction_margin
        r_f = [rec[f"zth_r{i}"] for i in range(1, 6)]
        tau_f = [rec[f"zth_tau{i}"] for i in range(1, 6)]
        branches = [
            (r, tau) for r, tau in zip(r_f, tau_f, strict=True) if r > 0 and tau > 0
        ]
        total = sum(r for r, _ in branches)
        scale = rec["rth_jc"] / total if branches and rec["rth_jc"] > total else 1.0
        for n in range(1, cond.max_parallel + 1):
            p, p0, p1 = _scalar_loss(
                rec, pts.get(part, []), channel.current, n, t_lim, settings
            )
            p_pk, _, _ = _scalar_loss(
                rec, pts.get(part, []), channel.peak_current, n, t_lim, settings
            )
            r_ja_max = (t_lim - ta) / p if p > 0 else math.inf
            # no-sink junction, closed form with the 25 °C clamp and the cap
            rja = rec["rth_ja"]
            num = ta - 25.0 + rja * p0
            if num < 0:
                tj_air = 25.0 + num
            elif rja * p1 >= 1.0:
                tj_air = math.inf
            else:
                tj_air = 25.0 + num / (1.0 - rja * p1)
                if tj_air > cap:
                    tj_air = math.inf
            # start-up surge above the running state
            dp = max(p_pk - p, 0.0)
            if branches:
                z = sum(
                    scale * r * (1.0 - math.exp(-channel.peak_time / tau))
                    for r, tau in branches
                )
            else:
                z = rec["rth_jc"]
            surge = dp * z
            for itf in itfs:
                if rec["package"] not in itf["fits"]:
                    continue
                rcs = itf["rth_cs"]
                rise = p * (rec["rth_jc"] + rcs) + surge + dp * rcs
                h = t_lim - ta - rise
                q = n * p
                r_sa = h / q if q > 0 else math.inf
                out.append((part, n, itf["part"], r_ja_max, tj_air, surge, h, r_sa))
    return out


def compare(ev, io, loop_rows) -> int:
    """Check the loop's candidates against the vectorised table; returns rows compared."""
    v = io.join(
        ev[["part", "count", "r_ja_max_k_per_w", "tj_no_sink_c", "surge_rise_k"]],
        on="row",
    )
    v = v.set_index(["part", "count", "interface"])
    cols = [
        "r_ja_max_k_per_w",
        "tj_no_sink_c",
        "surge_rise_k",
        "h_k",
        "rth_sa_max_k_per_w",
    ]
    ref = pd.DataFrame(loop_rows, columns=["part", "count", "interface", *cols])
    ref = ref.set_index(["part", "count", "interface"])
    got = v.loc[ref.index, cols]
    a, b = got.to_numpy(float), ref.to_numpy(float)
    same = (
        np.isclose(a, b, rtol=1e-9, atol=1e-9) | (np.isnan(a) & np.isnan(b)) | (a == b)
    )
    if not same.all():
        bad = np.argwhere(~same)[:5]
        raise SystemExit(
            f"vectorised and loop results differ at {bad.tolist()}:\n{got.iloc[bad[:, 0]]}\n{ref.iloc[bad[:, 0]]}"
        )
    return len(ref)


def _timed(fn, repeat: int):
    """Median and best wall time of ``repeat`` calls, and the last result."""
    times, out = [], None
    for _ in range(repeat):
        out = None  # free the previous result first (outside the timed part)
        gc.collect()
        t = time.perf_counter()
        out = fn()
        times.append(time.perf_counter() - t)
    return statistics.median(times), min(times), out


def main(argv: list[str] | None = None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rows", type=int, default=100_000)
    ap.add_argument("--subset", type=int, default=1_000)
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args(argv)
    settings = Settings()

    t0 = time.perf_counter()
    inv = synthetic_inventory(args.rows)
    print(
        f"synthetic inventory: {args.rows:,} switches, {len(inv.interfaces)} "
        f"interfaces ({time.perf_counter() - t0:.2f} s to build); channel: "
        f"{CHANNEL.current:g} A, stall {CHANNEL.peak_current:g} A for "
        f"{CHANNEL.peak_time:g} s, counts 1-{CONDITIONS.max_parallel}"
    )

    vectorised(inv, CHANNEL, CONDITIONS, settings)  # warm-up (imports, caches)
    t_vec, best_vec, (ev, io) = _timed(
        lambda: vectorised(inv, CHANNEL, CONDITIONS, settings), args.repeat
    )
    n_vec = len(io)

    # share of the loss model (two switch_losses calls: running and peak current)
    counts = np.arange(1, CONDITIONS.max_parallel + 1, dtype=float)[:, None]
    t_lim = inv.switches["tj_max"].to_numpy(float) - CONDITIONS.junction_margin
    t_loss, _, _ = _timed(
        lambda: switch_losses(
            inv.switches,
            inv.rds_points,
            CHANNEL,
            CONDITIONS,
            settings,
            counts,
            t_lim[None, :],
        ),
        args.repeat,
    )

    rng = np.random.default_rng(5)
    parts = rng.choice(
        inv.switches["part"].to_numpy(), size=min(args.subset, args.rows), replace=False
    )
    # The loop's own inventory: the sampled switches only. Scanning all 100k rows and
    # their points for a 1,000-switch sample would charge the loop a fixed cost of the
    # whole inventory and divide it by the sample's candidates only.
    sample = SimpleNamespace(
        switches=inv.switches[inv.switches["part"].isin(parts)],
        rds_points=inv.rds_points[inv.rds_points["part"].isin(parts)],
        interfaces=inv.interfaces,
    )
    t_loop, best_loop, loop_rows = _timed(
        lambda: plain_loop(sample, CHANNEL, CONDITIONS, settings, parts),
        args.repeat,
    )
    n_loop = compare(ev, io, loop_rows)

    per_vec = t_vec / n_vec
    per_loop = t_loop / n_loop
    print(
        f"vectorised: {len(ev):,} switch x count rows, {n_vec:,} candidates with an "
        f"interface: median {t_vec:.3f} s, best {best_vec:.3f} s "
        f"({per_vec * 1e9:.0f} ns per candidate)"
    )
    print(
        f"  of which the loss model (switch_losses, 2 calls): {2 * t_loss:.3f} s; "
        f"thermal, surge and tables: {t_vec - 2 * t_loss:.3f} s"
    )
    print(
        f"plain loop: inventory of {len(parts):,} switches, {n_loop:,} candidates: median "
        f"{t_loop:.3f} s, best {best_loop:.3f} s ({per_loop * 1e9:.0f} ns per "
        "candidate); results agree with the vectorised table to 1e-9"
    )
    print(
        f"ratio per candidate: {per_loop / per_vec:.0f}x median, "
        f"{(best_loop / n_loop) / (best_vec / n_vec):.0f}x best (target >= 50x)"
    )
    print(f"100k evaluation wall time: {t_vec:.3f} s median (target < 1 s)")


if __name__ == "__main__":
    main()
