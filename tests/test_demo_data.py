"""The bundled demo: an invented greenhouse inventory and design, and the blank template.

Checks that the two forms of the demo inventory (workbook and CSV set) hold the same
parts, that the data cover what the demo promises (kinds, packages, gate data, Foster
networks, heatsinks, interfaces, diodes, drivers, stock), that nothing looks like a real
part, that the template documents every header, that the design is a valid TOML
document with its channels and shared heatsink group, and that the reader accepts every
demo row. Unit conversions in the cross-check use pint directly, not the project's reader.
"""

from __future__ import annotations

import csv
import dataclasses
import importlib.util
import math
import re
import sys
import tomllib
from pathlib import Path

import pint
from openpyxl import load_workbook

from selector.models import Channel, Conditions

ROOT = Path(__file__).resolve().parents[1] / "inventories"
WORKBOOK = ROOT / "greenhouse_inventory.xlsx"
CSV_DIR = ROOT / "greenhouse_csv"
DESIGN = ROOT / "greenhouse.toml"
TEMPLATE = ROOT / "template.xlsx"
TABLES = ("switches", "heatsinks", "interfaces", "diodes", "drivers")

UREG = pint.UnitRegistry()
_HEADER_RE = re.compile(r"^\s*(?P<name>[^\[]+?)\s*(?:\[(?P<unit>[^\]]*)\])?\s*$")
_CELL_RE = re.compile(r"^\s*([-+]?\d+(?:\.\d*)?(?:[eE][-+]?\d+)?)\s*(.*?)\s*$")


def _load_builder():
    spec = importlib.util.spec_from_file_location("build_demo", ROOT / "build_demo.py")
    module = importlib.util.module_from_spec(spec)
    sys.modules["build_demo"] = module  # dataclasses look their module up here
    spec.loader.exec_module(module)
    return module


builder = _load_builder()


def _split_header(text: str) -> tuple[str, str]:
    m = _HEADER_RE.match(text)
    return m.group("name"), (m.group("unit") or "")


def _pint_unit(unit: str) -> str:
    """Header units as pint reads them; temperatures pass as plain numbers."""
    return {"°C": "degC", "°C/W": "delta_degC/W"}.get(unit, unit)


def _to_header_unit(cell: str, header_unit: str) -> float:
    """A CSV cell as a number in its header's unit (pint does the unit arithmetic)."""
    number, unit = _CELL_RE.match(cell).groups()
    value = float(number)
    if not unit:
        return value
    target = _pint_unit(header_unit) if header_unit else "dimensionless"
    return UREG.Quantity(value, _pint_unit(unit)).to(target).magnitude


def _workbook_rows() -> dict[str, tuple[list[str], list[dict[str, object]]]]:
    wb = load_workbook(WORKBOOK, read_only=True, data_only=True)
    out = {}
    for table in wb.sheetnames:
        rows = list(wb[table].iter_rows(values_only=True))
        heads = [str(h) for h in rows[0]]
        out[table] = (heads, [dict(zip(heads, r, strict=True)) for r in rows[1:]])
    return out


def _csv_rows() -> dict[str, tuple[list[str], list[dict[str, str]]]]:
    out = {}
    for path in sorted(CSV_DIR.glob("*.csv")):
        with path.open(encoding="utf-8", newline="") as fh:
            reader = csv.reader(fh)
            heads = next(reader)
            out[path.stem] = (heads, [dict(zip(heads, r, strict=True)) for r in reader])
    return out


def _values(table: str, column: str) -> list[object]:
    """Workbook values of one column (header name without its unit)."""
    heads, rows = WB[table]
    head = next(h for h in heads if _split_header(h)[0] == column)
    return [r[head] for r in rows]


def _rows(table: str) -> list[dict[str, object]]:
    """Workbook rows keyed by column name without the unit."""
    heads, rows = WB[table]
    return [{_split_header(h)[0]: r[h] for h in heads} for r in rows]


WB = _workbook_rows()
CSV = _csv_rows()


