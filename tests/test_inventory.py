"""Tests of selector.inventory: layouts, header folding, units, row checks, the report.

Fixture files live in tests/data/inventory (small, invented parts; some deliberately
broken). Unit conversions are checked against pint's own conversions (a fresh registry,
number and unit given apart). Defaults are checked against the sources the schema names
(physics.md sections, common practice), as quoted in each test's docstring.
"""

from __future__ import annotations

import hashlib
import io
import json
import os
import zipfile
from pathlib import Path

import numpy as np
import openpyxl
import pandas as pd
import pint
import pytest

from selector import inventory as inv_mod
from selector.errors import InputError, InventoryError
from selector.inventory import Inventory, InventoryReport, RowIssue, load_inventory
from selector.schema import TABLES

DATA = Path(__file__).parent / "data" / "inventory"
ROOT = Path(__file__).resolve().parents[1]
REF = pint.UnitRegistry()


def ref(number: float, unit: str, target: str) -> float:
    return float(REF.Quantity(number, unit).to(target).magnitude)


def load(*names: str) -> Inventory:
    return load_inventory([DATA / n for n in names])


def row_of(df: pd.DataFrame, part: str) -> pd.Series:
    hit = df[df["part"] == part]
    assert len(hit) == 1, part
    return hit.iloc[0]


def rejections(report: InventoryReport) -> dict[str, list[RowIssue]]:
    out: dict[str, list[RowIssue]] = {}
    for i in report.rejected_rows:
        out.setdefault(i.part, []).append(i)
    return out


def csv_bytes(text: str, encoding: str = "utf-8") -> bytes:
    return text.encode(encoding)


HEADER = "part,kind,package,price,v_rating,i_rating,tj_max,rth_jc,rds_on@10V\n"


# ----------------------------------------------------------------------------- layouts


def test_one_csv_per_table_found_by_file_name():
    inv = load(
        "switches.csv", "heatsinks.csv", "interfaces.csv", "diodes.csv", "drivers.csv"
    )
    counts = {t: c["accepted"] for t, c in inv.report.tables.items()}
    assert counts == {
        "switches": 6,
        "heatsinks": 3,
        "interfaces": 3,
        "diodes": 2,
        "drivers": 3,
    }
    assert inv.report.rejected_count == 0


def test_csv_table_found_by_its_columns_when_the_name_says_nothing(tmp_path):
    (tmp_path / "stock_export.csv").write_text(
        HEADER + "A1,nmos,TO-220,1,60,30,175,1.5,0.01\n"
    )
    (tmp_path / "more.csv").write_text(
        "part,price,fits,rth_cs,insulating\nP1,0.1,TO-220,2,yes\n"
    )
    inv = load_inventory([tmp_path / "stock_export.csv", tmp_path / "more.csv"])
    assert list(inv.switches["part"]) == ["A1"]
    assert list(inv.interfaces["part"]) == ["P1"]


def test_workbook_with_one_sheet_per_table():
    """Sheets found by name ('Heat Sinks', 'Gate drivers') or by columns ('TIM');
    a notes sheet is skipped; a title above the header moves the header to row 3."""
    inv = load("workbook.xlsx")
    r = inv.report
    assert {t: c["accepted"] for t, c in r.tables.items()} == {
        "switches": 3,
        "heatsinks": 1,
        "interfaces": 2,
        "diodes": 1,
        "drivers": 1,
    }
    assert r.tables["switches"]["blank"] == 1 and r.tables["switches"]["rejected"] == 1
    bad = r.rejected_rows[0]
    assert (bad.file.endswith("workbook.xlsx"), bad.sheet, bad.row, bad.column) == (
        True,
        "Switches",
        8,
        "v_rating [V]",
    )
    assert "a current" in bad.reason and bad.value == "60 A"
    assert r.files[0]["skipped_sheets"] == ["Read me"]
    n1 = row_of(inv.switches, "X-N1")
    assert n1["source_sheet"] == "Switches" and n1["source_row"] == 4
    # a numeric part id stays the id the user typed; a text cell with a decimal comma
    assert row_of(inv.switches, "1001")["rth_jc"] == pytest.approx(0.5)
    assert bool(row_of(inv.interfaces, "X-I1")["insulating"]) is False
    assert bool(row_of(inv.interfaces, "X-I2")["insulating"]) is True


