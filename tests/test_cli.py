"""The `selector` command against its contract (overview: commands, exit codes, JSON)."""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
from _shared import CONTRACT_CHANNEL_FIELDS

from selector.cli import main
from selector.demo import demo_csv_files, demo_design, demo_workbook

CHANNEL_FIELDS = set(CONTRACT_CHANNEL_FIELDS)


def _json(capsys) -> dict:
    return json.loads(capsys.readouterr().out)


def test_check_reports_the_whole_demo_workbook_as_accepted(capsys):
    code = main(["check", str(demo_workbook()), "--json", "--strict"])
    report = _json(capsys)
    assert code == 0
    assert report["rejected_rows"] == []
    assert report["tables"]["switches"]["accepted"] >= 40
    for key in ("tables", "rejected_rows", "warnings", "assumed"):
        assert key in report


def test_check_on_the_demo_csv_set_matches_the_workbook(capsys):
    main(["check", str(demo_workbook()), "--json"])
    wb = _json(capsys)
    main(["check", *map(str, demo_csv_files()), "--json"])
    csv = _json(capsys)
    for table, counts in wb["tables"].items():
        assert csv["tables"][table]["accepted"] == counts["accepted"], table


def test_check_on_a_file_that_is_not_a_spreadsheet_prints_one_line_and_exits_2(
    tmp_path, capsys
):
    bad = tmp_path / "parts.xlsx"
    bad.write_bytes(b"this is not a zip archive at all")
    code = main(["check", str(bad)])
    err = capsys.readouterr().err.strip()
    assert code == 2
    assert len(err.splitlines()) == 1 and "parts.xlsx" in err
    assert "Traceback" not in err


def test_strict_check_exits_2_when_a_row_is_rejected(tmp_path, capsys):
    src = tmp_path / "switches.csv"
    src.write_text(
        "part,kind,package,price,v_rating,i_rating,tj_max,rth_jc,rds_on@10V [mohm]\n"
        "DEMO-A,nmos,TO-220,1.0,60,40,175,1.0,10\n"
        "DEMO-B,nmos,TO-220,1.0,sixty,40,175,1.0,10\n",
        encoding="utf-8",
    )
    assert main(["check", str(src)]) == 0
    capsys.readouterr()
    assert main(["check", str(src), "--strict", "--json"]) == 2
    report = _json(capsys)
    (row,) = report["rejected_rows"]
    assert row["row"] == 3 and row["column"].startswith("v_rating")


def test_demo_json_has_the_contract_fields(capsys):
    code = main(["demo", "--json", "--top", "2"])
    out = _json(capsys)
    assert code == 0
    assert out["solutions"], out.get("infeasible")
    best = out["solutions"][0]
    assert best["rank"] == 1 and best["total_cost"] > 0
    design_names = [c["channel"] for c in best["channels"]]
    import tomllib

    spec = tomllib.loads(demo_design().read_text(encoding="utf-8"))
    assert design_names == [c["name"] for c in spec["channel"]]
    for ch in best["channels"]:
        assert CHANNEL_FIELDS <= set(ch), CHANNEL_FIELDS - set(ch)
        assert ch["switch_count"] >= 1
        assert ch["tj_at_ambient_max"] <= ch["tj_limit"] + 1e-6
        for term in ("conduction", "switching", "total"):
            assert term in ch["loss"]
    assert "rejected" in out and "assumptions" in out
    costs = [s["total_cost"] for s in out["solutions"]]
    assert costs == sorted(costs)


def test_pick_with_no_feasible_selection_exits_3_and_explains(tmp_path, capsys):
    design = tmp_path / "hot.toml"
    design.write_text(
        "[conditions]\nambient_min = -5\nambient_max = 190\n\n"
        '[[channel]]\nname = "oven"\nsupply = 24\ncurrent = 8\nload = "resistive"\n'
        "drive = 12\n",
        encoding="utf-8",
    )
    code = main(["pick", str(demo_workbook()), "--design", str(design), "--json"])
    out = _json(capsys)
    assert code == 3
    assert out["solutions"] == []
    assert "oven" in out["infeasible"]


def test_pick_writes_the_workbook_and_csv(tmp_path, capsys):
    xlsx = tmp_path / "bom.xlsx"
    csv = tmp_path / "bom.csv"
    code = main(
        [
            "pick",
            str(demo_workbook()),
            "--design",
            str(demo_design()),
            "--bom",
            str(xlsx),
            "--bom-csv",
            str(csv),
        ]
    )
    assert code == 0
    from openpyxl import load_workbook

    wb = load_workbook(xlsx)
    assert len(wb.sheetnames) >= 5
    assert csv.read_text(encoding="utf-8").count("\n") >= 3


def test_why_names_the_rule_with_numbers(capsys):
    import tomllib

    spec = tomllib.loads(demo_design().read_text(encoding="utf-8"))
    channel = spec["channel"][0]["name"]
    from selector.inventory import load_inventory

    inv = load_inventory([str(demo_workbook())])
    part = str(inv.switches["part"].iloc[0])
    code = main(
        [
            "why",
            str(demo_workbook()),
            "--design",
            str(demo_design()),
            "--channel",
            channel,
            "--part",
            part,
        ]
    )
    out = capsys.readouterr().out
    assert code == 0
    assert part in out


def test_bad_design_exits_2_naming_channel_and_field(tmp_path, capsys):
    design = tmp_path / "bad.toml"
    design.write_text(
        '[[channel]]\nname = "valve"\nsupply = 24\ncurrent = 0.5\nload = "inductive"\n',
        encoding="utf-8",
    )
    code = main(["pick", str(demo_workbook()), "--design", str(design)])
    err = capsys.readouterr().err
    assert code == 2
    assert "valve" in err and "inductance" in err
    assert "Traceback" not in err


def test_installed_command_finds_the_demo_outside_the_source_tree(tmp_path):
    """`selector demo` must find its data after a plain install (package data)."""
    exe = Path(sys.executable).with_name("selector")
    if not exe.exists():
        exe_path = shutil.which("selector")
        if exe_path is None:
            reason = "the selector console script is not installed here"
            if os.environ.get("CI"):
                pytest.fail(reason)  # CI installs the package: never skip there
            pytest.skip(reason)
        exe = Path(exe_path)
    proc = subprocess.run(
        [str(exe), "check", "--json", str(demo_workbook())],
        cwd=tmp_path,
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert proc.returncode == 0, proc.stderr
    proc = subprocess.run(
        [str(exe), "demo", "--top", "1"],
        cwd=tmp_path,
        capture_output=True,
        text=True,
        timeout=300,
    )
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.strip()
