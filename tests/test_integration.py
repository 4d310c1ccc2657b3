"""The whole chain on the bundled demo: surge, estimated heatsinks, airflow, re-checks.

These tests tie the modules together on the invented greenhouse design: the pump is
judged on its start-up stall, the geometry-only heatsink carries an estimated RθSA
marked as such, more air over the sinks never makes the answer dearer, and every ranked
solution re-checked by the engine keeps every junction at or below its limit.
"""

from __future__ import annotations

import dataclasses

import pytest

from selector.demo import demo_design, demo_workbook
from selector.design import load_design
from selector.heatsinks import sink_operating_table
from selector.inventory import load_inventory
from selector.pipeline import select

pytestmark = pytest.mark.solver


@pytest.fixture(scope="module")
def inventory():
    return load_inventory([str(demo_workbook())])


@pytest.fixture(scope="module")
def design():
    return load_design(demo_design())


@pytest.fixture(scope="module")
def still_air(inventory, design):
    return select(inventory, design, top=3)


def _with_conditions(design, **changes):
    return dataclasses.replace(
        design, conditions=dataclasses.replace(design.conditions, **changes)
    )


def test_demo_has_a_proven_optimal_selection_for_every_channel(still_air, design):
    assert still_air.status == "optimal"
    best = still_air.solutions[0]
    assert best.proven_optimal
    assert [p.channel for p in best.channels] == [c.name for c in design.channels]


def test_every_ranked_solution_keeps_each_junction_below_its_limit(still_air):
    for sol in still_air.solutions:
        for pick in sol.channels:
            assert pick.tj_at_ambient_max <= pick.tj_limit + 1e-6, (sol.rank, pick)
            if pick.sink_temperature is not None:
                # a sink is never hotter than the junctions it cools
                assert pick.sink_temperature <= pick.tj_at_ambient_max + 1e-9


def test_ranked_solutions_are_in_cost_order_and_distinct(still_air):
    costs = [s.total_cost for s in still_air.solutions]
    assert costs == sorted(costs)
    signatures = {
        tuple((p.switch, p.switch_count, p.heatsink) for p in s.channels)
        for s in still_air.solutions
    }
    assert len(signatures) == len(still_air.solutions)


def test_pump_is_judged_on_its_start_up_stall(inventory, design, still_air):
    """The stall surge (15 A for 0.5 s) appears as a rule and in the final report."""
    pump = next(c for c in design.channels if c.load == "motor" and c.peak_time > 0)
    assert pump.peak_current > pump.current
    pick = still_air.solutions[0].pick(pump.name)
    transient = pick.details.get("transient") or {}
    assert transient.get("t_s"), "the pump's pick carries its surge transient"
    peak = max(transient["tj_c"])
    assert peak <= pick.tj_limit + 1e-6
    # removing the stall can only make the pump's own parts cheaper or equal
    calm = dataclasses.replace(pump, peak_current=pump.current, peak_time=0.0)
    calm_design = dataclasses.replace(
        design,
        channels=tuple(calm if c.name == pump.name else c for c in design.channels),
    )
    relaxed = select(inventory, calm_design, top=1)
    assert relaxed.solutions[0].total_cost <= still_air.solutions[0].total_cost + 1e-9


def test_geometry_only_heatsink_gets_an_estimated_rth_marked_as_such(inventory):
    table = sink_operating_table(inventory.heatsinks, inventory.sink_airflow, 0.0, 0.0)
    geo = inventory.heatsinks[inventory.heatsinks["rth_sa"].isna()]["part"].tolist()
    assert geo, "the demo inventory holds a heatsink given by geometry only"
    rows = table[table["part"].isin(geo)]
    assert rows["estimated"].all()
    assert rows["method"].str.contains("estimated").all()
    assert (rows["warning"].str.len() > 0).all()
    # a plausible natural-convection figure for a finned extrusion (common practice)
    assert ((rows["r_ref"] > 0.3) & (rows["r_ref"] < 20)).all()


def test_more_air_over_the_heatsinks_never_makes_the_selection_dearer(
    inventory, design, still_air
):
    fan = select(inventory, _with_conditions(design, airflow=3.0), top=1)
    assert fan.solutions
    assert fan.solutions[0].total_cost <= still_air.solutions[0].total_cost + 1e-9


def test_airflow_changes_the_heatsink_where_it_should(inventory):
    """A 25 A heater on one switch needs a sink; moving air changes which one.

    Forced air lowers a sink's RθSA (heatsink.md §1.2: interpolated from the sheet's
    airflow points); the cheapest adequate sink must follow. A design of our own.
    """
    text = (
        "[conditions]\nambient_min = -5\nambient_max = 45\nmax_parallel = 1\n"
        "airflow = {air}\n\n"
        '[[channel]]\nname = "tray heater"\nsupply = 24\ncurrent = 25\n'
        'load = "resistive"\ndrive = 12\nside = "low"\n'
    )
    still = select(inventory, load_design(text.format(air=0)), top=1)
    moving = select(inventory, load_design(text.format(air=3)), top=1)
    assert still.solutions and moving.solutions
    s, m = still.solutions[0].channels[0], moving.solutions[0].channels[0]
    assert s.heatsink is not None
    assert moving.solutions[0].total_cost <= still.solutions[0].total_cost + 1e-9
    assert (m.heatsink, m.switch) != (s.heatsink, s.switch)
    assert m.heatsink is not None
    assert m.tj_at_ambient_max <= m.tj_limit + 1e-6
