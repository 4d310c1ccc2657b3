"""Heatsink RθSA at the operating point, checked against published correlations.

Reference values come from three places, named in each test:

* the general-purpose heat-transfer library ``ht`` (and ``fluids``) from PyPI, called
  directly with the same inputs;
* the project's heatsink reference notes (``shared/reference/heatsink.md``): tables of
  ``ht``/``fluids``/CoolProp results ([C] there), the arithmetic of the published
  formulas (§5.2) and the end-to-end example sinks A–D (§5.3);
* closed-form hand calculations written out in the test.
"""

from __future__ import annotations

import math
from dataclasses import replace

import fluids
import ht
import numpy as np
import pandas as pd
import pytest
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from selector.errors import DesignError, InputError
from selector.heatsinks import (
    FinGeometry,
    air_properties,
    channel_apparent_emissivity,
    elenbaas_number,
    emissivity_for_finish,
    fin_efficiency_straight,
    fit_rise_exponent,
    forced_convection,
    material_for,
    natural_convection,
    natural_rise_at_power,
    nusselt_channel_bar_cohen_rohsenow,
    nusselt_channel_teertstra,
    nusselt_vertical_plate_churchill_chu,
    optimum_fin_spacing,
    power_at_rise,
    radiation_coefficient,
    rise_at_power,
    rth_at_airflow,
    rth_at_rise,
    sink_heat_capacity,
    sink_max_power,
    sink_operating_table,
    sink_rise,
    sink_rth,
)

G = 9.80665

# Example sinks of heatsink.md §5.3 (invented geometries), k = 200 W/(m·K).
# FinGeometry order: length L (vertical), width W, t_b, H_f, N, t_f, k, ε.
SINKS = {
    "A": FinGeometry(0.050, 0.042, 0.003, 0.020, 6, 0.0015, 200.0, 0.85),
    "B": FinGeometry(0.100, 0.100, 0.006, 0.030, 12, 0.002, 200.0, 0.85),
    "C": FinGeometry(0.200, 0.150, 0.010, 0.040, 18, 0.0025, 200.0, 0.85),
    "D": FinGeometry(0.100, 0.100, 0.006, 0.030, 12, 0.002, 200.0, 0.10),
}

# heatsink.md §5.3 rows: R_nat 75 K, R_nat 40 K, El, Nu_s, h_c, h_r,ch at 75 K, η, share.
NATURAL_REFERENCE = {
    "A": (5.97, 7.06, 158.0, 1.99, 8.74, 2.11, 0.990, 0.27),
    "B": (1.341, 1.620, 94.5, 1.67, 6.98, 1.39, 0.987, 0.23),
    "C": (0.524, 0.680, 30.2, 0.93, 4.36, 0.85, 0.988, 0.24),
    "D": (1.598, 1.940, 94.5, 1.67, 6.99, 0.57, 0.988, 0.08),
}

# heatsink.md §5.3: ducted 1/2/4 m/s; at 2 m/s V_ch, Re*, Nu_b, h, η; free stream f_bp 0.6.
FORCED_REFERENCE = {
    "A": ((3.43, 2.60, 1.95), (2.55, 126.8, 7.65, 32.1, 0.969), 3.19),
    "B": ((0.737, 0.560, 0.424), (2.63, 71.9, 5.97, 23.9, 0.962), 0.686),
    "C": ((0.245, 0.183, 0.139), (2.86, 31.2, 4.16, 18.7, 0.958), 0.226),
    "D": ((0.764, 0.576, 0.432), (2.63, 71.9, 5.97, 23.9, 0.962), 0.709),
}


def _rel(x: float, digits: int) -> float:
    """Half a unit in the last quoted digit, relative: the rounding of a table value."""
    return 0.5 * 10 ** (math.floor(math.log10(abs(x))) - digits + 1) / abs(x)


def _hs(**kw) -> dict:
    base = dict(
        part="S",
        price=1.0,
        stock=np.nan,
        fits=("TO-220",),
        positions=1,
        rth_sa=np.nan,
        rth_sa_rise=np.nan,
        length=np.nan,
        width=np.nan,
        base_thickness=np.nan,
        fin_height=np.nan,
        fin_count=np.nan,
        fin_thickness=np.nan,
        mass=np.nan,
        material=None,
        finish=None,
    )
    base.update(kw)
    return base


def _geometry_row(geom: FinGeometry, **kw) -> dict:
    return _hs(
        length=geom.length,
        width=geom.width,
        base_thickness=geom.base_thickness,
        fin_height=geom.fin_height,
        fin_count=geom.fin_count,
        fin_thickness=geom.fin_thickness,
        **kw,
    )


# --------------------------------------------------------------------------- air


@pytest.mark.parametrize(
    "t_f, k, mu, rho, cp, pr, nu, alpha",
    [
        (25, 0.02625, 1.8448e-5, 1.1843, 1006.3, 0.7073, 1.5577e-5, 2.2023e-5),
        (50, 0.02808, 1.9635e-5, 1.0925, 1007.4, 0.7044, 1.7973e-5, 2.5516e-5),
        (75, 0.02987, 2.0784e-5, 1.0139, 1009.1, 0.7021, 2.0499e-5, 2.9198e-5),
        (100, 0.03162, 2.1896e-5, 0.9459, 1011.2, 0.7003, 2.3150e-5, 3.3058e-5),
    ],
)
def test_air_properties_match_coolprop_air_table_of_reference_notes(
    t_f, k, mu, rho, cp, pr, nu, alpha
):
    """air_properties against CoolProp 'Air' (Lemmon et al. 2000) at 101325 Pa, as tabulated
    in heatsink.md §4 (computed there with CoolProp 8.0.0). Tolerance 0.1 %: the table is
    rounded to 4–5 digits and ρ here is the ideal gas (within 0.03 % of CoolProp)."""
    air = air_properties(t_f)
    assert float(air.conductivity) == pytest.approx(k, rel=1e-3)
    assert float(air.viscosity) == pytest.approx(mu, rel=1e-3)
    assert float(air.density) == pytest.approx(rho, rel=1e-3)
    assert float(air.heat_capacity) == pytest.approx(cp, rel=1e-3)
    assert float(air.prandtl) == pytest.approx(pr, rel=1e-3)
    assert float(air.kinematic_viscosity) == pytest.approx(nu, rel=1e-3)
    assert float(air.diffusivity) == pytest.approx(alpha, rel=1e-3)


