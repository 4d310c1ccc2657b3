"""Channel × switch × parallel-count evaluation (selector.evaluate).

Reference values are physics.md §11 (E1, E10, E13), whose closed forms are §5–§8; the
loss model is selector.losses (M1 conduction, physics.md §1). Cross-checks use
scipy.optimize.brentq as an independent solver and a plain scalar oracle per row.
"""

from __future__ import annotations

import math
from dataclasses import replace
from types import SimpleNamespace

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from scipy.optimize import brentq

from selector import thermal as th
from selector.evaluate import (
    EVALUATION_COLUMNS,
    INTERFACE_COLUMNS,
    device_rise,
    evaluate_switches,
    interface_options,
    junction_report,
)
from selector.models import Channel, Conditions, Settings

PROPS = settings(max_examples=30, deadline=None)

CONTRACT_COLUMNS = (
    "part kind package tab count price stock tj_max_c t_lim_c rth_jc_k_per_w "
    "rth_ja_k_per_w vgs_used_v rds25_ohm i_dev_a p_cond_w p_sw_w p_coss_w p_gate_w "
    "p_dev_w p0_w p1_w_per_k r_ja_max_k_per_w surge_rise_k surge_method tj_no_sink_c "
    "runaway_no_sink loss_ok loss_reason"
).split()

E8_R = [0.05, 0.15, 0.30, 0.50]
E8_TAU = [0.1e-3, 1e-3, 10e-3, 100e-3]


def make_inventory(rows: list[dict], points: list[tuple[str, float, float]]):
    """A hand-built inventory (overview column names, SI values)."""
    base = {
        "kind": "nmos",
        "package": "TO-220",
        "tab": "drain",
        "price": 1.0,
        "stock": np.nan,
        "v_rating": 60.0,
        "i_rating": 50.0,
        "tj_max": 150.0,
        "rth_jc": 1.0,
        "rth_ja": 62.0,
        "rds_hot_ratio": 1.8,
    }
    df = pd.DataFrame([{**base, **r} for r in rows])
    for i in range(1, 6):
        for c in (f"zth_r{i}", f"zth_tau{i}"):
            if c not in df.columns:
                df[c] = np.nan
    rds = pd.DataFrame(points, columns=["part", "vgs", "rds_on"])
    return SimpleNamespace(switches=df, rds_points=rds)


E1_INV = make_inventory([{"part": "E1"}], [("E1", 10.0, 0.010)])
E1_CHANNEL = Channel(name="heater", supply=24.0, current=10.0, drive=10.0)


def test_heater_evaluation_matches_e1_hand_calculation():
    """E1(c), physics.md §11: 10 A, R25 = 10 mΩ at 10 V, α_L = 0.008 (k = 1.8 at
    125 °C), T_lim = 150 − 25 = 125 °C, Ta,max = 60 °C -> P(125) = 1.800 W,
    P0 = 1.000 W, P1 = 0.008 W/K, Rθ,total,max = 36.11 K/W; alone in air with
    RθJA = 62 > 36.11 K/W the part is not admissible."""
    cond = Conditions(ambient_max=60.0, junction_margin=25.0, max_parallel=1)
    ev = evaluate_switches(E1_INV, E1_CHANNEL, cond, Settings())
    row = ev.iloc[0]
    assert row["t_lim_c"] == 125.0
    assert row["p_dev_w"] == pytest.approx(1.800, abs=5e-4)
    assert row["p0_w"] == pytest.approx(1.000, abs=5e-4)
    assert row["p1_w_per_k"] == pytest.approx(0.008, abs=5e-7)
    assert row["r_ja_max_k_per_w"] == pytest.approx(36.11, abs=0.005)
    assert row["rth_ja_k_per_w"] > row["r_ja_max_k_per_w"]
    assert row["tj_no_sink_c"] > row["t_lim_c"]
    assert bool(row["loss_ok"]) and row["loss_reason"] == ""
    assert row["vgs_used_v"] == 10.0 and row["rds25_ohm"] == pytest.approx(0.010)


