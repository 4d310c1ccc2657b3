"""Tests of the whole selection: screening -> candidates -> integer program -> the final
engine evaluation, on the bundled demo and on random boards.

The final evaluation is checked against the closed-form junction temperature of
physics.md §6.1 (air) and against the heat balance of a shared sink (§7.2), each
recomputed here from the screening rows, and every ranked solution is re-checked: every
junction at or below its limit and every rule passed.
"""

from __future__ import annotations

import dataclasses
import json
import math

import numpy as np
import pandas as pd
import pytest
from _shared import CONTRACT_CHANNEL_FIELDS
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from selector import heatsinks, pipeline
from selector.demo import demo_design, demo_workbook
from selector.design import load_design
from selector.errors import DesignError
from selector.inventory import Inventory, InventoryReport, load_inventory
from selector.models import Channel, Conditions, Design, Settings
from selector.screening import screen_channel

pytestmark = pytest.mark.solver

NAN = math.nan


@pytest.fixture(scope="module")
def demo():
    inv = load_inventory([str(demo_workbook())])
    design = load_design(str(demo_design()))
    return inv, design


@pytest.fixture(scope="module")
def demo_result(demo):
    inv, design = demo
    return pipeline.select(inv, design, top=3)


def assert_safe(result, design, inv):
    """Every ranked solution: one pick per channel, every junction within its limit,
    every rule check passed, and the total equals the picks plus the group sinks."""
    names = [c.name for c in design.channels]
    sink_price = dict(zip(inv.heatsinks["part"], inv.heatsinks["price"], strict=True))
    for sol in result.solutions:
        assert [p.channel for p in sol.channels] == names
        for p in sol.channels:
            assert p.tj_at_ambient_max <= p.tj_limit + 1e-6, (sol.rank, p.channel)
            bad = [c for c in p.details["checks"] if not c["ok"]]
            assert not bad, (sol.rank, p.channel, bad)
        groups = sum(float(sink_price[s]) for s in sol.group_sinks.values())
        assert sol.total_cost == pytest.approx(
            sum(p.cost for p in sol.channels) + groups
        )


# --------------------------------------------------------------------------------------
# the demo


def test_demo_every_ranked_solution_keeps_every_junction_within_its_limit(
    demo, demo_result
):
    """The engine's own re-check of all ranked solutions (issue 4: junction ≤ limit at
    ambient_max and every rule passed)."""
    inv, design = demo
    res = demo_result
    assert res.status == "optimal"
    assert len(res.solutions) == 3
    assert_safe(res, design, inv)
    costs = [s.total_cost for s in res.solutions]
    assert costs == sorted(costs)
    assert all(s.proven_optimal for s in res.solutions)
    for s in res.solutions[1:]:
        assert s.differs_from_best


def test_demo_json_has_the_contract_fields(demo_result):
    """overview.md, `pick --json`: solutions with rank, total_cost, channels (channel,
    switch, switch_count, heatsink, interface, diode, driver, tj_at_ambient_max, tj_limit,
    sink_temperature, loss with conduction/switching/total, notes), rejected, assumptions."""
    d = demo_result.to_dict()
    text = json.dumps(d, default=str)
    assert json.loads(text)["status"] == "optimal"
    assert {"solutions", "rejected", "assumptions", "infeasible"} <= set(d)
    ch = d["solutions"][0]["channels"][0]
    for key in CONTRACT_CHANNEL_FIELDS:
        assert key in ch
    assert {"conduction", "switching", "total"} <= set(ch["loss"])
    det = ch["details"]
    for key in ("inputs", "chain", "losses", "drive", "checks", "assumed", "tj_curve"):
        assert key in det
    assert len(det["tj_curve"]["ambient_c"]) == len(det["tj_curve"]["tj_c"])
    assert d["rejected"]["soil heater"]


def screen_row(inv, design, pick):
    ch = design.channel(pick.channel)
    sc = screen_channel(inv, ch, design.conditions, Settings())
    p = sc.passed
    return p[(p["part"] == pick.switch) & (p["count"] == pick.switch_count)].iloc[0]


