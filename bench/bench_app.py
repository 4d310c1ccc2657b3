"""Page responsiveness: a re-run after one edit on the demo (target: under 1 s).

Drives the page with Streamlit's AppTest in one process and prints, in the same run:
the cold first run, a re-run with nothing changed (all cached: the baseline), and a
re-run after changing one condition (hottest ambient) and after editing one cell of the
channel table. Ratios are against the unchanged re-run.

    python bench/bench_app.py
"""

from __future__ import annotations

import time
from pathlib import Path

from streamlit.testing.v1 import AppTest

APP = str(Path(__file__).resolve().parent.parent / "app.py")


def timed(fn) -> float:
    t0 = time.perf_counter()
    fn()
    return time.perf_counter() - t0


def main() -> None:
    at = AppTest.from_file(APP, default_timeout=300)
    cold = timed(at.run)
    assert not at.exception, at.exception
    same = min(timed(at.run) for _ in range(3))
    edits = []
    for value in (46.0, 47.0, 48.0):
        at.number_input(key="cond_ambient_max").set_value(value)
        edits.append(timed(at.run))
    key = f"channels_{at.session_state['editor_version']}"
    cell = []
    for current in (7.5, 7.0, 6.5):
        at.session_state[key] = {
            "edited_rows": {0: {"current": current}},
            "added_rows": [],
            "deleted_rows": [],
        }
        cell.append(timed(at.run))
    assert not at.exception, at.exception
    print(f"cold first run           {cold:7.3f} s")
    print(f"re-run, nothing changed  {same:7.3f} s  (baseline)")
    print(
        f"re-run, ambient edited   {max(edits):7.3f} s worst of 3  "
        f"ratio {max(edits) / same:6.1f}x  target < 1 s: "
        f"{'met' if max(edits) < 1 else 'MISSED'}"
    )
    print(
        f"re-run, one cell edited  {max(cell):7.3f} s worst of 3  "
        f"ratio {max(cell) / same:6.1f}x  target < 1 s: "
        f"{'met' if max(cell) < 1 else 'MISSED'}"
    )


if __name__ == "__main__":
    main()
