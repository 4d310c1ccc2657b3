"""Benchmark: read and check a 100,000-row switch CSV against a plain pandas.read_csv.

Both run in the same process on the same file; the script prints each time (best of
``--repeat``) and their ratio. Target: ``load_inventory`` at most 3x the plain read.

    python bench/bench_inventory.py [--rows 100000] [--unit-cells 0.1]
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parent))

from gen_inventory import switches  # noqa: E402

from selector.inventory import load_inventory  # noqa: E402


def best_of(fn, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


def main(argv: list[str] | None = None) -> float:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rows", type=int, default=100_000)
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--unit-cells", type=float, default=0.0)
    ap.add_argument("--repeat", type=int, default=3)
    args = ap.parse_args(argv)
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "switches.csv"
        switches(args.rows, args.seed, args.unit_cells).to_csv(path, index=False)
        size = path.stat().st_size / 2**20
        load_inventory([path])  # warm-up (imports, pint cache)
        t_plain = best_of(lambda: pd.read_csv(path), args.repeat)
        t_ours = best_of(lambda: load_inventory([path]), args.repeat)
        inv = load_inventory([path])
    ratio = t_ours / t_plain
    c = inv.report.tables["switches"]
    print(f"file: {args.rows} rows, {size:.1f} MiB, unit cells {args.unit_cells:.0%}")
    print(
        f"accepted {c['accepted']}, rejected {c['rejected']}, assumed values {len(inv.report.assumed)}"
    )
    print(f"pandas.read_csv          {t_plain:8.3f} s")
    print(f"load_inventory (checked) {t_ours:8.3f} s")
    print(f"ratio                    {ratio:8.2f} x   (target <= 3x)")
    return ratio


if __name__ == "__main__":
    main()