def test_air_expansion_is_ideal_gas_within_coolprop_beta():
    """β = 1/T (ideal gas); heatsink.md §4 gives CoolProp β = 3.3631e-3 at 25 °C and
    2.6834e-3 at 100 °C and says 1/T is within 0.3 % of it."""
    assert float(air_properties(25.0).expansion) == pytest.approx(3.3631e-3, rel=3e-3)
    assert float(air_properties(100.0).expansion) == pytest.approx(2.6834e-3, rel=3e-3)


@pytest.mark.parametrize("t_c", [0.0, 25.0, 50.0, 75.0, 100.0, 125.0, 150.0])
def test_air_conductivity_and_viscosity_track_fluids_standard_atmosphere(t_c):
    """k and μ against fluids.ATMOSPHERE_1976.thermal_conductivity / .viscosity (U.S.
    Standard Atmosphere 1976, Sutherland-type formulas). heatsink.md §4: the two sources
    differ by up to 0.8 % at 25–100 °C; allowed 1.2 % over 0–150 °C."""
    air = air_properties(t_c)
    t = t_c + 273.15
    assert float(air.conductivity) == pytest.approx(
        fluids.ATMOSPHERE_1976.thermal_conductivity(t), rel=1.2e-2
    )
    assert float(air.viscosity) == pytest.approx(
        fluids.ATMOSPHERE_1976.viscosity(t), rel=1.2e-2
    )


def test_air_density_falls_with_pressure_at_altitude():
    """Ideal gas: ρ ∝ P, so ν ∝ 1/P. Pressure at 2000 m from fluids.ATMOSPHERE_1976
    (heatsink.md table L10: 79501.4 Pa)."""
    p2000 = fluids.ATMOSPHERE_1976(2000.0).P
    sea, high = air_properties(50.0), air_properties(50.0, p2000)
    assert float(high.density / sea.density) == pytest.approx(
        p2000 / 101325.0, rel=1e-12
    )
    assert float(high.kinematic_viscosity / sea.kinematic_viscosity) == pytest.approx(
        101325.0 / p2000, rel=1e-12
    )


def test_air_grashof_matches_fluids_core_grashof():
    """Gr = g·β·ΔT·L³/ν² with this module's air at 50 °C film against
    fluids.core.Grashof (table L2 of heatsink.md: 4697268.343 with ν = 1.7973e-5)."""
    air = air_properties(50.0)
    gr = G * float(air.expansion) * 50.0 * 0.1**3 / float(air.kinematic_viscosity) ** 2
    ref = fluids.core.Grashof(
        L=0.1,
        beta=float(air.expansion),
        T1=348.15,
        T2=298.15,
        nu=float(air.kinematic_viscosity),
    )
    assert gr == pytest.approx(ref, rel=1e-9)
    assert gr == pytest.approx(4697268.343, rel=2e-3)  # table L2 (rounded ν)


# --------------------------------------------------------------------------- correlations


@pytest.mark.parametrize("pr", [0.69, 0.7, 0.71, 1.0, 7.0])
@pytest.mark.parametrize("gr", [1e3, 5.88395e5, 4.70716e6, 1e7, 2.63e9, 1e12])
def test_churchill_chu_vertical_plate_matches_ht_Nu_vertical_plate_Churchill(pr, gr):
    """Churchill & Chu (1975) full-range vertical plate, against
    ht.Nu_vertical_plate_Churchill(Pr, Gr) with the same inputs (rel 1e-12)."""
    assert float(nusselt_vertical_plate_churchill_chu(pr, gr)) == pytest.approx(
        ht.Nu_vertical_plate_Churchill(pr, gr), rel=1e-12
    )


def test_churchill_chu_fixed_examples_of_ht():
    """ht's textbook example Nu_vertical_plate_Churchill(0.69, 2.63e9) = 147.16185223770603
    and Nu_free_vertical_plate(0.7, 1e7) = 28.166886044238986 (heatsink.md L3/L4)."""
    assert float(nusselt_vertical_plate_churchill_chu(0.69, 2.63e9)) == pytest.approx(
        147.16185223770603, rel=1e-12
    )
    assert float(nusselt_vertical_plate_churchill_chu(0.7, 1e7)) == pytest.approx(
        28.166886044238986, rel=1e-12
    )


@pytest.mark.parametrize(
    "length, rise, h_ref",
    [(0.05, 50, 7.379), (0.10, 25, 5.408), (0.10, 50, 6.428), (0.10, 75, 7.071), (0.20, 50, 5.795), (0.50, 50, 5.261)],
)  # fmt: skip
def test_vertical_plate_coefficient_matches_reference_table_L3_L4(length, rise, h_ref):
    """h = Nu·k/L of an isolated vertical plate, Ta = 25 °C, properties at the film
    temperature, Churchill & Chu via ht (heatsink.md table L3/L4, CoolProp properties).
    Tolerance 0.5 %: β = 1/T here against CoolProp's β (within 0.3 %), Nu ∝ Gr^~0.25."""
    air = air_properties(25.0 + rise / 2.0)
    gr = (
        G
        * float(air.expansion)
        * rise
        * length**3
        / float(air.kinematic_viscosity) ** 2
    )
    h = (
        ht.Nu_vertical_plate_Churchill(float(air.prandtl), gr)
        * float(air.conductivity)
        / length
    )
    assert h == pytest.approx(h_ref, rel=5e-3)
    assert float(nusselt_vertical_plate_churchill_chu(air.prandtl, gr)) * float(
        air.conductivity
    ) / length == pytest.approx(h, rel=1e-12)


@pytest.mark.parametrize(
    "el, nu_ref",
    [(1, 0.04156), (10, 0.38724), (30, 0.92667), (54.26, 1.30669), (100, 1.70276), (1000, 3.30720), (1e4, 5.89914)],
)  # fmt: skip
def test_bar_cohen_rohsenow_channel_nusselt_matches_reference_arithmetic(el, nu_ref):
    """Bar-Cohen & Rohsenow (1984) symmetric isothermal plates,
    Nu_s = [576/El² + 2.873/El^½]^(−½); values of heatsink.md §5.2 (5 decimals)."""
    assert float(nusselt_channel_bar_cohen_rohsenow(el)) == pytest.approx(
        nu_ref, abs=6e-6
    )


