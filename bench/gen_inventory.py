"""Synthetic inventories for benchmarks (seeded; invented parts, no real products).

Usage::

    python bench/gen_inventory.py --rows 100000 --out bench/out/switches_100k.csv
    python bench/gen_inventory.py --rows 2000 --out bench/out/inv --all-tables

The switch table mixes N-/P-channel MOSFETs and IGBTs in the usual packages with the
overview's columns: units sit in the headers (``rds_on@10V [mohm]``), some cells carry
their own unit when ``--unit-cells`` is above zero, and optional columns are left blank
on part of the rows so that defaults are exercised.
"""

from __future__ import annotations

import argparse
from pathlib import Path

import numpy as np
import pandas as pd

PACKAGES = np.array(["TO-220", "TO-247", "D2PAK", "DPAK", "SO-8"])


def switches(rows: int, seed: int = 1, unit_cells: float = 0.0) -> pd.DataFrame:
    """A synthetic switch table of ``rows`` rows (numbers as written in a sheet)."""
    rng = np.random.default_rng(seed)
    kind = rng.choice(
        np.array(["nmos", "pmos", "igbt"]), size=rows, p=[0.6, 0.25, 0.15]
    )
    mos = kind != "igbt"
    pkg = rng.choice(PACKAGES, size=rows)
    v = rng.choice(np.array([20, 30, 40, 60, 100, 150, 200, 600, 650, 1200]), size=rows)
    v = np.where(kind == "igbt", rng.choice(np.array([600, 650, 1200]), size=rows), v)
    i = np.round(rng.uniform(2, 120, rows), 1)
    rds10 = np.round(rng.lognormal(np.log(10), 0.8, rows), 2)  # mΩ
    qg = np.round(rng.uniform(5, 150, rows), 1)  # nC
    rds45 = np.where(
        rng.random(rows) < 0.6, np.round(rds10 * rng.uniform(1.2, 1.8, rows), 2), np.nan
    )
    df = pd.DataFrame(
        {
            "part": [f"SYN-{k:06d}" for k in range(rows)],
            "kind": kind,
            "package": pkg,
            "price": np.round(rng.uniform(0.1, 12, rows), 2),
            "stock": np.where(
                rng.random(rows) < 0.2, np.nan, rng.integers(0, 500, rows)
            ),
            "v_rating [V]": v,
            "i_rating [A]": i,
            "tj_max [°C]": rng.choice(np.array([150, 175]), size=rows),
            "rth_jc [K/W]": np.round(rng.uniform(0.3, 4, rows), 2),
            "rds_on@10V [mohm]": np.where(mos, rds10, np.nan),
            "rds_on@4.5V [mohm]": np.where(mos, rds45, np.nan),
            "vce_sat [V]": np.where(
                ~mos, np.round(rng.uniform(1.4, 2.4, rows), 2), np.nan
            ),
            "vce_sat_i [A]": np.where(~mos, np.round(i * 0.8, 1), np.nan),
            "rth_ja [K/W]": np.where(
                rng.random(rows) < 0.85, np.round(rng.uniform(35, 90, rows), 0), np.nan
            ),
            "tab": np.where(
                rng.random(rows) < 0.9, np.where(mos, "drain", "collector"), ""
            ),
            "vgs_max [V]": np.where(rng.random(rows) < 0.7, 20.0, np.nan),
            "vth_max [V]": np.round(rng.uniform(1.5, 4, rows), 2),
            "rds_hot_ratio": np.where(
                rng.random(rows) < 0.5, np.round(rng.uniform(1.5, 2.2, rows), 2), np.nan
            ),
            "qg [nC]": qg,
            "qgd [nC]": np.round(qg * rng.uniform(0.15, 0.4, rows), 1),
            "coss [pF]": np.round(rng.uniform(50, 2000, rows), 0),
            "i_pulse [A]": np.round(i * 4, 0),
            "eas [mJ]": np.where(
                rng.random(rows) < 0.5, np.round(rng.uniform(10, 500, rows), 0), np.nan
            ),
            "mpn": [f"X{k:07d}" for k in range(rows)],
        }
    )
    if unit_cells > 0:
        sel = rng.random(rows) < unit_cells
        col = df["rds_on@10V [mohm]"].astype(object)
        col[sel & mos] = [f"{x:.2f} mΩ" for x in rds10[sel & mos]]
        df["rds_on@10V [mohm]"] = col
    return df


def heatsinks(rows: int, seed: int = 2) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    r = np.round(rng.uniform(0.8, 20, rows), 2)
    return pd.DataFrame(
        {
            "part": [f"SYN-HS-{k:05d}" for k in range(rows)],
            "price": np.round(rng.uniform(0.5, 15, rows), 2),
            "rth_sa [K/W]": r,
            "rth_sa@2m/s [K/W]": np.round(r * 0.45, 2),
            "fits": rng.choice(
                np.array(["TO-220", "TO-220; TO-247", "TO-247", "D2PAK; DPAK"]), rows
            ),
            "positions": rng.integers(1, 4, rows),
        }
    )


def interfaces(rows: int, seed: int = 3) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    ins = rng.random(rows) < 0.5
    return pd.DataFrame(
        {
            "part": [f"SYN-IF-{k:05d}" for k in range(rows)],
            "price": np.round(rng.uniform(0.02, 1, rows), 2),
            "fits": rng.choice(np.array(["TO-220", "TO-247", "TO-220; TO-247"]), rows),
            "rth_cs [K/W]": np.round(
                np.where(ins, rng.uniform(0.8, 3, rows), rng.uniform(0.2, 0.6, rows)), 2
            ),
            "insulating": np.where(ins, "yes", "no"),
        }
    )


def main(argv: list[str] | None = None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--rows", type=int, default=100_000)
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument(
        "--unit-cells",
        type=float,
        default=0.0,
        help="fraction of rds cells with their own unit",
    )
    ap.add_argument(
        "--out",
        type=Path,
        required=True,
        help="CSV file, or a folder with --all-tables",
    )
    ap.add_argument("--all-tables", action="store_true")
    args = ap.parse_args(argv)
    if args.all_tables:
        args.out.mkdir(parents=True, exist_ok=True)
        switches(args.rows, args.seed, args.unit_cells).to_csv(
            args.out / "switches.csv", index=False
        )
        heatsinks(max(args.rows // 20, 1)).to_csv(
            args.out / "heatsinks.csv", index=False
        )
        interfaces(max(args.rows // 50, 1)).to_csv(
            args.out / "interfaces.csv", index=False
        )
    else:
        args.out.parent.mkdir(parents=True, exist_ok=True)
        switches(args.rows, args.seed, args.unit_cells).to_csv(args.out, index=False)
    print(f"wrote {args.out}")


if __name__ == "__main__":
    main()
