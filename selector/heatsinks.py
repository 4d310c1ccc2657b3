"""Heatsink sink-to-ambient resistance RθSA at the operating point.

A catalogue quotes RθSA for one temperature rise (usually 75 K, natural convection, fins
vertical, 25 °C free air) and sometimes at a few air speeds. A design runs the sink at
another rise and another air speed. This module converts the sheet's figures to the
operating point, and estimates RθSA from the fin geometry when the sheet gives none.

Layers
------
1. Correlations, each a plain vectorised function named for its source:
   :func:`air_properties`, :func:`elenbaas_number`,
   :func:`nusselt_channel_bar_cohen_rohsenow`, :func:`optimum_fin_spacing`,
   :func:`nusselt_vertical_plate_churchill_chu`, :func:`radiation_coefficient`,
   :func:`channel_apparent_emissivity`, :func:`fin_efficiency_straight`,
   :func:`nusselt_channel_teertstra`.
2. Whole-sink models from the geometry: :func:`natural_convection` (vertical plate fins,
   radiation, fin efficiency), :func:`natural_rise_at_power` (self-consistent rise,
   :func:`scipy.optimize.brentq`), :func:`forced_convection` (ducted plate fins).
3. Operating-point laws: :func:`rth_at_rise`, :func:`rise_at_power`,
   :func:`power_at_rise`, :func:`fit_rise_exponent`, :func:`rth_at_airflow`.
4. The table the engine uses: :func:`sink_operating_table`, then :func:`sink_rth`,
   :func:`sink_max_power`, :func:`sink_rise` and :func:`sink_heat_capacity`.

The operating law of every sink is a power law in its own rise above ambient,
``R(ΔT) = r_ref·(ΔT/rise_ref)^(−n)``, with a natural-convection cap
``R_nat(ΔT) = r_nat_ref·(ΔT/rise_nat_ref)^(−n_nat)``; the value used is the smaller of
the two (more air never makes a sink worse than still air). Without airflow both laws
are the same. With airflow the first law is flat (``n = 0``): forced-air heat transfer
hardly depends on the rise, so any rise dependence is left out (documented assumption,
common practice).

Units: SI inside (m, m/s, W, K/W, J/K); temperatures in °C, temperature differences in K.
The numbers marked "from memory" or "common practice" come from the project's heatsink
reference notes and should be checked before anyone relies on them.

Hot surfaces: a heatsink that runs at a 50–80 K rise burns skin on contact. The page and
the workbook show :data:`HOT_SURFACE_CAUTION` next to sink temperatures.
"""

from __future__ import annotations

import math
import re
from collections.abc import Mapping
from dataclasses import dataclass
from typing import Any

import numpy as np
import pandas as pd
from scipy.optimize import brentq

from selector.errors import DesignError, InputError, Location

__all__ = [
    "AirProperties",
    "FinGeometry",
    "ForcedConvection",
    "HOT_SURFACE_CAUTION",
    "Material",
    "NaturalConvection",
    "air_properties",
    "channel_apparent_emissivity",
    "elenbaas_number",
    "emissivity_for_finish",
    "fin_efficiency_straight",
    "fit_rise_exponent",
    "forced_convection",
    "material_for",
    "natural_convection",
    "natural_rise_at_power",
    "nusselt_channel_bar_cohen_rohsenow",
    "nusselt_channel_teertstra",
    "nusselt_vertical_plate_churchill_chu",
    "optimum_fin_spacing",
    "power_at_rise",
    "radiation_coefficient",
    "rise_at_power",
    "rth_at_airflow",
    "rth_at_rise",
    "sink_heat_capacity",
    "sink_max_power",
    "sink_operating_table",
    "sink_rise",
    "sink_rth",
]

# --------------------------------------------------------------------------- constants

GRAVITY = 9.80665  # [m/s²] standard gravity
STEFAN_BOLTZMANN = 5.670374419e-8  # [W/(m²·K⁴)] CODATA 2018
ATMOSPHERE = 101325.0  # [Pa] sea-level standard pressure
R_AIR = 287.05  # [J/(kg·K)] specific gas constant of dry air
KELVIN = 273.15  # [K] 0 °C

N_FINNED = (
    0.30  # [-] rise exponent of finned sinks without better data (heatsink.md §1.2)
)
N_FLAT = 0.25  # [-] isolated laminar plate, Nu ∝ Ra^¼ (Churchill & Chu)
N_PLAUSIBLE = (
    0.1,
    0.6,
)  # [-] a fitted exponent outside this is suspect (heatsink.md §1.2)
P_SINGLE_POINT = 0.5  # [-] R ∝ v^(−p) with one airflow point (common practice)
EXTRAPOLATION_LIMIT = 1.5  # [-] airflow points are extrapolated to at most 1.5·v_max
RISE_REF_DEFAULT = 75.0  # [K] catalogue reference rise when the sheet gives none
FIT_RISES = (30.0, 75.0)  # [K] rises at which a geometry sink's power law is fitted
FIT_CHECK_RISES = (25.0, 100.0)  # [K] range over which the fit error is reported
FORCED_RISE = 40.0  # [K] rise at which forced-air properties and radiation are taken
REFERENCE_AMBIENT = 25.0  # [°C] catalogue ambient
BYPASS_FACTOR = {
    "ducted": 1.0,
    "free": 0.6,
}  # [-] f_bp (free: placeholder, from memory)
ORIENTATION_FACTOR = 1.3  # [-] R_nat × this for horizontal fins or base (from memory)
EMISSIVITY_UNKNOWN = 0.10  # [-] no finish given: the conservative choice
SPACING_VALID = (2e-3, 20e-3)  # [m] fin gap range of the natural-convection model
LENGTH_VALID = (25e-3, 500e-3)  # [m] fin length range of the natural-convection model
RE_STAR_VALID = (0.1, 100.0)  # [-] Teertstra model validity (air)

HOT_SURFACE_CAUTION = (
    "Hot surface: a heatsink running tens of kelvin above ambient can burn skin. Keep it "
    "out of reach or guard and mark it, and check touch-temperature limits against the "
    "product safety standard and local codes that apply (e.g. IEC 62368-1)."
)

# Uncertainty bands of the estimates (heatsink.md §2.7, from memory / common practice).
_BAND_NATURAL = "±20–30 %"
_BAND_NATURAL_UNSURE = "±30–50 %"
_BAND_DUCTED = "±10–15 %"
_BAND_FREE = "±30–50 %"


# --------------------------------------------------------------------------- materials


@dataclass(frozen=True)
class Material:
    """A sink material.

    Fields
    ------
    name : text shown in the method string.
    conductivity : [W/(m·K)] thermal conductivity k.
    density : [kg/m³].
    heat_capacity : [J/(kg·K)] specific heat c_p.
    """

    name: str
    conductivity: float
    density: float
    heat_capacity: float


# Values from memory (heatsink.md §0 for k; density and c_p are handbook values from
# memory): check before relying on them. Order matters: first match wins.
_ALUMINIUM = Material("aluminium 6063", 200.0, 2700.0, 900.0)
_MATERIALS: tuple[tuple[tuple[str, ...], Material], ...] = (
    (("copper", "cu", "c110", "c1100"), Material("copper", 390.0, 8960.0, 385.0)),
    (("die-cast", "die cast", "diecast", "cast"), Material("die-cast aluminium", 96.0, 2700.0, 900.0)),
    (("6061",), Material("aluminium 6061-T6", 167.0, 2700.0, 896.0)),
    (("1050", "1060", "1070"), Material("aluminium 1050A", 225.0, 2700.0, 900.0)),
    (("6063", "alumin", "alu", "al"), _ALUMINIUM),
)  # fmt: skip


def _tokens(text: str) -> set[str]:
    return set(re.split(r"[^a-z0-9]+", text))


def _matches(text: str, keyword: str) -> bool:
    # short keywords ("cu", "al") must be whole words; longer ones may be part of a word
    return keyword in _tokens(text) if len(keyword) <= 3 else keyword in text


def material_for(text: Any) -> tuple[Material, bool]:
    """The material named by an inventory ``material`` cell.

    Parameters
    ----------
    text : str or None
        Free text such as ``"aluminium 6063"``, ``"Cu"``, ``"die-cast"``.

    Returns
    -------
    material : Material
        Conductivity [W/(m·K)], density [kg/m³] and c_p [J/(kg·K)]; values from memory
        (heatsink.md §0: 6063-T5 ≈ 200–209, 6061-T6 ≈ 167, 1050A ≈ 220–230, Cu ≈ 390,
        die-cast ≈ 90–100 W/(m·K); ρ_Al = 2700 kg/m³, c_p,Al ≈ 900 J/(kg·K),
        ρ_Cu = 8960 kg/m³, c_p,Cu ≈ 385 J/(kg·K)).
    known : bool
        False when the text is blank or not recognised; aluminium 6063 is then assumed
        (the usual extrusion alloy, common practice).

    Examples
    --------
    >>> material_for("Copper C110")[0].conductivity
    390.0
    >>> material_for(None)
    (Material(name='aluminium 6063', conductivity=200.0, density=2700.0, heat_capacity=900.0), False)
    """
    if not isinstance(text, str) or not text.strip():
        return _ALUMINIUM, False
    low = text.strip().lower()
    for keywords, mat in _MATERIALS:
        if any(_matches(low, k) for k in keywords):
            return mat, True
    return _ALUMINIUM, False


