"""The ``selector`` command: a thin shell over the library.

Exit status (a contract that users' scripts rely on):

* 0 — done;
* 2 — bad input or usage: one clear message naming file, row and column, no traceback;
* 3 — no feasible selection (the reasons per channel are printed, or in ``--json``).

Set ``SELECTOR_DEBUG=1`` to see a traceback for an internal error.
"""

from __future__ import annotations

import argparse
import json
import math
import os
import subprocess
import sys
from collections.abc import Sequence
from pathlib import Path
from typing import Any

from selector import __version__
from selector.errors import SelectorError

EXIT_OK = 0
EXIT_INTERNAL = 1
EXIT_INPUT = 2
EXIT_INFEASIBLE = 3


def _json_default(obj: Any) -> Any:
    """Make numpy scalars, paths and NaN JSON-safe."""
    try:
        import numpy as np

        if isinstance(obj, np.generic):
            return obj.item()
        if isinstance(obj, np.ndarray):
            return obj.tolist()
    except ImportError:  # pragma: no cover - numpy is a dependency
        pass
    if isinstance(obj, Path):
        return str(obj)
    if hasattr(obj, "to_dict"):
        return obj.to_dict()
    return str(obj)


def _clean(obj: Any) -> Any:
    """Replace NaN/inf (not valid JSON) by None, recursively."""
    if isinstance(obj, float) and not math.isfinite(obj):
        return None
    if isinstance(obj, dict):
        return {str(k): _clean(v) for k, v in obj.items()}
    if isinstance(obj, list | tuple):
        return [_clean(v) for v in obj]
    try:
        import numpy as np

        if isinstance(obj, np.floating):
            return _clean(float(obj))
        if isinstance(obj, np.integer):
            return int(obj)
        if isinstance(obj, np.bool_):
            return bool(obj)
    except ImportError:  # pragma: no cover
        pass
    return obj


def print_json(obj: Any) -> None:
    """Print one JSON object on stdout."""
    print(json.dumps(_clean(obj), default=_json_default, indent=2, ensure_ascii=False))


def _build_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="selector",
        description=(
            "Pick power switches, heatsinks and thermal interfaces for the switched "
            "loads of a board, from the parts in your inventory."
        ),
    )
    p.add_argument("--version", action="version", version=f"selector {__version__}")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")
    sub.required = True

    c = sub.add_parser("check", help="read an inventory and report every row")
    c.add_argument("inventory", nargs="+", help="workbook or CSV file(s)")
    c.add_argument("--json", action="store_true", help="print the report as JSON")
    c.add_argument(
        "--strict", action="store_true", help="exit 2 when any row was rejected"
    )

    def add_pick_options(sp: argparse.ArgumentParser) -> None:
        sp.add_argument("--top", type=int, default=3, help="ranked solutions to show")
        sp.add_argument("--json", action="store_true", help="print the result as JSON")
        sp.add_argument("--bom", metavar="OUT.xlsx", help="write the workbook here")
        sp.add_argument(
            "--bom-csv", metavar="OUT.csv", help="write the bill of materials as CSV"
        )
        sp.add_argument(
            "--solver",
            default="cbc",
            choices=("cbc", "highs"),
            help="integer-program solver (default: cbc, bundled with PuLP)",
        )
        sp.add_argument(
            "--time-limit",
            type=float,
            default=60.0,
            metavar="SECONDS",
            help="stop the search after this long (the answer is then marked "
            "not proven optimal)",
        )

    k = sub.add_parser("pick", help="choose the cheapest safe parts for a design")
    k.add_argument("inventory", nargs="+", help="workbook or CSV file(s)")
    k.add_argument("--design", required=True, help="design file (TOML)")
    add_pick_options(k)

    w = sub.add_parser("why", help="explain why a part was or was not chosen")
    w.add_argument("inventory", nargs="+", help="workbook or CSV file(s)")
    w.add_argument("--design", required=True, help="design file (TOML)")
    w.add_argument("--channel", required=True, help="channel name")
    w.add_argument("--part", required=True, help="part id")

    d = sub.add_parser("demo", help="run the bundled design on the bundled inventory")
    add_pick_options(d)

    a = sub.add_parser("app", help="open the page in a browser")
    a.add_argument("--port", type=int, default=None)
    a.add_argument(
        "streamlit_args", nargs=argparse.REMAINDER, help="passed to streamlit run"
    )
    return p