# --------------------------------------------------------------------------- two forms


def test_workbook_has_one_sheet_per_table_and_csv_one_file_per_table():
    assert tuple(WB) == TABLES
    assert set(CSV) == set(TABLES)


def test_workbook_and_csv_set_hold_the_same_parts_and_values():
    """Every cell agrees; cells with their own unit are converted with pint first."""
    unit_cells = 0
    for table in TABLES:
        wb_heads, wb_rows = WB[table]
        csv_heads, csv_rows = CSV[table]
        assert wb_heads == csv_heads, table
        assert [r["part"] for r in wb_rows] == [r["part"] for r in csv_rows], table
        for wb_row, csv_row in zip(wb_rows, csv_rows, strict=True):
            for head in wb_heads:
                expected, cell = wb_row[head], csv_row[head]
                if expected is None:
                    assert cell == "", (table, wb_row["part"], head)
                elif isinstance(expected, str):
                    assert cell == expected, (table, wb_row["part"], head)
                else:
                    got = _to_header_unit(cell, _split_header(head)[1])
                    unit_cells += not re.fullmatch(r"[-+0-9.eE]+", cell)
                    assert math.isclose(got, expected, rel_tol=1e-9), (
                        table,
                        wb_row["part"],
                        head,
                        cell,
                    )
    assert unit_cells >= 4, "the CSV form should carry a few cells with their own unit"


def test_csv_files_are_utf8_comma_separated_without_bom():
    for path in CSV_DIR.glob("*.csv"):
        raw = path.read_bytes()
        assert not raw.startswith(b"\xef\xbb\xbf"), path.name
        first = raw.decode("utf-8").splitlines()[0]
        assert first.startswith("part,"), path.name
        assert ";" not in first, path.name


def test_committed_files_match_what_the_seeded_builder_writes(tmp_path):
    """Regenerating gives the same CSV text and the same workbook cells."""
    tables = builder.build_tables()
    assert tables == builder.build_tables()  # seeded: the same on every call
    builder.write_csv(tables, tmp_path / "csv")
    for table in TABLES:
        fresh = (tmp_path / "csv" / f"{table}.csv").read_text(encoding="utf-8")
        assert fresh == (CSV_DIR / f"{table}.csv").read_text(encoding="utf-8"), table
    builder.write_workbook(tables, tmp_path / "inv.xlsx")
    fresh = load_workbook(tmp_path / "inv.xlsx", read_only=True)
    for table in TABLES:
        rows = [list(r) for r in fresh[table].iter_rows(values_only=True)]
        heads, committed = WB[table]
        assert rows[0] == heads
        assert rows[1:] == [[r[h] for h in heads] for r in committed], table
    builder.write_design(tmp_path / "g.toml")
    assert (tmp_path / "g.toml").read_text(encoding="utf-8") == DESIGN.read_text(
        encoding="utf-8"
    )


# --------------------------------------------------------------------------- invented


def test_every_part_id_and_maker_number_is_an_invented_demo_id():
    for table in TABLES:
        for row in _rows(table):
            assert str(row["part"]).startswith("DEMO-"), (table, row["part"])
            assert row["mpn"] == row["part"], (table, row["part"])
            assert row["manufacturer"] == "Demo Parts Co.", (table, row["part"])
        parts = [r["part"] for r in _rows(table)]
        assert len(parts) == len(set(parts)), f"duplicate part id in {table}"


# --------------------------------------------------------------------------- coverage