def test_bar_cohen_rohsenow_meets_fully_developed_and_isolated_plate_limits():
    """Limits of the composite (Elenbaas 1942; Bar-Cohen & Rohsenow 1984; heatsink.md
    §2.1): fully developed Nu → El/24, within about 7 % (7.06 % at El = 10) for El ≤ 10; isolated plates
    Nu → 0.59·El^¼, within about 0.3 % (0.32 % at El = 1000) for El ≥ 1000."""
    small = np.array([0.01, 0.1, 1.0, 10.0])
    large = np.array([1e3, 1e4, 1e5, 1e6])
    assert np.all(
        np.abs(nusselt_channel_bar_cohen_rohsenow(small) / (small / 24) - 1) < 0.071
    )
    assert np.all(
        np.abs(nusselt_channel_bar_cohen_rohsenow(large) / (0.59 * large**0.25) - 1)
        < 0.0033
    )


@pytest.mark.parametrize("name, s_opt_mm", [("A", 5.05), ("B", 6.01), ("C", 7.14)])
def test_optimum_fin_spacing_matches_reference_sinks(name, s_opt_mm):
    """s_opt = 2.714·L·Ra_L^(−¼) at 75 K, film Ta + 37.5 K (Bar-Cohen & Rohsenow 1984);
    heatsink.md §5.3 row "s / s_opt(75 K)" (0.01 mm rounding, CoolProp β within 0.3 %)."""
    geom = SINKS[name]
    air = air_properties(25.0 + 37.5)
    s_opt = float(optimum_fin_spacing(geom.length, 75.0, air))
    assert s_opt * 1e3 == pytest.approx(s_opt_mm, abs=0.01 + 1e-3 * s_opt_mm)
    # at s_opt the Elenbaas number is 2.714⁴ = 54.25 and Nu_s ≈ 1.307 (heatsink.md §2.1)
    el = float(elenbaas_number(75.0, s_opt, geom.length, air))
    assert el == pytest.approx(2.714**4, rel=1e-9)
    assert float(nusselt_channel_bar_cohen_rohsenow(el)) == pytest.approx(
        1.307, abs=5e-4
    )


@pytest.mark.parametrize(
    "fin_h, t_f, k, h, eta_ref, kk_ref",
    [
        (0.020, 0.0015, 200, 8, 0.992415, 0.992400),
        (0.030, 0.0020, 200, 10, 0.984285, 0.984237),
        (0.040, 0.0025, 200, 40, 0.918152, 0.917842),
        (0.030, 0.0010, 200, 60, 0.847834, 0.847442),
        (0.030, 0.0020, 390, 10, 0.991866, 0.991842),
    ],
)
def test_fin_efficiency_matches_ht_kern_kraus_annular_fin_in_large_radius_limit(
    fin_h, t_f, k, h, eta_ref, kk_ref
):
    """Straight rectangular fin with corrected length, η = tanh(mL_c)/(mL_c) (Bergman,
    Lavine, Incropera & DeWitt), against heatsink.md table L6 and against
    ht.fin_efficiency_Kern_Kraus for an annular fin of root diameter 10 m, which tends to
    the straight fin (agreement within 0.05 %, as the notes report)."""
    eta = float(fin_efficiency_straight(h, k, t_f, fin_h))
    assert eta == pytest.approx(eta_ref, abs=1e-6)
    lc = fin_h + t_f / 2
    kk = ht.fin_efficiency_Kern_Kraus(10.0, 10.0 + 2 * lc, t_f, k, h)
    assert kk == pytest.approx(kk_ref, abs=1e-6)
    assert eta == pytest.approx(kk, rel=5e-4)


def test_fin_efficiency_tends_to_one_without_convection():
    """η → 1 as h → 0 (tanh x / x → 1; Bergman et al.)."""
    assert float(fin_efficiency_straight(0.0, 200.0, 0.002, 0.03)) == 1.0
    assert float(fin_efficiency_straight(1e-9, 200.0, 0.002, 0.03)) == pytest.approx(
        1.0, abs=1e-9
    )


@pytest.mark.parametrize(
    "eps, ts_k, ta_k, q_ref, h_ref",
    [
        (0.85, 348.15, 298.15, 327.2383, 6.5448),
        (0.85, 373.15, 298.15, 553.6033, 7.3814),
        (0.10, 348.15, 298.15, 38.4986, 0.7700),
        (0.90, 318.15, 298.15, 119.5879, 5.9794),
    ],
)
def test_radiation_coefficient_matches_ht_q_rad(eps, ts_k, ta_k, q_ref, h_ref):
    """h_r = εσ(Ts²+Ta²)(Ts+Ta) is ht.q_rad(ε, Ts, Ta)/(Ts − Ta) (grey body in large
    surroundings, Bergman et al.); also heatsink.md table L7."""
    h_r = float(radiation_coefficient(eps, ts_k - 273.15, ta_k - 273.15))
    # rel 1e-5: ht's Stefan-Boltzmann constant differs from CODATA 2018 in the 7th digit
    assert h_r == pytest.approx(ht.q_rad(eps, ts_k, ta_k) / (ts_k - ta_k), rel=1e-5)
    assert h_r == pytest.approx(h_ref, abs=1e-4)
    assert h_r * (ts_k - ta_k) == pytest.approx(q_ref, rel=1e-5)


def test_channel_apparent_emissivity_obeys_enclosure_limits():
    """Two-surface enclosure (Bergman et al., enclosure radiation): a black surface stays
    black; an opening as large as the surface (s = L makes A_open = A_int) gives ε; a
    deep narrow channel tends to a black cavity; ε_app ≥ ε always."""
    assert float(channel_apparent_emissivity(1.0, 0.006, 0.03, 0.1)) == pytest.approx(
        1.0
    )
    assert float(channel_apparent_emissivity(0.3, 0.1, 0.05, 0.1)) == pytest.approx(0.3)
    assert float(channel_apparent_emissivity(0.3, 1e-4, 1.0, 1.0)) > 0.99
    eps = np.linspace(0.05, 0.95, 10)
    assert np.all(channel_apparent_emissivity(eps, 0.006, 0.03, 0.1) >= eps)


