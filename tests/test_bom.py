"""Bill of materials, review workbook and CSV export (selector.bom).

The selections below are built by hand (an invented fixture, no real parts): four
channels, two of them sharing one heatsink group, a diode used by two channels, a
driver, a channel without a heatsink and one with its own heatsink per copy, values
marked as assumed, and a second-ranked solution. The checks are bookkeeping checks:
quantities and prices are recomputed here by plain arithmetic from the counting rules
of the inventory contract (overview.md: copies each get their own parts and sink, a
group shares one sink, one interface per device), and every number in the workbook is
compared with the object it came from.

Formula-injection checks follow the OWASP "CSV Injection" guidance (leading ``=``,
``+``, ``-``, ``@``, tab, carriage return) and the openpyxl behaviour verified in
shared/tooling.md §4 (a string beginning with ``=`` becomes a formula unless its data
type is set to text).
"""

from __future__ import annotations

import csv
import io
import math
import os
import zipfile
from types import SimpleNamespace

import numpy as np
import openpyxl
import pandas as pd
import pytest

from selector import bom
from selector.bom import (
    BOM_HEADERS,
    BOM_KINDS,
    FORMULA_LEADS,
    SHEET_ALT,
    SHEET_BOM,
    SHEET_CALC,
    SHEET_CAUTIONS,
    SHEET_REJ,
    SHEET_TEMPS,
    bom_csv_text,
    bom_lines,
    calculation_table,
    describe_part,
    neutralise_csv_cell,
    safe_text,
    workbook_bytes,
)
from selector.errors import SelectorError
from selector.models import (
    Channel,
    ChannelPick,
    Conditions,
    Design,
    LossBreakdown,
    NearMiss,
    SelectionResult,
    Solution,
)

HOSTILE = (
    "=1+1",
    '=HYPERLINK("http://x","y")',
    "+cmd",
    "-2+3",
    "@SUM(A1)",
    "\t=1+1",
    "\r=1+1",
)

# --------------------------------------------------------------------------- fixture


def _inventory(ids: dict[str, str] | None = None, notes: str = "") -> SimpleNamespace:
    """A small inventory in the contract's shape (SI values), ids renamable."""
    ids = ids or {}

    def n(x: str) -> str:
        return ids.get(x, x)

    switches = pd.DataFrame(
        [
            {
                "part": n("Q-HEAT"),
                "kind": "nmos",
                "package": "TO-220",
                "price": 1.20,
                "v_rating": 60.0,
                "i_rating": 50.0,
                "tj_max": 175.0,
                "rth_jc": 0.9,
                "rth_ja": 62.0,
                "tab": "drain",
                "manufacturer": notes or "Invented Semis",
                "mpn": n("IS-60N50"),
                "notes": notes,
            },
            {
                "part": n("Q-PUMP"),
                "kind": "nmos",
                "package": "DPAK",
                "price": 0.85,
                "v_rating": 40.0,
                "i_rating": 30.0,
                "tj_max": 175.0,
                "rth_jc": 1.5,
                "rth_ja": 50.0,
                "tab": "drain",
                "manufacturer": np.nan,
                "mpn": np.nan,
                "notes": np.nan,
            },
            {
                "part": n("Q-SMALL"),
                "kind": "igbt",
                "package": "TO-247",
                "price": 0.30,
                "v_rating": 600.0,
                "i_rating": 20.0,
                "tj_max": 150.0,
                "rth_jc": 1.1,
                "rth_ja": 40.0,
                "tab": "collector",
                "vce_sat": 1.8,
                "vce_sat_i": 10.0,
                "manufacturer": np.nan,
                "mpn": np.nan,
                "notes": np.nan,
            },
        ]
    )
    rds_points = pd.DataFrame(
        [
            {"part": n("Q-HEAT"), "vgs": 10.0, "rds_on": 6.5e-3},
            {"part": n("Q-HEAT"), "vgs": 4.5, "rds_on": 9.0e-3},
            {"part": n("Q-PUMP"), "vgs": 10.0, "rds_on": 12e-3},
        ]
    )
    heatsinks = pd.DataFrame(
        [
            {
                "part": n("HS-BIG"),
                "price": 4.50,
                "rth_sa": 1.8,
                "rth_sa_rise": 75.0,
                "positions": 6,
                "fits": ("TO-220", "TO-247"),
                "notes": notes,
            },
            {
                "part": n("HS-SMALL"),
                "price": 1.10,
                "rth_sa": 12.0,
                "rth_sa_rise": 75.0,
                "positions": 1,
                "fits": ("TO-247",),
                "notes": np.nan,
            },
        ]
    )
    interfaces = pd.DataFrame(
        [
            {
                "part": n("PAD-1"),
                "price": 0.15,
                "fits": ("TO-220", "TO-247"),
                "rth_cs": 1.2,
                "insulating": True,
                "isolation_voltage": 4000.0,
                "notes": notes,
            }
        ]
    )
    diodes = pd.DataFrame(
        [
            {
                "part": n("D-FW"),
                "price": 0.12,
                "v_rrm": 100.0,
                "i_avg": 3.0,
                "vf": 0.85,
                "package": "DO-201",
            }
        ]
    )
    drivers = pd.DataFrame(
        [
            {
                "part": n("DRV-1"),
                "price": 0.90,
                "kind": "low_side",
                "v_out": 12.0,
                "i_peak": 2.0,
                "v_supply_max": 20.0,
            }
        ]
    )
    assumed = pd.DataFrame(
        [
            {
                "table": "switches",
                "part": n("Q-PUMP"),
                "column": "rth_ja",
                "value": 50.0,
                "reason": "blank: package default for DPAK",
            }
        ]
    )
    sink_airflow = pd.DataFrame([{"part": n("HS-BIG"), "airflow": 2.0, "rth_sa": 0.9}])
    return SimpleNamespace(
        sink_airflow=sink_airflow,
        switches=switches,
        heatsinks=heatsinks,
        interfaces=interfaces,
        diodes=diodes,
        drivers=drivers,
        rds_points=rds_points,
        assumed=assumed,
    )