def test_switches_cover_kinds_packages_tabs_and_gate_levels():
    rows = _rows("switches")
    assert len(rows) >= 40
    kinds = [r["kind"] for r in rows]
    assert kinds.count("nmos") >= 20 and kinds.count("pmos") >= 5
    assert kinds.count("igbt") >= 5
    assert {"TO-220", "TO-247", "D2PAK", "DPAK", "SO-8"} <= {r["package"] for r in rows}
    assert {"drain", "collector", "isolated"} <= {r["tab"] for r in rows}
    assert any(r["tab"] is None for r in rows), "a blank tab shows the assumed default"
    assert {8, 12, 20} <= {r["vgs_max"] for r in rows}
    mos = [r for r in rows if r["kind"] != "igbt"]
    logic = [r for r in mos if r["rds_on@4.5V"] is not None]
    sub_logic = [r for r in mos if r["rds_on@2.5V"] is not None]
    standard = [r for r in mos if r["rds_on@4.5V"] is None and r["rds_on@2.5V"] is None]
    assert len(logic) >= 10 and len(sub_logic) >= 5 and len(standard) >= 8
    assert all(r["rds_on@10V"] is not None for r in standard)


def test_rds_on_falls_as_gate_drive_rises():
    """Common practice: guaranteed Rds(on) at 2.5 V ≥ at 4.5 V ≥ at 10 V."""
    for r in _rows("switches"):
        points = [r[f"rds_on@{v}V"] for v in ("2.5", "4.5", "10")]
        given = [p for p in points if p is not None]
        assert given == sorted(given, reverse=True), r["part"]
        if r["rds_on@2.5V"] is not None:
            assert r["vth_max"] is None or r["vth_max"] <= 1.5, r["part"]
            assert r["vgs_max"] in (8, 12), r["part"]


def test_gate_data_switching_times_and_output_capacitance_are_present():
    rows = _rows("switches")
    with_qg = [r for r in rows if r["qg"] is not None]
    assert len(with_qg) >= 15
    for r in with_qg:
        for col in ("qgs", "qgd", "v_plateau"):
            assert r[col] is not None, (r["part"], col)
        assert r["qgs"] + r["qgd"] < r["qg"], r["part"]
    times_only = [r for r in rows if r["t_rise"] is not None and r["qg"] is None]
    assert len(times_only) >= 8
    assert all(r["t_fall"] is not None for r in times_only)
    assert sum(r["coss"] is not None for r in rows) >= 30


def test_foster_networks_add_up_to_rth_jc():
    """The steady-state end of a Foster network is the sum of its R (JESD51-14 use)."""
    rows = [r for r in _rows("switches") if r["zth_r1"] is not None]
    assert len(rows) >= 8
    for r in rows:
        total = sum(r[f"zth_r{k}"] for k in range(1, 5))
        assert math.isclose(total, r["rth_jc"], rel_tol=1e-9, abs_tol=1e-9), r["part"]
        taus = [r[f"zth_tau{k}"] for k in range(1, 5)]
        assert taus == sorted(taus) and taus[0] > 0, r["part"]


def test_igbts_carry_saturation_voltage_and_switching_energies():
    igbts = [r for r in _rows("switches") if r["kind"] == "igbt"]
    for r in igbts:
        for col in ("vce_sat", "vce_sat_i", "e_on", "e_off", "e_test_v", "e_test_i"):
            assert r[col] is not None, (r["part"], col)
        assert r["rds_on@10V"] is None
    assert any(r["vce_sat_vge"] is None for r in igbts), "one IGBT leaves the default"


def test_mosfets_mostly_carry_avalanche_and_pulse_ratings_and_some_blanks_remain():
    rows = _rows("switches")
    mos = [r for r in rows if r["kind"] != "igbt"]
    assert sum(r["eas"] is not None for r in mos) >= 0.8 * len(mos)
    assert sum(r["i_pulse"] is not None for r in mos) >= 0.8 * len(mos)
    for col in ("rth_ja", "vth_max", "rds_hot_ratio"):
        filled = sum(r[col] is not None for r in rows)
        assert len(rows) // 2 < filled < len(rows), col


def test_free_standing_rth_ja_of_through_hole_packages():
    """physics.md §5.1: TO-220 about 62 K/W, TO-247 about 40 K/W (from memory there)."""
    for r in _rows("switches"):
        if r["rth_ja"] is None:
            continue
        if r["package"] == "TO-220":
            assert r["rth_ja"] == 62
        if r["package"] == "TO-247":
            assert r["rth_ja"] == 40