@pytest.mark.parametrize(
    "re_star, nu_ref",
    [(0.5, 0.17721), (1, 0.35250), (5, 1.52933), (10, 2.42103), (30, 4.10667), (100, 6.90375), (300, 11.28496)],
)  # fmt: skip
def test_teertstra_channel_nusselt_matches_reference_arithmetic(re_star, nu_ref):
    """Teertstra, Yovanovich & Culham (1999/2000) ducted plate-fin Nu_b at Pr = 0.71;
    heatsink.md §5.2 (5 decimals)."""
    assert float(nusselt_channel_teertstra(re_star, 0.71)) == pytest.approx(
        nu_ref, abs=6e-6
    )


@pytest.mark.parametrize("re_l", [5563.893, 11127.785, 22255.571])
def test_teertstra_developing_limit_is_ht_laminar_flat_plate_baehr(re_l):
    """At large Re* the Teertstra Nu_b is the laminar flat plate 0.664·Re_L^½·Pr^⅓
    (ht.Nu_horizontal_plate_laminar_Baehr) written on the gap s, times the
    channel-acceleration factor (1 + 3.65/Re*^½)^½. Re_L of heatsink.md table L8."""
    pr = 0.7044
    s, length = 0.05, 0.1  # Re* = Re_L·(s/L)²
    re_star = re_l * (s / length) ** 2
    baehr = ht.Nu_horizontal_plate_laminar_Baehr(re_l, pr) * s / length
    factor = math.sqrt(1 + 3.65 / math.sqrt(re_star))
    saturated = re_star * pr / 2
    expected = (saturated**-3 + (baehr * factor) ** -3) ** (-1 / 3)
    assert float(nusselt_channel_teertstra(re_star, pr)) == pytest.approx(
        expected, rel=1e-9
    )


def test_teertstra_low_reynolds_limit_is_air_heating_energy_balance():
    """At small Re* Nu_b → Re*·Pr/2, the energy balance ρ·c_p·V·s/(2L)·s/k of air that
    leaves at the wall temperature (Teertstra et al.; heatsink.md §2.6)."""
    for re in (1e-4, 1e-3):
        assert float(nusselt_channel_teertstra(re, 0.71)) == pytest.approx(
            re * 0.71 / 2, rel=1e-3
        )


# --------------------------------------------------------------------------- whole sinks


@pytest.mark.parametrize("name", ["A", "B", "C", "D"])
def test_reference_sinks_still_air_match_reference_notes(name):
    """Geometry model (Bar-Cohen & Rohsenow channels, Churchill & Chu outer faces, cavity
    radiation, fin efficiency) against the example sinks of heatsink.md §5.3, made with
    CoolProp air. Tolerance: the table's rounding plus 0.5 % for the air fit and β = 1/T."""
    r75, r40, el, nu, h_c, h_rch, eta, share = NATURAL_REFERENCE[name]
    res = natural_convection(SINKS[name], 75.0)
    assert float(res.r) == pytest.approx(r75, rel=5e-3 + _rel(r75, 3))
    assert float(natural_convection(SINKS[name], 40.0).r) == pytest.approx(
        r40, rel=5e-3 + _rel(r40, 3)
    )
    assert float(res.elenbaas) == pytest.approx(el, rel=5e-3 + _rel(el, 3))
    assert float(res.nusselt) == pytest.approx(nu, rel=5e-3 + _rel(nu, 2))
    assert float(res.h_channel) == pytest.approx(h_c, rel=5e-3 + _rel(h_c, 3))
    assert float(res.h_radiation_channel) == pytest.approx(
        h_rch, rel=5e-3 + _rel(h_rch, 2)
    )
    assert float(res.efficiency) == pytest.approx(eta, abs=1.5e-3)
    assert float(res.radiation_share) == pytest.approx(share, abs=0.01)


def test_sink_B_still_air_curve_matches_reference_notes():
    """R_nat of sink B against the rise, heatsink.md §5.3: 10 K → 2.756; 25 → 1.902;
    40 → 1.620; 60 → 1.431; 75 → 1.341; 100 → 1.234 K/W (0.5 % for the air fit)."""
    rises = [10, 25, 40, 60, 75, 100]
    ref = [2.756, 1.902, 1.620, 1.431, 1.341, 1.234]
    r = natural_convection(SINKS["B"], rises).r
    np.testing.assert_allclose(r, ref, rtol=5e-3)


def test_sink_B_back_face_counted():
    """Counting the exposed back face as a vertical plate takes sink B from 1.341 to
    1.123 K/W at 75 K (heatsink.md §2.1)."""
    assert float(
        natural_convection(SINKS["B"], 75.0, back_face=True).r
    ) == pytest.approx(1.123, rel=5e-3)


@pytest.mark.parametrize("name", ["A", "B", "C", "D"])
def test_reference_sinks_forced_air_ducted_and_free_stream(name):
    """Teertstra, Yovanovich & Culham ducted plate-fin model, ΔT = 40 K, channel radiation,
    no outer faces, against heatsink.md §5.3 (unblended, as the notes' script). 0.5 %
    plus the table's rounding."""
    r_ref, at2, free = FORCED_REFERENCE[name]
    fc = forced_convection(SINKS[name], [1.0, 2.0, 4.0], blend=False)
    for got, want in zip(np.asarray(fc.r), r_ref, strict=True):
        assert got == pytest.approx(want, rel=5e-3 + _rel(want, 3))
    two = forced_convection(SINKS[name], 2.0, blend=False)
    v_ch, re_star, nu_b, h, eta = at2
    assert float(two.channel_velocity) == pytest.approx(v_ch, rel=_rel(v_ch, 3))
    assert float(two.re_star) == pytest.approx(re_star, rel=5e-3)
    assert float(two.nusselt) == pytest.approx(nu_b, rel=5e-3)
    assert float(two.h) == pytest.approx(h, rel=5e-3)
    assert float(two.efficiency) == pytest.approx(eta, abs=1.5e-3)
    free_r = float(forced_convection(SINKS[name], 2.0, bypass=0.6, blend=False).r)
    assert free_r == pytest.approx(free, rel=5e-3 + _rel(free, 3))


