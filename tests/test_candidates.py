"""Tests of the candidate stage: dominance layers, tab nodes, interface and sink
frontiers, the own-sink search and the pruning rules.

Reference values: physics.md §11 E1(c) (the feasibility boundary of §6.4), §7.3 for
the tab potentials (common practice of the trade), and brute-force oracles written
plainly in this file.
"""

from __future__ import annotations

import itertools
import math

import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from selector import candidates as cm
from selector import heatsinks
from selector.models import Channel, Conditions, Design
from selector.optimize import solve
from selector.screening import ScreenResult

NAN = math.nan


# --------------------------------------------------------------------------------------
# dominance layers


def layers_oracle(values: np.ndarray, max_layers: int) -> np.ndarray:
    """Plain non-dominated sorting (O(N²) per layer) with the same tie rule."""
    n = len(values)
    order = sorted(range(n), key=lambda i: tuple(values[i]))
    rank = {i: r for r, i in enumerate(order)}
    out = np.full(n, max_layers + 1)
    remaining = set(range(n))
    for lay in range(1, max_layers + 1):
        front = set()
        for i in remaining:
            dominated = any(
                rank[j] < rank[i]
                and all(values[j][d] <= values[i][d] for d in range(values.shape[1]))
                for j in remaining
                if j != i
            )
            if not dominated:
                front.add(i)
        for i in front:
            out[i] = lay
        remaining -= front
    return out


@settings(max_examples=60, deadline=None)
@given(
    data=st.lists(st.tuples(*[st.integers(0, 5)] * 3), min_size=0, max_size=40),
    k=st.integers(1, 4),
    block=st.sampled_from([1, 3, 512]),
)
def test_pareto_layers_match_plain_non_dominated_sorting(data, k, block):
    """Layers of the vectorised sort equal a plain O(N²) non-dominated sorting
    (general algorithm; ties and duplicates included)."""
    v = np.array(data, dtype=float).reshape(len(data), 3)
    got = cm.pareto_layers(v, k, block=block)
    assert got.tolist() == layers_oracle(v, k).tolist()


def test_item_beyond_the_layers_has_a_dominator_in_each_layer():
    """The property the pruning relies on: an item of layer L is dominated by an item
    of every earlier layer."""
    rng = np.random.default_rng(3)
    v = rng.random((300, 3))
    lay = cm.pareto_layers(v, 50)
    for i in np.flatnonzero(lay > 1):
        for earlier in range(1, lay[i]):
            js = np.flatnonzero(lay == earlier)
            assert np.any(np.all(v[js] <= v[i], axis=1))


# --------------------------------------------------------------------------------------
# tab nodes


def test_tab_nodes_follow_the_switch_position():
    """physics.md §7.3 (common practice): the tab is the drain/collector. Low side:
    drain = the load node (one per copy), source = ground. High-side N-MOSFET: drain =
    supply rail. High-side P-MOSFET: drain = load node. Isolated tab: no node."""
    kind = ["nmos", "nmos", "pmos", "nmos", "igbt", "nmos", "nmos", "pmos"]
    side = ["low", "high", "high", "low", "high", "high", "low", "high"]
    tab = [
        "drain",
        "drain",
        "drain",
        "source",
        "collector",
        "source",
        "isolated",
        "source",
    ]
    nodes, per_copy = cm.tab_nodes(kind, side, tab, "pump", 24.0)
    assert nodes.tolist() == [
        "pump:load",
        "rail:24V",
        "pump:load",
        "gnd",
        "rail:24V",
        "pump:load",
        "",
        "rail:24V",
    ]
    assert per_copy.tolist() == [True, False, True, False, False, True, False, False]


def test_unknown_tab_counts_as_drain():
    """A blank tab is taken as live (drain), the conservative choice."""
    nodes, _ = cm.tab_nodes(["nmos"], ["low"], [NAN], "fan", 12.0)
    assert nodes.tolist() == ["fan:load"]


# --------------------------------------------------------------------------------------
# frontiers


