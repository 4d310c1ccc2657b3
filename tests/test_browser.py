"""End to end in a real browser: Debian's chromium driven by Playwright.

Starts ``streamlit run app.py`` headless on a free local port, uploads the demo
workbook through the page's file input, reads the best total, downloads the
bill-of-materials workbook and checks that it opens and that its total equals the
page's. A screenshot is saved in the test's temporary folder.

In CI (``SELECTOR_REQUIRE_BROWSER=1``, set by ``.ci/run``) a missing browser is a
failure; on a developer machine without chromium the test is skipped with that reason.
"""

from __future__ import annotations

import os
import re
import socket
import subprocess
import sys
import time
import urllib.request
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
CHROMIUM = Path("/usr/bin/chromium")
ARGS = [
    "--headless",
    "--no-sandbox",
    "--disable-gpu",
    "--disable-background-networking",
    "--disable-component-update",
    "--disable-sync",
    "--no-first-run",
    "--disable-quic",
]

pytestmark = pytest.mark.e2e


def _require_browser():
    missing = []
    if not CHROMIUM.exists():
        missing.append("Debian chromium at /usr/bin/chromium")
    try:
        import playwright.sync_api  # noqa: F401
    except ImportError:
        missing.append("the playwright Python package")
    if missing:
        reason = "browser test needs " + " and ".join(missing)
        if os.environ.get("SELECTOR_REQUIRE_BROWSER"):
            pytest.fail(reason)
        pytest.skip(reason)


def _free_port() -> int:
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        return s.getsockname()[1]


@pytest.fixture(scope="module")
def app_url():
    _require_browser()
    port = _free_port()
    cmd = [
        sys.executable,
        "-m",
        "streamlit",
        "run",
        str(ROOT / "app.py"),
        "--server.headless",
        "true",
        "--server.address",
        "127.0.0.1",
        "--server.port",
        str(port),
        "--browser.gatherUsageStats",
        "false",
        "--server.fileWatcherType",
        "none",
        "--server.runOnSave",
        "false",
        "--client.toolbarMode",
        "minimal",
    ]
    proc = subprocess.Popen(
        cmd,
        cwd=str(ROOT),
        stdout=subprocess.PIPE,
        stderr=subprocess.STDOUT,
        stdin=subprocess.DEVNULL,
    )
    url = f"http://127.0.0.1:{port}"
    deadline = time.time() + 60
    while time.time() < deadline:
        try:
            with urllib.request.urlopen(f"{url}/_stcore/health", timeout=2) as r:
                if r.read().decode().strip() == "ok":
                    break
        except OSError:
            time.sleep(0.3)
    else:
        proc.kill()
        out = proc.stdout.read().decode(errors="replace") if proc.stdout else ""
        pytest.fail(f"streamlit did not start:\n{out[-3000:]}")
    yield url
    proc.terminate()
    try:
        proc.wait(10)
    except subprocess.TimeoutExpired:
        proc.kill()


def test_upload_pick_and_download_workbook_in_a_real_browser(app_url, tmp_path):
    from openpyxl import load_workbook
    from playwright.sync_api import expect, sync_playwright

    from selector.demo import demo_workbook

    with sync_playwright() as p:
        browser = p.chromium.launch(
            executable_path=str(CHROMIUM), args=ARGS, headless=True
        )
        try:
            context = browser.new_context(
                accept_downloads=True, viewport={"width": 1400, "height": 1700}
            )
            page = context.new_page()
            page.goto(app_url)
            expect(page.get_by_text("Upload your inventory")).to_be_visible(
                timeout=60_000
            )
            page.get_by_test_id("stFileUploaderDropzoneInput").first.set_input_files(
                str(demo_workbook())
            )
            expect(page.get_by_text("Using your inventory")).to_be_visible(
                timeout=60_000
            )
            page.get_by_role("tab", name=re.compile("Ranked choices")).click()
            total_el = page.get_by_test_id("best-total").first
            expect(total_el).to_be_visible(timeout=120_000)
            total_text = total_el.inner_text()
            page_total = float(re.search(r"([0-9]+\.[0-9]+)", total_text).group(1))
            page.locator(".vega-embed").first.wait_for(timeout=60_000)
            page.screenshot(path=str(tmp_path / "results.png"))

            page.get_by_role("tab", name=re.compile("Take away")).click()
            button = page.get_by_role("button", name=re.compile("bill of materials"))
            expect(button).to_be_visible(timeout=60_000)
            with page.expect_download(timeout=60_000) as dl:
                button.click()
            out = tmp_path / "selection.xlsx"
            dl.value.save_as(out)
            page.screenshot(path=str(tmp_path / "export.png"))
        finally:
            browser.close()

    wb = load_workbook(out)
    from selector.bom import workbook_total

    assert (tmp_path / "results.png").stat().st_size > 0
    assert workbook_total(wb) == pytest.approx(page_total, abs=0.006)