def test_one_csv_with_a_category_column():
    inv = load("combined_category.csv")
    r = inv.report
    assert sorted(inv.switches["part"]) == [
        "C-N1",
        "C-N2",
        "C-N3",
    ]  # 'Transistors' → switches
    assert list(inv.heatsinks["part"]) == ["C-H1"] and list(inv.interfaces["part"]) == [
        "C-I1"
    ]
    assert r.unassigned == {"rejected": 1, "blank": 1}
    (bad,) = r.rejected_rows
    assert (
        bad.row == 8
        and bad.column == "category"
        and "unknown category 'fans'" in bad.reason
    )
    total = sum(sum(c.values()) for c in r.tables.values()) + sum(r.unassigned.values())
    assert total == 7  # every data row accounted for


def test_uploaded_bytes_and_a_folder_path(tmp_path):
    data = (DATA / "switches.csv").read_bytes()
    inv = load_inventory([("switches.csv", data)])
    assert inv.report.tables["switches"]["accepted"] == 6
    assert inv.switches["source_file"].iloc[0] == "switches.csv"
    folder = tmp_path / "inv"
    folder.mkdir()
    (folder / "switches.csv").write_bytes(data)
    (folder / "drivers.csv").write_bytes((DATA / "drivers.csv").read_bytes())
    inv2 = load_inventory([folder])
    assert inv2.report.tables["drivers"]["accepted"] == 3


def test_every_table_is_present_with_its_columns_even_when_empty():
    inv = load("switches_utf8_bom.csv")
    for name, schema in TABLES.items():
        df = inv.table(name)
        for col in (*schema.column_names, "source_file", "source_sheet", "source_row"):
            assert col in df.columns, (name, col)
    assert len(inv.heatsinks) == 0 and len(inv.sink_airflow) == 0
    assert list(inv.rds_points.columns) == ["part", "vgs", "rds_on"]
    assert list(inv.sink_airflow.columns) == ["part", "airflow", "rth_sa"]


# ----------------------------------------------------------------------------- headers, units


def test_headers_fold_case_spaces_dashes_underscores_and_carry_units():
    """'Part ID', 'V-Rating [V]', 'RTH JC [°C/W]', 'Rds(on) @ 10 V [mohm]' all match."""
    inv = load("switches.csv")
    n1 = row_of(inv.switches, "T-N1")
    assert n1["v_rating"] == 60 and n1["i_rating"] == 50 and n1["tj_max"] == 175
    assert n1["rth_jc"] == pytest.approx(ref(1.2, "delta_degC/W", "K/W"))
    pts = inv.rds_points[inv.rds_points["part"] == "T-N1"]
    assert list(pts["vgs"]) == [4.5, 10.0]
    assert list(pts["rds_on"]) == pytest.approx(
        [ref(12, "milliohm", "ohm"), ref(8, "milliohm", "ohm")]
    )


def test_cells_with_their_own_units_and_default_units_for_bare_numbers():
    """Cell units (6,5 mOhm, 100 V, 0.6 K/W, -8 A) and default units (qg nC, coss pF,
    t_rise ns, e_on mJ) against pint."""
    inv = load("switches.csv")
    sw = inv.switches
    n2 = row_of(sw, "T-N2")
    assert n2["v_rating"] == 100 and n2["rth_jc"] == pytest.approx(0.6)
    assert inv.rds_points.set_index("part").loc["T-N2", "rds_on"] == pytest.approx(
        ref(4.5, "milliohm", "ohm")
    )
    n4 = inv.rds_points.set_index("part").loc["T-N4", "rds_on"]
    assert n4 == pytest.approx(
        ref(6.5, "milliohm", "ohm")
    )  # decimal comma in a quoted cell
    n1 = row_of(sw, "T-N1")
    assert n1["qg"] == pytest.approx(ref(40, "nC", "C"))
    assert n1["coss"] == pytest.approx(ref(900, "pF", "F"))
    assert n1["t_rise"] == pytest.approx(ref(25, "ns", "s"))
    g1 = row_of(sw, "T-G1")
    assert g1["e_on"] == pytest.approx(ref(1.2, "mJ", "J")) and g1[
        "e_off"
    ] == pytest.approx(ref(0.8, "mJ", "J"))
    p1 = row_of(sw, "T-P1")
    assert (p1["v_rating"], p1["i_rating"], p1["vgs_max"], p1["vth_max"]) == (
        30,
        8,
        12,
        2.5,
    )