# invented unit prices of the fixture (same as above), for the hand sums
P = {
    "Q-HEAT": 1.20,
    "Q-PUMP": 0.85,
    "Q-SMALL": 0.30,
    "HS-BIG": 4.50,
    "HS-SMALL": 1.10,
    "PAD-1": 0.15,
    "D-FW": 0.12,
    "DRV-1": 0.90,
}


def _design(names: dict[str, str] | None = None) -> Design:
    names = names or {}

    def n(x: str) -> str:
        return names.get(x, x)

    return Design(
        conditions=Conditions(ambient_min=-5.0, ambient_max=45.0, junction_margin=25.0),
        channels=(
            Channel(n("heater"), 24.0, 8.0, quantity=2, heatsink_group="rack"),
            Channel(
                n("pump"),
                24.0,
                3.0,
                peak_current=9.0,
                peak_time=0.5,
                load="motor",
                inductance=2e-3,
                drive=3.3,
                heatsink_group="rack",
            ),
            Channel(
                n("valves"), 24.0, 0.5, load="inductive", inductance=0.1, quantity=3
            ),
            Channel(
                n("led bar"), 24.0, 2.0, duty=0.4, pwm_frequency=1000.0, quantity=2
            ),
        ),
        source="greenhouse-test.toml",
    )