def test_stock_has_unlimited_and_small_binding_amounts_and_prices_are_positive():
    for table in TABLES:
        rows = _rows(table)
        assert all(r["price"] > 0 for r in rows), table
    stocks = [r["stock"] for t in TABLES for r in _rows(t)]
    assert any(s is None for s in stocks)
    assert sum(s is not None and s <= 3 for s in stocks) >= 8


def test_heatsinks_range_from_clip_on_to_extrusion_with_one_geometry_only():
    rows = _rows("heatsinks")
    assert len(rows) >= 12
    rated = [r for r in rows if r["rth_sa"] is not None]
    assert min(r["rth_sa"] for r in rated) < 1 and max(r["rth_sa"] for r in rated) >= 15
    assert all(r["rth_sa_rise"] is not None for r in rated)
    geometry = (
        "length",
        "width",
        "base_thickness",
        "fin_height",
        "fin_count",
        "fin_thickness",
    )
    geo_only = [r for r in rows if r["rth_sa"] is None]
    assert len(geo_only) == 1
    assert all(geo_only[0][c] is not None for c in (*geometry, "material", "finish"))
    geo = geo_only[0]
    fin_gap = (geo["width"] - geo["fin_count"] * geo["fin_thickness"]) / (
        geo["fin_count"] - 1
    )
    assert 2 <= fin_gap <= 20, "heatsink.md §2.1 validity: 2 mm ≲ fin gap ≲ 20 mm"
    airflow = [r for r in rows if r["rth_sa@2m/s"] is not None]
    assert len(airflow) >= 4
    for r in airflow:  # moving air always helps (heatsink.md §1.2)
        assert r["rth_sa@2m/s"] < r["rth_sa"], r["part"]
        if r["rth_sa@1m/s"] is not None:
            assert r["rth_sa@2m/s"] < r["rth_sa@1m/s"] < r["rth_sa"], r["part"]
    assert {r["positions"] for r in rows} >= {1, 2, 3, 4}
    fits = {p for r in rows for p in r["fits"].split(";")}
    assert {"TO-220", "TO-247"} <= fits


def test_interfaces_include_grease_pads_and_insulators():
    rows = _rows("interfaces")
    assert len(rows) >= 6
    insulating = [r for r in rows if r["insulating"] == "yes"]
    conducting = [r for r in rows if r["insulating"] == "no"]
    assert len(insulating) >= 3 and len(conducting) >= 2
    assert all(r["isolation_voltage"] for r in insulating)
    notes = " ".join(r["notes"] for r in rows)
    for word in ("grease", "silicone pad", "mica", "phase-change"):
        assert word in notes, word
    grease_220 = next(r for r in rows if r["part"] == "DEMO-TIM-G220")
    assert grease_220["rth_cs"] == 0.5  # physics.md §5.3: greased TO-220, 0.50 K/W


def test_diodes_include_schottky_and_fast_recovery_and_drivers_all_kinds():
    diodes = _rows("diodes")
    assert len(diodes) >= 6
    kinds = {r["notes"] for r in diodes}
    assert {"Schottky", "fast recovery"} <= kinds
    for r in diodes:
        for col in ("v_rrm", "i_avg", "vf", "rth_ja", "tj_max", "package"):
            assert r[col] is not None, (r["part"], col)
    schottky = [r for r in diodes if r["notes"] == "Schottky"]
    fast = [r for r in diodes if r["notes"] == "fast recovery"]
    assert max(r["vf"] for r in schottky) < min(r["vf"] for r in fast)
    drivers = _rows("drivers")
    assert len(drivers) >= 3
    assert {"low_side", "high_side", "isolated"} <= {r["kind"] for r in drivers}