def test_heater_alone_in_air_matches_e1a():
    """E1(a), physics.md §11: at Ta = 40 °C alone in air (RθJA = 62 K/W) the junction
    settles at 177.78 °C (closed form §6.1), above tj_max."""
    cond = Conditions(ambient_max=40.0, junction_margin=25.0, max_parallel=1)
    row = evaluate_switches(E1_INV, E1_CHANNEL, cond).iloc[0]
    assert row["tj_no_sink_c"] == pytest.approx(177.78, abs=0.005)
    assert not bool(row["runaway_no_sink"])
    assert row["gain_no_sink"] == pytest.approx(0.496)


def test_heater_required_sink_with_pad_matches_e1c():
    """E1(c), physics.md §11: with RθJC = 1.0 and a 1.0 K/W pad the largest RθSA is
    36.11 − 1 − 1 = 34.11 K/W; the sink budget is T_lim − Ta − P·(RθJC + RθCS)."""
    cond = Conditions(ambient_max=60.0, junction_margin=25.0, max_parallel=1)
    ev = evaluate_switches(E1_INV, E1_CHANNEL, cond)
    pads = pd.DataFrame(
        [
            {"part": "pad", "price": 0.1, "fits": ("TO-220",), "rth_cs": 1.0},
            {"part": "big", "price": 0.1, "fits": ("TO-247",), "rth_cs": 0.2},
        ]
    )
    io = interface_options(ev, pads, cond)
    assert list(io.columns) == list(INTERFACE_COLUMNS)
    assert list(io["interface"]) == ["pad"]  # the TO-247 pad does not fit
    r = io.iloc[0]
    assert r["rth_sa_max_k_per_w"] == pytest.approx(34.11, abs=0.005)
    assert r["h_k"] == pytest.approx(65.0 - 1.8 * 2.0)
    # the chain at that RθSA puts the junction at the limit (§6.4, exact for M1)
    tj = th.junction_temperature_linear(60.0, 2.0 + r["rth_sa_max_k_per_w"], 1.0, 0.008)
    assert float(tj.tj) == pytest.approx(125.0, rel=1e-9)


def test_interface_temperature_rating_limits_the_sink_rise():
    """An interface rated to t_max = 100 °C (pad datasheets give a use temperature:
    common practice) caps the sink at t_max − P·RθCS, tighter than the junction."""
    cond = Conditions(ambient_max=60.0, junction_margin=25.0, max_parallel=1)
    ev = evaluate_switches(E1_INV, E1_CHANNEL, cond)
    pad = pd.DataFrame(
        [{"part": "pad", "price": 0.1, "fits": "TO-220", "rth_cs": 1.0, "t_max": 100.0}]
    )
    r = interface_options(ev, pad, cond).iloc[0]
    assert r["h_k"] == pytest.approx(100.0 - 60.0 - 1.8 * 1.0)


def test_one_row_per_switch_and_count_with_every_contract_column():
    """Contract (notes/contracts.md): one row per (switch, count n in
    1..max_parallel), switch-major, with every named column."""
    inv = make_inventory(
        [{"part": "A"}, {"part": "B", "package": "TO-247"}],
        [("A", 10.0, 0.01), ("B", 10.0, 0.02), ("B", 4.5, 0.03)],
    )
    ev = evaluate_switches(inv, E1_CHANNEL, Conditions(max_parallel=3))
    assert len(ev) == 6
    assert set(CONTRACT_COLUMNS) <= set(ev.columns)
    assert list(ev.columns) == list(EVALUATION_COLUMNS)
    assert list(ev["part"]) == ["A"] * 3 + ["B"] * 3
    assert list(ev["count"]) == [1, 2, 3] * 2
    assert ev["t_lim_c"].eq(125.0).all()
    # every row: R* = (T_lim − Ta,max)/P(T_lim) (§6.4)
    np.testing.assert_allclose(
        ev["r_ja_max_k_per_w"], (125.0 - 45.0) / ev["p_dev_w"], rtol=1e-12
    )
    # more devices in parallel never raise the per-device loss (issue 3 property)
    for _, g in ev.groupby("part"):
        assert np.all(np.diff(g["p_dev_w"].to_numpy()) <= 1e-12)