def _picks(ids: dict[str, str] | None = None, names=None) -> list[ChannelPick]:
    ids = ids or {}
    names = names or {}

    def n(x: str) -> str:
        return ids.get(x, x)

    def c(x: str) -> str:
        return names.get(x, x)

    heater = ChannelPick(
        channel=c("heater"),
        switch=n("Q-HEAT"),
        switch_count=2,
        heatsink=n("HS-BIG"),
        interface=n("PAD-1"),
        diode=None,
        driver=None,
        quantity=2,
        cost=2 * 2 * P["Q-HEAT"] + 2 * 2 * P["PAD-1"],
        tj_at_ambient_max=88.4,
        tj_limit=150.0,
        sink_temperature=71.2,
        loss=LossBreakdown(conduction=0.143, switching=0.0, coss=0.0),
        notes=["heatsink is live (non-insulating path)" if not ids else n("NOTE")],
        details={
            "inputs": {"supply": 24.0, "current": 8.0},
            "chain": {
                "rth_jc": 0.9,
                "rth_cs": 1.2,
                "rth_sa": 1.95,
                "rth_ja": None,
                "sink_method": "catalogue value at its rise, natural convection",
            },
            "losses": {"conduction": 0.143, "total": 0.143, "p_gate": 0.0},
            "drive": {"topology": "low side, pin drive", "needs": None, "notes": []},
            "checks": [
                {
                    "rule": "voltage_derating",
                    "value": 24.0,
                    "limit": 48.0,
                    "margin": 24.0,
                    "unit": "V",
                    "ok": True,
                },
                {
                    "rule": "gate_drive_level",
                    "value": 3.3,
                    "limit": 4.5,
                    "margin": -1.2,
                    "unit": "V",
                    "ok": False,
                },
            ],
            "assumed": [],
            "tj_curve": {"ambient_c": [-5.0, 20.0, 45.0], "tj_c": [38.0, 63.2, 88.4]},
        },
    )
    pump = ChannelPick(
        channel=c("pump"),
        switch=n("Q-PUMP"),
        switch_count=1,
        heatsink=n("HS-BIG"),
        interface=n("PAD-1"),
        diode=n("D-FW"),
        driver=n("DRV-1"),
        quantity=1,
        cost=P["Q-PUMP"] + P["PAD-1"] + P["D-FW"] + P["DRV-1"],
        tj_at_ambient_max=97.3,
        tj_limit=150.0,
        sink_temperature=71.2,
        loss=LossBreakdown(
            conduction=0.151, switching=0.002, coss=0.0, avalanche=0.0, gate_drive=0.01
        ),
        notes=[],
        details={
            "chain": {"rth_jc": 1.5, "rth_cs": 1.2, "rth_sa": 1.95, "rth_ja": 50.0},
            "losses": {"p_gate": 0.01},
            "drive": {"topology": "low side", "needs": "low_side", "notes": ["x"]},
            "checks": [
                {
                    "rule": "diode_v_rrm",
                    "value": 100.0,
                    "limit": 36.0,
                    "margin": 64.0,
                    "unit": "V",
                    "ok": True,
                }
            ],
            "assumed": [
                {
                    "part": n("Q-PUMP"),
                    "column": "rds_hot_ratio",
                    "value": 1.6,
                    "reason": "blank: proposed default of physics §1.2",
                }
            ],
            "transient": {"t_s": [0.0, 0.1, 0.5], "tj_c": [97.3, 99.0, 101.5]},
        },
    )
    valves = ChannelPick(
        channel=c("valves"),
        switch=n("Q-SMALL"),
        switch_count=1,
        heatsink=None,
        interface=None,
        diode=n("D-FW"),
        driver=None,
        quantity=3,
        cost=3 * (P["Q-SMALL"] + P["D-FW"]),
        tj_at_ambient_max=float("inf"),  # runaway, to see it written as text
        tj_limit=125.0,
        sink_temperature=None,
        loss=LossBreakdown(conduction=0.9),
        details={},  # every detail missing: the sheet must show "—"
    )
    led = ChannelPick(
        channel=c("led bar"),
        switch=n("Q-SMALL"),
        switch_count=1,
        heatsink=n("HS-SMALL"),
        interface=n("PAD-1"),
        diode=None,
        driver=None,
        quantity=2,
        cost=2 * (P["Q-SMALL"] + P["HS-SMALL"] + P["PAD-1"]),
        tj_at_ambient_max=80.0,
        tj_limit=125.0,
        sink_temperature=70.0,
        loss=LossBreakdown(conduction=1.6, switching=0.3, coss=0.01),
    )
    return [heater, pump, valves, led]


def _result(ids=None, names=None) -> SelectionResult:
    ids = ids or {}
    picks = _picks(ids, names)
    group_sink = ids.get("HS-BIG", "HS-BIG")
    total = sum(p.cost for p in picks) + P["HS-BIG"]
    best = Solution(
        rank=1, total_cost=total, channels=picks, group_sinks={"rack": group_sink}
    )
    alt_picks = _picks(ids, names)
    alt_picks[0].switch_count = 3
    alt_picks[0].cost += 2 * (P["Q-HEAT"] + P["PAD-1"])
    second = Solution(
        rank=2,
        total_cost=total + 2 * (P["Q-HEAT"] + P["PAD-1"]),
        channels=alt_picks,
        proven_optimal=True,
        group_sinks={"rack": group_sink},
    )
    heater = (names or {}).get("heater", "heater")
    return SelectionResult(
        status="optimal",
        solutions=[best, second],
        rejected={
            heater: {"voltage_rating": 3, "gate_drive_level": 2},
            "pump": {"package_fit": 1},
        },
        infeasible={
            "pump": {
                "nearest": NearMiss(
                    "pump", "Q-X reaches 162 °C against 150 °C", {"tj_c": 162.0}
                ),
                "reasons": ["junction too hot", "no heatsink with 2 positions"],
            }
        },
        assumptions=[
            {"setting": "pin_resistance", "value": 40.0, "reason": "MCU pin, proposed"}
        ],
        messages=["solved in 0.1 s"],
        solver="cbc",
    )


@pytest.fixture
def case():
    return _result(), _inventory(), _design()