# (all words required, emissivity, label); first match wins. Mid-points of the ranges in
# heatsink.md §2.2 (from memory): black anodised 0.80–0.90, clear anodise 0.70–0.85,
# painted 0.85–0.95, bare Al 0.05–0.10, weathered Al 0.2–0.3, polished Cu 0.03–0.05,
# oxidised Cu 0.6–0.8.
_FINISHES: tuple[tuple[tuple[str, ...], float | None, str], ...] = (
    (("anod", "black"), 0.85, "black anodised"),
    (("anod",), 0.775, "anodised"),
    (("black",), 0.85, "black finish"),
    (("paint",), 0.90, "painted"),
    (("powder",), 0.90, "powder coated"),
    (("lacquer",), 0.90, "lacquered"),
    (("enamel",), 0.90, "enamelled"),
    (("coat",), 0.90, "coated"),
    (("oxid",), None, "oxidised"),  # depends on the metal
    (("weather",), 0.25, "weathered"),
    (("polish",), None, "polished"),  # depends on the metal
    (("bare",), 0.075, "bare metal"),
    (("mill",), 0.075, "mill finish"),
    (("plain",), 0.075, "bare metal"),
    (("natural",), 0.075, "bare metal"),
    (("unfinished",), 0.075, "bare metal"),
    (("none",), 0.075, "bare metal"),
)


def emissivity_for_finish(
    finish: Any, material: Material = _ALUMINIUM
) -> tuple[float, str, bool]:
    """Surface emissivity ε from an inventory ``finish`` cell.

    Parameters
    ----------
    finish : str or None
        Free text such as ``"black anodised"``, ``"bare"``, ``"painted"``.
    material : Material
        Decides "oxidised" (Al 0.25, Cu 0.70) and "polished" (Al 0.05, Cu 0.04).

    Returns
    -------
    emissivity : float
        [-] mid-point of the range in the heatsink reference notes §2.2 (from memory);
        0.10 when the finish is blank or not recognised (the conservative choice there).
    label : str
        What the finish was read as.
    known : bool
        False when 0.10 was assumed.
    """
    if not isinstance(finish, str) or not finish.strip():
        return EMISSIVITY_UNKNOWN, "finish not given", False
    low = finish.strip().lower()
    copper = material.name == "copper"
    for words, eps, label in _FINISHES:
        if all(w in low for w in words):
            if eps is None:
                if label == "oxidised":
                    eps = 0.70 if copper else 0.25
                else:
                    eps = 0.04 if copper else 0.05
            return eps, label, True
    return EMISSIVITY_UNKNOWN, f"finish '{finish.strip()}' not recognised", False


# --------------------------------------------------------------------------- air


@dataclass(frozen=True)
class AirProperties:
    """Dry-air properties (arrays broadcast like the temperature given).

    Fields
    ------
    conductivity : [W/(m·K)] k.
    viscosity : [Pa·s] dynamic viscosity μ.
    density : [kg/m³] ρ.
    heat_capacity : [J/(kg·K)] c_p.
    prandtl : [-] Pr = μ·c_p/k.
    kinematic_viscosity : [m²/s] ν = μ/ρ.
    diffusivity : [m²/s] α = k/(ρ·c_p).
    expansion : [1/K] β = 1/T (ideal gas).
    """

    conductivity: Any
    viscosity: Any
    density: Any
    heat_capacity: Any
    prandtl: Any
    kinematic_viscosity: Any
    diffusivity: Any
    expansion: Any


# Quadratic least-squares fits in t [°C] of the CoolProp 'Air' values (Lemmon et al.)
# tabulated at 25, 50, 75 and 100 °C, 101325 Pa, in the heatsink reference notes §4.
# Highest power first (numpy.polyval order).
_K_FIT = (-3.2e-8, 7.56e-5, 2.438e-2)  # [W/(m·K)]
_MU_FIT = (-3.0e-11, 4.9722e-8, 1.722375e-5)  # [Pa·s]
_CP_FIT = (4.0e-4, 1.56e-2, 1005.65)  # [J/(kg·K)]


def air_properties(temperature: Any, pressure: float = ATMOSPHERE) -> AirProperties:
    """Dry-air properties at a film temperature.

    k, μ and c_p are quadratic fits in temperature of the reference values (CoolProp
    'Air', Lemmon et al. formulation) tabulated at 25/50/75/100 °C and 101325 Pa; they are
    independent of pressure. ρ is the ideal gas, β = 1/T.

    .. math::

        k = \\sum a_i t^i,\\quad μ = \\sum b_i t^i,\\quad c_p = \\sum c_i t^i,\\quad
        ρ = \\frac{P}{R_{air} T},\\quad β = \\frac{1}{T}

    Parameters
    ----------
    temperature : array-like
        [°C] film temperature ``T_f = T_a + ΔT/2``.
    pressure : float
        [Pa] absolute pressure (altitude lowers it; ν and α scale with 1/ρ).

    Returns
    -------
    AirProperties

    Notes
    -----
    Validity: the fit reproduces the tabulated values within 0.01 % from 25 to 100 °C and
    stays within about 1 % of the U.S. Standard Atmosphere 1976 (Sutherland) k and μ from
    0 to 150 °C. Humidity is ignored. β = 1/T is within 0.3 % of the real-gas value.

    References
    ----------
    Lemmon, Jacobsen, Penoncello & Friend, "Thermodynamic properties of air", J. Phys.
    Chem. Ref. Data 29(3), 2000 (through CoolProp, values of the heatsink notes §4);
    U.S. Standard Atmosphere, 1976.

    Examples
    --------
    >>> round(float(air_properties(50.0).kinematic_viscosity), 10)
    1.79752e-05
    """
    t = np.asarray(temperature, dtype=float)
    k = np.polyval(_K_FIT, t)
    mu = np.polyval(_MU_FIT, t)
    cp = np.polyval(_CP_FIT, t)
    tk = t + KELVIN
    rho = pressure / (R_AIR * tk)
    return AirProperties(
        conductivity=k,
        viscosity=mu,
        density=rho,
        heat_capacity=cp,
        prandtl=mu * cp / k,
        kinematic_viscosity=mu / rho,
        diffusivity=k / (rho * cp),
        expansion=1.0 / tk,
    )


# --------------------------------------------------------------------------- correlations


def elenbaas_number(
    rise: Any, spacing: Any, length: Any, air: AirProperties
) -> np.ndarray:
    """Elenbaas number of a vertical channel between two plates.

    .. math:: El = \\frac{g β ΔT s^4}{ν α L} = Ra_s \\frac{s}{L}

    Parameters
    ----------
    rise : array-like
        [K] wall minus ambient temperature ΔT.
    spacing : array-like
        [m] plate gap s.
    length : array-like
        [m] plate height L (vertical).
    air : AirProperties
        At the film temperature.

    Returns
    -------
    ndarray
        [-] El.

    References
    ----------
    Elenbaas, W., "Heat dissipation of parallel plates by free convection", Physica 9(1),
    1942; Kutz (ed.), Mechanical Engineers' Handbook Vol. 4, "Cooling Electronic
    Equipment", Table 1.
    """
    return (
        GRAVITY
        * air.expansion
        * np.asarray(rise, dtype=float)
        * np.asarray(spacing, dtype=float) ** 4
        / (air.kinematic_viscosity * air.diffusivity * np.asarray(length, dtype=float))
    )


def nusselt_channel_bar_cohen_rohsenow(elenbaas: Any) -> np.ndarray:
    """Channel Nusselt number of symmetric isothermal vertical plates, natural convection.

    .. math:: Nu_s = \\frac{h s}{k} = \\left[\\frac{576}{El^2} + \\frac{2.873}{El^{1/2}}\\right]^{-1/2}

    Parameters
    ----------
    elenbaas : array-like
        [-] El (see :func:`elenbaas_number`).

    Returns
    -------
    ndarray
        [-] Nu_s based on the gap s; h is the mean over both plates, referred to the
        ambient (inlet) air.

    Notes
    -----
    Composite of the fully developed limit ``El/24`` (within about 7 % for El ≤ 10) and the
    isolated-plate limit ``0.59·El^¼`` (within 0.3 % for El ≥ 1000). Air; plates vertical,
    channel open at the bottom, top and the fin-tip side. ±10–15 % against its data
    (from memory).

    References
    ----------
    Bar-Cohen, A.; Rohsenow, W.M., "Thermally optimum spacing of vertical, natural
    convection cooled, parallel plates", J. Heat Transfer 106, 1984; composite form as in
    Kutz (ed.), Mechanical Engineers' Handbook Vol. 4, Table 1.

    Examples
    --------
    >>> round(float(nusselt_channel_bar_cohen_rohsenow(100.0)), 5)
    1.70276
    """
    el = np.asarray(elenbaas, dtype=float)
    with np.errstate(divide="ignore"):
        return (576.0 / el**2 + 2.873 / np.sqrt(el)) ** -0.5