def test_every_demo_header_is_a_column_the_schema_knows():
    schema = importlib.import_module("selector.schema")
    for table in TABLES:
        spec = schema.TABLES[table]
        prefixes = {p for pat in spec.patterns for p in (*pat.prefixes, pat.name)}
        for head in WB[table][0]:
            name = _split_header(head)[0]
            folded = schema.fold_header(name)
            if "@" in name:
                assert folded.split("@")[0] in {schema.fold_header(p) for p in prefixes}
            else:
                assert folded in spec.alias_map, (table, head)
                assert spec.alias_map[folded] == name, (table, head)


def test_demo_values_sit_inside_the_schema_plausible_ranges():
    """No demo value should raise a plausibility warning (values converted with pint)."""
    schema = importlib.import_module("selector.schema")
    for table in TABLES:
        spec = schema.TABLES[table]
        for head in WB[table][0]:
            name, unit = _split_header(head)
            col = spec.column_map.get(name)
            if col is None and "@" in name:  # rds_on@10V, rth_sa@2m/s
                col = next(p for p in spec.patterns if name.startswith(p.name))
            elif col is None or not col.is_quantity:
                continue
            if col.plausible is None:
                continue
            lo, hi = col.plausible
            for value in _values(table, name):
                if value is None:
                    continue
                si = value
                if unit and col.si_unit:
                    si = (
                        UREG.Quantity(value, _pint_unit(unit))
                        .to(_pint_unit(col.si_unit))
                        .magnitude
                    )
                assert (lo is None or si >= lo) and (hi is None or si <= hi), (
                    table,
                    name,
                    value,
                )


# --------------------------------------------------------------------------- template


def test_template_has_a_comment_on_every_header_cell_and_no_data():
    wb = load_workbook(TEMPLATE)
    assert tuple(wb.sheetnames) == TABLES
    for table in TABLES:
        ws = wb[table]
        assert ws.max_row == 1, f"{table} template sheet should hold headers only"
        heads = [c for c in ws[1] if c.value]
        assert len(heads) >= 10 if table != "drivers" else len(heads) >= 7
        for cell in heads:
            assert cell.comment is not None, (table, cell.value)
            text = cell.comment.text
            assert text.startswith(_split_header(cell.value)[0]), (table, cell.value)
            assert len(text) > len(cell.value) + 10, (table, cell.value)


def test_template_headers_cover_every_schema_column_with_its_unit():
    schema = importlib.import_module("selector.schema")
    wb = load_workbook(TEMPLATE)
    for table in TABLES:
        spec = schema.TABLES[table]
        heads = {
            _split_header(c.value)[0]: _split_header(c.value)[1] for c in wb[table][1]
        }
        for col in spec.columns:
            assert col.name in heads, (table, col.name)
            if col.is_quantity and col.unit:
                expected = {"degC": "°C"}.get(col.unit, col.unit)
                assert heads[col.name] == expected, (table, col.name)
        for pat in spec.patterns:
            assert pat.example.split("@")[0] + "@" in "".join(heads), (table, pat.name)
    assert "rds_on@10V" in {_split_header(c.value)[0] for c in wb["switches"][1]}


# --------------------------------------------------------------------------- design


def _design() -> dict:
    return tomllib.loads(DESIGN.read_text(encoding="utf-8"))


def test_design_conditions_are_the_greenhouse_conditions():
    cond = _design()["conditions"]
    assert cond == {
        "ambient_min": -5,
        "ambient_max": 45,
        "junction_margin": 25,
        "voltage_derating": 0.8,
        "airflow": 0,
        "heatsink_derating": 0,
    }
    Conditions(**cond)  # every key is a field of the design model


