"""Benchmark: fixed per-call cost of the engine functions one channel's screening uses.

Usage::

    python bench/bench_overhead.py [--rows 5000] [--repeat 5]

Per channel the screening calls :func:`selector.drive.drive_table` once per side,
:func:`selector.evaluate.evaluate_switches` once per distinct gate level of that plan
(on the switches at that level), and the four checks of :mod:`selector.checks`
(voltage, continuous current, peak current, avalanche) on the evaluated rows. This
script times exactly those calls, channel by channel, on

* the demo inventory (47 switches) with every channel of the demo design, and
* a seeded synthetic inventory of ``--rows`` switches (``bench/bench_optimize.py``)
  with the 16 channels of its bench board.

The switch subsets per gate level and the rows handed to the checks are cut outside
the timing (that cutting is the screening's own work), so the time printed is that of
the engine functions alone. Each channel is run ``--repeat`` times and the fastest
run kept.

Baseline, run in the same script on the same machine: a bare numpy pass over the same
rows. For each channel, arrays are pulled from the same switch table once (outside
the timing): a per-switch Rds(on) (the largest listed point of each part) and the
parallel counts 1..max_parallel; the timed pass computes, for every (switch, count)
row, the conduction loss of the worst device ``(I/n)²·R·n`` and its sum over the
rows — a few whole-array numpy operations with no pandas in them. The ratio
``engine / baseline`` printed per inventory says how many such bare passes one
channel's engine calls cost; with large tables it falls towards the arithmetic the
engine really does, with small ones it shows the fixed per-call cost. Timings are
printed, never asserted (they depend on the machine).
"""

from __future__ import annotations

import argparse
import dataclasses
import statistics
import sys
import time
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

from bench_optimize import board_design, synthetic_inventory  # noqa: E402

from selector import checks, demo, drive  # noqa: E402
from selector.design import load_design_and_settings  # noqa: E402
from selector.evaluate import evaluate_switches  # noqa: E402
from selector.inventory import load_inventory  # noqa: E402
from selector.models import Settings  # noqa: E402


def _subset(inventory, mask: np.ndarray):
    """The inventory with only the masked switches (and their Rds(on) points)."""
    sw = inventory.switches[mask]
    rp = inventory.rds_points
    if rp is not None and len(rp):
        keep = np.isin(
            rp["part"].to_numpy(dtype=object), sw["part"].to_numpy(dtype=object)
        )
        rp = rp[keep]
    return dataclasses.replace(inventory, switches=sw, rds_points=rp)


def _prepare(inventory, channel, conditions, settings):
    """Per side: the drive plan's gate-level groups and the rows for the checks."""
    sw = inventory.switches.reset_index(drop=True)
    drivers = getattr(inventory, "drivers", None)
    counts = list(range(1, int(conditions.max_parallel) + 1))
    sides = ["low", "high"] if channel.side == "any" else [channel.side]
    jobs = []
    for side in sides:
        plan = drive.drive_table(
            sw,
            inventory.rds_points,
            channel,
            side,
            settings,
            drivers,
            ambient_min=conditions.ambient_min,
        )
        vgs = plan["vgs_on_v"].to_numpy(dtype=float)
        drv = plan["uses_driver"].to_numpy(dtype=bool)
        key = np.where(np.isfinite(vgs), np.round(vgs, 9), -1.0)
        groups = []
        for k, d in sorted(set(zip(key.tolist(), drv.tolist(), strict=True))):
            sub = _subset(inventory, (key == k) & (drv == d))
            if k < 0:
                groups.append((sub, channel, {}))
            elif d:
                groups.append((sub, channel, {"driver": True, "driver_voltage": k}))
            else:
                groups.append((sub, dataclasses.replace(channel, drive=float(k)), {}))
        evs = [
            evaluate_switches(sub, ch, conditions, settings, counts, **kw)
            for sub, ch, kw in groups
        ]
        ev = pd.concat(evs, ignore_index=True)
        order = pd.Series(np.arange(len(sw)), index=sw["part"].to_numpy(dtype=object))
        pos = ev["part"].map(order).to_numpy(dtype=int)
        swr = sw.iloc[pos].reset_index(drop=True)
        jobs.append(
            dict(
                sw=sw,
                side=side,
                groups=groups,
                swr=swr,
                i_dev=ev["i_dev_a"].to_numpy(dtype=float),
                t_lim=ev["t_lim_c"].to_numpy(dtype=float),
            )
        )
    return jobs, counts