def optimum_fin_spacing(length: Any, rise: Any, air: AirProperties) -> np.ndarray:
    """Fin gap that maximises the heat from a given base, natural convection.

    .. math:: s_{opt} = 2.714\\, L\\, Ra_L^{-1/4},\\quad Ra_L = \\frac{g β ΔT L^3}{ν α}

    At s_opt, El = 2.714⁴ ≈ 54.25 and Nu_s ≈ 1.307.

    Parameters
    ----------
    length : array-like
        [m] fin length L (vertical).
    rise : array-like
        [K] wall minus ambient ΔT.
    air : AirProperties
        At the film temperature.

    Returns
    -------
    ndarray
        [m] s_opt.

    References
    ----------
    Bar-Cohen & Rohsenow 1984 (see :func:`nusselt_channel_bar_cohen_rohsenow`).
    """
    length = np.asarray(length, dtype=float)
    ra = (
        GRAVITY
        * air.expansion
        * np.asarray(rise, dtype=float)
        * length**3
        / (air.kinematic_viscosity * air.diffusivity)
    )
    return 2.714 * length * ra**-0.25


def nusselt_vertical_plate_churchill_chu(prandtl: Any, grashof: Any) -> np.ndarray:
    """Mean Nusselt number of an isolated vertical isothermal plate, natural convection.

    .. math::

        Nu_L = \\left\\{0.825 + \\frac{0.387\\,Ra_L^{1/6}}
        {[1 + (0.492/Pr)^{9/16}]^{8/27}}\\right\\}^2,\\quad Ra_L = Gr_L\\,Pr

    Parameters
    ----------
    prandtl : array-like
        [-] Pr at the film temperature.
    grashof : array-like
        [-] ``Gr_L = g β ΔT L³/ν²``.

    Returns
    -------
    ndarray
        [-] Nu_L = h·L/k.

    Notes
    -----
    Full range (laminar and turbulent), any Pr. Used here for the outer faces of the end
    fins, the fin tips and the base edges.

    References
    ----------
    Churchill, S.W.; Chu, H.H.S., "Correlating equations for laminar and turbulent free
    convection from a vertical plate", Int. J. Heat Mass Transfer 18(11), 1975.
    """
    pr = np.asarray(prandtl, dtype=float)
    ra = np.asarray(grashof, dtype=float) * pr
    return (
        0.825
        + 0.387
        * ra ** (1.0 / 6.0)
        / (1.0 + (0.492 / pr) ** (9.0 / 16.0)) ** (8.0 / 27.0)
    ) ** 2


def radiation_coefficient(emissivity: Any, surface: Any, ambient: Any) -> np.ndarray:
    """Linearised radiation coefficient of a small grey surface in large surroundings.

    .. math:: h_r = ε σ (T_s^2 + T_a^2)(T_s + T_a) = \\frac{ε σ (T_s^4 - T_a^4)}{T_s - T_a}

    Parameters
    ----------
    emissivity : array-like
        [-] ε of the surface.
    surface, ambient : array-like
        [°C] surface and surroundings temperatures.

    Returns
    -------
    ndarray
        [W/(m²·K)] h_r (exact, not the ``4εσT_m³`` approximation).

    References
    ----------
    Bergman, Lavine, Incropera & DeWitt, Introduction to Heat Transfer, radiation
    exchange of a small surface with large surroundings.
    """
    ts = np.asarray(surface, dtype=float) + KELVIN
    ta = np.asarray(ambient, dtype=float) + KELVIN
    return (
        np.asarray(emissivity, dtype=float)
        * STEFAN_BOLTZMANN
        * (ts**2 + ta**2)
        * (ts + ta)
    )


def channel_apparent_emissivity(
    emissivity: Any, spacing: Any, fin_height: Any, length: Any
) -> np.ndarray:
    """Apparent emissivity of the U-channel between two fins, seen through its openings.

    The two fin faces and the base strip form one isothermal grey surface A_int that
    sees ambient only through the openings A_open (fin-tip face, top and bottom):

    .. math::

        A_{int} = (2H_f + s)L,\\quad A_{open} = sL + 2sH_f,\\quad
        ε_{app} = \\frac{ε A_{int}}{ε A_{int} + (1-ε) A_{open}}

    and the channel radiates ``Q = ε_app σ A_open (T_w⁴ − T_a⁴)``.

    Parameters
    ----------
    emissivity : array-like
        [-] surface ε.
    spacing, fin_height, length : array-like
        [m] gap s, fin height H_f, fin length L.

    Returns
    -------
    ndarray
        [-] ε_app (1 when ε = 1; ε when A_int = A_open).

    Notes
    -----
    Ignores the variation of radiosity along the channel.

    References
    ----------
    Bergman, Lavine, Incropera & DeWitt, Introduction to Heat Transfer, two-surface
    enclosure (a grey surface fully enclosed by a black opening).
    """
    eps = np.asarray(emissivity, dtype=float)
    s = np.asarray(spacing, dtype=float)
    hf = np.asarray(fin_height, dtype=float)
    length = np.asarray(length, dtype=float)
    a_int = (2.0 * hf + s) * length
    a_open = s * length + 2.0 * s * hf
    return eps * a_int / (eps * a_int + (1.0 - eps) * a_open)


def fin_efficiency_straight(
    h: Any, conductivity: Any, fin_thickness: Any, fin_height: Any
) -> np.ndarray:
    """Efficiency of a straight rectangular fin with a convective tip (corrected length).

    .. math::

        L_c = H_f + t_f/2,\\quad m = \\sqrt{\\frac{2h}{k t_f}},\\quad
        η = \\frac{\\tanh(m L_c)}{m L_c}

    Parameters
    ----------
    h : array-like
        [W/(m²·K)] coefficient on the fin faces (convection plus radiation).
    conductivity : array-like
        [W/(m·K)] fin material k.
    fin_thickness : array-like
        [m] t_f (mean thickness for tapered fins); t_f ≪ fin length.
    fin_height : array-like
        [m] H_f, root to tip.

    Returns
    -------
    ndarray
        [-] η (1 when h → 0).

    References
    ----------
    Bergman, Lavine, Incropera & DeWitt, Introduction to Heat Transfer, straight fin of
    uniform cross-section with the corrected length.

    Examples
    --------
    >>> round(float(fin_efficiency_straight(10.0, 200.0, 0.002, 0.030)), 6)
    0.984285
    """
    tf = np.asarray(fin_thickness, dtype=float)
    lc = np.asarray(fin_height, dtype=float) + tf / 2.0
    ml = (
        np.sqrt(
            2.0
            * np.asarray(h, dtype=float)
            / (np.asarray(conductivity, dtype=float) * tf)
        )
        * lc
    )
    with np.errstate(invalid="ignore", divide="ignore"):
        eta = np.tanh(ml) / ml
    return np.where(ml > 1e-12, eta, 1.0)


def nusselt_channel_teertstra(re_star: Any, prandtl: Any) -> np.ndarray:
    """Channel Nusselt number of a ducted plate-fin sink, laminar forced air.

    .. math::

        Nu_b = \\left[\\left(\\frac{Re^* Pr}{2}\\right)^{-3} +
        \\left(0.664 \\sqrt{Re^*}\\, Pr^{1/3} \\sqrt{1 + \\frac{3.65}{\\sqrt{Re^*}}}
        \\right)^{-3}\\right]^{-1/3},\\quad Re^* = \\frac{V_{ch} s}{ν}\\frac{s}{L}

    Parameters
    ----------
    re_star : array-like
        [-] channel Reynolds number on the gap, times s/L.
    prandtl : array-like
        [-] Pr.

    Returns
    -------
    ndarray
        [-] Nu_b = h·s/k, h referred to the **inlet** air temperature.

    Notes
    -----
    The first term is the fully developed (saturated-air) limit and is exactly the energy
    balance ρ c_p V s/(2L)·s/k, so the air heating is included. The second term is a
    developing laminar boundary layer (the flat-plate ``0.664·Re^½·Pr^⅓`` written on s)
    with a channel-acceleration correction. Laminar; about 0.1 < Re* < 100; ±10–15 %
    against ducted tests (from memory).

    References
    ----------
    Teertstra, P.; Yovanovich, M.M.; Culham, J.R., "Analytical forced convection
    modeling of plate fin heat sinks", IEEE SEMI-THERM 1999 / J. Electronics
    Manufacturing 2000 (equation from memory).

    Examples
    --------
    >>> round(float(nusselt_channel_teertstra(10.0, 0.71)), 5)
    2.42103
    """
    re = np.asarray(re_star, dtype=float)
    pr = np.asarray(prandtl, dtype=float)
    # Re* → 0 (no air) gives Nu_b → 0 through inf**(−⅓); silence the inf warnings
    with np.errstate(divide="ignore", over="ignore", invalid="ignore"):
        saturated = re * pr / 2.0
        developing = (
            0.664 * np.sqrt(re) * pr ** (1.0 / 3.0) * np.sqrt(1.0 + 3.65 / np.sqrt(re))
        )
        nu = (saturated**-3 + developing**-3) ** (-1.0 / 3.0)
    return np.where(re > 0, nu, 0.0)


# --------------------------------------------------------------------------- geometry