def test_heatsink_units_airflow_points_geometry_and_fits():
    inv = load("switches_utf8_bom.csv", "heatsinks.csv")
    hs = inv.heatsinks
    h1 = row_of(hs, "H-1")
    assert h1["fits"] == ("TO-220", "TO-247") and h1["positions"] == 2
    air = inv.sink_airflow[inv.sink_airflow["part"] == "H-1"]
    assert list(air["airflow"]) == pytest.approx(
        [ref(2, "m/s", "m/s"), ref(400, "ft/min", "m/s")]
    )
    assert list(air["rth_sa"]) == pytest.approx([3.1, 2.9])
    h2 = row_of(hs, "H-2")
    assert h2["rth_sa_rise"] == 75 and h2["positions"] == 1 and np.isnan(h2["stock"])
    h3 = row_of(hs, "H-3")
    assert np.isnan(h3["rth_sa"]) and h3["fits"] == ("TO-247", "TO-3P")
    assert h3["length"] == pytest.approx(ref(100, "mm", "m")) and h3[
        "fin_thickness"
    ] == pytest.approx(ref(1.5, "mm", "m"))
    assert h3["fin_count"] == 10 and h3["finish"] == "black anodised"
    assert hs["positions"].dtype == np.int64


def test_interfaces_diodes_drivers_normalise():
    inv = load("switches_utf8_bom.csv", "interfaces.csv", "diodes.csv", "drivers.csv")
    i = inv.interfaces.set_index("part")
    assert i.loc["I-PAD", "isolation_voltage"] == pytest.approx(ref(4, "kV", "V"))
    assert (
        list(i["insulating"]) == [False, True, True] and i["insulating"].dtype == bool
    )
    assert i.loc["I-PAD", "fits"] == ("TO-220",)
    d = inv.diodes.set_index("part")
    assert (
        d.loc["D-2", "v_rrm"] == 200
        and d.loc["D-2", "i_avg"] == 3
        and d.loc["D-1", "package"] == "DO-41"
    )
    assert d.loc["D-1", "tj_max"] == 150  # default, listed as assumed
    k = inv.drivers.set_index("part")["kind"]
    assert list(k) == ["low_side", "high_side", "isolated"]


@pytest.mark.parametrize(
    ("spelling", "kind"),
    [
        ("N-channel", "nmos"),
        ("N-ch MOSFET", "nmos"),
        ("nfet", "nmos"),
        ("NMOS", "nmos"),
        ("MOSFET N", "nmos"),
        ("P-Channel", "pmos"),
        ("pfet", "pmos"),
        ("p ch", "pmos"),
        ("IGBT", "igbt"),
        ("n-igbt", "igbt"),
    ],
)
def test_kind_synonyms(spelling, kind):
    text = HEADER + f"K1,{spelling},TO-220,1,60,30,175,1.5,0.01\n"
    if kind == "igbt":
        text = (
            HEADER.strip()
            + ",vce_sat,vce_sat_i\n"
            + f"K1,{spelling},TO-220,1,600,30,175,1.5,,1.8,30\n"
        )
    inv = load_inventory([("switches.csv", csv_bytes(text))])
    assert list(inv.switches["kind"]) == [kind]