def _open(data: bytes):
    return openpyxl.load_workbook(io.BytesIO(data))


# ------------------------------------------------------------------------ bill of materials


def test_bom_quantities_follow_copies_parallel_count_and_shared_group_sink(case):
    """Quantities recomputed by hand from the counting rules (overview.md, contract).

    switches: Σ copies × parallel; interfaces: one per device; heatsink: one per copy,
    one per group; diodes and drivers: one per copy.
    """
    result, inv, design = case
    df = bom_lines(result, inv, design).set_index("part")
    q = df["quantity"].to_dict()
    assert q["Q-HEAT"] == 2 * 2
    assert q["Q-PUMP"] == 1 * 1
    assert q["Q-SMALL"] == 3 * 1 + 2 * 1  # valves and led bar share the line
    assert q["PAD-1"] == 2 * 2 + 1 * 1 + 2 * 1  # heater, pump, led bar devices
    assert q["HS-BIG"] == 1  # one sink for the group "rack"
    assert q["HS-SMALL"] == 2  # one per copy of the led bar
    assert q["D-FW"] == 1 + 3
    assert q["DRV-1"] == 1
    assert len(df) == 8  # one line per distinct part
    # the same quantities from the picks, generically: Σ quantity × count per switch
    picks = result.solutions[0].channels
    for part in ("Q-HEAT", "Q-PUMP", "Q-SMALL"):
        assert q[part] == sum(
            p.quantity * p.switch_count for p in picks if p.switch == part
        )
    assert set(df.loc["Q-SMALL", "channels"].split(", ")) == {"valves", "led bar"}
    assert df.loc["HS-BIG", "channels"] == "heater, pump"
    assert list(df["kind"].drop_duplicates()) == list(BOM_KINDS)  # listed by kind


def test_bom_total_equals_sum_of_lines_and_the_solution_total(case):
    """Σ quantity × unit price (hand arithmetic) = solution.total_cost."""
    result, inv, design = case
    df = bom_lines(result, inv, design)
    assert np.allclose(df["extended_price"], df["quantity"] * df["unit_price"])
    by_hand = (
        4 * 1.20
        + 1 * 0.85
        + 5 * 0.30
        + 1 * 4.50
        + 2 * 1.10
        + 7 * 0.15
        + 4 * 0.12
        + 0.90
    )
    assert df["extended_price"].sum() == pytest.approx(by_hand)
    assert df["extended_price"].sum() == pytest.approx(result.solutions[0].total_cost)
    second = bom_lines(result, inv, design, solution_index=1)
    assert second["extended_price"].sum() == pytest.approx(
        result.solutions[1].total_cost
    )
    assert second.set_index("part").loc["Q-HEAT", "quantity"] == 2 * 3


def test_description_states_the_key_ratings_of_each_kind(case):
    _, inv, _ = case
    assert describe_part(inv, "switch", "Q-HEAT").startswith(
        "N-MOSFET 60 V 50 A, 6.5 mΩ @ 10 V, 9 mΩ @ 4.5 V, TO-220"
    )
    assert "Vce(sat) 1.8 V @ 10 A" in describe_part(inv, "switch", "Q-SMALL")
    assert describe_part(inv, "switch", "Q-SMALL").startswith("IGBT 600 V 20 A")
    hs = describe_part(inv, "heatsink", "HS-BIG")
    assert "RθSA 1.8 K/W" in hs and "75 K" in hs and "6 positions" in hs
    assert "0.9 K/W at 2 m/s" in hs
    pad = describe_part(inv, "interface", "PAD-1")
    assert "RθCS 1.2 K/W" in pad and "insulating" in pad and "4 kV" in pad
    assert describe_part(inv, "diode", "D-FW") == "Diode 100 V 3 A, Vf 0.85 V, DO-201"
    assert describe_part(inv, "driver", "DRV-1").startswith(
        "Gate driver low-side, 12 V out"
    )
    assert "not found" in describe_part(inv, "diode", "nope")


def test_manufacturer_and_mpn_carried_when_the_inventory_has_them(case):
    result, inv, design = case
    df = bom_lines(result, inv, design).set_index("part")
    assert df.loc["Q-HEAT", "manufacturer"] == "Invented Semis"
    assert df.loc["Q-HEAT", "mpn"] == "IS-60N50"
    assert df.loc["Q-PUMP", "manufacturer"] == ""


# ----------------------------------------------------------------------------- workbook


def test_openpyxl_reads_through_defusedxml():
    """tooling.md §4: openpyxl parses with defusedxml once it is importable."""
    assert openpyxl.DEFUSEDXML is True