def test_empty_inventory_gives_empty_table_with_columns():
    inv = make_inventory([{"part": "A"}], [])
    inv.switches = inv.switches.iloc[0:0]
    ev = evaluate_switches(inv, E1_CHANNEL, Conditions())
    assert len(ev) == 0 and list(ev.columns) == list(EVALUATION_COLUMNS)


def test_missing_loss_data_is_reported_not_guessed():
    """physics.md §1.3 (common practice): a part whose lowest guaranteed Rds(on) point
    is 10 V cannot be evaluated at 3.3 V drive; the row says why."""
    ch = replace(E1_CHANNEL, drive=3.3)
    ev = evaluate_switches(E1_INV, ch, Conditions(max_parallel=1))
    row = ev.iloc[0]
    assert not bool(row["loss_ok"])
    assert "10 V" in row["loss_reason"] and "3.3 V" in row["loss_reason"]
    assert math.isnan(row["p_dev_w"])


# ---------------------------------------------------------------- surge (issue 7)


def stall_inventory():
    """Two parts with R(125 °C) = 15 mΩ (R25 10 mΩ, k = 1.5): one with the E8 Foster
    network, one without Foster data."""
    foster = {f"zth_r{i + 1}": r for i, r in enumerate(E8_R)}
    foster.update({f"zth_tau{i + 1}": t for i, t in enumerate(E8_TAU)})
    return make_inventory(
        [
            {"part": "F", "rds_hot_ratio": 1.5, **foster},
            {"part": "N", "rds_hot_ratio": 1.5},
        ],
        [("F", 10.0, 0.010), ("N", 10.0, 0.010)],
    )


STALL = Channel(
    name="pump",
    supply=12.0,
    current=4.0,
    peak_current=30.0,
    peak_time=0.2,
    load="motor",
    inductance=1e-3,
    drive=10.0,
)


def test_motor_stall_surge_matches_e13():
    """E13, physics.md §11 (§4.5, §8): 30 A stall for 0.2 s at R_hot = 15 mΩ ->
    13.5 W; Zth(0.2 s) = 0.932332 K/W of the E8 network -> 12.59 K above the case.
    The engine reports the rise above the running state: (13.5 − 0.24)·Zth; a part
    without Foster data is charged RθJC (conservative rule, physics.md §8.1)."""
    cond = Conditions(ambient_max=45.0, junction_margin=25.0, max_parallel=1)
    ev = evaluate_switches(stall_inventory(), STALL, cond).set_index("part")
    p_run = 4.0**2 * 0.015
    p_pk = 30.0**2 * 0.015
    assert ev.loc["F", "p_dev_w"] == pytest.approx(p_run, rel=1e-9)
    assert ev.loc["F", "surge_dp_w"] == pytest.approx(p_pk - p_run, rel=1e-9)
    z = 0.932332
    assert ev.loc["F", "surge_rise_k"] + p_run * z == pytest.approx(12.59, abs=5e-3)
    assert ev.loc["F", "surge_method"] == th.SURGE_FOSTER
    assert ev.loc["N", "surge_rise_k"] == pytest.approx((p_pk - p_run) * 1.0)
    assert ev.loc["N", "surge_method"] == th.SURGE_CONSERVATIVE
    # the device rise over the sink adds the interface, treated as fast
    rise = device_rise(
        ev.loc["F", "p_dev_w"],
        1.0,
        0.5,
        ev.loc["F", "surge_rise_k"],
        ev.loc["F", "surge_dp_w"],
    )
    assert rise == pytest.approx(p_run * 1.5 + (p_pk - p_run) * (z + 0.5), abs=1e-5)
    assert ev.loc["F", "tj_no_sink_peak_c"] == pytest.approx(
        ev.loc["F", "tj_no_sink_c"] + ev.loc["F", "surge_rise_k"]
    )