@pytest.mark.parametrize(
    ("spelling", "package"),
    [
        ("TO220", "TO-220"),
        ("to-220ab", "TO-220"),
        ("TO-247-3", "TO-247"),
        ("D²PAK", "D2PAK"),
        ("TO-263", "D2PAK"),
        ("TO-252", "DPAK"),
        ("SOIC-8", "SO-8"),
        ("SO8", "SO-8"),
        ("TO-220FP", "TO-220F"),
    ],
)
def test_package_names_are_normalised(spelling, package):
    inv = load_inventory(
        [
            (
                "switches.csv",
                csv_bytes(HEADER + f"P1,nmos,{spelling},1,60,30,175,1.5,0.01\n"),
            )
        ]
    )
    assert inv.switches["package"].iloc[0] == package


def test_header_unit_in_parentheses_when_the_rest_is_a_column():
    text = "part,kind,package,price,v_rating (kV),i_rating,tj_max,rth_jc (K/W),rds_on@10V [mohm]\nA,nmos,TO-220,1,0.06,30,175,1.5,10\n"
    sw = load_inventory([("switches.csv", csv_bytes(text))]).switches
    assert sw["v_rating"].iloc[0] == pytest.approx(60.0)


# ----------------------------------------------------------------------------- CSV dialects


def test_semicolons_decimal_commas_and_a_latin1_file():
    """cp1252 (Latin-1 family) with ° and µ; ';' separators; decimal commas; the
    thousands dot in '1.250' (stock) is read as 1250 in a decimal-comma file."""
    inv = load("semicolon_decimal_comma_cp1252.csv")
    info = inv.report.files[0]
    assert (info["encoding"], info["separator"], info["decimal"]) == (
        "windows-1252",
        "semicolon",
        "comma",
    )
    l1 = row_of(inv.switches, "L-1")
    assert l1["price"] == pytest.approx(0.85) and l1["stock"] == 1250
    assert l1["rth_jc"] == pytest.approx(1.2) and l1["qg"] == pytest.approx(
        ref(41.5, "nC", "C")
    )
    assert l1["notes"] == "Rückseite µ-Pad"
    pts = inv.rds_points[inv.rds_points["part"] == "L-1"]
    assert list(pts["vgs"]) == [4.5, 10.0]  # 'rds_on@4,5V' in the header
    assert list(pts["rds_on"]) == pytest.approx(
        [ref(12.5, "milliohm", "ohm"), ref(8.5, "milliohm", "ohm")]
    )
    assert row_of(inv.switches, "L-2")["rth_jc"] == pytest.approx(2.5)


def test_utf8_with_bom_and_utf16():
    a = load("switches_utf8_bom.csv")
    assert list(a.switches["part"]) == ["B-1", "B-2"]  # no '\ufeffpart' header
    assert a.report.files[0]["encoding"] == "utf-8 (with BOM)"
    b = load("switches_utf16_tab.csv")
    assert (
        list(b.switches["part"]) == ["U-1"] and b.report.files[0]["separator"] == "tab"
    )
    assert b.rds_points["rds_on"].iloc[0] == pytest.approx(0.01)


@pytest.mark.parametrize(
    "encoding", ["utf-8", "utf-8-sig", "cp1252", "latin-1", "utf-16"]
)
def test_same_sheet_in_every_supported_encoding(encoding):
    text = "part;kind;package;price;v_rating;i_rating;tj_max;rth_jc [°C/W];rds_on@10V [mohm]\nE-1;nmos;TO-220;0,5;60;30;175;1,5;10\n"
    inv = load_inventory([("switches.csv", text.encode(encoding))])
    assert inv.switches["rth_jc"].iloc[0] == pytest.approx(1.5)


def test_thousands_dot_is_refused_when_the_file_does_not_say_which_mark_it_uses():
    """'1.250' in a file with no other decimals: never guessed (tooling.md §5)."""
    text = "part;kind;package;price;v_rating;i_rating;tj_max;rth_jc;rds_on@10V [mohm];stock\nA;nmos;TO-220;1;60;30;175;2;10;1.250\n"
    inv = load_inventory([("switches.csv", text.encode())])
    (bad,) = inv.report.rejected_rows
    assert bad.column == "stock" and "ambiguous" in bad.reason