def test_workbook_reopens_with_openpyxl_and_pandas_and_totals_agree(case):
    result, inv, design = case
    data = workbook_bytes(result, inv, design)
    wb = _open(data)
    assert wb.sheetnames == [
        SHEET_BOM,
        SHEET_CALC,
        SHEET_TEMPS,
        SHEET_ALT,
        SHEET_REJ,
        SHEET_CAUTIONS,
    ]
    ws = wb[SHEET_BOM]
    assert ws.freeze_panes == "A2"
    assert ws.column_dimensions["G"].width >= 40  # description column
    heads = [c.value for c in ws[1]]
    assert "Quantity [pcs]" in heads and "Extended price [currency]" in heads

    for engine in ("calamine", "openpyxl"):
        df = pd.read_excel(io.BytesIO(data), sheet_name=SHEET_BOM, engine=engine)
        lines = df[df["Kind"].isin(BOM_KINDS)]
        assert len(lines) == 8
        # numbers stored as numbers
        assert pd.api.types.is_numeric_dtype(lines["Quantity [pcs]"])
        assert pd.api.types.is_numeric_dtype(lines["Extended price [currency]"])
        total_value = df.loc[df["Part"] == "Total (value)", "Extended price [currency]"]
        assert float(total_value.iloc[0]) == pytest.approx(
            lines["Extended price [currency]"].sum()
        )
        assert float(total_value.iloc[0]) == pytest.approx(
            result.solutions[0].total_cost
        )
        expect = bom_lines(result, inv, design)
        got = lines.set_index("Part")["Quantity [pcs]"].astype(int).to_dict()
        assert got == dict(zip(expect["part"], expect["quantity"], strict=True))

    assert bom.workbook_total(wb) == pytest.approx(result.solutions[0].total_cost)
    assert bom.workbook_total(data) == pytest.approx(result.solutions[0].total_cost)
    # the formula total covers exactly the line rows
    total_row = next(r for r in ws.iter_rows() if r[2].value == "Total")
    f = total_row[8]
    assert f.data_type == "f" and f.value == "=SUM(I2:I9)"


def test_calculations_sheet_values_equal_the_pick_values(case):
    """Every engine value in the sheet equals the ChannelPick field it came from."""
    result, inv, design = case
    data = workbook_bytes(result, inv, design)
    ws = _open(data)[SHEET_CALC]
    rows = list(ws.iter_rows(values_only=True))
    head = rows[0]
    table = pd.DataFrame(rows[1:], columns=head)
    assert list(head) == [bom.CALC_HEADERS[c] for c in bom.CALC_COLUMNS]
    cell = table.set_index(["Channel", "Key"])

    def v(ch, key, col="Value"):
        return cell.loc[(ch, key), col]

    for p in result.solutions[0].channels:
        ch = p.channel
        for k, val in p.loss.to_dict().items():
            assert v(ch, f"loss.{k}") == pytest.approx(val), (ch, k)
        assert v(ch, "parts.switch") == p.switch
        assert v(ch, "parts.switch_count") == p.switch_count
        assert v(ch, "parts.quantity") == p.quantity
        assert v(ch, "parts.cost") == pytest.approx(p.cost)
        assert v(ch, "tj_limit") == pytest.approx(p.tj_limit)
        if math.isfinite(p.tj_at_ambient_max):
            assert v(ch, "tj_at_ambient_max") == pytest.approx(p.tj_at_ambient_max)
            assert v(ch, "margin") == pytest.approx(p.margin)
            assert v(ch, "tj_at_ambient_max", "Margin") == pytest.approx(p.margin)
        assert v(ch, "tj_at_ambient_max", "Limit") == pytest.approx(p.tj_limit)
        chain = p.details.get("chain", {})
        for k in ("rth_jc", "rth_cs", "rth_sa"):
            if k in chain:
                assert v(ch, f"chain.{k}") == pytest.approx(chain[k])
        for i, chk in enumerate(p.details.get("checks", [])):
            assert v(ch, f"checks[{i}]", "Item") == chk["rule"]
            assert v(ch, f"checks[{i}]") == pytest.approx(chk["value"])
            assert v(ch, f"checks[{i}]", "Limit") == pytest.approx(chk["limit"])
            assert v(ch, f"checks[{i}]", "Margin") == pytest.approx(chk["margin"])
            assert v(ch, f"checks[{i}]", "Result") == ("ok" if chk["ok"] else "not met")
        ch_in = design.channel(ch)
        assert v(ch, "inputs.supply") == pytest.approx(ch_in.supply)
        assert v(ch, "inputs.current") == pytest.approx(ch_in.current)
        assert v(ch, "inputs.load") == ch_in.load

    # sink temperature and the heat of the whole channel
    assert v("heater", "sink_temperature") == pytest.approx(71.2)
    assert v("heater", "loss.channel_total") == pytest.approx(0.143 * 2 * 2)
    assert v("valves", "sink_temperature") == "no heatsink"
    # the runaway channel: text, not a number
    assert v("valves", "tj_at_ambient_max") == "thermal runaway"
    assert v("valves", "tj_at_ambient_max", "Result") == "over the limit"
    # conditions of the whole design
    assert v(bom.ALL_CHANNELS, "conditions.ambient_max") == pytest.approx(45.0)
    # assumed values: from the pick's details and from the inventory's assumed table
    assert v("pump", "assumed[0]") == pytest.approx(1.6)
    assert v("pump", "assumed[0]", "Source") == "assumed"
    assert "physics §1.2" in v("pump", "assumed[0]", "Note")
    assert v("pump", "chain.rth_ja", "Source") == "assumed"
    assert "DPAK" in v("pump", "chain.rth_ja", "Note")
    assert v("heater", "chain.rth_jc", "Source") == "inventory"
    assert v("pump", "loss.gate_drive") == pytest.approx(0.01)
    assert v("pump", "drive.needs") == "low_side"
    assert v("heater", "drive.needs") == "none"