def test_short_peak_is_left_to_the_pulse_rating_check():
    """Design format (overview): peak_time = 0 is a short pulse, checked against
    i_pulse by the screening rules; no thermal surge rise here."""
    ch = replace(STALL, peak_time=0.0)
    ev = evaluate_switches(stall_inventory(), ch, Conditions(max_parallel=2))
    assert ev["surge_rise_k"].eq(0.0).all()
    assert ev["surge_method"].eq(th.SURGE_SHORT).all()
    ev = evaluate_switches(
        stall_inventory(), replace(STALL, peak_current=0.0), Conditions(max_parallel=1)
    )
    assert ev["surge_method"].eq(th.SURGE_NONE).all()


@PROPS
@given(t1=st.floats(1e-3, 2.0), dt=st.floats(0.0, 3.0))
def test_longer_stall_is_never_cooler_in_the_engine(t1, dt):
    """Common practice (Zth nondecreasing, physics.md §8.1): a longer stall never gives
    a smaller surge rise, for parts with or without Foster data."""
    inv = stall_inventory()
    cond = Conditions(max_parallel=2)
    a = evaluate_switches(inv, replace(STALL, peak_time=t1), cond)["surge_rise_k"]
    b = evaluate_switches(inv, replace(STALL, peak_time=t1 + dt), cond)["surge_rise_k"]
    assert np.all(b.to_numpy() >= a.to_numpy() - 1e-12)


# ---------------------------------------------------------------- cross-checks


@PROPS
@given(seed=st.integers(0, 10_000))
def test_vectorised_rows_equal_a_scalar_oracle(seed):
    """Each single-device row equals a plain scalar calculation: P(T) = I²·R25·
    (1 + α·(T − 25)) with α = (k − 1)/100 (physics.md §1.1–§1.2, M1 fitted at 125 °C),
    R* = (T_lim − Ta)/P(T_lim), and the no-sink junction from scipy.optimize.brentq
    on Ta + RθJA·P(T) − T (physics.md §6.3)."""
    rng = np.random.default_rng(seed)
    n = 12
    rows = [
        {
            "part": f"P{i}",
            "rds_hot_ratio": float(rng.uniform(1.2, 2.4)),
            "tj_max": float(rng.choice([150.0, 175.0])),
            "rth_ja": float(rng.uniform(20, 90)),
        }
        for i in range(n)
    ]
    pts = [(f"P{i}", 10.0, float(rng.uniform(0.003, 0.05))) for i in range(n)]
    inv = make_inventory(rows, pts)
    cur = float(rng.uniform(1, 12))
    ta = float(rng.uniform(20, 60))
    cond = Conditions(ambient_max=ta, junction_margin=25.0, max_parallel=1)
    ev = evaluate_switches(inv, replace(E1_CHANNEL, current=cur), cond)
    for i in range(n):
        r25 = pts[i][2]
        alpha = (rows[i]["rds_hot_ratio"] - 1.0) / 100.0
        t_lim = rows[i]["tj_max"] - 25.0

        def p(t, r25=r25, alpha=alpha):
            return cur * cur * r25 * (1 + alpha * max(t - 25.0, 0.0))

        row = ev.iloc[i]
        assert row["p_dev_w"] == pytest.approx(p(t_lim), rel=1e-12)
        assert row["r_ja_max_k_per_w"] == pytest.approx(
            (t_lim - ta) / p(t_lim), rel=1e-12
        )
        rja = rows[i]["rth_ja"]

        def g(t, rja=rja, p=p):
            return ta + rja * p(t) - t

        if g(250.0) > 0:
            assert bool(row["runaway_no_sink"])
        else:
            ref = brentq(g, ta, 250.0, xtol=1e-12)
            assert row["tj_no_sink_c"] == pytest.approx(ref, rel=1e-10)