def test_design_channels_cover_the_greenhouse_loads_and_share_the_main_sink():
    channels = _design()["channel"]
    assert len(channels) >= 6
    fields = {f.name for f in dataclasses.fields(Channel)}
    for ch in channels:
        assert set(ch) <= fields, set(ch) - fields
        Channel(**ch)
    by_name = {ch["name"]: ch for ch in channels}
    heater, pump = by_name["soil heater"], by_name["circulation pump"]
    assert heater["load"] == "resistive" and heater["drive"] == 12
    assert heater["side"] == "low" and 6 <= heater["current"] <= 10
    assert pump["load"] == "motor" and pump["inductance"] > 0
    assert pump["peak_current"] >= 4 * pump["current"] and pump["peak_time"] > 0
    assert heater["heatsink_group"] == pump["heatsink_group"] == "main sink"
    groups = [ch["heatsink_group"] for ch in channels if ch["heatsink_group"]]
    assert groups.count("main sink") == 2
    valves = [ch for ch in channels if ch["load"] == "inductive"]
    assert sum(ch["quantity"] for ch in valves) == 4
    assert all(ch["inductance"] > 0 and ch["drive"] == 3.3 for ch in valves)
    led = by_name["LED grow bar"]
    assert 1000 <= led["pwm_frequency"] <= 5000 and 0 < led["duty"] < 1
    assert led["drive"] == 3.3
    assert any(
        ch["load"] == "motor" and ch["name"] != "circulation pump" for ch in channels
    )


def test_design_lines_carry_unit_comments():
    for line in DESIGN.read_text(encoding="utf-8").splitlines():
        if "=" in line and not line.lstrip().startswith("#"):
            assert "#" in line, line


def test_design_loads_through_the_design_reader():
    from selector.design import load_design

    design = load_design(DESIGN)
    assert [c.name for c in design.channels] == [
        c["name"] for c in _design()["channel"]
    ]
    assert design.groups()["main sink"] == ("soil heater", "circulation pump")


# --------------------------------------------------------------------------- reader


def _load_inventory():
    mod = importlib.import_module("selector.inventory")
    return mod.load_inventory


def test_demo_workbook_loads_with_zero_rejected_rows():
    load_inventory = _load_inventory()
    report = load_inventory([str(WORKBOOK)]).report.to_dict()
    assert report["rejected_rows"] == []
    for table in TABLES:
        assert report["tables"][table]["rejected"] == 0, table
        assert report["tables"][table]["accepted"] == len(WB[table][1]), table


def test_demo_csv_set_loads_with_zero_rejected_rows_and_equals_the_workbook():
    load_inventory = _load_inventory()
    paths = [str(CSV_DIR / f"{t}.csv") for t in TABLES]
    from_csv = load_inventory(paths)
    report = from_csv.report.to_dict()
    assert report["rejected_rows"] == []
    for table in TABLES:
        assert report["tables"][table]["rejected"] == 0, table
        assert report["tables"][table]["accepted"] == len(CSV[table][1]), table
    from_wb = load_inventory([str(WORKBOOK)])
    for table in TABLES:
        a, b = getattr(from_wb, table), getattr(from_csv, table)
        assert list(a["part"]) == list(b["part"]), table
        for col in a.columns:
            if col not in b.columns or a[col].dtype == object:
                continue
            for x, y in zip(a[col], b[col], strict=True):
                if x != x and y != y:  # both NaN
                    continue
                assert math.isclose(float(x), float(y), rel_tol=1e-9), (table, col)


def test_demo_check_report_lists_the_blank_cells_as_assumed():
    load_inventory = _load_inventory()
    report = load_inventory([str(WORKBOOK)]).report.to_dict()
    assumed_columns = {a["column"] for a in report["assumed"]}
    for col in ("rth_ja", "vth_max", "rds_hot_ratio", "tab", "vce_sat_vge"):
        blank = any(r.get(col) is None for r in _rows("switches"))
        assert blank, col
    for col in ("rth_ja", "rds_hot_ratio", "tab", "vce_sat_vge"):
        assert any(col in c for c in assumed_columns), col


def test_blank_template_reads_as_an_empty_inventory_with_every_header_known():
    load_inventory = _load_inventory()
    report = load_inventory([str(TEMPLATE)]).report.to_dict()
    assert report["rejected_rows"] == [] and report["warnings"] == []
    for table in TABLES:
        assert report["tables"][table]["accepted"] == 0, table