def test_calculations_tolerate_missing_details_with_a_dash(case):
    result, inv, design = case
    calc = calculation_table(result, inv, design).set_index(["channel", "key"])
    for key in ("chain.rth_jc", "chain.rth_sa", "drive", "checks"):
        assert calc.loc[("valves", key), "value"] == bom.MISSING
    assert calc.loc[("valves", "assumed"), "value"] == "none recorded"


def test_calculation_table_equals_pick_values_without_a_workbook(case):
    result, inv, design = case
    calc = calculation_table(result, inv, design, solution_index=1)
    heater = calc[(calc["channel"] == "heater") & (calc["key"] == "parts.switch_count")]
    assert heater["value"].item() == 3


def test_chart_of_junction_temperature_against_limit_survives_the_round_trip(case):
    result, inv, design = case
    wb = _open(workbook_bytes(result, inv, design))
    ws = wb[SHEET_TEMPS]
    assert len(ws._charts) >= 1  # the bar chart (+ the curves where given)
    rows = list(ws.iter_rows(min_row=2, max_row=5, values_only=True))
    assert [r[0] for r in rows] == ["heater", "pump", "valves", "led bar"]
    assert rows[0][1] == pytest.approx(88.4) and rows[0][2] == pytest.approx(150.0)
    assert rows[2][1] == "∞"  # runaway written as text, not as a number
    assert rows[2][3] == "−∞"  # and its margin is minus infinity, not plus


def test_alternatives_sheet_ranks_solutions_and_says_what_differs(case):
    result, inv, design = case
    ws = _open(workbook_bytes(result, inv, design))[SHEET_ALT]
    r2 = [c.value for c in ws[2]]
    r3 = [c.value for c in ws[3]]
    assert r2[0] == 1 and r2[1] == pytest.approx(result.solutions[0].total_cost)
    assert r3[0] == 2 and r3[1] == pytest.approx(result.solutions[1].total_cost)
    assert r3[2] == pytest.approx(2 * (1.20 + 0.15))
    assert "heater: devices in parallel 2 → 3" in r3[5]


def test_rejections_sheet_lists_the_funnel_and_nearest_misses(case):
    result, inv, design = case
    ws = _open(workbook_bytes(result, inv, design))[SHEET_REJ]
    vals = list(ws.iter_rows(values_only=True))
    assert ("heater", "voltage_rating", 3) in vals
    assert ("heater", "gate_drive_level", 2) in vals
    assert ("pump", "package_fit", 1) in vals
    flat = [str(x) for r in vals for x in r if x is not None]
    assert any("162 °C against 150 °C" in t for t in flat)
    assert any("no heatsink with 2 positions" in t for t in flat)


def test_cautions_sheet_names_hazards_sources_and_local_codes(case):
    result, inv, design = case
    ws = _open(workbook_bytes(result, inv, design))[SHEET_CAUTIONS]
    text = " ".join(str(c) for r in ws.iter_rows(values_only=True) for c in r if c)
    for needle in (
        "Hot surfaces",
        "Mains and high voltages",
        "Inductive loads",
        "Fire",
        "verify every channel by measurement".lower(),
        "electrical codes",
        "licensed practice",
        "Mohan",
        "Erickson",
        "Baliga",
        "JESD51",
        "MIL-DTL-917",
        "Elenbaas",
        "pin_resistance",  # the engine's assumptions
        "blank: package default for DPAK",  # inventory defaults of the chosen parts
    ):
        assert needle.lower() in text.lower(), needle