@pytest.mark.parametrize("name", ["A", "B", "C", "D"])
def test_blended_forced_air_is_never_worse_than_still_air(name):
    """Low-velocity blend h = (h_f³ + h_n³)^⅓ (Churchill-type combination, common practice):
    never above the still-air R at the same rise, never above the pure forced model, and
    within 5 % of it at 1–4 m/s where forced air dominates."""
    geom = SINKS[name]
    v = np.array([0.01, 0.1, 0.5, 1.0, 2.0, 4.0])
    blended = forced_convection(geom, v)
    pure = forced_convection(geom, v, blend=False)
    nat = float(natural_convection(geom, 40.0).r)
    assert np.all(blended.r <= nat + 1e-12)
    assert np.all(blended.r <= pure.r_forced + 1e-12)
    np.testing.assert_allclose(blended.r[3:], pure.r[3:], rtol=0.05)


@pytest.mark.parametrize(
    "name, power, rise", [("A", 12.6, 75.0), ("B", 55.9, 75.0), ("C", 143.0, 75.0), ("D", 46.9, 75.0), ("B", 24.7, 40.0)]
)  # fmt: skip
def test_self_consistent_rise_at_power_matches_reference_sinks(name, power, rise):
    """ΔT = P·R(ΔT) solved with scipy.optimize.brentq; heatsink.md §5.3 gives the power
    (3 digits) at 75 K and at 40 K. Tolerance 1 %: power rounding (≤ 0.4 %) divided by
    1 + n, plus the air fit."""
    assert natural_rise_at_power(SINKS[name], power) == pytest.approx(rise, rel=1e-2)


def test_self_consistent_rise_is_a_fixed_point():
    """The brentq root satisfies ΔT = P·R(ΔT) to solver precision (hand check)."""
    dt = natural_rise_at_power(SINKS["B"], 30.0)
    assert dt == pytest.approx(
        30.0 * float(natural_convection(SINKS["B"], dt).r), rel=1e-9
    )
    assert natural_rise_at_power(SINKS["B"], 0.0) == 0.0


def test_sink_B_changes_little_with_ambient_at_fixed_rise():
    """heatsink.md §1.2: at a fixed 75 K rise sink B goes from 1.341 to 1.337 K/W as the
    ambient goes from 25 to 55 °C (< 2 %); properties at the film temperature."""
    assert float(natural_convection(SINKS["B"], 75.0, ambient=55.0).r) == pytest.approx(
        1.337, rel=5e-3
    )


@pytest.mark.parametrize(
    "altitude, r_nat, r_forced", [(0.0, 1.341, 0.560), (2000.0, 1.555, 0.617), (4000.0, 1.865, 0.682)]
)  # fmt: skip
def test_sink_B_at_altitude_matches_reference_table(altitude, r_nat, r_forced):
    """heatsink.md §3: pressure from fluids.ATMOSPHERE_1976(Z), ambient held at 25 °C;
    sink B still air at 75 K and ducted at 2 m/s (unblended). 0.5 % for the air fit."""
    p = fluids.ATMOSPHERE_1976(altitude).P
    assert float(natural_convection(SINKS["B"], 75.0, pressure=p).r) == pytest.approx(
        r_nat, rel=5e-3
    )
    assert float(
        forced_convection(SINKS["B"], 2.0, pressure=p, blend=False).r
    ) == pytest.approx(r_forced, rel=5e-3)


# --------------------------------------------------------------------------- laws


def test_rise_conversion_worked_example_of_reference_notes():
    """heatsink.md §1.2 worked example: R_ref 1.34 K/W at 75 K, n = 0.25. 20 W → ΔT 32.92 K,
    R 1.646 K/W; 40 W → 57.33 K, 1.433 K/W; with n = 0.32 the 20 W case gives 1.720 K/W.
    The law R ∝ ΔT^(−n) follows from Nu ∝ Ra^n (Churchill & Chu, n = ¼ laminar)."""
    dt20 = float(rise_at_power(1.34, 75.0, 0.25, 20.0))
    dt40 = float(rise_at_power(1.34, 75.0, 0.25, 40.0))
    assert dt20 == pytest.approx(32.92, abs=5e-3)
    assert dt20 / 20 == pytest.approx(1.646, abs=5e-4)
    assert dt40 == pytest.approx(57.33, abs=5e-3)
    assert dt40 / 40 == pytest.approx(1.433, abs=5e-4)
    assert float(rth_at_rise(1.34, 75.0, 0.25, dt20)) == pytest.approx(
        dt20 / 20, rel=1e-12
    )
    assert float(rise_at_power(1.34, 75.0, 0.32, 20.0)) / 20 == pytest.approx(
        1.720, abs=5e-4
    )
    # R(P) = R_ref·(P/P_ref)^(−n/(1+n)), P_ref = ΔT_ref/R_ref (same section)
    p_ref = 75.0 / 1.34
    assert dt20 / 20 == pytest.approx(1.34 * (20 / p_ref) ** (-0.25 / 1.25), rel=1e-12)


def test_power_at_rise_inverts_rise_at_power_and_is_zero_at_no_rise():
    """Closed forms P = ΔT^(1+n)/(R_ref·ΔT_ref^n) and ΔT = (P·R_ref·ΔT_ref^n)^(1/(1+n))."""
    rises = np.array([5.0, 30.0, 75.0, 120.0])
    p = power_at_rise(1.34, 75.0, 0.3, rises)
    np.testing.assert_allclose(rise_at_power(1.34, 75.0, 0.3, p), rises, rtol=1e-12)
    assert float(power_at_rise(1.34, 75.0, 0.3, 75.0)) == pytest.approx(75.0 / 1.34)
    np.testing.assert_array_equal(
        power_at_rise(1.34, 75.0, 0.3, [0.0, -5.0]), [0.0, 0.0]
    )


def test_fit_rise_exponent_recovers_sink_B_slope_25_to_75_K():
    """Least squares on ln ΔT = ln a + m·ln P, n = 1/m − 1 (heatsink.md §1.2). On sink B's
    curve (§5.3 values, 25–75 K) the notes give the local slope n = 0.32; on exact
    power-law data the fit returns the exponent."""
    rises = np.array([25.0, 40.0, 60.0, 75.0])
    r = np.array([1.902, 1.620, 1.431, 1.341])
    assert fit_rise_exponent(rises / r, rises) == pytest.approx(0.32, abs=0.01)
    p = np.array([5.0, 10.0, 20.0, 40.0])
    assert fit_rise_exponent(p, rise_at_power(1.0, 75.0, 0.3, p)) == pytest.approx(
        0.3, rel=1e-9
    )


