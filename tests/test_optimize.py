"""Tests of the selection integer program on hand-built candidate tables.

Each case is small enough to solve by hand; the docstrings give the hand calculation and
its source (physics.md §11 check values, or common practice of the trade).
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pulp
import pytest

from selector import optimize
from selector.candidates import candidate_frame
from selector.errors import SolverError
from selector.optimize import GroupSinks, SelectionProblem, price_unit, solve

pytestmark = pytest.mark.solver

NAN = math.nan


def parts_table(rows):
    """rows: (table, part, price, stock[, positions])."""
    out = []
    for r in rows:
        table, part, price, stock = r[:4]
        pos = r[4] if len(r) > 4 else 1
        out.append(
            {
                "table": table,
                "part": part,
                "price": price,
                "stock": stock,
                "positions": pos,
            }
        )
    return pd.DataFrame(out)


def channels_table(*rows):
    """rows: (name, quantity, group)."""
    return pd.DataFrame(rows, columns=["name", "quantity", "group"])


def group_constant_r(group, cand, sinks, r_sa, fits=None):
    """Group sink options for sinks with a constant RθSA: Pmax = h_k / RθSA."""
    rows = np.flatnonzero(cand["mount"].to_numpy() == "group")
    rows = np.array([k for k in rows if cand.at[k, "channel"] in group[1]])
    h = cand["h_k"].to_numpy(dtype=float)[rows]
    pmax = h[:, None] / np.asarray(r_sa, dtype=float)[None, :]
    pmax = np.where(h[:, None] > 0, pmax, 0.0)
    if fits is not None:
        pmax = np.where(np.asarray(fits, dtype=bool), pmax, 0.0)
    return GroupSinks(group[0], list(sinks), rows, pmax)


def grouped(
    channel, switch, p_dev, rth_jc, rth_cs, *, cost, t_lim=125.0, ta=50.0, **kw
):
    """A group candidate row: dev_rise = p_dev·(RθJC + RθCS), h = T_lim − Ta − rise."""
    n = kw.pop("count", 1)
    rise = p_dev * (rth_jc + rth_cs)
    h = t_lim - ta - rise
    return dict(
        channel=channel,
        switch=switch,
        count=n,
        mount="group",
        p_dev_w=p_dev,
        p_total_w=n * p_dev,
        dev_rise_k=rise,
        h_k=h,
        margin_k=h,
        cost=cost,
        t_lim_c=t_lim,
        rth_jc_k_per_w=rth_jc,
        rth_cs_k_per_w=rth_cs,
        **kw,
    )


def in_air(channel, switch, *, cost, margin=10.0, count=1, **kw):
    return dict(
        channel=channel,
        switch=switch,
        count=count,
        mount="air",
        p_dev_w=0.5,
        margin_k=margin,
        cost=cost,
        **kw,
    )


# --------------------------------------------------------------------------------------


def e10_problem(sink_stock=NAN):
    """physics.md §11 E10 at the limit losses: A 3.6 W on 1.0 + 1.2 K/W, B 8 W on 0.8 + 1.0."""
    cand = candidate_frame(
        [
            grouped("A", "SW-A", 3.6, 1.0, 1.2, cost=1.0, interface="MICA"),
            grouped("B", "SW-B", 8.0, 0.8, 1.0, cost=2.0, interface="PAD"),
        ]
    )
    parts = parts_table(
        [
            ("switches", "SW-A", 1.0, NAN),
            ("switches", "SW-B", 2.0, NAN),
            ("interfaces", "MICA", 0.0, NAN),
            ("interfaces", "PAD", 0.0, NAN),
            ("heatsinks", "HS-3.00", 9.0, NAN, 2),
            ("heatsinks", "HS-5.20", 5.0, sink_stock, 2),
            ("heatsinks", "HS-5.25", 4.0, NAN, 2),
        ]
    )
    ch = channels_table(("A", 1, "g"), ("B", 1, "g"))
    gs = group_constant_r(
        ("g", ["A", "B"]), cand, ["HS-3.00", "HS-5.20", "HS-5.25"], [3.0, 5.20, 5.25]
    )
    return SelectionProblem(ch, cand, parts, {"g": gs})


def test_two_channels_sharing_a_sink_match_hand_calculation():
    """Two devices on one sink, physics.md §11 E10 (sufficient form, §7.2).

    At T_lim = 125 °C and Ta = 50 °C: P_A(125) = 3.6 W, P_B = 8 W;
    Ts,max = min(125 − 3.6·2.2, 125 − 8·1.8) = min(117.08, 110.60) = 110.60 °C,
    RθSA,max = 60.6 / 11.6 = 5.224 K/W. So the 5.25 K/W sink is too weak and the
    5.20 K/W one is the cheapest adequate sink. On it: Ts = 50 + 5.2·11.6 = 110.32 °C,
    Tj,A = 110.32 + 3.6·2.2 = 118.24 °C, Tj,B = 110.32 + 8·1.8 = 124.72 °C.
    """
    res = solve(e10_problem(), top=1)
    assert res.status == "optimal"
    best = res.solutions[0]
    assert best.group_sinks == {"g": "HS-5.20"}
    assert best.cost == pytest.approx(1.0 + 2.0 + 5.0)
    assert best.proven_optimal
    r_sa, q = 5.20, 3.6 + 8.0
    ts = 50.0 + r_sa * q
    assert ts == pytest.approx(110.32)
    assert ts + 3.6 * 2.2 == pytest.approx(118.24)
    assert ts + 8.0 * 1.8 == pytest.approx(124.72)
    assert 60.6 / 11.6 == pytest.approx(5.224, abs=5e-4)
    # tie-break value: the smallest margin (B: 125 − 124.72) plus a tenth of the mean
    assert best.tiebreak == pytest.approx(0.28 + 0.1 * (6.76 + 0.28) / 2, abs=1e-6)


def test_shared_sink_out_of_stock_takes_the_next_adequate_sink():
    """E10 again with the 5.20 K/W sink out of stock: only the 3.0 K/W sink is left
    (5.25 K/W > 5.224 K/W limit of §11 E10). With the fixed-power E10 case the hand
    values on 3.0 K/W are Ts = 50 + 3·11 = 83.0 °C, Tj,A = 89.6 °C, Tj,B = 97.4 °C."""
    res = solve(e10_problem(sink_stock=0), top=1)
    assert res.solutions[0].group_sinks == {"g": "HS-3.00"}
    assert res.solutions[0].cost == pytest.approx(12.0)
    ts = 50.0 + 3.0 * (3.0 + 8.0)
    assert (ts, ts + 3.0 * 2.2, ts + 8.0 * 1.8) == pytest.approx((83.0, 89.6, 97.4))


def test_binding_stock_limit_forces_the_second_channel_to_a_dearer_part():
    """Two fans, each could use the 1.00 part; only one is in stock, so the cheapest
    board is 1.00 + 3.00 = 4.00 (common practice: stock is a hard limit)."""
    cand = candidate_frame(
        [
            in_air("fan 1", "SW-CHEAP", cost=1.0),
            in_air("fan 1", "SW-DEAR", cost=3.0),
            in_air("fan 2", "SW-CHEAP", cost=1.0),
            in_air("fan 2", "SW-DEAR", cost=3.0),
        ]
    )
    parts = parts_table(
        [("switches", "SW-CHEAP", 1.0, 1), ("switches", "SW-DEAR", 3.0, NAN)]
    )
    ch = channels_table(("fan 1", 1, ""), ("fan 2", 1, ""))
    res = solve(SelectionProblem(ch, cand, parts), top=1)
    best = res.solutions[0]
    used = sorted(cand.at[k, "switch"] for k in best.choice.values())
    assert used == ["SW-CHEAP", "SW-DEAR"]
    assert best.cost == pytest.approx(4.0)


def test_stock_counts_parallel_devices_and_copies():
    """Stock 3 of the cheap part: 2 copies × 1 device (2 units) fit, a second channel
    needing 2 in parallel (2 more units) does not, so it takes the dearer part.
    Cheapest: 2·1 + 2·3 = 8 (versus 2·3 + 2·1 = 8 as well: equal cost, either is right;
    both use at most 3 cheap units)."""
    cand = candidate_frame(
        [
            in_air("valves", "SW-CHEAP", cost=1.0),
            in_air("valves", "SW-DEAR", cost=3.0),
            in_air("pump", "SW-CHEAP", cost=2.0, count=2),
            in_air("pump", "SW-DEAR", cost=6.0, count=2),
        ]
    )
    parts = parts_table(
        [("switches", "SW-CHEAP", 1.0, 3), ("switches", "SW-DEAR", 3.0, NAN)]
    )
    ch = channels_table(("valves", 2, ""), ("pump", 1, ""))
    best = solve(SelectionProblem(ch, cand, parts)).solutions[0]
    cheap_units = sum(
        ch.set_index("name").at[c, "quantity"] * cand.at[k, "count"]
        for c, k in best.choice.items()
        if cand.at[k, "switch"] == "SW-CHEAP"
    )
    assert cheap_units <= 3
    assert best.cost == pytest.approx(2 * 1.0 + 6.0)


def _isolation_problem(n_channels=2, node=lambda c: f"{c}:load", quantity=1):
    """Low-side switches with drain tabs on a group sink; grease (not insulating,
    0.10) or pad (insulating, 0.50) under each device."""
    rows = []
    names = [f"ch{i}" for i in range(n_channels)]
    for c in names:
        for itf, price, ins, rcs in (
            ("GREASE", 0.1, False, 0.5),
            ("PAD", 0.5, True, 1.5),
        ):
            rows.append(
                grouped(
                    c,
                    "SW",
                    2.0,
                    1.0,
                    rcs,
                    cost=1.0 + price,
                    interface=itf,
                    insulating=ins,
                    tab="drain",
                    tab_node=node(c),
                    node_per_copy=node(c).endswith(":load"),
                )
            )
    cand = candidate_frame(rows)
    parts = parts_table(
        [
            ("switches", "SW", 1.0, NAN),
            ("interfaces", "GREASE", 0.1, NAN),
            ("interfaces", "PAD", 0.5, NAN),
            ("heatsinks", "HS", 2.0, NAN, 8),
        ]
    )
    ch = channels_table(*[(c, quantity, "g") for c in names])
    gs = group_constant_r(("g", names), cand, ["HS"], [2.0])
    return SelectionProblem(ch, cand, parts, {"g": gs}), cand


def _pads(best, cand):
    return sorted(c for c, k in best.choice.items() if bool(cand.at[k, "insulating"]))


def test_live_tab_pair_on_one_sink_forces_an_insulating_pad():
    """Two low-side switches: each drain tab sits on its own load node, so an uninsulated
    sink may carry only one of them (physics.md §7.3, common practice): one device gets
    the insulating pad. Cost: 2·1.00 + 0.10 + 0.50 + sink 2.00 = 4.60."""
    prob, cand = _isolation_problem(2)
    best = solve(prob).solutions[0]
    assert len(_pads(best, cand)) == 1
    assert best.cost == pytest.approx(4.6)


def test_three_live_tabs_need_two_pads():
    """Three load nodes: at most one uninsulated, so two pads (physics.md §7.3)."""
    prob, cand = _isolation_problem(3)
    best = solve(prob).solutions[0]
    assert len(_pads(best, cand)) == 2
    assert best.cost == pytest.approx(3 + 0.1 + 2 * 0.5 + 2.0)


def test_tabs_on_one_supply_rail_share_an_uninsulated_sink():
    """High-side N-MOSFET drains all sit on the same rail, so they may share a live sink
    without pads (physics.md §7.3: "several high-side N-MOSFETs on one rail")."""
    prob, cand = _isolation_problem(3, node=lambda c: "rail:24")
    best = solve(prob).solutions[0]
    assert _pads(best, cand) == []


def test_copies_with_their_own_load_nodes_need_pads_on_a_shared_sink():
    """Two copies of one low-side channel on a group sink: two load nodes, so the
    uninsulated candidate is unusable and both copies take pads (physics.md §7.3)."""
    prob, cand = _isolation_problem(1, quantity=2)
    res = solve(prob)
    best = res.solutions[0]
    assert _pads(best, cand) == ["ch0"]
    assert res.unusable["ch0"]
    assert best.cost == pytest.approx(2 * 1.5 + 2.0)


def _inductive_problem(diode_stock=NAN, quantity=1, alt=False, enforce=None):
    rows = [in_air("valve", "SW", cost=1.0, needs_diode=True)]
    if alt:  # an avalanche-rated switch that needs no diode, dearer
        rows.append(in_air("valve", "SW-AV", cost=2.0, needs_diode=False))
    cand = candidate_frame(rows)
    parts = parts_table(
        [
            ("switches", "SW", 1.0, NAN),
            ("switches", "SW-AV", 2.0, NAN),
            ("diodes", "D-SMALL", 0.05, NAN),
            ("diodes", "D-OK", 0.10, diode_stock),
            ("diodes", "D-BIG", 0.40, NAN),
        ]
    )
    acc = pd.DataFrame(
        [
            {"channel": "valve", "role": "diode", "need": "freewheel", "part": "D-OK"},
            {"channel": "valve", "role": "diode", "need": "freewheel", "part": "D-BIG"},
        ]
    )
    ch = channels_table(("valve", quantity, ""))
    kw = {} if enforce is None else {"enforce": enforce}
    return SelectionProblem(ch, cand, parts, accessories=acc, **kw)


def test_inductive_channel_gets_the_cheapest_rated_diode():
    """A solenoid valve needs a freewheel diode (physics.md §4.1, common practice).
    D-SMALL is not rated for the channel (not among its options), so D-OK is chosen:
    cost 1.00 + 0.10."""
    best = solve(_inductive_problem()).solutions[0]
    assert best.accessories == {"valve": {"diode": "D-OK"}}
    assert best.cost == pytest.approx(1.10)


def test_diode_stock_applies_to_every_copy():
    """Two copies need two diodes; with one D-OK in stock both copies take D-BIG
    (identical copies): 2·(1.00 + 0.40) = 2.80."""
    best = solve(_inductive_problem(diode_stock=1, quantity=2)).solutions[0]
    assert best.accessories == {"valve": {"diode": "D-BIG"}}
    assert best.cost == pytest.approx(2.80)


def test_no_diode_left_moves_to_a_switch_that_needs_none():
    """Without any rated diode in stock the valve takes the avalanche-rated switch."""
    prob = _inductive_problem(diode_stock=0, alt=True)
    prob.parts.loc[prob.parts["part"] == "D-BIG", "stock"] = 0
    best = solve(prob).solutions[0]
    assert prob.candidates.at[best.choice["valve"], "switch"] == "SW-AV"
    assert best.accessories == {}


def test_driver_need_becomes_a_note_without_drivers():
    """When the inventory has no drivers the need is not enforced (a note later)."""
    cand = candidate_frame(
        [in_air("heater", "SW-HI", cost=1.0, driver_kind="high_side")]
    )
    parts = parts_table([("switches", "SW-HI", 1.0, NAN)])
    ch = channels_table(("heater", 1, ""))
    prob = SelectionProblem(ch, cand, parts, enforce=frozenset({"diode"}))
    best = solve(prob).solutions[0]
    assert best.accessories == {}
    # enforced without an option: the candidate is unusable
    prob2 = SelectionProblem(ch, cand, parts)
    res = solve(prob2)
    assert res.status == "no_candidates"
    assert (
        "no suitable gate driver (high_side) in the inventory" in res.unusable["heater"]
    )


def test_driver_of_the_right_kind_is_chosen_and_paid():
    cand = candidate_frame(
        [in_air("heater", "SW-HI", cost=1.0, driver_kind="high_side")]
    )
    parts = parts_table(
        [
            ("switches", "SW-HI", 1.0, NAN),
            ("drivers", "DRV-HI", 0.7, NAN),
            ("drivers", "DRV-ISO", 1.5, NAN),
        ]
    )
    acc = pd.DataFrame(
        [
            {"channel": "heater", "role": "driver", "need": "high_side", "part": p}
            for p in ("DRV-HI", "DRV-ISO")
        ]
    )
    best = solve(
        SelectionProblem(
            channels_table(("heater", 1, "")), cand, parts, accessories=acc
        )
    ).solutions[0]
    assert best.accessories == {"heater": {"driver": "DRV-HI"}}
    assert best.cost == pytest.approx(1.7)


def test_positions_on_the_group_sink_cover_every_device():
    """Three devices (2 in parallel + 1) need a sink with at least 3 positions."""
    cand = candidate_frame(
        [
            grouped("A", "SW", 1.0, 1.0, 0.5, cost=2.0, count=2),
            grouped("B", "SW", 1.0, 1.0, 0.5, cost=1.0),
        ]
    )
    parts = parts_table(
        [
            ("switches", "SW", 1.0, NAN),
            ("heatsinks", "HS-2POS", 1.0, NAN, 2),
            ("heatsinks", "HS-4POS", 3.0, NAN, 4),
        ]
    )
    ch = channels_table(("A", 1, "g"), ("B", 1, "g"))
    gs = group_constant_r(("g", ["A", "B"]), cand, ["HS-2POS", "HS-4POS"], [2.0, 2.0])
    best = solve(SelectionProblem(ch, cand, parts, {"g": gs})).solutions[0]
    assert best.group_sinks == {"g": "HS-4POS"}


def test_sink_that_does_not_fit_the_package_is_not_chosen():
    cand = candidate_frame(
        [
            grouped("A", "SW-220", 1.0, 1.0, 0.5, cost=1.0, package="TO-220"),
            grouped("B", "SW-247", 1.0, 1.0, 0.5, cost=1.0, package="TO-247"),
        ]
    )
    parts = parts_table(
        [
            ("switches", "SW-220", 1.0, NAN),
            ("switches", "SW-247", 1.0, NAN),
            ("heatsinks", "HS-220ONLY", 1.0, NAN, 2),
            ("heatsinks", "HS-BOTH", 2.0, NAN, 2),
        ]
    )
    ch = channels_table(("A", 1, "g"), ("B", 1, "g"))
    gs = group_constant_r(
        ("g", ["A", "B"]),
        cand,
        ["HS-220ONLY", "HS-BOTH"],
        [1.0, 1.0],
        fits=[[True, True], [False, True]],
    )
    best = solve(SelectionProblem(ch, cand, parts, {"g": gs})).solutions[0]
    assert best.group_sinks == {"g": "HS-BOTH"}


def test_equal_cost_tie_goes_to_the_larger_margin():
    """Two parts at the same price: the one with the larger thermal margin wins."""
    cand = candidate_frame(
        [
            in_air("lamp", "SW-WARM", cost=1.0, margin=3.0),
            in_air("lamp", "SW-COOL", cost=1.0, margin=30.0),
        ]
    )
    parts = parts_table(
        [("switches", "SW-WARM", 1.0, NAN), ("switches", "SW-COOL", 1.0, NAN)]
    )
    best = solve(
        SelectionProblem(channels_table(("lamp", 1, "")), cand, parts)
    ).solutions[0]
    assert cand.at[best.choice["lamp"], "switch"] == "SW-COOL"


def test_margin_never_outweighs_one_price_unit():
    """A part one cent cheaper wins even against a far larger margin."""
    cand = candidate_frame(
        [
            in_air("lamp", "SW-HOT", cost=1.00, margin=0.01),
            in_air("lamp", "SW-COLD", cost=1.01, margin=500.0),
        ]
    )
    parts = parts_table(
        [("switches", "SW-HOT", 1.0, NAN), ("switches", "SW-COLD", 1.01, NAN)]
    )
    best = solve(
        SelectionProblem(channels_table(("lamp", 1, "")), cand, parts)
    ).solutions[0]
    assert cand.at[best.choice["lamp"], "switch"] == "SW-HOT"
    assert price_unit([1.0, 1.01]) == pytest.approx(0.01)


def test_price_unit_of_prices():
    assert price_unit([1, 2, 30]) == 1.0
    assert price_unit([0.5, 2.25]) == pytest.approx(0.01)
    assert price_unit([0.125]) == pytest.approx(0.001)
    assert price_unit([]) == 1.0


def _ranked_problem():
    cand = candidate_frame(
        [
            in_air("A", "SW-1", cost=1.0),
            in_air("A", "SW-2", cost=1.5),
            in_air("A", "SW-1", cost=1.2, count=2),  # same part, other count
            in_air("B", "SW-1", cost=1.0),
            in_air("B", "SW-3", cost=2.0),
        ]
    )
    parts = parts_table(
        [
            ("switches", "SW-1", 1.0, NAN),
            ("switches", "SW-2", 1.5, NAN),
            ("switches", "SW-3", 2.0, NAN),
        ]
    )
    return SelectionProblem(channels_table(("A", 1, ""), ("B", 1, "")), cand, parts)


def test_ranked_alternatives_are_distinct_and_sorted():
    """Alternatives differ in a switch or heatsink part of at least one channel; the
    count-only variant (2 × SW-1) is not offered. Expected costs: 2.0 (SW-1, SW-1),
    2.5 (SW-2, SW-1), 3.0 (SW-1, SW-3), 3.5 (SW-2, SW-3)."""
    prob = _ranked_problem()
    res = solve(prob, top=5)
    costs = [s.cost for s in res.solutions]
    assert costs == pytest.approx([2.0, 2.5, 3.0, 3.5])
    sigs = [s.signature for s in res.solutions]
    assert len(set(sigs)) == len(sigs)
    diff = optimize.describe_differences(prob, res.solutions[0], res.solutions[1])
    assert diff[0].startswith("A: 1 × SW-2 in free air instead of 1 × SW-1")
    assert diff[-1] == "costs +0.50 against the best"


def test_infeasible_when_stock_cannot_cover_the_board():
    cand = candidate_frame([in_air("A", "SW", cost=1.0), in_air("B", "SW", cost=1.0)])
    parts = parts_table([("switches", "SW", 1.0, 1)])
    res = solve(
        SelectionProblem(channels_table(("A", 1, ""), ("B", 1, "")), cand, parts)
    )
    assert res.status == "infeasible"
    assert res.solutions == []


def test_channel_without_candidates_is_reported():
    cand = candidate_frame([in_air("A", "SW", cost=1.0)])
    parts = parts_table([("switches", "SW", 1.0, NAN)])
    res = solve(
        SelectionProblem(channels_table(("A", 1, ""), ("B", 1, "")), cand, parts)
    )
    assert res.status == "no_candidates"
    assert "channel 'B' has no usable candidate" in res.messages


def test_time_limited_answer_is_marked_not_proven(monkeypatch):
    """PuLP's status says Optimal even when the time limit stopped the search; the
    solution status (sol_status 2, "Solution Found") must mark it not proven."""
    real = pulp.LpProblem.solve

    def stopped(self, solver=None, **kw):
        out = real(self, solver, **kw)
        self.sol_status = pulp.LpSolutionIntegerFeasible
        return out

    monkeypatch.setattr(pulp.LpProblem, "solve", stopped)
    res = solve(e10_problem())
    assert res.status == "feasible"
    assert not res.solutions[0].proven_optimal
    assert any("not proven optimal" in m for m in res.messages)


def test_missing_solver_is_a_clear_error(monkeypatch):
    with pytest.raises(SolverError, match="unknown solver"):
        optimize.make_solver("glpk")
    monkeypatch.setattr(pulp.PULP_CBC_CMD, "available", lambda self: False)
    with pytest.raises(SolverError, match="CBC solver bundled with PuLP is missing"):
        solve(e10_problem())


def test_highs_gives_the_same_answer_as_cbc():
    pytest.importorskip("highspy")
    a = solve(e10_problem(), solver="cbc").solutions[0]
    b = solve(e10_problem(), solver="highs").solutions[0]
    assert (a.cost, a.group_sinks) == (b.cost, b.group_sinks)


def test_model_size_is_reported():
    res = solve(e10_problem())
    assert res.size["variables"] > 0 and res.size["rows"] > 0
    assert res.size["nonzeros"] >= res.size["rows"]