def test_bom_sheet_points_to_the_cautions():
    result, inv, design = _result(), _inventory(), _design()
    ws = _open(workbook_bytes(result, inv, design))[SHEET_BOM]
    text = " ".join(str(c) for r in ws.iter_rows(values_only=True) for c in r if c)
    assert SHEET_CAUTIONS in text and "verify by measurement" in text


def test_workbook_flags_a_total_that_disagrees_with_the_selection(case):
    result, inv, design = case
    result.solutions[0].total_cost += 1.0
    ws = _open(workbook_bytes(result, inv, design))[SHEET_BOM]
    text = " ".join(str(c) for r in ws.iter_rows(values_only=True) for c in r if c)
    assert "differs from the sum of these lines" in text


def test_nothing_is_written_to_disk(case, tmp_path, monkeypatch):
    result, inv, design = case
    monkeypatch.chdir(tmp_path)
    data = workbook_bytes(result, inv, design)
    text = bom_csv_text(result, inv, design)
    assert data[:2] == b"PK" and text
    assert os.listdir(tmp_path) == []


def test_no_solution_or_a_missing_rank_is_a_clear_error(case):
    result, inv, design = case
    with pytest.raises(SelectorError, match="solution number 5 does not exist"):
        workbook_bytes(result, inv, design, solution_index=4)
    empty = SelectionResult(status="infeasible", solutions=[], rejected={})
    with pytest.raises(SelectorError, match="no selection to write"):
        bom_lines(empty, inv, design)


# -------------------------------------------------------------------- formula injection


def _hostile_case():
    """Part ids, notes, a manufacturer and channel names that look like formulas."""
    parts = ["Q-HEAT", "Q-PUMP", "Q-SMALL", "HS-BIG", "HS-SMALL", "PAD-1", "D-FW"]
    ids = dict(zip(parts, HOSTILE, strict=True))
    ids["DRV-1"] = '=HYPERLINK("http://evil","click")+1'
    ids["NOTE"] = "=cmd|' /C calc'!A0"
    ids["IS-60N50"] = "@SUM(1+1)*cmd|' /C calc'!A0"
    names = {"heater": "=2*3", "pump": "+pump", "valves": "-valves", "led bar": "@led"}
    inv = _inventory(ids, notes='=HYPERLINK("http://x","y")')
    design = _design(names)
    result = _result(ids, names)
    return result, inv, design, ids, names


def test_hostile_text_stays_text_in_every_sheet_of_the_workbook():
    """OWASP CSV Injection leads; tooling.md §4: data type "s" keeps a string text."""
    result, inv, design, ids, names = _hostile_case()
    data = workbook_bytes(result, inv, design)
    wb = _open(data)
    formulas = []
    seen: set[str] = set()
    for ws in wb.worksheets:
        for row in ws.iter_rows():
            for c in row:
                if c.data_type == "f":
                    formulas.append((ws.title, c.coordinate, c.value))
                    continue
                if isinstance(c.value, str):
                    seen.add(c.value.replace("\n", "\r"))
                    if c.value[:1] in FORMULA_LEADS or c.value[:1] == "\n":
                        assert c.data_type == "s", (ws.title, c.coordinate, c.value)
                        assert c.quotePrefix, (ws.title, c.coordinate, c.value)
    # only our own total formula is a formula
    assert formulas == [(SHEET_BOM, "I10", "=SUM(I2:I9)")]
    # the hostile strings are all there, as text (a CR reads back as LF in XML)
    for s in [*HOSTILE, ids["DRV-1"], ids["NOTE"], ids["IS-60N50"], *names.values()]:
        assert s.replace("\n", "\r") in seen or any(s in t for t in seen), s
    # and the raw sheet XML has exactly one <f> element
    with zipfile.ZipFile(io.BytesIO(data)) as z:
        xml = b"".join(
            z.read(n) for n in z.namelist() if n.startswith("xl/worksheets/")
        )
    assert xml.count(b"<f>") == 1 and b"HYPERLINK" not in xml.split(b"<f>")[1][:40]
    # pandas reads them back as the same strings
    df = pd.read_excel(io.BytesIO(data), sheet_name=SHEET_BOM, engine="calamine")
    got = set(df["Part"].dropna().astype(str))
    assert {"=1+1", '=HYPERLINK("http://x","y")', "+cmd", "-2+3", "@SUM(A1)"} <= got
    assert "\t=1+1" in got