@pytest.mark.parametrize("name", ["A", "B", "C", "D"])
def test_geometry_power_law_within_two_percent_of_model_from_25_to_100_K(name):
    """The operating table stores a geometry sink as a power law through the model at 30 and
    75 K; it stays within 2 % of the model over 25–100 K (the model itself: heatsink.md
    §2.1–2.4). The table reports its own fit_error."""
    table = sink_operating_table(
        pd.DataFrame([_geometry_row(SINKS[name], finish="black anodised")])
    )
    rises = np.linspace(25.0, 100.0, 31)
    model = natural_convection(replace(SINKS[name], emissivity=0.85), rises).r
    law = sink_rth(table, rises)[0]
    assert np.max(np.abs(law / model - 1)) < 0.02
    assert float(table.fit_error[0]) < 0.02


def test_airflow_points_interpolate_in_log_log_and_flag_extrapolation():
    """Forced-air points interpolated as straight lines in log-log; above the last point the
    last slope is used only up to 1.5·v_max and flagged (heatsink.md §1.2, common
    practice). Hand calculation with points (1, 0.74) and (2, 0.56)."""
    v, r = [1.0, 2.0], [0.74, 0.56]
    assert rth_at_airflow(v, r, 1.0) == (pytest.approx(0.74), "")
    assert rth_at_airflow(v, r, 2.0) == (pytest.approx(0.56), "")
    mid, note = rth_at_airflow(v, r, math.sqrt(2.0))
    assert mid == pytest.approx(math.sqrt(0.74 * 0.56), rel=1e-12) and note == ""
    slope = math.log(0.56 / 0.74) / math.log(2.0)
    r3, note3 = rth_at_airflow(v, r, 3.0)
    assert r3 == pytest.approx(0.56 * 1.5**slope, rel=1e-12)
    assert "extrapolated" in note3 and "held" not in note3
    r5, note5 = rth_at_airflow(v, r, 5.0)
    assert r5 == pytest.approx(r3, rel=1e-12) and "held" in note5
    r_low, note_low = rth_at_airflow(v, r, 0.5)
    assert r_low == pytest.approx(0.74 * 0.5**slope, rel=1e-12) and "below" in note_low


def test_single_airflow_point_scales_as_inverse_square_root_of_velocity():
    """One point: R = R₁·(v/v₁)^(−0.5) (heatsink.md §1.2, common practice)."""
    r, note = rth_at_airflow([2.0], [0.56], 1.0)
    assert (
        r == pytest.approx(0.56 * math.sqrt(2.0), rel=1e-12)
        and "one airflow point" in note
    )
    r_hi, note_hi = rth_at_airflow([2.0], [0.56], 10.0)
    assert r_hi == pytest.approx(0.56 * 1.5**-0.5, rel=1e-12) and "held" in note_hi


# --------------------------------------------------------------------------- table


def test_operating_table_sheet_value_converted_with_default_exponent_and_derating():
    """A sheet RθSA 1.34 K/W at 75 K with no exponent uses n = 0.30 (finned default,
    heatsink.md §1.2); heatsink_derating adds its fraction to every RθSA (design
    overview). Hand calculation: R(40 K) = 1.34·(40/75)^−0.3·1.1."""
    hs = pd.DataFrame([_hs(part="X", rth_sa=1.34, rth_sa_rise=75.0, fin_count=10)])
    t = sink_operating_table(hs, None, 0.0, 0.1)
    assert list(t.columns[:11]) == [
        "part", "price", "stock", "positions", "fits", "r_ref", "rise_ref", "n",
        "r_nat_ref", "rise_nat_ref", "n_nat",
    ]  # fmt: skip
    assert t.n[0] == pytest.approx(0.30) and not t.estimated[0]
    assert float(sink_rth(t, 40.0)[0]) == pytest.approx(
        1.34 * (40 / 75) ** -0.3 * 1.1, rel=1e-12
    )
    assert "0.30" in t.method[0] and "derating" in t.method[0]


def test_operating_table_assumes_75_K_when_the_rise_is_blank():
    """Catalogue natural-convection values are usually quoted at a 75 K rise (common
    practice, heatsink.md §1.1); a blank rise is assumed so and warned."""
    t = sink_operating_table(pd.DataFrame([_hs(rth_sa=2.0)]))
    assert t.rise_ref[0] == 75.0 and "75 K assumed" in t.warning[0]


def test_operating_table_flat_plate_uses_laminar_plate_exponent():
    """A single-fin plate uses n = 0.25, the isolated laminar plate (Churchill & Chu)."""
    t = sink_operating_table(
        pd.DataFrame([_hs(rth_sa=6.5, rth_sa_rise=50.0, fin_count=1)])
    )
    assert t.n[0] == pytest.approx(0.25)


def test_geometry_only_sink_is_estimated_with_method_and_uncertainty():
    """A sink given by geometry only (the demo's 80 × 60 mm offcut) is estimated from the
    still-air fin model and says so, with the method's uncertainty (±20–30 %,
    heatsink.md §2.7). Its value equals the model at 75 K (Bar-Cohen & Rohsenow et al.)."""
    geo = FinGeometry(0.080, 0.060, 0.004, 0.025, 8, 0.0015, 200.0, 0.85)
    row = _geometry_row(
        geo, part="GEO80", material="aluminium 6063", finish="black anodised"
    )
    t = sink_operating_table(pd.DataFrame([row]))
    assert bool(t.estimated[0])
    assert "Bar-Cohen & Rohsenow" in t.method[0]
    assert "±20–30 %" in t.warning[0] and "estimated" in t.warning[0]
    assert float(sink_rth(t, 75.0)[0]) == pytest.approx(
        float(natural_convection(geo, 75.0).r)
    )
    assert 0.1 < t.n[0] < 0.6