def test_decimal_point_file_reads_1_250_as_one_and_a_quarter():
    text = "part,kind,package,price,v_rating,i_rating,tj_max,rth_jc,rds_on@10V [mohm]\nA,nmos,TO-220,0.75,60,30,175,1.250,10\n"
    inv = load_inventory([("switches.csv", text.encode())])
    assert inv.switches["rth_jc"].iloc[0] == pytest.approx(1.25)


def test_rows_with_too_many_cells_are_rejected_not_dropped():
    text = (
        HEADER
        + "A,nmos,TO-220,1,60,30,175,1.5,0.01\nB,nmos,TO-220,1,60,30,175,1.5,0.01,oops\n"
    )
    inv = load_inventory([("switches.csv", text.encode())])
    assert list(inv.switches["part"]) == ["A"]
    (bad,) = inv.report.rejected_rows
    assert bad.row == 3 and "more cells" in bad.reason


def test_rows_above_the_header_are_reported_and_rows_numbered_as_seen():
    inv = load("title_rows.csv")
    assert list(inv.switches["source_row"]) == [4, 5]
    assert inv.report.files[0]["header_row"] == 3
    assert any(
        w.row == 1 and "above the header" in w.reason for w in inv.report.warnings
    )


# ----------------------------------------------------------------------------- rejections


def test_every_rejection_reason_names_row_column_value_and_why():
    inv = load("rejections.csv")
    r = inv.report
    assert r.tables["switches"] == {"accepted": 1, "rejected": 12, "blank": 1}
    rej = rejections(r)
    expect = {
        "R-NOVCE": (3, "vce_sat", "missing required value for this kind"),
        "R-NORDS": (4, "rds_on@VGS", "needs at least one rds_on@VGS"),
        "R-AMPS": (5, "v_rating", "'A' is a current, this column needs a voltage"),
        "R-NEG": (6, "rth_jc", "must be greater than zero"),
        "R-ZERO": (7, "rth_jc", "must be greater than zero"),
        "R-NAN": (8, "v_rating", "not a number"),
        "R-BJT": (10, "kind", "out of scope"),
        "R-KIND": (11, "kind", "unknown kind 'triac'"),
        "R-MISS": (12, "price", "missing required value"),
        "R-UNIT": (13, "rds_on@10V", "is a length"),
        "R-DARL": (15, "kind", "bipolar transistor"),
    }
    for part, (row, column, fragment) in expect.items():
        first = rej[part][0]
        assert (first.row, first.column) == (row, column), part
        assert fragment in first.reason, (part, first.reason)
        assert (
            first.file.endswith("rejections.csv")
            and first.sheet is None
            and first.table == "switches"
        )
    assert rej["R-AMPS"][0].value == "60 A" and rej["R-NAN"][0].value == "sixty"
    assert {i.column for i in rej["R-NOVCE"]} == {"vce_sat", "vce_sat_i"}
    dup = rej["R-OK"]
    assert dup[0].row == 9 and "duplicate part id (first on row 2)" in dup[0].reason
    assert list(inv.switches["part"]) == ["R-OK"]


def test_duplicate_part_ids_across_files_name_the_first_file(tmp_path):
    a = HEADER + "SAME,nmos,TO-220,1,60,30,175,1.5,0.01\n"
    inv = load_inventory(
        [
            ("switches_a.csv", a.encode()),
            ("switches_b.csv", a.replace("SAME", "same").encode()),
        ]
    )
    (bad,) = inv.report.rejected_rows
    assert (
        bad.file == "switches_b.csv"
        and "first on row 2 of switches_a.csv" in bad.reason
    )


def test_heatsink_needs_rth_sa_or_the_whole_geometry():
    text = "part,price,fits,rth_sa,length,width,base_thickness,fin_height,fin_count,fin_thickness\nOK1,1,TO-220,5,,,,,,\nOK2,1,TO-220,,100,80,4,25,10,1.5\nBAD,1,TO-220,,100,80,,25,10,1.5\n"
    inv = load_inventory(
        [
            (
                "switches.csv",
                (HEADER + "A,nmos,TO-220,1,60,30,175,1.5,0.01\n").encode(),
            ),
            ("heatsinks.csv", text.encode()),
        ]
    )
    assert list(inv.heatsinks["part"]) == ["OK1", "OK2"]
    (bad,) = inv.report.rejected_rows
    assert bad.part == "BAD" and "fin geometry" in bad.reason