def test_free_air_junction_matches_the_closed_form(demo, demo_result):
    """physics.md §6.1: with P(Tj) = P0 + P1·(Tj − 25) and RθJA,
    Tj − 25 = (Ta − 25 + Rθ·P0)/(1 − Rθ·P1) (E1(a) form), recomputed from the
    screening row of the chosen part."""
    inv, design = demo
    sol = demo_result.solutions[0]
    checked = 0
    for p in sol.channels:
        ch = design.channel(p.channel)
        if p.heatsink is not None or ch.peak_current > ch.current:
            continue
        r = screen_row(inv, design, p)
        ta = design.conditions.ambient_max
        rth = float(r["rth_ja_k_per_w"])
        g = rth * float(r["p1_w_per_k"])
        tj = 25.0 + (ta - 25.0 + rth * float(r["p0_w"])) / (1.0 - g)
        assert p.tj_at_ambient_max == pytest.approx(tj, rel=1e-6), p.channel
        checked += 1
    assert checked >= 2


def test_shared_sink_temperature_balances_the_heat_of_both_channels(demo, demo_result):
    """physics.md §7.2 (lumped sink): Ts = Ta + rise(Σ P_k) with the sink's law at its
    rise, Tj,k = Ts + P_k·(RθJC + RθCS), P_k = P0 + P1·(Tj,k − 25): the reported steady
    temperatures satisfy these equations (residuals recomputed here)."""
    inv, design = demo
    sol = demo_result.solutions[0]
    members = design.groups()["main sink"]
    picks = [sol.pick(m) for m in members]
    sink = picks[0].heatsink
    assert all(p.heatsink == sink for p in picks)
    ts = picks[0].sink_temperature
    total = 0.0
    for p in picks:
        r = screen_row(inv, design, p)
        rcs = float(inv.interfaces.set_index("part").at[p.interface, "rth_cs"])
        tj = p.details["chain"]["tj_steady_c"]
        power = float(r["p0_w"]) + float(r["p1_w_per_k"]) * (tj - 25.0)
        assert tj == pytest.approx(
            ts + power * (float(r["rth_jc_k_per_w"]) + rcs), abs=1e-3
        )
        total += power * p.quantity * p.switch_count
    table = heatsinks.sink_operating_table(inv.heatsinks, inv.sink_airflow, 0.0, 0.0)
    one = table[table["part"] == sink]
    rise = float(
        np.asarray(heatsinks.sink_rise(one, np.asarray(total), outer=False)).reshape(
            -1
        )[0]
    )
    assert ts == pytest.approx(design.conditions.ambient_max + rise, abs=1e-3)


def test_two_live_tabs_on_the_shared_sink_get_one_insulating_interface(demo_result):
    """physics.md §7.3: two low-side drains on one sink are two nodes; at most one may
    touch it, so at least one of the two channels has an insulating interface."""
    sol = demo_result.solutions[0]
    picks = [sol.pick("soil heater"), sol.pick("circulation pump")]
    live = [p for p in picks if p.details["tab_node"] and not p.details["insulating"]]
    assert len({p.details["tab_node"] for p in live}) <= 1


def test_inductive_channels_get_a_diode(demo_result):
    """physics.md §4.1 (common practice): motor and solenoid loads get a freewheel diode
    unless the switch may absorb the energy in avalanche."""
    for p in demo_result.solutions[0].channels:
        load = p.details["inputs"]["load"]
        if load in ("inductive", "motor"):
            needs = any("freewheel diode" in n for n in p.notes)
            assert p.diode or not needs


def test_format_result_lists_the_ranked_solutions_and_cautions(demo_result):
    text = pipeline.format_result(demo_result)
    assert "#1  total" in text and "#3  total" in text
    assert "proven optimal" in text
    assert "Hot surface" in text or "Caution" in text
    assert "licensed practice" in text


# --------------------------------------------------------------------------------------
# random boards