def _load_inventory(paths: Sequence[str]):
    from selector.errors import InventoryError, Location

    for path in paths:
        if not Path(path).is_file():
            raise InventoryError("no such file", Location(file=str(path)))
    from selector.inventory import load_inventory

    return load_inventory(list(paths))


def _cmd_check(args: argparse.Namespace) -> int:
    inv = _load_inventory(args.inventory)
    report = inv.report
    if args.json:
        print_json(report.to_dict())
    else:
        print(report.format_text())
    if args.strict and report.rejected_rows:
        return EXIT_INPUT
    return EXIT_OK


def _warn_rejected(inv) -> None:
    n = len(inv.report.rejected_rows)
    if n:
        print(
            f"note: {n} inventory row(s) were rejected and are not considered; "
            "run `selector check` for the list",
            file=sys.stderr,
        )


def _run_pick(
    inventory_paths: Sequence[str], design_path: str, args: argparse.Namespace
) -> int:
    from selector.design import load_design
    from selector.pipeline import format_result, select

    inv = _load_inventory(inventory_paths)
    design = load_design(design_path)
    if args.top < 1:
        raise SelectorError("--top must be at least 1")
    result = select(
        inv, design, top=args.top, solver=args.solver, time_limit=args.time_limit
    )
    if args.json:
        print_json(result.to_dict())
    else:
        _warn_rejected(inv)
        print(format_result(result))
    if result.solutions and (args.bom or args.bom_csv):
        from selector.bom import bom_csv_text, workbook_bytes

        if args.bom:
            Path(args.bom).write_bytes(workbook_bytes(result, inv, design))
            if not args.json:
                print(f"workbook written to {args.bom}")
        if args.bom_csv:
            Path(args.bom_csv).write_text(
                bom_csv_text(result, inv, design), encoding="utf-8"
            )
            if not args.json:
                print(f"bill of materials written to {args.bom_csv}")
    return EXIT_OK if result.solutions else EXIT_INFEASIBLE


def _cmd_pick(args: argparse.Namespace) -> int:
    return _run_pick(args.inventory, args.design, args)


def _cmd_demo(args: argparse.Namespace) -> int:
    from selector.demo import demo_design, demo_workbook

    return _run_pick([str(demo_workbook())], str(demo_design()), args)


def _cmd_why(args: argparse.Namespace) -> int:
    from selector.design import load_design
    from selector.pipeline import why

    inv = _load_inventory(args.inventory)
    design = load_design(args.design)
    print(why(inv, design, args.channel, args.part))
    return EXIT_OK


def find_app() -> Path:
    """The page script: ./app.py, else the one beside the source checkout."""
    here = Path.cwd() / "app.py"
    if here.exists():
        return here
    src = Path(__file__).resolve().parent.parent / "app.py"
    if src.exists():
        return src
    raise SelectorError(
        "cannot find app.py: run `selector app` from the project folder"
    )


def _cmd_app(args: argparse.Namespace) -> int:
    app = find_app()
    cmd = [
        sys.executable,
        "-m",
        "streamlit",
        "run",
        str(app),
        "--browser.gatherUsageStats",
        "false",
    ]
    if args.port:
        cmd += ["--server.port", str(args.port)]
    cmd += list(args.streamlit_args or [])
    return subprocess.call(cmd, cwd=str(app.parent))


COMMANDS = {
    "check": _cmd_check,
    "pick": _cmd_pick,
    "why": _cmd_why,
    "demo": _cmd_demo,
    "app": _cmd_app,
}


def main(argv: Sequence[str] | None = None) -> int:
    """Entry point of the ``selector`` console script."""
    parser = _build_parser()
    args = parser.parse_args(argv)
    try:
        return COMMANDS[args.command](args)
    except SelectorError as exc:
        print(f"selector: {exc}", file=sys.stderr)
        return EXIT_INPUT
    except KeyboardInterrupt:
        print("selector: interrupted", file=sys.stderr)
        return 130
    except Exception as exc:  # never a traceback for the user
        if os.environ.get("SELECTOR_DEBUG"):
            raise
        print(
            f"selector: internal error ({type(exc).__name__}: {exc}); "
            "set SELECTOR_DEBUG=1 for details and please report it",
            file=sys.stderr,
        )
        return EXIT_INTERNAL


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