def test_interface_frontier_keeps_each_insulating_class_apart():
    itf = pd.DataFrame(
        [
            ("GREASE", 0.04, NAN, ("TO-220",), 0.5, False, 200.0),
            ("GREASE-WORSE", 0.05, NAN, ("TO-220",), 0.6, False, 150.0),
            ("GREASE-WORST", 0.06, NAN, ("TO-220",), 0.7, False, 150.0),
            ("PAD", 0.10, NAN, ("TO-220",), 2.2, True, 180.0),
            ("OUT", 0.01, 0.0, ("TO-220",), 0.1, False, 200.0),
        ],
        columns=["part", "price", "stock", "fits", "rth_cs", "insulating", "t_max"],
    )
    front = cm.interface_frontier(itf, layers=2)
    parts = set(front["part"])
    assert "PAD" in parts  # the only insulating one, however poor
    assert "OUT" not in parts  # stock 0
    assert {"GREASE", "GREASE-WORSE"} <= parts
    assert "GREASE-WORST" not in parts  # dominated by two others


def sink_table(rows):
    """Operating table rows (part, price, stock, positions, fits, r [K/W], n)."""
    recs = []
    for part, price, stock, pos, fits, r, n in rows:
        recs.append(
            dict(
                part=part,
                price=price,
                stock=stock,
                positions=pos,
                fits=fits,
                r_ref=r,
                rise_ref=75.0,
                n=n,
                r_nat_ref=r,
                rise_nat_ref=75.0,
                n_nat=n,
                method="test",
                warning="",
                heat_capacity_j_per_k=NAN,
            )
        )
    return pd.DataFrame(recs)


def test_sink_frontier_drops_sinks_beyond_the_second_layer():
    """Layer 1 = A, B, D (D has more positions); C is dominated (layer 2, kept as an
    alternative for stock); G is dominated by C as well (layer 3: dropped)."""
    t = sink_table(
        [
            ("A", 1.0, NAN, 1, ("TO-220",), 10.0, 0.3),
            ("B", 1.5, NAN, 1, ("TO-220",), 8.0, 0.3),
            ("C", 2.0, NAN, 1, ("TO-220",), 12.0, 0.3),  # dearer and weaker than A
            ("D", 2.0, NAN, 4, ("TO-220",), 12.0, 0.3),  # but more positions: kept
            ("G", 2.5, NAN, 1, ("TO-220",), 14.0, 0.3),  # dearer and weaker than C
            ("E", 0.5, 0.0, 1, ("TO-220",), 1.0, 0.3),  # out of stock
            ("F", 0.1, NAN, 1, ("TO-247",), 1.0, 0.3),  # does not fit
        ]
    )
    kept = t["part"].to_numpy()[cm.sink_frontier(t, ["TO-220"], 5.0, 100.0, layers=2)]
    assert kept.tolist() == ["A", "B", "C", "D"]
    kept1 = t["part"].to_numpy()[cm.sink_frontier(t, ["TO-220"], 5.0, 100.0, layers=1)]
    assert kept1.tolist() == ["A", "B", "D"]


# --------------------------------------------------------------------------------------
# one channel's candidates


def passed_rows(rows):
    """Screened rows with the columns the candidate stage reads."""
    recs = []
    for r in rows:
        base = dict(
            part="SW",
            kind="nmos",
            package="TO-220",
            tab="drain",
            count=1,
            price=1.0,
            stock=NAN,
            t_lim_c=125.0,
            rth_jc_k_per_w=1.0,
            rth_ja_k_per_w=62.0,
            p_dev_w=1.8,
            p0_w=1.0,
            p1_w_per_k=0.008,
            surge_rise_k=0.0,
            surge_dp_w=0.0,
            tj_no_sink_c=NAN,
            tj_no_sink_peak_c=NAN,
            runaway_no_sink=False,
            side="low",
            topology="direct from the pin",
            driver_kind="",
            driver_v_min=NAN,
            driver_v_max=NAN,
            needs_diode=False,
            notes="",
        )
        base.update(r)
        recs.append(base)
    return pd.DataFrame(recs)