def test_whole_numbers_and_yes_no_columns():
    sw = HEADER + "A,nmos,TO-220,1,60,30,175,1.5,0.01\n"
    hs = "part,price,fits,rth_sa,positions\nH1,1,TO-220,5,2.5\n"
    tim = "part,price,fits,rth_cs,insulating\nT1,1,TO-220,1,maybe\n"
    inv = load_inventory(
        [
            ("switches.csv", sw.encode()),
            ("heatsinks.csv", hs.encode()),
            ("interfaces.csv", tim.encode()),
        ]
    )
    reasons = {i.part: i.reason for i in inv.report.rejected_rows}
    assert "whole number" in reasons["H1"] and "not yes or no" in reasons["T1"]


# ----------------------------------------------------------------------------- warnings


def test_implausible_values_are_warnings_not_rejections():
    inv = load("warnings.csv")
    r = inv.report
    assert r.tables["switches"]["accepted"] == 7 and r.rejected_count == 0
    by_part = {w.part: w for w in r.warnings}
    assert "implausible 65 K/W" in by_part["W-HOTRTH"].reason  # rth_jc above 50 K/W
    assert "implausible 250 °C" in by_part["W-TJ"].reason  # tj_max outside 100–200 °C
    assert "should fall as the gate voltage rises" in by_part["W-RISE"].reason
    assert "not one the tool knows" in by_part["W-PKG"].reason
    assert "exceeds qg" in by_part["W-QGD"].reason and by_part["W-QGD"].value == "30 nC"
    assert "lowest Rds(on) gate voltage" in by_part["W-VTH"].reason
    assert "below the continuous rating" in by_part["W-IPULSE"].reason
    assert by_part["W-HOTRTH"].row == 2 and by_part["W-HOTRTH"].column == "rth_jc"


def test_igbt_energies_without_test_point_are_dropped_with_a_warning():
    text = "part,kind,package,price,v_rating,i_rating,tj_max,rth_jc,vce_sat,vce_sat_i,e_on\nG,igbt,TO-247,2,600,40,175,0.5,1.9,40,1.2\n"
    inv = load_inventory([("switches.csv", text.encode())])
    assert np.isnan(inv.switches["e_on"].iloc[0])
    assert any("test point" in w.reason for w in inv.report.warnings)


# ----------------------------------------------------------------------------- assumed


def test_defaults_fill_blank_cells_and_are_listed_as_assumed():
    """vgs_max 20 V (lowest Rds point ≥ 10 V) or 12 V (below), physics.md §9 common
    practice; tab = drain / collector for TO-220/TO-247/D2PAK (physics.md §7.3);
    rds_hot_ratio 1.8 (≤ 100 V) / 2.2 via model M1 (physics.md §1.2); rth_ja per package
    (physics.md §5.1: TO-220 62, TO-247 40, D2PAK 40 K/W); vce_sat_vge 15 V."""
    inv = load("switches.csv")
    sw = inv.switches.set_index("part")
    assert sw.loc["T-N1", "vgs_max"] == 12  # rds_on given at 4.5 V
    assert sw.loc["T-N3", "vgs_max"] == 12
    assert sw.loc["T-N4", "vgs_max"] == 20  # only rds_on@10V
    assert sw.loc["T-G1", "vgs_max"] == 20 and sw.loc["T-G1", "vce_sat_vge"] == 15
    assert sw.loc["T-N1", "tab"] == "drain" and sw.loc["T-G1", "tab"] == "collector"
    assert sw.loc["T-N1", "rds_hot_ratio"] == pytest.approx(1 + 0.008 * 100)
    assert np.isnan(sw.loc["T-G1", "rds_hot_ratio"])
    assert (
        sw.loc["T-N1", "rth_ja"],
        sw.loc["T-G1", "rth_ja"],
        sw.loc["T-N2", "rth_ja"],
    ) == (62, 40, 40)
    a = inv.assumed
    assert list(a.columns) == ["table", "part", "column", "value", "reason"]
    got = {
        (p, c): v for p, c, v in zip(a["part"], a["column"], a["value"], strict=True)
    }
    assert got[("T-N1", "vgs_max")] == 12 and got[("T-G1", "tab")] == "collector"
    assert ("T-N2", "vgs_max") not in got  # given in the sheet, not assumed
    reasons = {(i.part, i.column): i for i in inv.report.assumed}
    assert (
        "§7.3" in reasons[("T-N1", "tab")].reason and reasons[("T-N1", "tab")].row == 2
    )
    assert "§1.2" in reasons[("T-N1", "rds_hot_ratio")].reason