def _engine(inventory, channel, conditions, settings, jobs, counts) -> dict[str, float]:
    """One channel's engine calls; seconds spent in each family."""
    t = {"drive": 0.0, "evaluate": 0.0, "checks": 0.0}
    drivers = getattr(inventory, "drivers", None)
    for job in jobs:
        t0 = time.perf_counter()
        drive.drive_table(
            job["sw"],
            inventory.rds_points,
            channel,
            job["side"],
            settings,
            drivers,
            ambient_min=conditions.ambient_min,
        )
        t1 = time.perf_counter()
        for sub, ch, kw in job["groups"]:
            evaluate_switches(sub, ch, conditions, settings, counts, **kw)
        t2 = time.perf_counter()
        swr = job["swr"]
        checks.voltage_check(swr, channel, conditions, settings)
        checks.continuous_current_check(swr, job["i_dev"])
        checks.peak_current_check(swr, channel, job["i_dev"])
        checks.avalanche_check(swr, channel, settings, job["t_lim"])
        t3 = time.perf_counter()
        t["drive"] += t1 - t0
        t["evaluate"] += t2 - t1
        t["checks"] += t3 - t2
    return t


def _baseline_arrays(inventory, counts):
    """Per-switch Rds(on) [Ω] (largest listed point) and the counts, as arrays."""
    rp = inventory.rds_points
    worst = rp.groupby(rp["part"].to_numpy(dtype=object))["rds_on"].max()
    parts = inventory.switches["part"].to_numpy(dtype=object)
    r = pd.Series(parts).map(worst).to_numpy(dtype=float)
    r = np.where(np.isfinite(r), r, 0.01)
    return r, np.asarray(counts, dtype=float)


def _baseline(r: np.ndarray, n: np.ndarray, current: float) -> float:
    """The bare numpy pass: (I/n)²·R·n for every (switch, count) row, summed."""
    i_dev = current / n[:, None]
    p = i_dev * i_dev * r[None, :] * n[:, None]
    return float(p.sum())


def run(name, inventory, design, settings, repeat: int) -> None:
    conditions = design.conditions
    rows = []
    for channel in design.channels:
        jobs, counts = _prepare(inventory, channel, conditions, settings)
        runs = [
            _engine(inventory, channel, conditions, settings, jobs, counts)
            for _ in range(repeat)
        ]
        best = min(runs, key=lambda t: sum(t.values()))
        r, n = _baseline_arrays(inventory, counts)
        base = []
        for _ in range(max(repeat, 20)):
            t0 = time.perf_counter()
            _baseline(r, n, float(channel.current))
            base.append(time.perf_counter() - t0)
        rows.append((channel.name, best, min(base), len(jobs)))
    n_sw = len(inventory.switches)
    print(f"\n{name}: {n_sw} switches, {len(rows)} channels, best of {repeat}")
    print(
        f"  {'channel':<20} {'sides':>5} {'drive':>8} {'evaluate':>9} {'checks':>8} "
        f"{'total':>8} {'numpy':>8} {'ratio':>7}"
    )
    for cname, t, b, sides in rows:
        total = sum(t.values())
        print(
            f"  {cname:<20} {sides:>5} {t['drive'] * 1e3:7.2f}m {t['evaluate'] * 1e3:8.2f}m "
            f"{t['checks'] * 1e3:7.2f}m {total * 1e3:7.2f}m {b * 1e6:6.1f}µ "
            f"{total / b:6.0f}×"
        )
    totals = [sum(t.values()) for _, t, _, _ in rows]
    bases = [b for _, _, b, _ in rows]
    mean = statistics.fmean(totals)
    print(
        f"  mean per channel: {mean * 1e3:.2f} ms engine, "
        f"{statistics.fmean(bases) * 1e6:.1f} µs numpy baseline, "
        f"ratio {mean / statistics.fmean(bases):.0f}×; "
        f"board of {len(rows)} channels: {sum(totals) * 1e3:.0f} ms"
    )


def main(argv=None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rows", type=int, default=5000)
    ap.add_argument("--repeat", type=int, default=5)
    args = ap.parse_args(argv)

    inv = load_inventory(demo.demo_dir() / "greenhouse_inventory.xlsx")
    design, settings = load_design_and_settings(demo.demo_dir() / "greenhouse.toml")
    run("demo inventory", inv, design, settings, args.repeat)

    big = synthetic_inventory(args.rows, 40)
    run(f"synthetic {args.rows}", big, board_design(), Settings(), args.repeat)


if __name__ == "__main__":
    main()