ONE_PAD = pd.DataFrame(
    [("PAD1", 0.0, NAN, ("TO-220",), 1.0, True, NAN)],
    columns=["part", "price", "stock", "fits", "rth_cs", "insulating", "t_max"],
)


def test_e1_heater_gets_the_cheapest_sink_within_its_budget():
    """physics.md §11 E1(c): T_lim 125 °C, Ta,max 60 °C, P(125) = 1.8 W, RθJC = RθCS =
    1 K/W -> Rθ,total,max = 65/1.8 = 36.11 K/W and RθSA,max = 34.11 K/W. A 34.0 K/W sink
    is adequate, a 34.2 K/W one is not; free air (RθJA 62 > 36.11) is not admissible."""
    cond = Conditions(ambient_max=60.0)
    ch = Channel("heater", 24.0, 10.0)
    passed = passed_rows([dict(tj_no_sink_c=177.78, tj_no_sink_peak_c=177.78)])
    sinks = sink_table(
        [
            ("HS-34.2", 0.50, NAN, 1, ("TO-220",), 34.2, 0.0),
            ("HS-34.0", 0.60, NAN, 1, ("TO-220",), 34.0, 0.0),
            ("HS-10", 2.00, NAN, 1, ("TO-220",), 10.0, 0.0),
        ]
    )
    front = {"TO-220": cm.sink_frontier(sinks, ["TO-220"], 1.0, 100.0)}
    cc = cm.channel_candidates(
        ch,
        cond,
        passed,
        interfaces=ONE_PAD,
        sink_table=sinks,
        own_frontier=front,
        prune=cm.PruneSettings(),
        board_demand={"switches": 4, "interfaces": 4, "heatsinks": 2},
    )
    t = cc.table.sort_values("cost")
    assert t["heatsink"].iloc[0] == "HS-34.0"
    assert "HS-34.2" not in set(t["heatsink"])
    assert "air" not in set(t["mount"])
    assert t["h_k"].iloc[0] == pytest.approx(125 - 60 - 1.8 * 2.0)
    assert t["h_k"].iloc[0] / 1.8 == pytest.approx(34.11, abs=0.01)
    assert t["margin_k"].iloc[0] == pytest.approx(61.4 - 34.0 * 1.8)