@dataclass(frozen=True)
class FinGeometry:
    """Extruded plate-fin sink, fins vertical (fields may be arrays that broadcast).

    Fields
    ------
    length : [m] L, fin length along the flow (= vertical height in natural convection).
    width : [m] W, base width across the fins.
    base_thickness : [m] t_b.
    fin_height : [m] H_f, fin height above the base.
    fin_count : [-] N (≥ 1; N = 1 is a plate with one fin).
    fin_thickness : [m] t_f (mean for tapered fins).
    conductivity : [W/(m·K)] k of the sink material (aluminium 6063 ≈ 200).
    emissivity : [-] ε of the surface (0.10 when unknown).
    """

    length: Any
    width: Any
    base_thickness: Any
    fin_height: Any
    fin_count: Any
    fin_thickness: Any
    conductivity: Any = 200.0
    emissivity: Any = EMISSIVITY_UNKNOWN

    @property
    def spacing(self) -> np.ndarray:
        """[m] fin gap ``s = (W − N·t_f)/(N − 1)``; 0 where N < 2."""
        n = np.asarray(self.fin_count, dtype=float)
        w = np.asarray(self.width, dtype=float)
        tf = np.asarray(self.fin_thickness, dtype=float)
        with np.errstate(divide="ignore", invalid="ignore"):
            s = (w - n * tf) / (n - 1.0)
        return np.where(n >= 2, s, 0.0)

    @property
    def volume(self) -> np.ndarray:
        """[m³] metal volume ``W·L·t_b + N·t_f·H_f·L``."""
        return np.asarray(self.width) * np.asarray(self.length) * np.asarray(
            self.base_thickness
        ) + np.asarray(self.fin_count) * np.asarray(self.fin_thickness) * np.asarray(
            self.fin_height
        ) * np.asarray(self.length)


@dataclass(frozen=True)
class NaturalConvection:
    """Result of :func:`natural_convection` (arrays broadcast like the inputs).

    Fields
    ------
    r : [K/W] RθSA, isothermal base, at the given rise.
    rise : [K] base minus ambient ΔT.
    wall_rise : [K] area-mean channel-wall excess ΔT_w.
    spacing : [m] fin gap s.
    elenbaas : [-] El at ΔT_w.
    nusselt : [-] channel Nu_s.
    h_channel : [W/(m²·K)] channel convection h_c.
    h_radiation_channel : [W/(m²·K)] channel radiation h_r,ch (cavity ε_app).
    h_outer : [W/(m²·K)] outer faces h_o = h_CC + h_r.
    efficiency : [-] fin efficiency η.
    radiation_share : [-] fraction of the heat radiated.
    """

    r: Any
    rise: Any
    wall_rise: Any
    spacing: Any
    elenbaas: Any
    nusselt: Any
    h_channel: Any
    h_radiation_channel: Any
    h_outer: Any
    efficiency: Any
    radiation_share: Any


def _channel_radiation(geom: FinGeometry, s, wall_rise, ambient) -> np.ndarray:
    """[W/(m²·K)] h_r,ch: cavity radiation spread over the channel's internal area."""
    hf = np.asarray(geom.fin_height, dtype=float)
    length = np.asarray(geom.length, dtype=float)
    eps_app = channel_apparent_emissivity(geom.emissivity, s, hf, length)
    a_int = (2.0 * hf + s) * length
    a_open = s * length + 2.0 * s * hf
    tw = ambient + wall_rise + KELVIN
    ta = ambient + KELVIN
    return eps_app * STEFAN_BOLTZMANN * a_open * (tw**4 - ta**4) / (a_int * wall_rise)


def _wall_rise(rise, s, eta, hf):
    """[K] area-mean channel-wall excess ``ΔT·(s + 2ηH_f)/(s + 2H_f)``."""
    return rise * (s + 2.0 * eta * hf) / (s + 2.0 * hf)


def natural_convection(
    geom: FinGeometry,
    rise: Any,
    *,
    ambient: float = REFERENCE_AMBIENT,
    pressure: float = ATMOSPHERE,
    back_face: bool = False,
    tolerance: float = 1e-10,
    max_iterations: int = 100,
) -> NaturalConvection:
    """RθSA of a vertical plate-fin sink in still air at a given base rise.

    Channels (N − 1 of them) by Bar-Cohen & Rohsenow on the Elenbaas number; outer faces
    of the two end fins, the fin tips and the base edges by Churchill & Chu as isolated
    vertical plates of height L; radiation from the outer faces with view factor 1 and
    from each channel as a grey cavity (ε_app); fin efficiency of straight fins with the
    total coefficient. The wall excess, air properties (film ``T_a + ΔT_w/2``) and η are
    iterated together to a fixed point:

    .. math::

        ΔT_w &= ΔT\\,\\frac{s + 2ηH_f}{s + 2H_f}\\\\
        G_{ch} &= (N-1)(h_c + h_{r,ch})(sL + 2ηH_fL)\\\\
        G_{out} &= h_o[2(ηH_f + t_b)L + N t_f L η] \\;(+ h_o W L \\text{ with the back face})\\\\
        R &= 1/(G_{ch} + G_{out})

    Parameters
    ----------
    geom : FinGeometry
        [m], [W/(m·K)], [-].
    rise : array-like
        [K] base minus ambient ΔT (> 0).
    ambient : float
        [°C] ambient T_a (matters < 2 % from 25 to 55 °C at a fixed rise).
    pressure : float
        [Pa] air pressure (altitude).
    back_face : bool
        Count the back of the base as an exposed vertical plate (it usually carries the
        device, so it is left out by default).
    tolerance, max_iterations
        Fixed-point stop: relative change of ΔT_w.

    Returns
    -------
    NaturalConvection

    Notes
    -----
    Isothermal base (no spreading from a small source). Validity (from memory / common
    practice): air, fins vertical within about 15°, channels open at the bottom, top and
    fin tips, nothing within about L/2 above or below; 2 mm ≲ s ≲ 20 mm, 25 mm ≲ L ≲
    500 mm, 5 K ≲ ΔT ≲ 100 K. Expect ±20–30 % for a whole sink with ε known.

    References
    ----------
    Elenbaas 1942; Bar-Cohen & Rohsenow 1984; Churchill & Chu 1975; Bergman, Lavine,
    Incropera & DeWitt, Introduction to Heat Transfer (fins, enclosure radiation).
    """
    rise = np.asarray(rise, dtype=float)
    length = np.asarray(geom.length, dtype=float)
    width = np.asarray(geom.width, dtype=float)
    tb = np.asarray(geom.base_thickness, dtype=float)
    hf = np.asarray(geom.fin_height, dtype=float)
    n = np.asarray(geom.fin_count, dtype=float)
    tf = np.asarray(geom.fin_thickness, dtype=float)
    k = np.asarray(geom.conductivity, dtype=float)
    eps = np.asarray(geom.emissivity, dtype=float)
    s = geom.spacing
    channels = n >= 2
    s_safe = np.where(channels, s, 1.0)  # any positive gap where there is no channel
    eta = np.ones(np.broadcast(rise, s, hf).shape)
    wall = rise * np.ones_like(eta)
    for _ in range(max_iterations):
        air = air_properties(ambient + wall / 2.0, pressure)
        el = elenbaas_number(wall, s_safe, length, air)
        nu_s = nusselt_channel_bar_cohen_rohsenow(el)
        h_c = np.where(channels, nu_s * air.conductivity / s_safe, 0.0)
        h_rch = np.where(channels, _channel_radiation(geom, s_safe, wall, ambient), 0.0)
        h_fin = np.where(channels, h_c + h_rch, 0.0)
        gr = GRAVITY * air.expansion * wall * length**3 / air.kinematic_viscosity**2
        h_cc = (
            nusselt_vertical_plate_churchill_chu(air.prandtl, gr)
            * air.conductivity
            / length
        )
        h_r = radiation_coefficient(eps, ambient + wall, ambient)
        h_o = h_cc + h_r
        # η from the channel coefficient; a single fin (no channel) sees h_o on both faces
        eta = fin_efficiency_straight(np.where(channels, h_fin, h_o), k, tf, hf)
        new = _wall_rise(rise, np.where(channels, s_safe, 0.0), eta, hf)
        done = np.all(np.abs(new - wall) <= tolerance * np.maximum(rise, 1e-12))
        wall = new
        if done:
            break
    fin_area = s_safe * length + 2.0 * eta * hf * length
    g_ch = np.where(channels, (n - 1.0) * h_fin * fin_area, 0.0)
    outer_area = 2.0 * (eta * hf + tb) * length + n * tf * length * eta
    # exposed base front beside the fins (only a single-fin plate has any)
    front = np.where(channels, 0.0, np.maximum(width - n * tf, 0.0) * length)
    outer_area = outer_area + front + (width * length if back_face else 0.0)
    g_out = h_o * outer_area
    g_rad = np.where(channels, (n - 1.0) * h_rch * fin_area, 0.0) + h_r * outer_area
    g = g_ch + g_out
    return NaturalConvection(
        r=1.0 / g,
        rise=rise,
        wall_rise=wall,
        spacing=s,
        elenbaas=np.where(channels, el, np.nan),
        nusselt=np.where(channels, nu_s, np.nan),
        h_channel=h_c,
        h_radiation_channel=h_rch,
        h_outer=h_o,
        efficiency=eta,
        radiation_share=g_rad / g,
    )