def test_geometry_sink_with_unknown_finish_assumes_low_emissivity_and_wider_band():
    """No finish: ε = 0.10 (the conservative choice of heatsink.md §2.2) and the wider
    ±30–50 % band of §2.7; the result equals the model with ε = 0.10 (cf. sink D)."""
    t = sink_operating_table(
        pd.DataFrame([_geometry_row(SINKS["B"], material="aluminium")])
    )
    assert "±30–50 %" in t.warning[0] and "0.1 assumed" in t.warning[0]
    assert float(sink_rth(t, 75.0)[0]) == pytest.approx(1.598, rel=1e-2)  # sink D


def test_sheet_value_with_geometry_takes_the_model_exponent():
    """With rth_sa and geometry both given, the level is the sheet's and the exponent the
    geometry model's (sink B: 0.31 between 30 and 75 K; §5.3 gives 0.32 over 25–75 K)."""
    row = _geometry_row(
        SINKS["B"], rth_sa=1.35, rth_sa_rise=75.0, finish="black anodised"
    )
    t = sink_operating_table(pd.DataFrame([row]))
    assert t.r_ref[0] == pytest.approx(1.35) and not t.estimated[0]
    assert t.n[0] == pytest.approx(0.32, abs=0.015)
    assert "fitted to the fin-geometry model" in t.method[0]


def test_operating_table_forced_air_from_sheet_points_is_flat_and_capped_by_still_air():
    """Airflow points give a flat forced law (n = 0); RθSA never exceeds the still-air value
    at the same rise (heatsink.md §1.2: below the first point never more than R_nat)."""
    hs = pd.DataFrame([_hs(part="E", rth_sa=1.35, rth_sa_rise=75.0)])
    pts = pd.DataFrame(
        {"part": ["E", "E"], "airflow": [1.0, 2.0], "rth_sa": [0.74, 0.56]}
    )
    t = sink_operating_table(hs, pts, 1.0)
    assert t.n[0] == 0.0 and t.r_ref[0] == pytest.approx(0.74)
    np.testing.assert_allclose(sink_rth(t, [10.0, 75.0, 150.0])[0], 0.74)
    slow = sink_operating_table(hs, pts, 0.05)
    still = sink_operating_table(hs, pts, 0.0)
    np.testing.assert_allclose(
        sink_rth(slow, [20.0, 75.0]), sink_rth(still, [20.0, 75.0])
    )
    assert "below the lowest point" in slow.warning[0]


def test_operating_table_forced_air_from_geometry_is_estimated_ducted():
    """No airflow points but geometry: Teertstra ducted model, blended, estimated with the
    ±10–15 % band (heatsink.md §2.6–2.7); sink B at 2 m/s is 0.560 K/W unblended."""
    t = sink_operating_table(
        pd.DataFrame([_geometry_row(SINKS["B"], finish="black anodised")]), None, 2.0
    )
    assert bool(t.estimated[0]) and "Teertstra" in t.method[0]
    assert "±10–15 %" in t.warning[0]
    assert t.r_ref[0] == pytest.approx(0.560, rel=0.02)
    free = sink_operating_table(
        pd.DataFrame(
            [_geometry_row(SINKS["B"], finish="black anodised", airflow_basis="free")]
        ),
        None,
        2.0,
    )
    assert (
        free.r_ref[0] == pytest.approx(0.686, rel=0.02)
        and "±30–50 %" in free.warning[0]
    )


def test_operating_table_without_airflow_data_keeps_still_air_and_says_so():
    """No airflow points and no geometry: the still-air law is kept (conservative)."""
    hs = pd.DataFrame([_hs(rth_sa=5.0, rth_sa_rise=60.0)])
    t = sink_operating_table(hs, None, 2.0)
    assert t.n[0] == pytest.approx(0.30) and t.r_ref[0] == pytest.approx(5.0)
    assert "no airflow data" in t.warning[0]


def test_horizontal_orientation_raises_still_air_resistance():
    """Horizontal fins or base: still-air R × 1.3 (assumed factor within 1.2–1.4, from
    memory; heatsink.md §1.2)."""
    t = sink_operating_table(
        pd.DataFrame([_hs(rth_sa=2.0, rth_sa_rise=75.0, orientation="horizontal fins")])
    )
    assert t.r_ref[0] == pytest.approx(2.6) and "orientation" in t.warning[0]


def test_bad_geometry_names_the_part_and_the_column():
    """Fins wider than the base: one clear InputError with file, sheet, row (the reader's
    source_* columns), column and part."""
    row = _hs(
        part="BAD",
        source_file="stock.xlsx",
        source_sheet="Heat sinks",
        source_row=7,
        length=0.05,
        width=0.01,
        base_thickness=0.003,
        fin_height=0.02,
        fin_count=10,
        fin_thickness=0.002,
    )
    with pytest.raises(InputError) as info:
        sink_operating_table(pd.DataFrame([row]))
    text = str(info.value)
    assert "BAD" in text and "column 'fin_count'" in text
    assert "stock.xlsx" in text and "sheet 'Heat sinks'" in text and "row 7" in text
    assert info.value.location.row == 7


def test_no_rth_sa_and_partial_geometry_is_an_input_error():
    with pytest.raises(InputError, match="fin_thickness"):
        sink_operating_table(
            pd.DataFrame(
                [
                    _hs(
                        part="P",
                        length=0.05,
                        width=0.05,
                        base_thickness=0.003,
                        fin_height=0.02,
                        fin_count=5,
                    )
                ]
            )
        )


def test_negative_airflow_or_derating_is_a_design_error():
    hs = pd.DataFrame([_hs(rth_sa=2.0)])
    with pytest.raises(DesignError, match="airflow"):
        sink_operating_table(hs, None, -1.0)
    with pytest.raises(DesignError, match="heatsink_derating"):
        sink_operating_table(hs, None, 0.0, -0.1)


