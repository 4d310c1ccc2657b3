"""Properties of the vectorised loss engine, and a plain scalar oracle it must equal.

The oracle below restates the methods of the physics reference one part at a time with
``math`` only: Rds(on) spec point (§1.3 [b]), M1 temperature model (§1.2 [b]),
worst-case sharing (§7.1 [derived]), gate-charge intervals (§2.2 [b]; linear ramps after
Mohan/Undeland/Robbins), datasheet times (§2.1 [c: MUR]), Coss energy (§2.3 [derived]),
gate power (§2.4 [b]), IGBT single-point conduction (§3.1 [derived]) and energy scaling
(§3.2 [c]). Physical properties checked with hypothesis: more current never lowers the
per-device loss; more devices in parallel never raise it (with the default gate-loop
resistances, see ``test_more_devices_never_raise_the_per_device_loss``).
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest
from _shared import LOSS_COLUMNS
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from selector import losses as L
from selector.models import Channel, Conditions, Settings

PROFILE = settings(
    max_examples=60,
    deadline=None,
    suppress_health_check=[HealthCheck.too_slow],
)
NAN = float("nan")
COLUMNS = LOSS_COLUMNS


# ----------------------------------------------------------------------------- oracle


def _fin(x) -> bool:
    return x is not None and not (isinstance(x, float) and math.isnan(x))


def scalar_losses(row, points, ch: Channel, s: Settings, n: int, tj: float, drv_v=None):
    """One part, one count, one temperature: returns a dict or None when refused.

    ``points`` is a list of (vgs, rds_on) for this part.
    """
    kind = row["kind"]
    use_driver = drv_v is not None
    v_drv = abs(drv_v if use_driver else ch.drive)
    r_src = s.driver_resistance if use_driver else s.pin_resistance
    r_ser = s.gate_resistor_driver if use_driver else s.gate_resistor_pin
    v_sup, i_load, duty, f = ch.supply, ch.current, ch.duty, ch.pwm_frequency
    k_load = 1.0 / 6.0 if ch.load in ("resistive", "lamp") else 0.5
    i_sw = i_load * min(1.0, s.parallel_switching_factor / n)
    rho = s.rds_min_ratio
    ok = True
    p_sw25 = p_coss = p_gate = 0.0
    beta = 0.0
    method = "off"

    if kind in ("nmos", "pmos"):
        usable = [(g, r) for g, r in points if abs(g) <= v_drv + 1e-6]
        if not usable:
            return None
        r25 = max(r for g, r in usable if abs(g) == max(abs(g2) for g2, _ in usable))
        k = row["rds_hot_ratio"]
        if not _fin(k):
            k = 1.8 if row["v_rating"] <= 100 else 2.2
        alpha = (max(k, 1.0) - 1.0) / 100.0
        if n == 1:
            r_ratio, i_hot = 1.0, i_load
        else:
            r_ratio = min(1.0, max(rho, 1.0 / (n - 1)))
            i_hot = i_load / (1 + (n - 1) * r_ratio)
        p_c25 = duty * i_hot**2 * r_ratio * r25
        i_rating = i_load / (1 + (n - 1) * min(rho, 1.0))
        v_pl_sheet = row["v_plateau"]
        if _fin(v_pl_sheet) and v_pl_sheet >= v_drv:
            ok = False
        if f > 0:
            qgs, qg, qgd, vth = row["qgs"], row["qg"], row["qgd"], row["vth_max"]
            if not _fin(qgs) and _fin(qg) and _fin(qgd) and qg > qgd:
                qgs = qg - qgd
            v_pl = v_pl_sheet if _fin(v_pl_sheet) else (vth + 1.0 if _fin(vth) else NAN)
            gc = _fin(qgd) and _fin(qgs) and _fin(v_pl) and v_pl > 0
            if gc:
                method = "gate_charge"
                if v_pl >= v_drv:
                    ok = False
                else:
                    v_th = vth if _fin(vth) and vth < v_pl else 0.0
                    q_gs2 = qgs * (v_pl - v_th) / v_pl
                    v_test = 0.5 * row["v_rating"]
                    q_gd = qgd * v_sup / v_test if v_sup > v_test else qgd
                    rg = row["rg_int"] if _fin(row["rg_int"]) else s.rg_int_default
                    r_g = n * r_src + r_ser + rg
                    t_ri = q_gs2 / ((v_drv - (v_th + v_pl) / 2) / r_g)
                    t_fv = q_gd / ((v_drv - v_pl) / r_g)
                    t_rv = q_gd / (v_pl / r_g)
                    t_fi = q_gs2 / (((v_pl + v_th) / 2) / r_g)
                    p_sw25 = k_load * v_sup * i_sw * (t_ri + t_fv + t_rv + t_fi) * f
            elif _fin(row["t_rise"]) and _fin(row["t_fall"]) and use_driver:
                method = "rise_fall_times"
                p_sw25 = k_load * v_sup * i_sw * (row["t_rise"] + row["t_fall"]) * f
            else:
                method = "no_data"
                ok = False
            if _fin(row["coss"]):
                e_oss = 2.0 / 3.0 * row["coss"] * math.sqrt(25.0) * v_sup**1.5
                p_coss = e_oss * f
            else:
                ok = False
            p_gate = row["qg"] * v_drv * f if _fin(row["qg"]) else NAN
    elif kind == "igbt":
        alpha = 0.2 / 100.0
        i_w = i_load / (1 + (n - 1) * min(rho, 1.0))
        i_rating = i_w
        if not (_fin(row["vce_sat"]) and _fin(row["vce_sat_i"])):
            return None
        vce = row["vce_sat"] * max(1.0, i_w / row["vce_sat_i"])
        p_c25 = duty * i_w * vce
        if f > 0:
            e = [row[c] for c in ("e_on", "e_off", "e_test_v", "e_test_i")]
            if not all(_fin(x) for x in e):
                return None
            method = "igbt_energy"
            e_ref = e[0] + e[1]
            p_sw25 = (
                e_ref * (i_sw / e[3]) ** s.igbt_ki * (v_sup / e[2]) ** s.igbt_kv * f
            )
            beta = s.igbt_tc
            p_gate = row["qg"] * v_drv * f if _fin(row["qg"]) else NAN
    else:
        return None
    if not ok:
        return None
    dt = max(tj - 25.0, 0.0)
    p_dev = p_c25 * (1 + alpha * dt) + p_sw25 * (1 + beta * dt) + p_coss
    return {
        "p_dev": p_dev,
        "p0": p_c25 + p_sw25 + p_coss,
        "p1": alpha * p_c25 + beta * p_sw25,
        "p_gate": p_gate,
        "i_dev": i_rating,
        "sw_method": method,
    }


# ----------------------------------------------------------------------------- strategies


def _maybe(strategy):
    """The value, or blank about one time in five."""
    return st.one_of(st.just(NAN), strategy, strategy, strategy, strategy)


def _pos(lo, hi):
    return st.floats(lo, hi, allow_nan=False, allow_infinity=False)


def _mosfet_rows(maybe):
    return st.fixed_dictionaries(
        {
            "kind": st.sampled_from(["nmos", "pmos"]),
            "v_rating": st.sampled_from([20.0, 30.0, 40.0, 60.0, 100.0, 150.0]),
            "rds_hot_ratio": maybe(_pos(1.2, 2.6)),
            "vth_max": maybe(_pos(0.8, 4.0)),
            "v_plateau": maybe(_pos(1.5, 6.0)),
            "qg": maybe(_pos(5e-9, 100e-9)),
            "qgs": maybe(_pos(1e-9, 30e-9)),
            "qgd": maybe(_pos(1e-9, 30e-9)),
            "rg_int": maybe(_pos(0.3, 4.0)),
            "t_rise": maybe(_pos(5e-9, 80e-9)),
            "t_fall": maybe(_pos(5e-9, 80e-9)),
            "coss": maybe(_pos(50e-12, 3e-9)),
            "vce_sat": st.just(NAN),
            "vce_sat_i": st.just(NAN),
            "e_on": st.just(NAN),
            "e_off": st.just(NAN),
            "e_test_v": st.just(NAN),
            "e_test_i": st.just(NAN),
            "points": st.lists(
                st.tuples(st.sampled_from([1.8, 2.5, 4.5, 10.0]), _pos(1e-3, 0.2)),
                min_size=0 if maybe is _maybe else 1,
                max_size=3,
            ),
        }
    )


mosfet_rows = _mosfet_rows(_maybe)
mosfet_full_rows = _mosfet_rows(lambda strategy: strategy)
igbt_rows = st.fixed_dictionaries(
    {
        "kind": st.just("igbt"),
        "v_rating": st.sampled_from([600.0, 1200.0]),
        "rds_hot_ratio": st.just(NAN),
        "vth_max": st.just(NAN),
        "v_plateau": st.just(NAN),
        "qg": _maybe(_pos(20e-9, 300e-9)),
        "qgs": st.just(NAN),
        "qgd": st.just(NAN),
        "rg_int": st.just(NAN),
        "t_rise": st.just(NAN),
        "t_fall": st.just(NAN),
        "coss": st.just(NAN),
        "vce_sat": _maybe(_pos(1.2, 3.0)),
        "vce_sat_i": _pos(5.0, 60.0),
        "e_on": _maybe(_pos(0.1e-3, 3e-3)),
        "e_off": _pos(0.1e-3, 3e-3),
        "e_test_v": st.sampled_from([300.0, 400.0, 600.0]),
        "e_test_i": _pos(5.0, 60.0),
        "points": st.just([]),
    }
)
rows_strategy = st.lists(
    st.one_of(mosfet_rows, mosfet_full_rows, igbt_rows), min_size=1, max_size=6
)
channels = st.builds(
    Channel,
    name=st.just("ch"),
    supply=_pos(5.0, 48.0),
    current=_pos(0.0, 30.0),
    load=st.sampled_from(["resistive", "inductive", "motor", "lamp"]),
    inductance=st.just(1e-3),
    duty=_pos(0.05, 1.0),
    pwm_frequency=st.sampled_from([0.0, 1e3, 20e3, 100e3]),
    drive=st.sampled_from([3.3, 5.0, 10.0, 12.0]),
)


def _tables(rows):
    recs, pts = [], []
    for k, r in enumerate(rows):
        rec = {c: r.get(c, NAN) for c in COLUMNS}
        rec["part"] = f"P{k}"
        recs.append(rec)
        pts += [(f"P{k}", g, rds) for g, rds in r["points"]]
    return pd.DataFrame(recs, columns=COLUMNS), pd.DataFrame(
        pts, columns=["part", "vgs", "rds_on"]
    )


# ----------------------------------------------------------------------------- tests


@PROFILE
@given(
    rows=rows_strategy,
    ch=channels,
    n=st.integers(1, 4),
    tj=_pos(-20.0, 175.0),
    drv=st.sampled_from([None, 12.0, 15.0]),
)
def test_vectorised_engine_equals_scalar_oracle(rows, ch, n, tj, drv):
    """switch_losses (numpy over rows) equals the scalar restatement of physics §1–§3,
    §7.1 on random parts: same refusals, same losses to 1e-9."""
    sw, pts = _tables(rows)
    t = L.switch_losses(
        sw, pts, ch, Conditions(), Settings(), n, tj, driver_voltage=drv
    )
    for k, r in enumerate(rows):
        want = scalar_losses(r, r["points"], ch, Settings(), n, tj, drv)
        if want is None:
            assert t.missing[k] != "", (k, r)
            assert np.isnan(t.p_dev[k])
            continue
        assert t.missing[k] == "", (k, t.missing[k])
        assert t.sw_method[k] == want["sw_method"]
        for key in ("p_dev", "p0", "p1", "i_dev"):
            assert getattr(t, key)[k] == pytest.approx(want[key], rel=1e-9, abs=1e-15)
        if math.isnan(want["p_gate"]):
            assert np.isnan(t.p_gate[k])
        else:
            assert t.p_gate[k] == pytest.approx(want["p_gate"], rel=1e-9, abs=1e-15)


@PROFILE
@given(
    rows=rows_strategy,
    ch=channels,
    n=st.integers(1, 4),
    tj=_pos(25.0, 175.0),
    extra=_pos(0.0, 20.0),
)
def test_more_current_never_lowers_the_per_device_loss(rows, ch, n, tj, extra):
    """Conduction ∝ I² (or I·v_CE(I)), switching ∝ I (physics §1.1, §2.2, §3): a larger
    load current never gives a smaller per-device loss."""
    sw, pts = _tables(rows)
    more = Channel(**{**ch.__dict__, "current": ch.current + extra})
    a = L.switch_losses(sw, pts, ch, Conditions(), Settings(), n, tj, driver=True)
    b = L.switch_losses(sw, pts, more, Conditions(), Settings(), n, tj, driver=True)
    ok = a.ok & b.ok
    assert np.array_equal(a.ok, b.ok)  # refusals do not depend on the current
    assert np.all(b.p_dev[ok] >= a.p_dev[ok] * (1 - 1e-12))
    assert np.all(b.i_dev[ok] >= a.i_dev[ok])


@PROFILE
@given(
    rows=rows_strategy,
    ch=channels,
    tj=_pos(25.0, 175.0),
    drv=st.sampled_from([None, 12.0]),
)
def test_more_devices_never_raise_the_per_device_loss(rows, ch, tj, drv):
    """physics §7.1: worst-case sharing I/[1 + (N − 1)·r] and switching at
    I·min(1, 1.5/N) fall with N. The N gates share one pin or driver output
    (R_G = N·R_src + R_ext + R_int); with the default resistances (R_ext ≥ 2·R_src)
    the per-device switching energy still falls with N."""
    sw, pts = _tables(rows)
    counts = np.arange(1, 7)[:, None]
    t = L.switch_losses(
        sw, pts, ch, Conditions(), Settings(), counts, tj, driver_voltage=drv
    )
    ok = t.ok.all(axis=0)
    p = t.p_dev[:, ok]
    assert np.all(np.diff(p, axis=0) <= np.abs(p[:-1]) * 1e-12)
    assert np.all(np.diff(t.i_dev[:, ok], axis=0) <= 1e-12)


@PROFILE
@given(rows=rows_strategy, ch=channels, n=st.integers(1, 4), tj=_pos(25.0, 200.0))
def test_linear_coefficients_reproduce_the_reported_loss(rows, ch, n, tj):
    """physics §6.1 [derived]: P(Tj) = p0 + p1·(Tj − 25) is exactly what is reported for
    Tj ≥ 25 °C, so the thermal closed form sees the same loss."""
    sw, pts = _tables(rows)
    t = L.switch_losses(sw, pts, ch, Conditions(), Settings(), n, tj, driver=True)
    ok = t.ok
    np.testing.assert_allclose(
        t.p_dev[ok], t.p0[ok] + t.p1[ok] * (tj - 25.0), rtol=1e-12, atol=1e-18
    )
    assert np.all(t.p1[ok] >= 0)