def natural_rise_at_power(
    geom: FinGeometry,
    power: float,
    *,
    ambient: float = REFERENCE_AMBIENT,
    pressure: float = ATMOSPHERE,
    back_face: bool = False,
) -> float:
    """Base rise of a geometry sink carrying a power, solved self-consistently.

    Solves ``ΔT = P·R(ΔT)`` with R from :func:`natural_convection` by
    :func:`scipy.optimize.brentq` on ``f(ΔT) = ΔT − P·R(ΔT)``, bracketed in
    [1e-6, 1000] K (R is finite at a small rise and falls as the rise grows, so f has
    one root).

    Parameters
    ----------
    geom : FinGeometry
        A single sink (scalar fields).
    power : float
        [W] total heat into the base (≤ 0 gives 0 K).
    ambient : float
        [°C].
    pressure : float
        [Pa].
    back_face : bool
        As in :func:`natural_convection`.

    Returns
    -------
    float
        [K] ΔT of the base above ambient.

    References
    ----------
    As :func:`natural_convection`.
    """
    if power <= 0:
        return 0.0

    def f(dt: float) -> float:
        r = natural_convection(
            geom, dt, ambient=ambient, pressure=pressure, back_face=back_face
        ).r
        return dt - power * float(r)

    return float(brentq(f, 1e-6, 1000.0, xtol=1e-9, rtol=1e-12))


@dataclass(frozen=True)
class ForcedConvection:
    """Result of :func:`forced_convection`.

    Fields
    ------
    r : [K/W] RθSA at the approach velocity (never above the natural value at ``rise``
        when blended).
    r_forced : [K/W] the forced-air model alone (Teertstra, no blend).
    r_natural : [K/W] still-air value at the same rise (:func:`natural_convection`).
    channel_velocity : [m/s] V_ch.
    re_star : [-] Re*.
    nusselt : [-] Nu_b.
    h : [W/(m²·K)] channel convection coefficient used (blended if asked).
    efficiency : [-] fin efficiency η.
    """

    r: Any
    r_forced: Any
    r_natural: Any
    channel_velocity: Any
    re_star: Any
    nusselt: Any
    h: Any
    efficiency: Any


def forced_convection(
    geom: FinGeometry,
    velocity: Any,
    *,
    rise: float = FORCED_RISE,
    ambient: float = REFERENCE_AMBIENT,
    pressure: float = ATMOSPHERE,
    bypass: Any = 1.0,
    blend: bool = True,
    tolerance: float = 1e-10,
    max_iterations: int = 100,
) -> ForcedConvection:
    """RθSA of a plate-fin sink in forced air at an approach velocity (ducted model).

    .. math::

        V_{ch} &= f_{bp}\\, V \\frac{W}{(N-1)s},\\quad
        Re^* = \\frac{V_{ch} s}{ν}\\frac{s}{L},\\quad h_f = Nu_b(Re^*, Pr)\\frac{k_a}{s}\\\\
        h &= (h_f^3 + h_n^3)^{1/3} \\quad\\text{(blend with the still-air channel } h_n)\\\\
        R &= \\frac{1}{(N-1)(h + h_{r,ch})(sL + 2ηH_fL)},\\quad
        R \\le R_{nat}(ΔT)

    Parameters
    ----------
    geom : FinGeometry
        Sink (N ≥ 2).
    velocity : array-like
        [m/s] approach velocity V (> 0).
    rise : float
        [K] assumed base rise: air properties at ``T_a + ΔT/2``, channel radiation and
        the still-air comparison at this rise (40 K by default).
    ambient : float
        [°C] inlet air.
    pressure : float
        [Pa].
    bypass : array-like
        [-] f_bp, share of the approach velocity that goes between the fins: 1.0 ducted
        or shrouded, 0.6 free stream (a placeholder from memory, not a bypass model).
    blend : bool
        Combine with natural convection ``h = (h_f³ + h_n³)^⅓`` (common practice,
        Churchill-type) and never return more than the still-air R at ``rise``.
    tolerance, max_iterations
        Fixed point of the wall excess used for radiation.

    Returns
    -------
    ForcedConvection

    Notes
    -----
    h is referred to the inlet air (the saturated limit of Nu_b is the air-heating energy
    balance), so no separate NTU correction. Outer faces are left out (shrouded in a
    duct). Laminar only, about 0.1 < Re* < 100. Expect ±10–15 % ducted, ±30–50 % in free
    stream with a guessed f_bp (from memory). Forced RθSA hardly depends on the rise, so
    the operating table treats it as flat.

    References
    ----------
    Teertstra, Yovanovich & Culham 1999/2000 (see :func:`nusselt_channel_teertstra`);
    Bergman, Lavine, Incropera & DeWitt (fins, enclosure radiation).
    """
    v = np.asarray(velocity, dtype=float)
    length = np.asarray(geom.length, dtype=float)
    width = np.asarray(geom.width, dtype=float)
    hf = np.asarray(geom.fin_height, dtype=float)
    n = np.asarray(geom.fin_count, dtype=float)
    tf = np.asarray(geom.fin_thickness, dtype=float)
    k = np.asarray(geom.conductivity, dtype=float)
    s = geom.spacing
    air = air_properties(ambient + rise / 2.0, pressure)
    v_ch = np.asarray(bypass, dtype=float) * v * width / ((n - 1.0) * s)
    re_star = v_ch * s / air.kinematic_viscosity * s / length
    nu_b = nusselt_channel_teertstra(re_star, air.prandtl)
    h_f = nu_b * air.conductivity / s
    nat = natural_convection(geom, rise, ambient=ambient, pressure=pressure)
    h = (h_f**3 + np.asarray(nat.h_channel) ** 3) ** (1.0 / 3.0) if blend else h_f
    wall = rise * np.ones(np.broadcast(h, s).shape)
    eta = np.ones_like(wall)
    for _ in range(max_iterations):
        h_rch = _channel_radiation(geom, s, wall, ambient)
        eta = fin_efficiency_straight(h + h_rch, k, tf, hf)
        new = _wall_rise(rise, s, eta, hf)
        done = np.all(np.abs(new - wall) <= tolerance * rise)
        wall = new
        if done:
            break
    r_forced = 1.0 / ((n - 1.0) * (h + h_rch) * (s * length + 2.0 * eta * hf * length))
    r = np.minimum(r_forced, nat.r) if blend else r_forced
    return ForcedConvection(
        r=r,
        r_forced=r_forced,
        r_natural=nat.r,
        channel_velocity=v_ch,
        re_star=re_star,
        nusselt=nu_b,
        h=h,
        efficiency=eta,
    )


# --------------------------------------------------------------------------- laws