def small_inventory(rng, n_switches=24, n_sinks=8) -> Inventory:
    """A small invented inventory in SI units (inventory column names)."""
    n = n_switches
    kind = rng.choice(np.array(["nmos", "nmos", "nmos", "pmos"]), size=n)
    pkg = rng.choice(np.array(["TO-220", "TO-247", "DPAK"]), size=n)
    v = rng.choice(np.array([40.0, 60.0, 100.0]), size=n)
    rds = rng.uniform(0.004, 0.05, n) * np.where(kind == "pmos", 2.0, 1.0)
    parts = [f"T-{i:03d}" for i in range(n)]
    sw = pd.DataFrame(
        {
            "part": parts,
            "kind": kind,
            "package": pkg,
            "price": np.round(rng.uniform(0.2, 1.5, n), 2),
            "stock": rng.choice(np.array([NAN, 2.0, 5.0]), size=n),
            "v_rating": v,
            "i_rating": np.round(0.2 / rds, 1),
            "tj_max": rng.choice(np.array([150.0, 175.0]), size=n),
            "rth_jc": rng.uniform(0.5, 2.5, n),
            "rth_ja": np.where(pkg == "TO-247", 40.0, 62.0),
            "vgs_max": 20.0,
            "vth_max": rng.uniform(1.5, 3.0, n),
            "rds_hot_ratio": rng.uniform(1.5, 1.9, n),
            "tab": np.where(rng.random(n) < 0.2, "isolated", "drain"),
            "qg": 20e-9,
            "qgs": 5e-9,
            "qgd": 6e-9,
            "coss": 300e-12,
            "i_pulse": np.round(0.8 / rds, 1),
            "eas": 0.1,
        }
    )
    pts = (
        pd.concat(
            [
                pd.DataFrame({"part": parts, "vgs": 10.0, "rds_on": rds}),
                pd.DataFrame({"part": parts, "vgs": 4.5, "rds_on": rds * 1.4}),
            ]
        )
        .sort_values(["part", "vgs"])
        .reset_index(drop=True)
    )
    r = np.exp(rng.uniform(np.log(1.0), np.log(15.0), n_sinks))
    hs = pd.DataFrame(
        {
            "part": [f"H-{i:02d}" for i in range(n_sinks)],
            "price": np.round(5.0 / r**0.8, 2),
            "stock": rng.choice(np.array([NAN, 1.0, 3.0]), size=n_sinks),
            "rth_sa": np.round(r, 2),
            "rth_sa_rise": 75.0,
            "fits": [("TO-220", "TO-247")] * n_sinks,
            "positions": rng.integers(1, 5, n_sinks),
        }
    )
    itf = pd.DataFrame(
        [
            ("I-G220", 0.04, NAN, ("TO-220",), 0.5, False, 200.0),
            ("I-P220", 0.10, NAN, ("TO-220",), 2.2, True, 180.0),
            ("I-G247", 0.06, NAN, ("TO-247",), 0.24, False, 200.0),
            ("I-P247", 0.16, NAN, ("TO-247",), 0.9, True, 180.0),
        ],
        columns=["part", "price", "stock", "fits", "rth_cs", "insulating", "t_max"],
    )
    diodes = pd.DataFrame(
        [("D-1", 0.05, NAN, 100.0, 3.0, 0.6, 80.0, 150.0, "SMA")],
        columns=[
            "part",
            "price",
            "stock",
            "v_rrm",
            "i_avg",
            "vf",
            "rth_ja",
            "tj_max",
            "package",
        ],
    )
    drivers = pd.DataFrame(
        columns=["part", "price", "stock", "kind", "v_out", "i_peak", "v_supply_max"]
    )
    return Inventory(
        switches=sw,
        heatsinks=hs,
        interfaces=itf,
        diodes=diodes,
        drivers=drivers,
        rds_points=pts,
        sink_airflow=pd.DataFrame(columns=["part", "airflow", "rth_sa"]),
        report=InventoryReport(),
    )


def random_design(rng) -> Design:
    chans = [
        Channel(
            "heat", 24.0, float(rng.uniform(3, 12)), drive=12.0, heatsink_group="G"
        ),
        Channel(
            "pump",
            24.0,
            float(rng.uniform(1, 5)),
            peak_current=float(rng.uniform(5, 10)),
            peak_time=0.3,
            load="motor",
            inductance=0.01,
            drive=12.0,
            heatsink_group="G",
        ),
        Channel(
            "lamp",
            12.0,
            float(rng.uniform(0.5, 4)),
            drive=5.0,
            quantity=int(rng.integers(1, 3)),
        ),
        Channel("big", 24.0, float(rng.uniform(5, 15)), drive=12.0),
    ]
    return Design(
        Conditions(ambient_max=float(rng.choice([40.0, 50.0])), max_parallel=3),
        tuple(chans),
    )