def test_sink_functions_broadcast_sinks_by_rises_and_accept_one_row():
    """sink_rth / sink_max_power / sink_rise give (sinks × rises); a single row (Series)
    gives the rise's shape; rise ≤ 0 gives 0 W and power ≤ 0 gives 0 K."""
    hs = pd.DataFrame(
        [
            _hs(part="a", rth_sa=1.34, rth_sa_rise=75.0),
            _hs(part="b", rth_sa=5.0, rth_sa_rise=50.0),
        ]
    )
    t = sink_operating_table(hs)
    assert sink_rth(t, [20.0, 40.0, 75.0]).shape == (2, 3)
    assert sink_max_power(t, 40.0).shape == (2,)
    np.testing.assert_array_equal(sink_max_power(t, [0.0, -3.0]), np.zeros((2, 2)))
    np.testing.assert_array_equal(sink_rise(t, 0.0), [0.0, 0.0])
    assert sink_rth(t, np.array([30.0, 60.0]), outer=False).shape == (2,)
    # the worked example with n = 0.25 stored in a row
    row = t.iloc[0].copy()
    row["n"] = row["n_nat"] = 0.25
    assert float(sink_rise(row, 20.0)) == pytest.approx(32.92, abs=5e-3)


def test_empty_heatsink_table_gives_empty_operating_table():
    """An inventory without heatsinks: an empty table with every column, empty results."""
    t = sink_operating_table(pd.DataFrame(columns=["part", "price", "rth_sa"]))
    assert len(t) == 0 and "r_ref" in t.columns
    assert sink_max_power(t, [10.0, 20.0]).shape == (0, 2)


def test_heat_capacity_from_mass_or_aluminium_volume():
    """C = m·c_p, else V·ρ·c_p with V = W·L·t_b + N·t_f·H_f·L; aluminium ρ = 2700 kg/m³,
    c_p ≈ 900 J/(kg·K) (from memory). Sink B: V = 1.32e-4 m³ → 0.3564 kg → 320.76 J/K."""
    hs = pd.DataFrame(
        [
            _geometry_row(SINKS["B"], material="aluminium 6063"),
            _hs(rth_sa=2.0, mass=0.5, material="aluminium"),
            _hs(rth_sa=2.0, mass=0.5, material="copper"),
            _hs(rth_sa=2.0),
        ]
    )
    c = sink_heat_capacity(hs)
    assert c[0] == pytest.approx(1.32e-4 * 2700 * 900, rel=1e-12)
    assert c[1] == pytest.approx(450.0) and c[2] == pytest.approx(0.5 * 385.0)
    assert math.isnan(c[3])


def test_material_and_finish_lookup():
    """k and ε from the inventory text (heatsink.md §0 and §2.2 ranges, from memory)."""
    assert material_for("Al 6063-T5")[0].conductivity == 200.0
    assert material_for("6061-T6")[0].conductivity == 167.0
    assert material_for("copper")[0].conductivity == 390.0
    assert material_for("unobtainium")[1] is False
    assert 0.80 <= emissivity_for_finish("Black Anodized")[0] <= 0.90
    assert 0.05 <= emissivity_for_finish("bare")[0] <= 0.10
    assert emissivity_for_finish(None)[0] == 0.10
    assert 0.85 <= emissivity_for_finish("painted")[0] <= 0.95


# --------------------------------------------------------------------------- properties

_POINTS = st.lists(
    st.tuples(st.floats(0.2, 6.0), st.floats(0.1, 10.0)),
    min_size=1,
    max_size=5,
    unique_by=lambda p: round(p[0], 3),
)


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    points=_POINTS,
    rth=st.floats(0.5, 20.0),
    v1=st.floats(0.0, 10.0),
    dv=st.floats(0.0, 5.0),
    rise=st.floats(1.0, 120.0),
)
def test_more_airflow_never_raises_rth_from_sheet_points(points, rth, v1, dv, rise):
    """Property (issue 7): more airflow never raises RθSA, and RθSA never exceeds still
    air, whatever the sheet's points (log-log rule of heatsink.md §1.2)."""
    hs = pd.DataFrame([_hs(part="P", rth_sa=rth, rth_sa_rise=75.0)])
    pts = pd.DataFrame(
        {
            "part": "P",
            "airflow": [p[0] for p in points],
            "rth_sa": [p[1] for p in points],
        }
    )
    r_low = float(sink_rth(sink_operating_table(hs, pts, v1), rise)[0])
    r_high = float(sink_rth(sink_operating_table(hs, pts, v1 + dv), rise)[0])
    r_still = float(sink_rth(sink_operating_table(hs, pts, 0.0), rise)[0])
    assert r_high <= r_low * (1 + 1e-12)
    assert r_low <= r_still * (1 + 1e-12)


@settings(max_examples=15, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(
    name=st.sampled_from(["A", "B", "C"]),
    v1=st.floats(0.0, 6.0),
    dv=st.floats(0.0, 4.0),
    rise=st.floats(5.0, 100.0),
)
def test_geometry_rth_is_never_below_the_value_at_higher_velocity(name, v1, dv, rise):
    """Property: a geometry sink's RθSA at a velocity is never below its RθSA at a higher
    velocity (Teertstra blended with still air, capped by still air)."""
    row = pd.DataFrame([_geometry_row(SINKS[name], finish="black anodised")])
    r_low = float(sink_rth(sink_operating_table(row, None, v1), rise)[0])
    r_high = float(sink_rth(sink_operating_table(row, None, v1 + dv), rise)[0])
    assert r_low >= r_high * (1 - 1e-12)


@settings(max_examples=60, deadline=None)
@given(
    rth=st.floats(0.2, 30.0),
    rise_ref=st.floats(20.0, 100.0),
    forced=st.one_of(st.none(), st.floats(0.05, 40.0)),
    rise=st.floats(0.5, 150.0),
    derating=st.floats(0.0, 0.5),
)
def test_sink_rise_and_sink_max_power_are_inverses(
    rth, rise_ref, forced, rise, derating
):
    """Property: sink_rise(sink_max_power(ΔT)) = ΔT, with and without a forced law under the
    still-air cap (closed forms of heatsink.md §1.2)."""
    hs = pd.DataFrame([_hs(part="P", rth_sa=rth, rth_sa_rise=rise_ref)])
    if forced is None:
        t = sink_operating_table(hs, None, 0.0, derating)
    else:
        pts = pd.DataFrame({"part": ["P"], "airflow": [1.0], "rth_sa": [forced]})
        t = sink_operating_table(hs, pts, 1.0, derating)
    p = sink_max_power(t, rise)
    assert float(sink_rise(t, p, outer=False)[0]) == pytest.approx(rise, rel=1e-9)
    assert float(p[0]) == pytest.approx(rise / float(sink_rth(t, rise)[0]), rel=1e-9)
