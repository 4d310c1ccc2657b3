"""The page, driven headless with Streamlit's AppTest (no browser).

Checks the designer's path through the page: it opens on the bundled demo and shows
ranked selections; a changed condition changes the answer; an impossible design is
explained per channel; a broken inventory shows the check report, never a traceback.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from streamlit.testing.v1 import AppTest

APP = str(Path(__file__).resolve().parent.parent / "app.py")
TIMEOUT = 180

pytestmark = pytest.mark.app


def _open() -> AppTest:
    at = AppTest.from_file(APP, default_timeout=TIMEOUT)
    at.run()
    assert not at.exception, at.exception
    return at


def _best_total(at: AppTest) -> float | None:
    for m in at.metric:
        if m.label == "Total cost of the best selection":
            return float(m.value)
    return None


def _ranking(at: AppTest):
    for df in at.dataframe:
        value = df.value
        if "total cost" in value.columns and "rank" in value.columns:
            return value
    return None


def test_page_opens_on_demo_and_shows_ranked_results():
    at = _open()
    assert not at.error, [e.value for e in at.error]
    assert _best_total(at) is not None and _best_total(at) > 0
    ranking = _ranking(at)
    assert ranking is not None and len(ranking) >= 1
    assert list(ranking["rank"]) == sorted(ranking["rank"])
    # the three plots of a chosen channel plus the rule funnel are drawn
    assert len(at.get("vega_lite_chart")) >= 3
    # cautions are visible near the results
    assert any("licensed" in w.value for w in at.warning)


def test_hotter_ambient_changes_the_selection():
    at = _open()
    before_total = _best_total(at)
    before = _ranking(at)
    at.number_input(key="cond_ambient_max").set_value(70.0).run()
    assert not at.exception, at.exception
    after_total = _best_total(at)
    after = _ranking(at)
    changed = after_total != before_total or after is None or not after.equals(before)
    assert changed
    if after is not None:
        # a hotter room never makes the hottest junction cooler
        assert (
            after["hottest junction (°C)"].iloc[0]
            >= before["hottest junction (°C)"].iloc[0] - 1e-6
        )


def test_impossible_design_is_explained_per_channel_without_traceback():
    at = _open()
    at.number_input(key="cond_ambient_max").set_value(190.0).run()
    assert not at.exception, at.exception
    assert _best_total(at) is None
    titles = [e.label for e in at.expander]
    assert any(t.startswith("Why channel") for t in titles), titles


def test_broken_inventory_shows_the_check_report_not_an_exception():
    at = _open()
    broken = b"part,kind,package\nDEMO-X1,nmos,TO-220\n"  # no price, no ratings
    at.file_uploader(key="inventory_files").set_value(
        [("broken.csv", broken, "text/csv")]
    ).run()
    assert not at.exception, at.exception
    messages = " ".join(e.value for e in at.error) + " ".join(
        w.value for w in at.warning
    )
    assert "broken.csv" in messages


def _picks(at: AppTest):
    for df in at.dataframe:
        value = df.value
        if "channel" in value.columns and "switch" in value.columns:
            return value.set_index("channel")
    return None


def test_channel_table_edit_changes_the_result():
    """An edit in the channel table (through session state, as AppTest requires)."""
    at = _open()
    before = _picks(at)
    name = before.index[0]
    key = f"channels_{at.session_state['editor_version']}"
    at.session_state[key] = {
        "edited_rows": {0: {"current": 2.0}},
        "added_rows": [],
        "deleted_rows": [],
    }
    at.run()
    assert not at.exception, at.exception
    after = _picks(at)
    col = "Tj at hottest ambient (°C)"
    # a quarter of the current: the junction of that channel runs cooler
    assert after.loc[name, col] < before.loc[name, col]