@settings(max_examples=6, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(seed=st.integers(0, 10**6))
def test_random_boards_every_ranked_solution_passes_the_engine_re_check(seed):
    """Random inventories and boards: every ranked solution, re-evaluated by the engine
    independently of the optimizer, keeps every junction within its limit and passes
    every rule."""
    rng = np.random.default_rng(seed)
    inv = small_inventory(rng)
    design = random_design(rng)
    res = pipeline.select(inv, design, top=3)
    if res.solutions:
        assert_safe(res, design, inv)
    else:
        assert res.infeasible
        for info in res.infeasible.values():
            assert info["reasons"]


# --------------------------------------------------------------------------------------
# why nothing fits


def test_channel_no_part_can_serve_names_the_rules_and_the_nearest_miss(demo):
    inv, design = demo
    extra = Channel("kiln", 400.0, 5.0, drive=12.0)
    d = dataclasses.replace(design, channels=design.channels + (extra,))
    res = pipeline.select(inv, d, top=1)
    assert res.status == "no_candidates" and not res.solutions
    info = res.infeasible["kiln"]
    assert info["funnel"].get("voltage", 0) > 0
    assert info["nearest_miss"]["description"].startswith("best is ")
    assert any("voltage" in r for r in info["reasons"])


def test_weak_sinks_give_a_thermal_nearest_miss_with_its_numbers(demo):
    """Only a 20 K/W clip sink in stock and a 30 A heater that must sit on a shared
    sink: the nearest miss names the junction, the limit, the RθSA it needs and the
    best sink's RθSA (issue 4 wording)."""
    inv, design = demo
    weak = dataclasses.replace(
        inv, heatsinks=inv.heatsinks[inv.heatsinks["part"] == "DEMO-HS-CLIP20"]
    )
    ch = dataclasses.replace(
        design.channel("frost heater"),
        heatsink_group="alone",
        current=30.0,
        peak_current=30.0,
    )
    d = Design(design.conditions, (ch,))
    res = pipeline.select(weak, d, top=1)
    assert not res.solutions
    nm = res.infeasible["frost heater"]["nearest_miss"]
    v = nm["values"]
    assert (
        "needs RθSA ≤" in nm["description"]
        and "the best sink in stock has" in nm["description"]
    )
    assert v["tj_c"] > v["t_lim_c"]
    assert v["rth_sa_needed"] < v["rth_sa_best"]


def test_stock_shared_between_channels_is_explained():
    rng = np.random.default_rng(5)
    inv = small_inventory(rng)
    sw = inv.switches.copy()
    sw["stock"] = 1.0  # every part once
    inv = dataclasses.replace(inv, switches=sw)
    chans = tuple(
        Channel(f"lamp {i}", 12.0, 1.0, drive=12.0) for i in range(len(sw) + 1)
    )
    res = pipeline.select(inv, Design(Conditions(max_parallel=1), chans), top=1)
    assert res.status == "infeasible"
    text = " ".join(r for info in res.infeasible.values() for r in info["reasons"])
    assert "stock" in text


def test_group_that_cannot_share_one_sink_is_explained():
    """Two heaters in one heatsink group and a single one-position sink in stock: each
    fits it alone, both together do not; the reason names the group and the positions."""
    rng = np.random.default_rng(11)
    inv = small_inventory(rng)
    one = inv.heatsinks.iloc[[0]].copy()
    one["positions"] = 1
    one["rth_sa"] = 1.0
    one["stock"] = NAN
    inv = dataclasses.replace(inv, heatsinks=one)
    chans = (
        Channel("heater 1", 24.0, 4.0, drive=12.0, heatsink_group="pair"),
        Channel("heater 2", 24.0, 4.0, drive=12.0, heatsink_group="pair"),
    )
    res = pipeline.select(inv, Design(Conditions(max_parallel=2), chans), top=1)
    assert not res.solutions
    text = res.infeasible["heater 1"]["reasons"][0]
    assert "cannot share one heatsink" in text
    assert "need at least 2 positions, the largest sink has 1" in text


# --------------------------------------------------------------------------------------
# why this part


def test_why_names_the_chosen_part(demo, demo_result):
    inv, design = demo
    p = demo_result.solutions[0].pick("LED grow bar")
    text = pipeline.why(inv, design, "LED grow bar", p.switch)
    assert "is chosen" in text


def test_why_gives_the_rule_for_a_refused_part(demo):
    inv, design = demo
    text = pipeline.why(inv, design, "soil heater", "DEMO-N20-1")
    assert "DEMO-N20-1" in text and ("block" in text or "rating" in text)


def test_why_prices_a_passing_part_that_lost(demo, demo_result):
    inv, design = demo
    chosen = demo_result.solutions[0].pick("frost heater").switch
    sc = screen_channel(
        inv, design.channel("frost heater"), design.conditions, Settings()
    )
    other = next(p for p in sc.passed["part"].unique() if p != chosen)
    text = pipeline.why(inv, design, "frost heater", other)
    assert other in text
    assert (
        ("whole board would cost" in text)
        or ("no candidate build" in text)
        or ("no feasible selection" in text)
    )


def test_why_unknown_channel_is_a_design_error(demo):
    inv, design = demo
    with pytest.raises(DesignError, match="no channel named 'attic fan'"):
        pipeline.why(inv, design, "attic fan", "DEMO-N40-7")


def test_each_copy_has_its_own_sink_in_the_final_evaluation():
    """overview.md: ``quantity`` copies each get their own parts and sink. For a channel
    on its own sink the reported sink temperature balances one copy's heat only
    (physics.md §7.2 lumped sink): Ts = Ta + rise(n·P(Tj)), Tj = Ts + P·(RθJC + RθCS)."""
    rng = np.random.default_rng(3)
    inv = small_inventory(rng)
    ch = Channel("heater", 24.0, 20.0, drive=12.0, quantity=2)
    design = Design(Conditions(ambient_max=45.0, max_parallel=2), (ch,))
    res = pipeline.select(inv, design, top=3)
    table = heatsinks.sink_operating_table(inv.heatsinks, inv.sink_airflow, 0.0, 0.0)
    checked = 0
    for sol in res.solutions:
        p = sol.pick("heater")
        if p.heatsink is None:
            continue
        r = screen_row(inv, design, p)
        rcs = float(inv.interfaces.set_index("part").at[p.interface, "rth_cs"])
        tj = p.details["chain"]["tj_steady_c"]
        power = float(r["p0_w"]) + float(r["p1_w_per_k"]) * (tj - 25.0)
        ts = p.sink_temperature
        assert tj == pytest.approx(
            ts + power * (float(r["rth_jc_k_per_w"]) + rcs), abs=1e-3
        )
        one = table[table["part"] == p.heatsink]
        rise = float(
            np.asarray(
                heatsinks.sink_rise(
                    one, np.asarray(p.switch_count * power), outer=False
                )
            ).reshape(-1)[0]
        )
        assert ts == pytest.approx(45.0 + rise, abs=1e-3)
        checked += 1
    assert checked >= 1


def test_screen_cache_rescreens_only_the_edited_channel(demo, demo_result, monkeypatch):
    """With a cache kept for the inventory, the answer is the same as without it, and
    after one channel's current changes only that channel is screened and built again."""
    inv, design = demo
    cache: dict = {}
    first = pipeline.select(inv, design, top=3, screen_cache=cache)
    assert [s.total_cost for s in first.solutions] == [
        s.total_cost for s in demo_result.solutions
    ]
    screen_keys = [k for k in cache if isinstance(k[0], Channel)]
    built_keys = [k for k in cache if k[0] == "candidates"]
    assert len(screen_keys) == len(built_keys) == len(design.channels)

    screened: list[str] = []
    built: list[str] = []
    real = pipeline._screening.screen_channel
    real_build = pipeline._cand.channel_candidates

    def counting(inventory, channel, *args, **kwargs):
        screened.append(channel.name)
        return real(inventory, channel, *args, **kwargs)

    def counting_build(channel, *args, **kwargs):
        built.append(channel.name)
        return real_build(channel, *args, **kwargs)

    monkeypatch.setattr(pipeline._screening, "screen_channel", counting)
    monkeypatch.setattr(pipeline._cand, "channel_candidates", counting_build)
    c0 = design.channels[0]
    edited = dataclasses.replace(
        design,
        channels=(dataclasses.replace(c0, current=c0.current * 0.9),)
        + tuple(design.channels[1:]),
    )
    again = pipeline.select(inv, edited, top=3, screen_cache=cache)
    assert screened == [c0.name]
    assert built == [c0.name]
    fresh = pipeline.select(inv, edited, top=3)
    assert [s.total_cost for s in again.solutions] == [
        s.total_cost for s in fresh.solutions
    ]


def test_plain_text_converts_arrow_strings_and_leaves_the_callers_tables(demo):
    """Hand-built tables (pandas ≥ 3 infers arrow strings) are read with plain object
    text without touching the caller's frames; an inventory already plain comes back as
    the same object."""
    inv, _design = demo
    inv = pipeline.plain_text(inv)
    assert pipeline.plain_text(inv) is inv
    arrow = dataclasses.replace(
        inv,
        switches=inv.switches.astype({"part": "str", "kind": "str", "package": "str"}),
    )
    plain = pipeline.plain_text(arrow)
    assert plain is not arrow
    assert plain.switches["part"].dtype == object
    assert str(arrow.switches["part"].dtype) == "str"  # the caller's table as it was
    assert plain.switches["part"].tolist() == inv.switches["part"].tolist()
    pd.testing.assert_frame_equal(
        plain.switches.drop(columns=["part", "kind", "package"]),
        inv.switches.drop(columns=["part", "kind", "package"]),
    )