def brute_force_cheapest(passed, interfaces, sinks, cond, quantity=1):
    """Cheapest (switch, count, interface, sink) build by a plain loop over every
    combination, or free air; the sink's rise at n·p_dev must stay within
    T_lim − Ta − p_dev·(RθJC + RθCS) − surge (physics §6.4, §7.2)."""
    best = math.inf
    for r in passed.to_dict("records"):
        if r["stock"] == r["stock"] and r["stock"] < quantity * r["count"]:
            continue
        if r["tj_no_sink_peak_c"] <= r["t_lim_c"]:
            best = min(best, r["count"] * r["price"])
        for i in interfaces.to_dict("records"):
            if r["package"] not in i["fits"]:
                continue
            h = (
                r["t_lim_c"]
                - cond.ambient_max
                - r["p_dev_w"] * (r["rth_jc_k_per_w"] + i["rth_cs"])
                - r["surge_rise_k"]
            )
            for s in range(len(sinks)):
                srow = sinks.iloc[[s]]
                if (
                    r["package"] not in srow["fits"].iloc[0]
                    or srow["positions"].iloc[0] < r["count"]
                ):
                    continue
                rise = float(
                    heatsinks.sink_rise(
                        srow, np.array(r["count"] * r["p_dev_w"]), outer=False
                    )[0]
                )
                if h > 0 and rise <= h + 1e-9:
                    best = min(
                        best,
                        r["count"] * (r["price"] + i["price"]) + srow["price"].iloc[0],
                    )
    return best


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(seed=st.integers(0, 10**6))
def test_cheapest_candidate_equals_brute_force_over_every_sink(seed):
    """The vectorised search (sorted sink frontier) finds the same cheapest build as a
    loop over every switch × count × interface × sink."""
    rng = np.random.default_rng(seed)
    cond = Conditions(ambient_max=float(rng.choice([40.0, 50.0, 60.0])))
    rows = []
    for p in range(4):
        for n in range(1, 4):
            p_dev = float(rng.uniform(0.5, 8.0)) / n
            rows.append(
                dict(
                    part=f"SW{p}",
                    count=n,
                    price=float(rng.choice([0.3, 0.5, 0.8, 1.2])),
                    stock=float(rng.choice([NAN, 1, 3])),
                    p_dev_w=p_dev,
                    rth_jc_k_per_w=float(rng.uniform(0.5, 2.5)),
                    surge_rise_k=float(rng.choice([0.0, 5.0])),
                    tj_no_sink_peak_c=float(cond.ambient_max + 62 * p_dev),
                    package=str(rng.choice(["TO-220", "TO-247"])),
                )
            )
    passed = passed_rows(rows)
    itf = pd.DataFrame(
        [
            ("G220", 0.05, NAN, ("TO-220",), 0.5, False, NAN),
            ("P220", 0.10, NAN, ("TO-220",), 2.0, True, NAN),
            ("G247", 0.06, NAN, ("TO-247",), 0.25, False, NAN),
        ],
        columns=["part", "price", "stock", "fits", "rth_cs", "insulating", "t_max"],
    )
    srows = []
    for s in range(8):
        r = float(np.exp(rng.uniform(np.log(0.5), np.log(20))))
        srows.append(
            (
                f"HS{s}",
                round(float(5 / r**0.8 + rng.uniform(0, 0.5)), 2),
                NAN,
                int(rng.integers(1, 4)),
                [("TO-220",), ("TO-247",), ("TO-220", "TO-247")][
                    int(rng.integers(0, 3))
                ],
                r,
                float(rng.choice([0.0, 0.25, 0.3])),
            )
        )
    sinks = sink_table(srows)
    packages = ["TO-220", "TO-247"]
    front = {p: cm.sink_frontier(sinks, [p], 1.0, 110.0) for p in packages}
    cc = cm.channel_candidates(
        Channel("load", 24.0, 5.0),
        cond,
        passed,
        interfaces=cm.interface_frontier(itf),
        sink_table=sinks,
        own_frontier=front,
        prune=cm.PruneSettings(),
        board_demand={"switches": 12, "interfaces": 12, "heatsinks": 3},
    )
    truth = brute_force_cheapest(passed, itf, sinks, cond)
    got = float(cc.table["cost"].min()) if len(cc.table) else math.inf
    assert got == pytest.approx(truth)
    # every kept sink build keeps the sink's own rise within the budget
    for r in cc.table[cc.table["mount"] == "sink"].to_dict("records"):
        srow = sinks[sinks["part"] == r["heatsink"]]
        rise = float(
            heatsinks.sink_rise(srow, np.array(r["count"] * r["p_dev_w"]), outer=False)[
                0
            ]
        )
        assert rise <= r["h_k"] + 1e-9


def test_ungrouped_pruning_keeps_the_cheapest_parts_and_a_safe_one():
    """Cost-order rule: at least ``keep_parts`` switch parts, at most ``per_part``
    builds each, up to the first build whose parts have stock for the whole board."""
    cond = Conditions(ambient_max=40.0)
    rows = [
        dict(
            part=f"SW{i}",
            price=0.1 * (i + 1),
            stock=1.0 if i < 6 else NAN,
            tj_no_sink_peak_c=60.0,
        )
        for i in range(10)
    ]
    cc = cm.channel_candidates(
        Channel("lamp", 12.0, 1.0),
        cond,
        passed_rows(rows),
        interfaces=ONE_PAD.iloc[0:0],
        sink_table=sink_table([]),
        own_frontier={},
        prune=cm.PruneSettings(keep_parts=3),
        board_demand={"switches": 8, "interfaces": 8, "heatsinks": 1},
    )
    # SW0..SW5 have stock 1 (< board demand 8), SW6 is the first safe part
    assert sorted(cc.table["switch"]) == [f"SW{i}" for i in range(7)]
    assert cc.pruned == 3