@PROPS
@given(i1=st.floats(0.5, 30.0), di=st.floats(0.0, 20.0))
def test_more_current_never_cools_a_junction_in_the_engine(i1, di):
    """Common practice (issue 3 property): raising the channel current never lowers the
    no-sink junction temperature nor raises the allowed thermal resistance."""
    inv = make_inventory(
        [{"part": "A"}, {"part": "B", "rds_hot_ratio": 2.2, "rth_ja": 40.0}],
        [("A", 10.0, 0.01), ("B", 10.0, 0.004)],
    )
    cond = Conditions(max_parallel=3)
    a = evaluate_switches(inv, replace(E1_CHANNEL, current=i1), cond)
    b = evaluate_switches(inv, replace(E1_CHANNEL, current=i1 + di), cond)
    ta, tb = a["tj_no_sink_c"].to_numpy(), b["tj_no_sink_c"].to_numpy()
    assert np.all(tb >= ta - 1e-9)
    assert np.all(
        b["r_ja_max_k_per_w"].to_numpy() <= a["r_ja_max_k_per_w"].to_numpy() + 1e-9
    )


# ---------------------------------------------------------------- final report


def test_final_report_of_two_devices_on_one_sink_matches_e10():
    """E10, physics.md §11: MOSFET (P = 2·[1 + 0.008(Tj − 25)] W, 1.0 + 1.2 K/W) and
    IGBT (8 W, 0.8 + 1.0 K/W) on RθSA = 3.0 at 50 °C -> Tj = 89.79 / 97.51 °C,
    Ts = 83.11 °C."""
    rep = junction_report(
        [2.0, 8.0], [0.016, 0.0], [1.0, 0.8], 50.0, rth_cs=[1.2, 1.0], r_sa=3.0
    )
    np.testing.assert_allclose(rep.tj, [89.79, 97.51], atol=0.005)
    assert rep.ts == pytest.approx(83.11, abs=0.005)
    assert not rep.runaway
    np.testing.assert_allclose(rep.tj_peak, rep.tj)
    air = junction_report([1.0], [0.008], [1.0], 40.0, rth_ja=[62.0], surge_rise=[3.0])
    assert air.tj[0] == pytest.approx(177.78, abs=0.005)
    assert air.tj_peak[0] == pytest.approx(180.78, abs=0.005)


def test_result_frame_from_blocks_equals_the_plain_constructor():
    """The evaluation table is assembled from one block per dtype; it must equal the
    plain ``pd.DataFrame`` of the same columns (values, dtypes, column index, text kept
    as ``object``) and stay an ordinary, editable frame. No physics: equivalence."""
    from selector.evaluate import _frame

    n = 5
    cols = {
        "part": np.array(list("abcde"), dtype=object),
        "count": np.arange(n),
        "p": np.linspace(0.0, 1.0, n),
        "ok": np.array([True, False, True, True, False]),
        "why": np.array(["", "x", "", None, np.nan], dtype=object),
        "q": np.full(n, np.nan),
    }
    order = tuple(cols)
    got = _frame(cols, order)
    ref = pd.DataFrame(
        {
            k: pd.Series(v, dtype=object) if v.dtype == object else v
            for k, v in cols.items()
        },
        columns=list(order),
    )
    pd.testing.assert_frame_equal(got, ref, check_exact=True)
    assert list(got.dtypes) == list(ref.dtypes) and got.columns.equals(ref.columns)
    got.loc[0, "p"] = 9.0
    got["extra"] = 1
    assert got.loc[0, "p"] == 9.0 and cols["p"][0] == 0.0  # the inputs are not shared
    empty = _frame({k: v[:0] for k, v in cols.items()}, order)
    assert len(empty) == 0 and list(empty.dtypes) == list(ref.dtypes)