def test_hostile_text_is_neutralised_in_the_csv():
    """OWASP: prefix an apostrophe to cells beginning with = + - @ tab CR."""
    result, inv, design, ids, names = _hostile_case()
    text = bom_csv_text(result, inv, design)
    rows = list(csv.reader(io.StringIO(text)))
    assert rows[0] == [BOM_HEADERS[c] for c in bom.BOM_COLUMNS]
    cells = [c for r in rows[1:] for c in r]
    for c in cells:
        assert c[:1] not in FORMULA_LEADS, repr(c)
    for s in HOSTILE:
        assert "'" + s in cells, s
    parts = [r[2] for r in rows[1:]]
    assert "'=1+1" in parts and "'\r=1+1" in parts
    # numbers stay numbers (unquoted, parse back) and the total still matches
    df = pd.read_csv(io.StringIO(text))
    assert pd.api.types.is_numeric_dtype(df["Extended price [currency]"])
    assert df["Extended price [currency]"].sum() == pytest.approx(
        result.solutions[0].total_cost
    )


@pytest.mark.parametrize("text", HOSTILE + ("#N/A", "ok", "a=b", " =1"))
def test_safe_text_writes_every_string_as_text(text):
    wb = openpyxl.Workbook()
    c = safe_text(wb.active["A1"], text)
    assert c.data_type == "s"
    assert c.quotePrefix == (text[:1] in FORMULA_LEADS)
    buf = io.BytesIO()
    wb.save(buf)
    back = openpyxl.load_workbook(io.BytesIO(buf.getvalue())).active["A1"]
    assert back.data_type == "s"
    assert back.value == text.replace("\r", "\n")


def test_safe_text_drops_characters_the_file_format_forbids():
    wb = openpyxl.Workbook()
    c = safe_text(wb.active["A1"], "=a\x00b\x07c")
    assert c.value == "=abc" and c.data_type == "s"


@pytest.mark.parametrize(
    ("value", "expected"),
    [
        ("=1+1", "'=1+1"),
        ("+cmd", "'+cmd"),
        ("-2+3", "'-2+3"),
        ("@SUM(A1)", "'@SUM(A1)"),
        ("\t=1", "'\t=1"),
        ("\r=1", "'\r=1"),
        ("plain", "plain"),
        (-2.5, -2.5),  # a negative number is a number, not a formula
        (float("nan"), ""),
        (None, ""),
    ],
)
def test_csv_cell_neutralisation_follows_the_owasp_rule(value, expected):
    assert neutralise_csv_cell(value) == expected


# --------------------------------------------------------------------------- end to end


@pytest.mark.solver
def test_demo_workbook_total_equals_the_best_solution_total():
    """End to end on the bundled demo: reader → select → workbook → reopen."""
    from selector.demo import demo_design, demo_workbook
    from selector.design import load_design
    from selector.inventory import load_inventory
    from selector.pipeline import select

    inv = load_inventory([str(demo_workbook())])
    design = load_design(str(demo_design()))
    result = select(inv, design)
    assert result.solutions, result.messages
    best = result.solutions[0]
    data = workbook_bytes(result, inv, design)

    wb = _open(data)
    assert bom.workbook_total(wb) == pytest.approx(best.total_cost, abs=1e-6)
    df = pd.read_excel(io.BytesIO(data), sheet_name=SHEET_BOM, engine="calamine")
    lines = df[df["Kind"].isin(BOM_KINDS)]
    assert lines["Extended price [currency]"].sum() == pytest.approx(best.total_cost)
    switches = lines[lines["Kind"] == "switch"].set_index("Part")["Quantity [pcs]"]
    for part, qty in switches.items():
        assert qty == sum(
            p.quantity * p.switch_count for p in best.channels if p.switch == part
        )
    calc = pd.read_excel(io.BytesIO(data), sheet_name=SHEET_CALC, engine="calamine")
    tj = calc[calc["Key"] == "tj_at_ambient_max"].set_index("Channel")["Value"]
    for p in best.channels:
        assert float(tj[p.channel]) == pytest.approx(p.tj_at_ambient_max)
    assert {c.name for c in design.channels} == set(tj.index)
    csv_df = pd.read_csv(io.StringIO(bom_csv_text(result, inv, design)))
    assert csv_df["Extended price [currency]"].sum() == pytest.approx(best.total_cost)