# --------------------------------------------------------------------------------------
# the whole candidate set: pruning never loses the optimum


def fake_inventory(rng, n_parts=8, n_sinks=6):
    sw = pd.DataFrame(
        {
            "part": [f"SW{i}" for i in range(n_parts)],
            "price": rng.choice([0.2, 0.3, 0.5, 0.8], n_parts),
            "stock": rng.choice([NAN, 2.0, 6.0], n_parts),
        }
    )
    srows = []
    for s in range(n_sinks):
        r = float(np.exp(rng.uniform(np.log(0.8), np.log(15))))
        srows.append(
            dict(
                part=f"HS{s}",
                price=round(4 / r**0.7, 2),
                stock=float(rng.choice([NAN, 1.0, 3.0])),
                rth_sa=r,
                rth_sa_rise=75.0,
                fits=("TO-220", "TO-247"),
                positions=int(rng.integers(1, 7)),
            )
        )
    itf = pd.DataFrame(
        [
            ("G220", 0.04, NAN, ("TO-220",), 0.5, False, 200.0),
            ("P220", 0.10, NAN, ("TO-220",), 2.0, True, 180.0),
            ("G247", 0.06, NAN, ("TO-247",), 0.25, False, 200.0),
            ("P247", 0.16, NAN, ("TO-247",), 0.9, True, 180.0),
        ],
        columns=["part", "price", "stock", "fits", "rth_cs", "insulating", "t_max"],
    )

    class Inv:
        pass

    inv = Inv()
    inv.switches = sw
    inv.heatsinks = pd.DataFrame(srows)
    inv.interfaces = itf
    inv.diodes = pd.DataFrame(columns=["part", "price", "stock"])
    inv.drivers = pd.DataFrame(columns=["part", "price", "stock", "kind", "v_out"])
    inv.sink_airflow = pd.DataFrame(columns=["part", "airflow", "rth_sa"])
    return inv


def fake_screens(rng, inv, design):
    screens = {}
    for ch in design.channels:
        rows = []
        for _, s in inv.switches.iterrows():
            if rng.random() < 0.3:
                continue
            pkg = str(rng.choice(["TO-220", "TO-247"]))
            rjc = float(rng.uniform(0.4, 2.0))
            base = float(rng.uniform(1.0, 12.0))
            for n in range(1, 4):
                p = base / n**1.8
                rows.append(
                    dict(
                        part=s["part"],
                        count=n,
                        price=s["price"],
                        stock=s["stock"],
                        package=pkg,
                        p_dev_w=p,
                        rth_jc_k_per_w=rjc,
                        tj_no_sink_peak_c=ch_ambient(design) + 62 * p,
                        tab=str(rng.choice(["drain", "isolated"])),
                    )
                )
        passed = passed_rows(rows) if rows else pd.DataFrame()
        screens[ch.name] = ScreenResult(ch.name, passed, pd.DataFrame(), {}, len(rows))
    return screens


def ch_ambient(design):
    return design.conditions.ambient_max


@settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(seed=st.integers(0, 10**6))
def test_pruning_never_loses_the_cheapest_board(seed):
    """The pruned candidate set reaches the same optimal cost as the unpruned one
    (every layer, no cost window, every sink alternative) on random boards with a
    heatsink group, own sinks and stock limits."""
    rng = np.random.default_rng(seed)
    inv = fake_inventory(rng)
    chans = (
        Channel("g1", 24.0, 5.0, heatsink_group="G"),
        Channel("g2", 24.0, 3.0, heatsink_group="G", quantity=int(rng.integers(1, 3))),
        Channel("own", 24.0, 4.0, quantity=int(rng.integers(1, 3))),
        Channel("small", 24.0, 1.0),
    )
    design = Design(Conditions(ambient_max=45.0, max_parallel=3), chans)
    screens = fake_screens(rng, inv, design)
    full = cm.PruneSettings(
        keep_parts=10**6,
        per_part=10**6,
        group_layers=10**6,
        sink_alternatives=10**6,
        interface_layers=10**6,
        sink_layers=10**6,
        ranking_slack=math.inf,
    )
    a = cm.build_selection(inv, design, screens)
    b = cm.build_selection(inv, design, screens, prune=full)
    ra = solve(a.problem, top=1)
    rb = solve(b.problem, top=1)
    assert len(b.problem.candidates) >= len(a.problem.candidates)
    if not rb.solutions:
        assert not ra.solutions
    else:
        assert ra.solutions, "pruning lost every feasible board"
        assert ra.solutions[0].cost == pytest.approx(rb.solutions[0].cost)