def rth_at_rise(r_ref: Any, rise_ref: Any, n: Any, rise: Any) -> np.ndarray:
    """RθSA at another temperature rise, natural convection.

    h ∝ ΔT^n, so Q ∝ ΔT^(1+n) and

    .. math:: R(ΔT) = R_{ref} (ΔT/ΔT_{ref})^{-n}

    Parameters
    ----------
    r_ref : array-like
        [K/W] RθSA quoted at ``rise_ref``.
    rise_ref : array-like
        [K] rise of the quoted value (catalogues: usually 75 K).
    n : array-like
        [-] exponent: 0.25 isolated laminar plate (Nu ∝ Ra^¼), 0.30 default for finned
        sinks (closely spaced fins tend towards the fully developed channel, n → 1);
        0 for forced air.
    rise : array-like
        [K] actual rise (> 0; R → ∞ as the rise → 0 when n > 0).

    Returns
    -------
    ndarray
        [K/W].

    References
    ----------
    Churchill & Chu 1975 (n = ¼ of the laminar plate); heatsink reference notes §1.2
    (n = 0.30 finned default, common practice).

    Examples
    --------
    >>> round(float(rth_at_rise(1.34, 75.0, 0.25, 32.92)), 3)
    1.646
    """
    rise = np.asarray(rise, dtype=float)
    n = np.asarray(n, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        r = np.asarray(r_ref, dtype=float) * (
            np.maximum(rise, 0.0) / np.asarray(rise_ref, dtype=float)
        ) ** (-n)
    return np.where(n == 0, np.asarray(r_ref, dtype=float) * np.ones_like(r), r)


def rise_at_power(r_ref: Any, rise_ref: Any, n: Any, power: Any) -> np.ndarray:
    """Sink rise at a given power under the power law of :func:`rth_at_rise`.

    .. math:: ΔT = (P\\, R_{ref}\\, ΔT_{ref}^{\\,n})^{1/(1+n)},\\quad R = ΔT/P

    Parameters
    ----------
    r_ref, rise_ref, n : array-like
        As in :func:`rth_at_rise`.
    power : array-like
        [W] total heat into the sink (≤ 0 gives 0 K).

    Returns
    -------
    ndarray
        [K] ΔT.

    Examples
    --------
    >>> round(float(rise_at_power(1.34, 75.0, 0.25, 20.0)), 2)
    32.92
    """
    p = np.maximum(np.asarray(power, dtype=float), 0.0)
    n = np.asarray(n, dtype=float)
    return (
        p * np.asarray(r_ref, dtype=float) * np.asarray(rise_ref, dtype=float) ** n
    ) ** (1.0 / (1.0 + n))


def power_at_rise(r_ref: Any, rise_ref: Any, n: Any, rise: Any) -> np.ndarray:
    """Largest power whose sink rise stays at or below ``rise`` (inverse of :func:`rise_at_power`).

    .. math:: P = \\frac{ΔT^{1+n}}{R_{ref}\\, ΔT_{ref}^{\\,n}} = ΔT / R(ΔT)

    Parameters
    ----------
    r_ref, rise_ref, n : array-like
        As in :func:`rth_at_rise`.
    rise : array-like
        [K] allowed rise (≤ 0 gives 0 W).

    Returns
    -------
    ndarray
        [W].
    """
    dt = np.maximum(np.asarray(rise, dtype=float), 0.0)
    n = np.asarray(n, dtype=float)
    return dt ** (1.0 + n) / (
        np.asarray(r_ref, dtype=float) * np.asarray(rise_ref, dtype=float) ** n
    )


def fit_rise_exponent(power: Any, rise: Any) -> float:
    """Exponent n of a natural-convection curve of rise against power.

    Least squares on ``ln ΔT = ln a + m·ln P``; then ``n = 1/m − 1`` (so that
    ``Q ∝ ΔT^(1+n)``).

    Parameters
    ----------
    power : array-like
        [W] at least two distinct positive powers.
    rise : array-like
        [K] the rises at those powers.

    Returns
    -------
    float
        [-] n. Outside :data:`N_PLAUSIBLE` (0.1–0.6) the data are suspect.

    References
    ----------
    Heatsink reference notes §1.2 (common practice).
    """
    p = np.asarray(power, dtype=float)
    dt = np.asarray(rise, dtype=float)
    m, _ = np.polyfit(np.log(p), np.log(dt), 1)
    return float(1.0 / m - 1.0)


def rth_at_airflow(
    airflow_points: Any, rth_points: Any, airflow: float
) -> tuple[float, str]:
    """RθSA at an approach velocity from a sheet's airflow points.

    Two or more points: piecewise linear in log-log (``ln R`` against ``ln v``). Above
    the last point the last slope is extended up to 1.5·v_max and the value is then held
    (no further gain is claimed). Below the first point the first slope is extended (the
    caller caps the result at the still-air value). One point: ``R = R₁·(v/v₁)^(−0.5)``
    (common practice), within the same 1.5·v₁ limit. A point list whose R rises with v is
    made non-increasing (running minimum) so more air never raises RθSA.

    Parameters
    ----------
    airflow_points : array-like
        [m/s] approach velocities (> 0).
    rth_points : array-like
        [K/W] RθSA at those velocities.
    airflow : float
        [m/s] design approach velocity (> 0).

    Returns
    -------
    r : float
        [K/W].
    note : str
        "" when interpolated inside the points, else what was done (extrapolated above or
        below, held at 1.5·v_max, one point scaled), for the warning column.

    References
    ----------
    Heatsink reference notes §1.2 (log-log interpolation, 1.5·v_max limit, p = 0.5:
    common practice).
    """
    v = np.asarray(airflow_points, dtype=float)
    r = np.asarray(rth_points, dtype=float)
    order = np.argsort(v, kind="stable")
    v, r = v[order], r[order]
    r = np.minimum.accumulate(r)
    lv, lr = np.log(v), np.log(r)
    x = math.log(airflow)
    v_max = float(v[-1])
    v_cap = EXTRAPOLATION_LIMIT * v_max
    if len(v) == 1:
        slope = -P_SINGLE_POINT
        xe = min(x, math.log(v_cap))
        val = float(math.exp(lr[0] + slope * (xe - lv[0])))
        note = f"one airflow point ({v[0]:g} m/s): scaled as v^-{P_SINGLE_POINT:g}"
        if airflow > v_cap:
            note += f", held above {v_cap:g} m/s (1.5 × the point)"
        return val, note
    if x < lv[0]:
        slope = (lr[1] - lr[0]) / (lv[1] - lv[0])
        # the caller caps the result at the still-air value; keep exp finite here
        val = float(math.exp(min(lr[0] + slope * (x - lv[0]), 700.0)))
        return (
            val,
            f"airflow below the lowest point ({v[0]:g} m/s): extrapolated with the first slope",
        )
    if x <= lv[-1]:
        return float(math.exp(np.interp(x, lv, lr))), ""
    slope = min((lr[-1] - lr[-2]) / (lv[-1] - lv[-2]), 0.0)
    xe = min(x, math.log(v_cap))
    val = float(math.exp(lr[-1] + slope * (xe - lv[-1])))
    note = f"airflow above the highest point ({v_max:g} m/s): extrapolated with the last slope"
    if airflow > v_cap:
        note += f" up to {v_cap:g} m/s (1.5 × the last point) and held there"
    return val, note


# --------------------------------------------------------------------------- the table


_GEOMETRY_COLUMNS = (
    "length",
    "width",
    "base_thickness",
    "fin_height",
    "fin_count",
    "fin_thickness",
)

TABLE_COLUMNS = (
    "part",
    "price",
    "stock",
    "positions",
    "fits",
    "r_ref",
    "rise_ref",
    "n",
    "r_nat_ref",
    "rise_nat_ref",
    "n_nat",
    "airflow_m_per_s",
    "fit_error",
    "estimated",
    "method",
    "warning",
    "heat_capacity_j_per_k",
)


def _num(row: Mapping[str, Any], col: str) -> float:
    value = row.get(col, np.nan)
    try:
        value = float(value)
    except (TypeError, ValueError):
        return math.nan
    return value


def _text(row: Mapping[str, Any], col: str) -> str:
    value = row.get(col)
    if value is None or (isinstance(value, float) and math.isnan(value)):
        return ""
    return str(value).strip()


def _where(row: Mapping[str, Any], column: str) -> Location:
    """Location of a heatsink row (the reader's source_file/sheet/row when present)."""
    r = _num(row, "source_row")
    return Location(
        file=_text(row, "source_file") or None,
        sheet=_text(row, "source_sheet") or "heatsinks",
        row=int(r) if math.isfinite(r) else None,
        column=column,
    )


def _geometry_of(
    row: Mapping[str, Any], part: str, notes: list[str]
) -> FinGeometry | None:
    """FinGeometry from an inventory row, or None when the geometry is incomplete."""
    values = {c: _num(row, c) for c in _GEOMETRY_COLUMNS}
    if any(not math.isfinite(v) for v in values.values()):
        return None
    n = values["fin_count"]
    if n < 1 or n != round(n):
        raise InputError(
            f"heatsink '{part}': fin_count must be a whole number ≥ 1, got {n:g}",
            _where(row, "fin_count"),
        )
    if n * values["fin_thickness"] >= values["width"] - 1e-12 and n >= 2:
        raise InputError(
            f"heatsink '{part}': {n:g} fins of {values['fin_thickness'] * 1e3:g} mm do not fit "
            f"in a width of {values['width'] * 1e3:g} mm (no gap left between the fins)",
            _where(row, "fin_count"),
        )
    mat, mat_known = material_for(row.get("material"))
    if not mat_known:
        given = _text(row, "material")
        notes.append(
            f"material {'not given' if not given else repr(given) + ' not recognised'}: "
            f"{mat.name} assumed (k = {mat.conductivity:g} W/(m·K))"
        )
    eps = _num(row, "emissivity")
    if math.isfinite(eps) and 0 < eps <= 1:
        eps_label, eps_known = f"emissivity {eps:g} from the sheet", True
    else:
        eps, eps_label, eps_known = emissivity_for_finish(row.get("finish"), mat)
        if not eps_known:
            notes.append(f"{eps_label}: emissivity {eps:g} assumed (conservative)")
    return FinGeometry(
        length=values["length"],
        width=values["width"],
        base_thickness=values["base_thickness"],
        fin_height=values["fin_height"],
        fin_count=int(n),
        fin_thickness=values["fin_thickness"],
        conductivity=mat.conductivity,
        emissivity=eps,
    )


def _geometry_validity(geom: FinGeometry) -> list[str]:
    out = []
    s = float(geom.spacing)
    if geom.fin_count >= 2 and not (SPACING_VALID[0] <= s <= SPACING_VALID[1]):
        out.append(f"fin gap {s * 1e3:.1f} mm outside the model's 2–20 mm")
    if not (LENGTH_VALID[0] <= geom.length <= LENGTH_VALID[1]):
        out.append(
            f"fin length {geom.length * 1e3:.0f} mm outside the model's 25–500 mm"
        )
    return out


def _fit_geometry_law(
    geom: FinGeometry, ambient: float, pressure: float
) -> tuple[float, float, float]:
    """(R at 75 K, n, largest relative error of the fit over 25–100 K)."""
    lo, hi = FIT_RISES
    check = np.linspace(FIT_CHECK_RISES[0], FIT_CHECK_RISES[1], 16)
    nat = natural_convection(
        geom, np.concatenate(([lo, hi], check)), ambient=ambient, pressure=pressure
    )
    r = np.asarray(nat.r)
    n = math.log(r[0] / r[1]) / math.log(hi / lo)
    fit = rth_at_rise(r[1], hi, n, check)
    err = float(np.max(np.abs(fit / r[2:] - 1.0)))
    return float(r[1]), float(n), err


def _orientation_factor(row: Mapping[str, Any]) -> tuple[float, str]:
    text = _text(row, "orientation").lower()
    if not text or ("vert" in text and "horiz" not in text):
        return 1.0, ""
    if "horiz" in text or "base_up" in text or "base up" in text or "flat" in text:
        return ORIENTATION_FACTOR, (
            f"orientation '{text}': still-air RθSA × {ORIENTATION_FACTOR:g} "
            "(horizontal fins or base; assumed factor, from memory)"
        )
    return 1.0, f"orientation '{text}' not recognised: vertical fins assumed"


def _bypass_of(row: Mapping[str, Any]) -> tuple[float, str]:
    text = _text(row, "airflow_basis").lower()
    if text.startswith("free") or "unducted" in text or "open" in text:
        return BYPASS_FACTOR["free"], "free"
    return BYPASS_FACTOR["ducted"], "ducted"


def _airflow_points(
    sink_airflow: pd.DataFrame | None,
) -> dict[str, tuple[np.ndarray, np.ndarray]]:
    if sink_airflow is None or len(sink_airflow) == 0:
        return {}
    out: dict[str, tuple[np.ndarray, np.ndarray]] = {}
    v_all = pd.to_numeric(sink_airflow["airflow"], errors="coerce").to_numpy(
        dtype=float
    )
    r_all = pd.to_numeric(sink_airflow["rth_sa"], errors="coerce").to_numpy(dtype=float)
    parts = sink_airflow["part"].astype(str).to_numpy()
    ok = np.isfinite(v_all) & np.isfinite(r_all) & (v_all > 0) & (r_all > 0)
    for part in pd.unique(parts[ok]):
        sel = ok & (parts == part)
        v, r = v_all[sel], r_all[sel]
        # one value per velocity: the larger R (conservative) where a sheet repeats one
        uv = np.unique(v)
        ur = np.array([r[v == x].max() for x in uv])
        out[str(part)] = (uv, ur)
    return out


def sink_operating_table(
    heatsinks: pd.DataFrame,
    sink_airflow: pd.DataFrame | None = None,
    airflow: float = 0.0,
    derating: float = 0.0,
    *,
    ambient: float = REFERENCE_AMBIENT,
    pressure: float = ATMOSPHERE,
) -> pd.DataFrame:
    """Per heatsink, the law that gives its RθSA at any rise at the design airflow.

    Each row holds ``R(ΔT) = r_ref·(ΔT/rise_ref)^(−n)`` (flat, n = 0, in forced air) and
    the still-air cap ``R_nat(ΔT) = r_nat_ref·(ΔT/rise_nat_ref)^(−n_nat)``; the sink's
    RθSA is the smaller of the two (:func:`sink_rth`). Both include the derating:
    ``R × (1 + derating)``.

    Still air (``airflow`` = 0):

    * ``rth_sa`` given: r = rth_sa at ``rth_sa_rise`` (75 K when blank, with a warning);
      n from an ``rth_sa_exponent`` column if present, else fitted to the geometry model
      when the geometry is complete (its shape, the sheet's level), else 0.25 for a
      single-fin plate and 0.30 for finned sinks (heatsink notes §1.2).
    * no ``rth_sa``: estimated from the fin geometry (:func:`natural_convection`), marked
      ``estimated`` with the method's uncertainty in ``warning``. The model is fitted by
      a power law through its values at 30 and 75 K; ``fit_error`` is the largest
      relative deviation of that law from the model over 25–100 K (about 2 % or less for
      the reference sinks; below 25 K the law under-states R by up to ~10 %).
    * an ``orientation`` column saying horizontal multiplies still-air R by 1.3 (from
      memory) and warns.

    Forced air (``airflow`` > 0):

    * airflow points of the part in ``sink_airflow``: :func:`rth_at_airflow` (log-log,
      extrapolation flagged, at most to 1.5·v_max; one point: p = 0.5);
    * else complete geometry: :func:`forced_convection` (ducted unless an
      ``airflow_basis`` column says free), estimated;
    * else the still-air law is kept, with a warning (conservative).

    Forced R is taken as flat in the rise (n = 0): forced-air h hardly depends on it
    (common practice); the still-air cap keeps R ≤ R_nat at every rise.

    Parameters
    ----------
    heatsinks : DataFrame
        Inventory heatsinks (contract columns, SI): part, price, stock, fits, positions,
        rth_sa [K/W], rth_sa_rise [K], geometry [m], fin_count, material, finish; optional
        mass [kg], emissivity [-], orientation, airflow_basis, rth_sa_exponent [-].
    sink_airflow : DataFrame or None
        Airflow points: part, airflow [m/s], rth_sa [K/W].
    airflow : float
        [m/s] design approach velocity; 0 = natural convection.
    derating : float
        [-] fraction added to every RθSA (design ``heatsink_derating``).
    ambient : float
        [°C] ambient for the geometry model (catalogue values are at 25 °C; the effect
        of ambient at a fixed rise is < 2 % from 25 to 55 °C).
    pressure : float
        [Pa] air pressure for the geometry model.

    Returns
    -------
    DataFrame
        Columns :data:`TABLE_COLUMNS`: part, price, stock, positions, fits, r_ref [K/W],
        rise_ref [K], n [-], r_nat_ref [K/W], rise_nat_ref [K], n_nat [-],
        airflow_m_per_s, fit_error [-], estimated (bool), method (str), warning (str, ""
        when none), heat_capacity_j_per_k [J/K] (NaN when unknown).

    Raises
    ------
    DesignError
        Negative airflow or derating.
    InputError
        A row without rth_sa and without complete geometry, or fins that do not fit.
    """
    if not (math.isfinite(airflow) and airflow >= 0):
        raise DesignError(
            f"airflow must be ≥ 0 m/s, got {airflow!r}", Location(field="airflow")
        )
    if not (math.isfinite(derating) and derating >= 0):
        raise DesignError(
            f"heatsink_derating must be a fraction ≥ 0, got {derating!r}",
            Location(field="heatsink_derating"),
        )
    points = _airflow_points(sink_airflow) if airflow > 0 else {}
    capacity = sink_heat_capacity(heatsinks) if len(heatsinks) else np.zeros(0)
    scale = 1.0 + derating
    rows = []
    for i, (_, row) in enumerate(heatsinks.iterrows()):
        rec = row.to_dict()
        part = _text(rec, "part")
        warn: list[str] = []
        geom_notes: list[str] = []
        geom = _geometry_of(rec, part, geom_notes)
        rth_sa = _num(rec, "rth_sa")
        estimated = False

        # ---- still air
        if math.isfinite(rth_sa) and rth_sa > 0:
            r_nat = rth_sa
            rise_nat = _num(rec, "rth_sa_rise")
            if not (math.isfinite(rise_nat) and rise_nat > 0):
                rise_nat = RISE_REF_DEFAULT
                warn.append(f"rise of rth_sa not given: {RISE_REF_DEFAULT:g} K assumed")
            n_given = _num(rec, "rth_sa_exponent")
            fit_error = math.nan
            if math.isfinite(n_given) and n_given >= 0:
                n_nat, n_src = n_given, "from the sheet"
                if not (N_PLAUSIBLE[0] <= n_given <= N_PLAUSIBLE[1]):
                    warn.append(f"rise exponent {n_given:g} outside 0.1–0.6: suspect")
            elif geom is not None:
                r_model75, n_nat, fit_error = _fit_geometry_law(geom, ambient, pressure)
                n_src = "fitted to the fin-geometry model"
                r_model = float(rth_at_rise(r_model75, FIT_RISES[1], n_nat, rise_nat))
                ratio = rth_sa / r_model
                if not (1 / 1.5 <= ratio <= 1.5):
                    warn.append(
                        f"rth_sa {rth_sa:g} K/W and the geometry estimate {r_model:.3g} K/W "
                        "differ by more than 1.5× (check the sheet)"
                    )
            elif geom is None and _num(rec, "fin_count") <= 1:
                n_nat, n_src = N_FLAT, "flat-plate default"
            else:
                n_nat, n_src = N_FINNED, "finned-sink default"
            nat_method = f"sheet rth_sa {rth_sa:g} K/W at {rise_nat:g} K rise, n = {n_nat:.2f} ({n_src})"
        elif geom is not None:
            r_nat, n_nat, fit_error = _fit_geometry_law(geom, ambient, pressure)
            rise_nat = FIT_RISES[1]
            estimated = True
            sure = not geom_notes and not _text(rec, "orientation")
            band = _BAND_NATURAL if sure else _BAND_NATURAL_UNSURE
            nat_method = (
                "estimated from fin geometry: vertical plate fins in still air "
                "(Bar-Cohen & Rohsenow channels, Churchill & Chu outer faces, radiation "
                f"with channel cavity emissivity ε = {geom.emissivity:g}, fin efficiency, "
                f"k = {float(geom.conductivity):g} W/(m·K)); n = {n_nat:.2f} fitted at 30 and 75 K"
            )
            warn.append(
                f"estimated RθSA (still air): expect {band}; a datasheet value is preferred"
            )
            warn.extend(geom_notes)
            warn.extend(_geometry_validity(geom))
            if fit_error > 0.02:
                warn.append(
                    f"power-law fit within {fit_error:.0%} of the model over 25–100 K"
                )
        else:
            missing = [c for c in _GEOMETRY_COLUMNS if not math.isfinite(_num(rec, c))]
            raise InputError(
                f"heatsink '{part}': no rth_sa and incomplete fin geometry (missing: "
                f"{', '.join(missing)}); give rth_sa or the whole geometry",
                _where(rec, "rth_sa"),
            )
        factor, o_note = _orientation_factor(rec)
        r_nat *= factor
        if o_note:
            warn.append(o_note)

        # ---- forced air
        r_ref, rise_ref, n, method = r_nat, rise_nat, n_nat, nat_method
        if airflow > 0:
            if part in points:
                v_pts, r_pts = points[part]
                r_f, note = rth_at_airflow(v_pts, r_pts, airflow)
                method = (
                    f"sheet airflow points {', '.join(f'{a:g} m/s' for a in v_pts)} "
                    f"interpolated log-log at {airflow:g} m/s, flat in rise; never above still air: "
                    + nat_method
                )
                if note:
                    warn.append(note)
            elif geom is not None and geom.fin_count >= 2:
                f_bp, basis = _bypass_of(rec)
                fc = forced_convection(
                    geom, airflow, ambient=ambient, pressure=pressure, bypass=f_bp
                )
                r_f = float(fc.r)
                estimated = True
                method = (
                    f"estimated from fin geometry: {basis} plate-fin forced convection "
                    f"(Teertstra, Yovanovich & Culham) at {airflow:g} m/s, f_bp = {f_bp:g}, "
                    "blended with still air, flat in rise; never above still air: "
                    + nat_method
                )
                band = _BAND_DUCTED if basis == "ducted" else _BAND_FREE
                warn.append(f"estimated RθSA (forced air, {basis}): expect {band}")
                re_star = float(fc.re_star)
                if not (RE_STAR_VALID[0] <= re_star <= RE_STAR_VALID[1]):
                    warn.append(
                        f"Re* = {re_star:.3g} outside the forced model's 0.1–100"
                    )
                for note in geom_notes:
                    if note not in warn:
                        warn.append(note)
            else:
                r_f = math.nan
                warn.append(
                    f"no airflow data for {airflow:g} m/s: still-air RθSA used (conservative)"
                )
            if math.isfinite(r_f):
                r_ref, n = r_f, 0.0
                if r_f >= r_nat:
                    warn.append(
                        f"at {airflow:g} m/s the airflow value {r_f:.3g} K/W is no better "
                        f"than still air at {rise_nat:g} K: still air used where lower"
                    )

        rows.append(
            {
                "part": part,
                "price": _num(rec, "price"),
                "stock": _num(rec, "stock"),
                "positions": int(_num(rec, "positions"))
                if math.isfinite(_num(rec, "positions"))
                else 1,
                "fits": rec.get("fits", ()),
                "r_ref": r_ref * scale,
                "rise_ref": rise_ref,
                "n": n,
                "r_nat_ref": r_nat * scale,
                "rise_nat_ref": rise_nat,
                "n_nat": n_nat,
                "airflow_m_per_s": float(airflow),
                "fit_error": fit_error,
                "estimated": bool(estimated),
                "method": method + (f"; × {scale:g} derating" if derating > 0 else ""),
                "warning": "; ".join(warn),
                "heat_capacity_j_per_k": float(capacity[i]),
            }
        )
    table = pd.DataFrame(rows, columns=list(TABLE_COLUMNS))
    return table.astype({"estimated": bool}) if len(table) else table


def _law(table: Any) -> tuple[np.ndarray, ...]:
    """(r_ref, rise_ref, n, r_nat_ref, rise_nat_ref, n_nat) arrays of a table or a row."""

    def col(name: str, fallback: str) -> np.ndarray:
        if name in table:
            return np.asarray(table[name], dtype=float)
        return np.asarray(table[fallback], dtype=float)

    r, rr, n = col("r_ref", "r_ref"), col("rise_ref", "rise_ref"), col("n", "n")
    r2, rr2, n2 = (
        col("r_nat_ref", "r_ref"),
        col("rise_nat_ref", "rise_ref"),
        col("n_nat", "n"),
    )
    missing = ~np.isfinite(r2)
    if np.any(missing):  # no cap given: the main law alone
        r2, rr2, n2 = (
            np.where(missing, r, r2),
            np.where(missing, rr, rr2),
            np.where(missing, n, n2),
        )
    return r, rr, n, r2, rr2, n2


def _shape(
    params: tuple[np.ndarray, ...], x: np.ndarray, outer: bool
) -> tuple[np.ndarray, ...]:
    if not outer or params[0].ndim == 0:
        return params
    extra = (1,) * x.ndim
    return tuple(p.reshape(p.shape + extra) for p in params)


def sink_rth(table: Any, rise: Any, *, outer: bool = True) -> np.ndarray:
    """RθSA of each sink of an operating table at a rise.

    .. math::

        R(ΔT) = \\min\\left(r_{ref}(ΔT/ΔT_{ref})^{-n},\\;
        r_{nat}(ΔT/ΔT_{nat})^{-n_{nat}}\\right)

    Parameters
    ----------
    table : DataFrame or row (Series / mapping)
        From :func:`sink_operating_table` (derating included).
    rise : array-like
        [K] sink rise above ambient (> 0; at ≤ 0 a still-air law gives ∞).
    outer : bool
        True: result shape ``(sinks,) + rise.shape`` (sinks × rises). False: plain numpy
        broadcasting of the sink axis against ``rise`` (e.g. one rise per sink).

    Returns
    -------
    ndarray
        [K/W].
    """
    x = np.asarray(rise, dtype=float)
    r, rr, n, r2, rr2, n2 = _shape(_law(table), x, outer)
    with np.errstate(divide="ignore"):
        return np.minimum(rth_at_rise(r, rr, n, x), rth_at_rise(r2, rr2, n2, x))


def sink_max_power(table: Any, rise: Any, *, outer: bool = True) -> np.ndarray:
    """Largest total power each sink takes with its rise at or below ``rise``.

    .. math::

        P = \\max\\left(\\frac{ΔT^{1+n}}{r_{ref} ΔT_{ref}^{n}},
        \\frac{ΔT^{1+n_{nat}}}{r_{nat} ΔT_{nat}^{n_{nat}}}\\right) = ΔT / R(ΔT)

    Parameters
    ----------
    table : DataFrame or row
        From :func:`sink_operating_table`.
    rise : array-like
        [K] allowed sink rise above ambient (≤ 0 gives 0 W).
    outer : bool
        As in :func:`sink_rth` (default sinks × rises).

    Returns
    -------
    ndarray
        [W].
    """
    x = np.asarray(rise, dtype=float)
    r, rr, n, r2, rr2, n2 = _shape(_law(table), x, outer)
    return np.maximum(power_at_rise(r, rr, n, x), power_at_rise(r2, rr2, n2, x))


def sink_rise(table: Any, power: Any, *, outer: bool = True) -> np.ndarray:
    """Rise of each sink above ambient carrying a total power (inverse of :func:`sink_max_power`).

    Both laws give a heat flow that increases with the rise; the sink follows the larger
    heat flow, so the rise is the smaller of the two closed forms:

    .. math::

        ΔT = \\min\\left((P r_{ref} ΔT_{ref}^{n})^{1/(1+n)},
        (P r_{nat} ΔT_{nat}^{n_{nat}})^{1/(1+n_{nat})}\\right)

    Parameters
    ----------
    table : DataFrame or row
        From :func:`sink_operating_table`.
    power : array-like
        [W] total power on the sink (≤ 0 gives 0 K).
    outer : bool
        As in :func:`sink_rth` (default sinks × powers).

    Returns
    -------
    ndarray
        [K].
    """
    x = np.asarray(power, dtype=float)
    r, rr, n, r2, rr2, n2 = _shape(_law(table), x, outer)
    return np.minimum(rise_at_power(r, rr, n, x), rise_at_power(r2, rr2, n2, x))


def sink_heat_capacity(heatsinks: pd.DataFrame) -> np.ndarray:
    """Lumped thermal capacity of each heatsink.

    .. math:: C = m\\, c_p \\quad\\text{or}\\quad C = ρ\\, V c_p,\\;
              V = W L t_b + N t_f H_f L

    Parameters
    ----------
    heatsinks : DataFrame
        mass [kg] (optional), material, and the geometry [m] (length, width,
        base_thickness, fin_height, fin_count, fin_thickness).

    Returns
    -------
    ndarray
        [J/K], one per row; NaN when neither mass nor complete geometry is given.

    Notes
    -----
    Mass × c_p when the mass is given, else the metal volume of the extrusion × density ×
    c_p. Material from :func:`material_for` (aluminium: ρ = 2700 kg/m³, c_p ≈ 900
    J/(kg·K); copper 8960 kg/m³, 385 J/(kg·K); from memory). A lumped capacity assumes
    the sink is isothermal (Biot number ≪ 1), good for aluminium extrusions a few mm
    thick; the sink's time constant is then R·C (minutes).
    """
    n_rows = len(heatsinks)
    out = np.full(n_rows, np.nan)

    def column(name: str) -> np.ndarray:
        if name in heatsinks:
            return pd.to_numeric(heatsinks[name], errors="coerce").to_numpy(dtype=float)
        return np.full(n_rows, np.nan)

    mats = [
        material_for(m)[0]
        for m in (heatsinks["material"] if "material" in heatsinks else [None] * n_rows)
    ]
    cp = np.array([m.heat_capacity for m in mats], dtype=float)
    rho = np.array([m.density for m in mats], dtype=float)
    mass = column("mass")
    g = {c: column(c) for c in _GEOMETRY_COLUMNS}
    volume = (
        g["width"] * g["length"] * g["base_thickness"]
        + g["fin_count"] * g["fin_thickness"] * g["fin_height"] * g["length"]
    )
    has_mass = np.isfinite(mass) & (mass > 0)
    out = np.where(
        has_mass,
        mass * cp,
        np.where(np.isfinite(volume) & (volume > 0), volume * rho * cp, out),
    )
    return out