def test_rds_hot_ratio_default_above_100_volts():
    text = HEADER + "HV,nmos,TO-247,2,600,20,150,0.4,0.19\n"
    sw = load_inventory([("switches.csv", text.encode())]).switches
    assert sw["rds_hot_ratio"].iloc[0] == pytest.approx(1 + 0.012 * 100)


# ----------------------------------------------------------------------------- unreadable files


@pytest.mark.parametrize(
    ("name", "fragment"),
    [
        ("empty.csv", "empty"),
        ("blank_lines_only.csv", "empty"),
        ("binary.csv", "binary data"),
        ("encrypted.xlsx", "password-protected"),
        ("legacy.xls", "old binary Excel"),
        ("not_a_workbook.xlsx", "not an .xlsx file"),
        ("zip_not_xlsx.xlsx", "not an .xlsx workbook"),
        ("missing_price.csv", "missing required column 'price'"),
        ("header_unit_wrong.csv", "'A' is a current"),
        ("two_columns_same.csv", "both give v_rating"),
        ("rds_without_vgs.csv", "needs the vgs after '@'"),
        ("heatsinks.csv", "no switches table"),
        ("no_such_file.csv", "file not found"),
    ],
)
def test_unreadable_files_raise_one_clear_line(name, fragment):
    with pytest.raises(InventoryError) as exc:
        load(name)
    msg = str(exc.value)
    assert fragment in msg and "\n" not in msg
    assert name in msg
    assert isinstance(exc.value, InputError)


def test_zip_bomb_is_refused_before_parsing(monkeypatch):
    buf = io.BytesIO()
    with zipfile.ZipFile(buf, "w", zipfile.ZIP_DEFLATED) as zf:
        zf.writestr("xl/workbook.xml", "<workbook/>")
        zf.writestr("xl/worksheets/sheet1.xml", b"\0" * (3 * 2**20))
    monkeypatch.setattr(inv_mod, "MAX_UNPACKED_BYTES", 2**20)
    with pytest.raises(InventoryError, match="too large"):
        load_inventory([("bomb.xlsx", buf.getvalue())])


def test_calamine_and_openpyxl_read_the_same_cells():
    data = (DATA / "workbook.xlsx").read_bytes()
    a = inv_mod._sheets_calamine("w.xlsx", data)
    b = inv_mod._sheets_openpyxl("w.xlsx", data)
    assert [n for n, _ in a] == [n for n, _ in b]
    for (_, ra), (_, rb) in zip(a, b, strict=True):
        cells_a = [[c for c in r if c not in (None, "")] for r in ra]
        cells_b = [[c for c in r if c not in (None, "")] for r in rb]
        assert [r for r in cells_a if r] == [r for r in cells_b if r]


def test_reader_never_writes_to_the_users_files(tmp_path):
    for name in ("workbook.xlsx", "switches.csv", "semicolon_decimal_comma_cp1252.csv"):
        (tmp_path / name).write_bytes((DATA / name).read_bytes())
    os.chmod(tmp_path / "workbook.xlsx", 0o444)
    before = {
        p.name: (hashlib.sha256(p.read_bytes()).hexdigest(), p.stat().st_mtime_ns)
        for p in tmp_path.iterdir()
    }
    load_inventory([tmp_path / "workbook.xlsx"])
    load_inventory([tmp_path / "switches.csv"])
    load_inventory([tmp_path / "semicolon_decimal_comma_cp1252.csv"])
    after = {
        p.name: (hashlib.sha256(p.read_bytes()).hexdigest(), p.stat().st_mtime_ns)
        for p in tmp_path.iterdir()
    }
    assert before == after