def test_candidate_frame_fills_every_column():
    t = cm.candidate_frame([dict(channel="a", switch="S", count=2, p_dev_w=1.5)])
    assert set(cm.CANDIDATE_COLUMNS) <= set(t.columns)
    assert t.at[0, "p_total_w"] == pytest.approx(3.0)
    assert t.at[0, "interface"] == "" and not t.at[0, "insulating"]


def test_fit_items_reads_tuples_and_text():
    assert cm.fit_items("TO-220; to-247") == ("TO-220", "TO-247")
    assert cm.fit_items(("D2PAK",)) == ("D2PAK",)
    assert cm.fit_items(NAN) == ()


def test_every_combination_helper_is_exhaustive():
    """Sanity of the brute-force oracle above: it visits every pairing."""
    assert len(list(itertools.product(range(3), range(4)))) == 12


@settings(max_examples=50, deadline=None)
@given(
    data=st.lists(
        st.tuples(st.integers(0, 3), st.integers(0, 4), st.integers(0, 4)),
        min_size=0,
        max_size=30,
    )
)
def test_local_front_matches_a_plain_loop_per_key(data):
    """Within each key, an item is kept unless another item of the same key dominates
    it (ties: the first in lexicographic order stays) — checked by a plain loop."""
    keys = np.array([str(k) for k, _, _ in data], dtype=object)
    v = np.array([[a, b] for _, a, b in data], dtype=float).reshape(len(data), 2)
    got = cm.local_front(keys, v)
    for i in range(len(data)):
        same = [j for j in range(len(data)) if keys[j] == keys[i]]
        order = sorted(same, key=lambda j: (tuple(v[j]), j))
        earlier = order[: order.index(i)]
        dominated = any(np.all(v[j] <= v[i]) for j in earlier)
        assert got[i] == (not dominated)


def test_grouped_channel_with_every_part_out_of_stock_has_no_candidate():
    """A grouped channel whose screened parts all have stock 0 yields no candidate (and
    says so under "stock") instead of failing inside the group stage."""
    rng = np.random.default_rng(3)
    inv = fake_inventory(rng)
    design = Design(
        Conditions(ambient_max=45.0, max_parallel=2),
        (
            Channel("g1", 24.0, 5.0, heatsink_group="G"),
            Channel("g2", 24.0, 3.0, heatsink_group="G"),
        ),
    )
    screens = fake_screens(rng, inv, design)
    p = screens["g2"].passed.copy()
    p["stock"] = 0.0
    screens["g2"] = ScreenResult("g2", p, pd.DataFrame(), {}, len(p))
    cset = cm.build_selection(inv, design, screens)
    assert len(cset.channels["g2"].table) == 0
    assert cset.channels["g2"].dropped["stock"] == len(p)
    assert (cset.problem.candidates["channel"] == "g2").sum() == 0


def test_local_front_gives_the_same_mask_for_integer_and_text_keys():
    """The group stage passes integer class codes, other callers text keys: the same
    grouping must give the same non-dominated builds."""
    rng = np.random.default_rng(11)
    values = rng.integers(0, 4, size=(300, 3)).astype(float)
    codes = rng.integers(0, 7, size=300)
    text = np.array([f"part-{c}" for c in codes], dtype=object)
    assert np.array_equal(cm.local_front(codes, values), cm.local_front(text, values))