# ----------------------------------------------------------------------------- report


def test_report_json_has_the_contract_fields_and_is_serialisable():
    r = load("rejections.csv", "warnings.csv").report
    d = json.loads(json.dumps(r.to_dict()))
    assert set(d) >= {"tables", "rejected_rows", "warnings", "assumed"}
    assert d["tables"]["switches"]["accepted"] == 8
    for key in ("rejected_rows", "warnings", "assumed"):
        for item in d[key]:
            assert set(item) >= {"file", "sheet", "row", "column", "value", "reason"}
    assert any(i["row"] == 5 and i["column"] == "v_rating" for i in d["rejected_rows"])


def test_text_summary_lists_counts_rejections_warnings_and_assumed():
    text = load("rejections.csv").report.format_text()
    assert "switches" in text and "1 accepted" in text and "12 rejected" in text
    assert "row 5, column 'v_rating'" in text
    assert "Assumed values" in text and "vgs_max = 20 V" in text


def test_large_lists_are_cut_in_the_text_but_complete_in_json():
    rows = "".join(f"Z{i},nmos,TO-220,1,60 A,30,175,1.5,0.01\n" for i in range(60))
    r = load_inventory([("switches.csv", (HEADER + rows).encode())]).report
    text = r.format_text(max_lines=10)
    assert "and 50 more" in text and len(r.to_dict()["rejected_rows"]) == 60


def test_row_issue_describes_its_place():
    i = RowIssue(
        "inv.xlsx", "switches", 7, "rth_jc", "x", "not a number", "switches", "P1"
    )
    assert (
        i.describe()
        == "inv.xlsx, sheet 'switches', row 7, column 'rth_jc': value 'x': not a number [switches P1]"
    )


# ----------------------------------------------------------------------------- demo data


DEMO_XLSX = ROOT / "inventories" / "greenhouse_inventory.xlsx"
DEMO_CSV = sorted((ROOT / "inventories" / "greenhouse_csv").glob("*.csv"))


@pytest.mark.parametrize("form", ["workbook", "csv"])
def test_demo_inventory_loads_with_zero_rejected_rows(form):
    if form == "workbook":
        if not DEMO_XLSX.exists():
            pytest.fail("demo workbook missing")
        inv = load_inventory([DEMO_XLSX])
    else:
        if not DEMO_CSV:
            pytest.fail("demo CSV files missing")
        inv = load_inventory(DEMO_CSV)
    r = inv.report
    assert r.rejected_count == 0 and len(r.rejected_rows) == 0
    assert r.tables["switches"]["accepted"] >= 40
    assert set(inv.switches["kind"]) == {"nmos", "pmos", "igbt"}


def test_template_workbook_reads_as_empty():
    tpl = ROOT / "inventories" / "template.xlsx"
    if not tpl.exists():
        pytest.fail("template workbook missing")
    r = load_inventory([tpl]).report
    assert r.accepted_count == 0 and r.rejected_count == 0


def test_workbook_written_with_openpyxl_round_trips(tmp_path):
    wb = openpyxl.Workbook()
    ws = wb.active
    ws.title = "switches"
    ws.append(
        [
            "part",
            "kind",
            "package",
            "price",
            "v_rating",
            "i_rating",
            "tj_max",
            "rth_jc",
            "rds_on@10V [mΩ]",
        ]
    )
    ws.append(["W1", "nmos", "TO-220", 0.5, 60, 30, 175, 1.5, 10])
    path = tmp_path / "w.xlsx"
    wb.save(path)
    inv = load_inventory([path])
    assert inv.rds_points["rds_on"].iloc[0] == pytest.approx(0.01)
