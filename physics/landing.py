"""Landing at the destination: landing distance from 50 ft, the dispatch factors, approach and
landing climb, and the landing-mass limit of a runway direction.

Landing distance (actual, 14 CFR 25.125 in outline)
---------------------------------------------------
From the 50 ft screen at the reference speed VREF = 1.23 V_SR0 (the 1-g stall speed with
landing flaps, 25.125(b)(2)(i)) to a full stop, in three parts, no reverse thrust credited:

1. **Airborne.** A straight approach at the angle θ (3°, the usual glide path) down to the
   flare height, then a circular flare of radius R = VREF²/(g (n − 1)) at the load factor
   n = 1.2 to touchdown:

       h_f = R (1 − cos θ),  S_air = (h_screen − h_f)/tan θ + R sin θ   (h_f < h_screen)
       S_air = sqrt(R² − (R − h_screen)²)                                 (otherwise)

   measured in the air mass and carried over the ground at the ground speed: × (VREF − w)/VREF
   with w the headwind component (negative: tailwind). The speed is held at VREF through
   the flare and the aircraft touches down at V_TD = 1.15 V_SR0.
2. **Free roll.** ``t_fr`` seconds at the touchdown ground speed before the brakes and lift
   dumpers act (about 1 s for small aircraft, 3 s for large ones):
   S_fr = (V_TD − w) t_fr.
3. **Braking.** From V_TD to rest with the runway's braking friction μ_b
   (:mod:`physics.friction`), lift dumpers deployed (``landing_braking_cl``), landing flaps
   and gear down (C_D = C_D0,clean + ΔC_D0,gear + ΔC_D0,landing flaps + ΔC_D,braking +
   φ K C_L²), all engines at forward idle (``idle_thrust_fraction`` of takeoff thrust; for
   propeller types the static idle thrust held over the whole roll, an upper bound):
   a(V) = T_idle(V)/m − g (μ_b cos γ + sin γ) − ½ ρ S (C_D − μ_b C_L) V²/m, integrated in
   closed form (:func:`physics.groundrun.segment_distance_quadratic_m`).

Required landing distance (dispatch)
------------------------------------
The common operating rule for dispatch: the aircraft must be able to stop within a share
of the landing distance available (LDA) — 60 % on a dry runway for turbojets (14 CFR
121.195(b)), 70 % for turbopropeller aircraft where the operator uses that rule (14 CFR
121.195(c) for alternates; EASA CAT.POL.A.230(a)(2) for destinations, from memory) — and a
wet runway needs 115 % of the dry figure (14 CFR 121.195(d)). Here, on a wet runway the
required distance is the greater of 1.15 × the dry required distance and the distance
with the wet runway's own braking friction under the same share (our choice: a wet grass
or gravel strip brakes far worse than 15 % allows for).

Approach and landing climb
--------------------------
* **Approach climb** (14 CFR 25.121(d)): one engine inoperative, the others at go-around
  (takeoff) thrust, approach flaps, gear up: gradient at least 2.1 / 2.4 / 2.7 % for two /
  three / four engines. The approach configuration is taken as the takeoff one (approach
  flaps are usually one of the takeoff settings: ``cl_max_takeoff``,
  ``cd0_takeoff_flaps``, ``engine_out_drag_cd``, no ground effect) at the speed
  ``v2_over_vs`` × V_S (≤ 1.4 V_SR as the rule asks). Single-engine types: no such rule.
* **Landing climb** (14 CFR 25.119): all engines at go-around thrust (the thrust 8 s after
  advancing the levers from flight idle is taken as full takeoff thrust: optimistic for
  slow-spooling engines), landing flaps, gear down, at VREF: gradient at least 3.2 %.

In both, the speed is a fixed multiple of the stall speed, so C_L is the same at every mass
and D/W = C_D/C_L does not depend on the mass: sin γ = T(V)/W − C_D/C_L. With V = k √m the
climb-limited mass is found in closed form (:func:`climb_limited_mass_kg`). The climbs are
computed at the destination's pressure and temperature (a planning simplification as for
the takeoff climb).

The landing-mass limit of a runway direction (:func:`landing_mass_limit`) is the least of the
maximum landing mass, the landing-distance limit (largest mass whose required landing
distance fits the LDA) and the two climb limits; its factor is named from
:data:`LANDING_FACTORS`. A runway direction without an LDA gets no landing check at all
(``not_checked``), never a guessed length.

References
----------
.. [1] 14 CFR Part 25, §25.125 (landing distance from 50 ft, VREF ≥ 1.23 V_SR0), §25.119
   (landing climb, 3.2 %), §25.121(d) (approach climb, 2.1 / 2.4 / 2.7 %); EASA CS-25 the
   same in these numbers.
.. [2] 14 CFR Part 121, §121.195(b) (60 % of the effective length, turbine aeroplanes),
   (c) (70 %, turbopropeller aeroplanes, alternates), (d) (wet: 115 %).
.. [3] EASA Air OPS, CAT.POL.A.230 (landing, dry runways: 60 % jets, 70 % turboprops) and
   CAT.POL.A.235 (wet runways: 115 %); paragraph numbers from memory.
.. [4] D. P. Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, §17.9 (landing
   analysis: approach angle about 3°, flare at n ≈ 1.2 with R = V²/(0.2 g), touchdown
   at 1.15 V_stall, free roll 1 … 3 s, braking roll; section number and figures from memory).
.. [5] J. D. Anderson, *Aircraft Performance and Design*, McGraw-Hill, 1999, §6.8
   (landing performance: approach, flare, ground roll).
"""

from __future__ import annotations

import math
from dataclasses import dataclass
from typing import NamedTuple

import numpy as np

from fieldlimits.physics import constants as c

#: Limiting factors of a landing-mass limit, in code order (index = code; append, never
#: renumber).
LANDING_FACTORS: tuple[str, ...] = (
    "max_landing_mass",   # the structural maximum landing mass is reached
    "landing_distance",   # the required landing distance fills the LDA
    "approach_climb",     # approach climb, one engine inoperative (25.121(d))
    "landing_climb",      # landing climb, all engines (25.119)
    "no_landing",         # a requirement fails even at the operating empty mass
    "not_checked",        # no landing distance available given: no landing check
    "crosswind_limit",    # reliability rows: days lost to the crosswind limit
    "tailwind_limit",     # reliability rows: days lost to the tailwind limit
)

#: VREF / V_SR0, the least reference speed of 14 CFR 25.125(b)(2)(i). [–]
VREF_OVER_VSR0 = 1.23
#: Touchdown speed / V_SR0 (Raymer §17.9, from memory). [–]
TOUCHDOWN_OVER_VSR0 = 1.15
#: Approach angle (the usual 3° glide path; Raymer §17.9). [deg]
APPROACH_ANGLE_DEG = 3.0
#: Load factor in the flare (Raymer §17.9, from memory). [–]
FLARE_LOAD_FACTOR = 1.2
#: Screen height of the landing distance, 50 ft (14 CFR 25.125(a)). [m]
LANDING_SCREEN_HEIGHT_M = c.SCREEN_HEIGHT_50FT_M
#: Minimum approach-climb gradient by engine count, 14 CFR 25.121(d). [–]
APPROACH_CLIMB_MIN_GRADIENT = {2: 0.021, 3: 0.024, 4: 0.027}
#: Minimum landing-climb gradient, all engines, 14 CFR 25.119. [–]
LANDING_CLIMB_MIN_GRADIENT = 0.032
#: Share of the LDA a dry-runway landing may use, turbojets, 14 CFR 121.195(b). [–]
DRY_SHARE_TURBOJET = 0.6
#: The same for turbopropeller aeroplanes under the 70 % rule, 14 CFR 121.195(c). [–]
DRY_SHARE_TURBOPROP = 0.7
#: Increase of the required landing distance on a wet runway, 14 CFR 121.195(d). [–]
WET_INCREASE = 0.15

_PROPELLER = 2  # physics.thrust.MODEL_CODES["propeller"]


def factor_code(name):
    """Integer code of a landing limiting-factor name.

    Parameters
    ----------
    name : str
        One of :data:`LANDING_FACTORS`. [text]

    Returns
    -------
    int
        Its index in :data:`LANDING_FACTORS`. [–]

    Notes
    -----
    Bookkeeping only (no equation); ``ValueError`` names the known factors.

    References
    ----------
    .. [1] This module's docstring.
    """
    try:
        return LANDING_FACTORS.index(name)
    except ValueError:
        raise ValueError(f"unknown landing factor {name!r}; expected one of {LANDING_FACTORS}") from None


def factor_name(codes):
    """Names of landing limiting-factor codes.

    Parameters
    ----------
    codes : array_like of int
        Codes of :data:`LANDING_FACTORS`. [–]

    Returns
    -------
    numpy.ndarray
        Object array of names (a 0-d array for a scalar). [text]

    Notes
    -----
    Bookkeeping only (no equation).

    References
    ----------
    .. [1] This module's docstring.
    """
    return np.array(LANDING_FACTORS, dtype=object)[np.asarray(codes, dtype=int)]


@dataclass(frozen=True)
class LandingConfig:
    """Landing configuration of a type (arrays broadcastable to the cases; SI).

    Attributes
    ----------
    cl_max_landing : array_like
        Maximum lift coefficient with landing flaps (sets V_SR0 and VREF). [–]
    cd0_landing_flaps : array_like
        Zero-lift drag increment of the landing flaps. [–]
    landing_braking_cl : array_like
        Lift coefficient in the braking roll (landing flaps, lift dumpers deployed). [–]
    landing_free_roll_s : array_like
        Time from touchdown to full braking. [s]
    """

    cl_max_landing: np.ndarray | float
    cd0_landing_flaps: np.ndarray | float
    landing_braking_cl: np.ndarray | float
    landing_free_roll_s: np.ndarray | float


LANDING_FIELDS: tuple[str, ...] = ("cl_max_landing", "cd0_landing_flaps", "landing_braking_cl",
                                   "landing_free_roll_s")
"""Fields of :class:`LandingConfig` (the SI columns of ``aircraft_types`` they come from)."""


@dataclass(frozen=True)
class LandingSite:
    """Runway direction and day of a landing (arrays broadcastable to the cases; SI).

    Attributes
    ----------
    lda_m : array_like
        Landing distance available; NaN: no landing check. [m]
    slope : array_like
        Gradient in the landing direction, rise over run, + uphill. [–]
    mu_brake : array_like
        Braking friction of the runway in its condition. [–]
    mu_brake_dry : array_like
        Braking friction of the same runway dry (used for wet cases). [–]
    wet : array_like
        1 (True) for a wet runway, 0 for dry. [–]
    pressure_pa : array_like
        Station pressure. [Pa]
    temperature_k : array_like
        Outside air temperature. [K]
    headwind_mps : array_like
        Headwind component, already factored (50 % head, 150 % tail; negative: tailwind). [m/s]
    """

    lda_m: np.ndarray | float
    slope: np.ndarray | float
    mu_brake: np.ndarray | float
    mu_brake_dry: np.ndarray | float
    wet: np.ndarray | float
    pressure_pa: np.ndarray | float
    temperature_k: np.ndarray | float
    headwind_mps: np.ndarray | float = 0.0


def _f(x):
    return np.asarray(x, dtype=float)


# ---------------------------------------------------------------------------------------------
# Rules


def dispatch_share(thrust_model, jet_share=DRY_SHARE_TURBOJET, turboprop_share=DRY_SHARE_TURBOJET):
    """Share of the LDA that the dry landing distance may use, by thrust model.

    Parameters
    ----------
    thrust_model : array_like of int
        ``physics.thrust.MODEL_CODES`` (``propeller`` = 2: turbopropeller and piston types). [–]
    jet_share : float, optional
        Share for jets (``turbofan``, ``quadratic``); 0.6 by 14 CFR 121.195(b). [–]
    turboprop_share : float, optional
        Share for propeller types; 0.6 by default, 0.7 where the operator uses the 70 %
        rule (14 CFR 121.195(c)). [–]

    Returns
    -------
    numpy.ndarray
        The share per case. [–]

    Notes
    -----
    required = actual / share (dry runway).

    References
    ----------
    .. [2] 14 CFR 121.195(b), (c). .. [3] EASA CAT.POL.A.230 (from memory).
    """
    model = np.asarray(thrust_model)
    return np.where(model == _PROPELLER, float(turboprop_share), float(jet_share))


def required_landing_distance_m(dry_distance_m, share, *, wet=False, wet_distance_m=np.nan,
                                wet_increase=WET_INCREASE):
    """Required landing distance under the dispatch rule.

    Parameters
    ----------
    dry_distance_m : array_like
        Actual landing distance from 50 ft with the dry runway's braking friction. [m]
    share : array_like
        Share of the LDA the dry distance may use (:func:`dispatch_share`). [–]
    wet : array_like of bool, optional
        Wet runway. [–]
    wet_distance_m : array_like, optional
        Actual landing distance with the wet runway's braking friction (wet cases). [m]
    wet_increase : float, optional
        Wet-runway increase of the required distance (0.15 by 14 CFR 121.195(d)). [–]

    Returns
    -------
    numpy.ndarray
        Required landing distance: ``dry / share`` on a dry runway; on a wet one the greater
        of ``(1 + wet_increase) × dry / share`` and ``wet / share``. [m]

    Notes
    -----
    D_req,dry = D_dry / s; D_req,wet = max((1 + i) D_dry / s, D_wet / s).

    References
    ----------
    .. [2] 14 CFR 121.195(b), (d).
    """
    dry = _f(dry_distance_m) / _f(share)
    wet_req = np.fmax((1.0 + float(wet_increase)) * dry, _f(wet_distance_m) / _f(share))
    wet_req = np.where(np.isnan(dry), np.nan, wet_req)
    return np.where(np.asarray(wet, dtype=bool), wet_req, dry)


def approach_climb_required_gradient(engine_count):
    """Minimum approach-climb gradient, one engine inoperative.

    Parameters
    ----------
    engine_count : array_like
        Number of engines. [–]

    Returns
    -------
    numpy.ndarray or float
        0.021 / 0.024 / 0.027 for two / three / four or more engines; NaN for a single
        engine (no engine-out approach climb). [–]

    Notes
    -----
    Piecewise by engine count n: 0.021 (n = 2), 0.024 (n = 3), 0.027 (n ≥ 4).

    References
    ----------
    .. [1] 14 CFR 25.121(d)(1).
    """
    n = np.rint(_f(engine_count))
    out = np.select([n == 2, n == 3, n >= 4],
                    [APPROACH_CLIMB_MIN_GRADIENT[2], APPROACH_CLIMB_MIN_GRADIENT[3],
                     APPROACH_CLIMB_MIN_GRADIENT[4]], np.nan)
    return float(out) if out.ndim == 0 else out


def landing_climb_required_gradient(engine_count):
    """Minimum landing-climb gradient, all engines.

    Parameters
    ----------
    engine_count : array_like
        Number of engines. [–]

    Returns
    -------
    numpy.ndarray or float
        0.032 for every aircraft with at least one engine; NaN otherwise. [–]

    Notes
    -----
    gradient ≥ 0.032 in the landing configuration at VREF.

    References
    ----------
    .. [1] 14 CFR 25.119(a).
    """
    n = _f(engine_count)
    out = np.where(n >= 1, LANDING_CLIMB_MIN_GRADIENT, np.nan)
    return float(out) if out.ndim == 0 else out


# ---------------------------------------------------------------------------------------------
# Speeds and distances


def stall_speed_landing_mps(mass_kg, density_kg_m3, wing_area_m2, cl_max_landing):
    """1-g stall speed with landing flaps, V_SR0 (true airspeed).

    Parameters
    ----------
    mass_kg : array_like
        Mass. [kg]
    density_kg_m3 : array_like
        Air density. [kg/m³]
    wing_area_m2 : array_like
        Reference wing area. [m²]
    cl_max_landing : array_like
        Maximum lift coefficient with landing flaps. [–]

    Returns
    -------
    numpy.ndarray
        V_SR0 = sqrt(2 m g / (rho S C_Lmax,landing)). [m/s]

    Notes
    -----
    Lift equals weight at C_Lmax.

    References
    ----------
    .. [5] Anderson (1999), Eq. 5.67.
    """
    return np.sqrt(2.0 * _f(mass_kg) * c.G0 / (_f(density_kg_m3) * _f(wing_area_m2) * _f(cl_max_landing)))


def flare_radius_m(speed_mps, flare_load_factor=FLARE_LOAD_FACTOR):
    """Radius of the circular flare at a speed and load factor.

    Parameters
    ----------
    speed_mps : array_like
        Speed in the flare (VREF), true airspeed. [m/s]
    flare_load_factor : float, optional
        Load factor in the flare, > 1. [–]

    Returns
    -------
    numpy.ndarray
        R = V²/(g (n − 1)). [m]

    Notes
    -----
    Centripetal acceleration V²/R = (n − 1) g.

    References
    ----------
    .. [4] Raymer, §17.9 (R = V_f²/(0.2 g) at n = 1.2; from memory).
    """
    v = _f(speed_mps)
    return v * v / (c.G0 * (float(flare_load_factor) - 1.0))


def flare_height_m(radius_m, approach_angle_deg=APPROACH_ANGLE_DEG):
    """Height at which the flare begins: where the circular arc meets the approach path.

    Parameters
    ----------
    radius_m : array_like
        Flare radius. [m]
    approach_angle_deg : float, optional
        Approach path angle. [deg]

    Returns
    -------
    numpy.ndarray
        h_f = R (1 − cos θ). [m]

    Notes
    -----
    Geometry of a circle tangent to the approach path and to the runway.

    References
    ----------
    .. [4] Raymer, §17.9 (from memory).
    """
    return _f(radius_m) * (1.0 - math.cos(math.radians(float(approach_angle_deg))))


def airborne_distance_m(vref_mps, headwind_mps=0.0, *, screen_height_m=LANDING_SCREEN_HEIGHT_M,
                        approach_angle_deg=APPROACH_ANGLE_DEG, flare_load_factor=FLARE_LOAD_FACTOR):
    """Ground distance from the 50 ft screen to touchdown: straight approach and circular flare.

    Parameters
    ----------
    vref_mps : array_like
        Approach and flare speed (VREF), true airspeed. [m/s]
    headwind_mps : array_like, optional
        Headwind component (negative: tailwind). [m/s]
    screen_height_m : float, optional
        Screen height, 50 ft. [m]
    approach_angle_deg : float, optional
        Approach path angle. [deg]
    flare_load_factor : float, optional
        Load factor in the flare, > 1. [–]

    Returns
    -------
    numpy.ndarray
        Airborne ground distance. [m]

    Notes
    -----
    R = V²/(g (n − 1)), h_f = R (1 − cos θ); S = (h − h_f)/tan θ + R sin θ for h_f < h,
    else S = sqrt(R² − (R − h)²) (the flare begins at the screen); ground distance
    S (V − w)/V.

    References
    ----------
    .. [4] Raymer, §17.9 (approach and flare; from memory).
    .. [5] Anderson (1999), §6.8.
    """
    v = _f(vref_mps)
    theta = math.radians(float(approach_angle_deg))
    h = float(screen_height_m)
    radius = flare_radius_m(v, flare_load_factor)
    flare_h = flare_height_m(radius, approach_angle_deg)
    straight = (h - flare_h) / math.tan(theta) + radius * math.sin(theta)
    with np.errstate(invalid="ignore"):
        short = np.sqrt(np.maximum(radius * radius - (radius - h) ** 2, 0.0))
    air = np.where(flare_h < h, straight, short)
    return air * (v - _f(headwind_mps)) / v


def free_roll_distance_m(touchdown_mps, headwind_mps=0.0, free_roll_s=0.0):
    """Ground distance rolled at the touchdown speed before braking.

    Parameters
    ----------
    touchdown_mps : array_like
        Touchdown speed, true airspeed. [m/s]
    headwind_mps : array_like, optional
        Headwind component (negative: tailwind). [m/s]
    free_roll_s : array_like, optional
        Time from touchdown to full braking. [s]

    Returns
    -------
    numpy.ndarray
        S_fr = (V_TD − w) t_fr. [m]

    Notes
    -----
    Constant speed over the interval (the deceleration before braking is neglected).

    References
    ----------
    .. [4] Raymer, §17.9 (free roll 1 … 3 s; from memory).
    """
    return (_f(touchdown_mps) - _f(headwind_mps)) * _f(free_roll_s)


class BrakingTerms(NamedTuple):
    """Mass-independent terms of the braking roll (:func:`braking_terms`)."""

    t0_n: np.ndarray              # idle thrust, constant term [N]
    t1_n_per_mps: np.ndarray      # linear term [N/(m/s)]
    t2_n_per_mps2: np.ndarray     # quadratic term [N/(m/s)²]
    drag_term_kg_m: np.ndarray    # ½ rho S (C_D − mu C_L) [kg/m]
    resistance_mps2: np.ndarray   # g (mu cos γ + sin γ) [m/s²]


def braking_terms(aircraft, config, *, density_kg_m3, pressure_pa, temperature_k, mu_brake, slope):
    """Mass-independent terms of the landing braking roll.

    Parameters
    ----------
    aircraft : physics.weightlimit.Aircraft
        Type fields (drag, span, wing height, thrust, ``idle_thrust_fraction``,
        ``braking_cd_increment``).
    config : LandingConfig
        Landing configuration (``cd0_landing_flaps``, ``landing_braking_cl``). [–]
    density_kg_m3 : array_like
        Air density. [kg/m³]
    pressure_pa : array_like
        Station pressure. [Pa]
    temperature_k : array_like
        Outside air temperature. [K]
    mu_brake : array_like
        Braking friction. [–]
    slope : array_like
        Gradient in the landing direction, + uphill. [–]

    Returns
    -------
    BrakingTerms
        Idle thrust polynomial [N, N/(m/s), N/(m/s)²], drag term [kg/m], resistance [m/s²].

    Notes
    -----
    C_D = C_D0,clean + ΔC_D0,gear + ΔC_D0,landing flaps + ΔC_D,braking + φ K C_L,b²
    (Anderson Eqs. 6.77–6.78); m a = T_idle(V) − m g (μ cos γ + sin γ) − ½ ρ S (C_D − μ C_L) V².
    Propeller types: the static idle thrust for the whole roll (an upper bound of
    min(T_s, η P/V), so the distance is not underestimated).

    References
    ----------
    .. [4] Raymer, §17.9. .. [5] Anderson (1999), §6.8, Eqs. 6.77–6.78.
    """
    from fieldlimits.physics import aerodynamics, groundrun, thrust

    a, lc = aircraft, config
    k = aerodynamics.induced_drag_factor(a.oswald_efficiency,
                                         aerodynamics.aspect_ratio(a.wing_span_m, a.wing_area_m2))
    phi = aerodynamics.ground_effect_factor(a.wing_height_m, a.wing_span_m)
    cd0 = _f(a.cd0_clean) + _f(a.cd0_gear) + _f(lc.cd0_landing_flaps) + _f(a.braking_cd_increment)
    cl = _f(lc.landing_braking_cl)
    cd = aerodynamics.drag_coefficient(cd0, k, cl, phi)
    mu = _f(mu_brake)
    law = thrust.thrust_law_for_aircraft(a, pressure_pa, temperature_k, throttle=a.idle_thrust_fraction)
    sin_g, cos_g = groundrun.slope_sin_cos(slope)
    return BrakingTerms(_f(law.t0_n), _f(law.t1_n_per_mps), _f(law.t2_n_per_mps2),
                        0.5 * _f(density_kg_m3) * _f(a.wing_area_m2) * (cd - mu * cl),
                        c.G0 * (mu * cos_g + sin_g))


def braking_distance_m(terms, *, mass_kg, touchdown_mps, headwind_mps=0.0):
    """Braking ground roll from the touchdown speed to rest, closed form.

    Parameters
    ----------
    terms : BrakingTerms
        From :func:`braking_terms`. [N, N/(m/s), N/(m/s)², kg/m, m/s²]
    mass_kg : array_like
        Mass. [kg]
    touchdown_mps : array_like
        Speed at the start of braking, true airspeed. [m/s]
    headwind_mps : array_like, optional
        Headwind component (negative: tailwind; the roll ends at airspeed w). [m/s]

    Returns
    -------
    numpy.ndarray
        Ground distance; NaN where idle thrust and slope outweigh the braking (no stop). [m]

    Notes
    -----
    a(V) = a0 + a1 V + a2 V², a0 = T0/m − g (μ cos γ + sin γ), a1 = T1/m,
    a2 = T2/m − ½ρS(C_D − μC_L)/m (+ for V < 0, reverse flow in a tailwind); s = ∫ (V − w)/a dV
    from V_TD to w (:func:`physics.groundrun.segment_distance_quadratic_m`).

    References
    ----------
    .. [5] Anderson (1999), Eq. 6.90 (the closed form for a = A − B V²).
    """
    from fieldlimits.physics import groundrun

    m = _f(mass_kg)
    w = _f(headwind_mps)
    a0 = terms.t0_n / m - terms.resistance_mps2
    a1 = terms.t1_n_per_mps / m
    t2m = terms.t2_n_per_mps2 / m
    aero = terms.drag_term_kg_m / m
    reverse = (t2m + aero) if np.any(w < 0.0) else None
    return groundrun.segment_distance_quadratic_m(a0, a1, t2m - aero, touchdown_mps, w, w, a2_reverse=reverse)


def braking_deceleration_mps2(terms, *, mass_kg, airspeed_mps):
    """Deceleration of the braking roll at an airspeed (positive when slowing down).

    Parameters
    ----------
    terms : BrakingTerms
        From :func:`braking_terms`. [N, N/(m/s), N/(m/s)², kg/m, m/s²]
    mass_kg : array_like
        Mass. [kg]
    airspeed_mps : array_like
        True airspeed (≥ 0). [m/s]

    Returns
    -------
    numpy.ndarray
        −a(V) = g (μ cos γ + sin γ) + ½ρS(C_D − μC_L) V²/m − T_idle(V)/m. [m/s²]

    Notes
    -----
    The equation of motion of :func:`braking_distance_m` at one speed.

    References
    ----------
    .. [5] Anderson (1999), Eq. 6.85.
    """
    m = _f(mass_kg)
    v = _f(airspeed_mps)
    thrust_n = terms.t0_n + (terms.t1_n_per_mps + terms.t2_n_per_mps2 * v) * v
    return terms.resistance_mps2 + terms.drag_term_kg_m * v * v / m - thrust_n / m


class LandingDistance(NamedTuple):
    """Parts of an actual landing distance (arrays)."""

    vsr0_mps: np.ndarray         # 1-g stall speed, landing flaps (TAS) [m/s]
    vref_mps: np.ndarray         # reference speed at 50 ft (TAS) [m/s]
    touchdown_mps: np.ndarray    # touchdown speed (TAS) [m/s]
    airborne_m: np.ndarray       # 50 ft to touchdown [m]
    free_roll_m: np.ndarray      # touchdown to full braking [m]
    braking_m: np.ndarray        # braking to rest [m]
    distance_m: np.ndarray       # total [m]


class _Prepared(NamedTuple):
    """Mass-independent parts of the landing cases."""

    rho: np.ndarray
    stall_per_root_mass: np.ndarray   # V_SR0 / sqrt(m) [m/s/√kg]
    headwind: np.ndarray
    free_roll_s: np.ndarray
    brake: BrakingTerms               # the case's own friction
    brake_dry: BrakingTerms | None    # dry friction, wet cases only (None: no wet case)
    wet: np.ndarray


def _prepare(aircraft, config, site):
    from fieldlimits.physics import atmosphere

    rho = _f(atmosphere.density_kg_m3(site.pressure_pa, site.temperature_k))
    per_root = np.sqrt(2.0 * c.G0 / (rho * _f(aircraft.wing_area_m2) * _f(config.cl_max_landing)))
    common = dict(density_kg_m3=rho, pressure_pa=site.pressure_pa, temperature_k=site.temperature_k,
                  slope=site.slope)
    brake = braking_terms(aircraft, config, mu_brake=site.mu_brake, **common)
    wet = np.asarray(site.wet, dtype=bool)
    brake_dry = braking_terms(aircraft, config, mu_brake=site.mu_brake_dry, **common) if np.any(wet) else None
    return _Prepared(rho, per_root, _f(site.headwind_mps), _f(config.landing_free_roll_s), brake, brake_dry, wet)


def _distance_parts(prep, mass_kg, terms):
    m = _f(mass_kg)
    vs = prep.stall_per_root_mass * np.sqrt(m)
    vref = VREF_OVER_VSR0 * vs
    vtd = TOUCHDOWN_OVER_VSR0 * vs
    air = airborne_distance_m(vref, prep.headwind)
    roll = free_roll_distance_m(vtd, prep.headwind, prep.free_roll_s)
    brake = braking_distance_m(terms, mass_kg=m, touchdown_mps=vtd, headwind_mps=prep.headwind)
    return LandingDistance(vs, vref, vtd, air, roll, brake, air + roll + brake)


def landing_distance(aircraft, config, site, mass_kg, *, dry=False):
    """Actual landing distance from 50 ft to a full stop and its parts.

    Parameters
    ----------
    aircraft : physics.weightlimit.Aircraft
        Type fields.
    config : LandingConfig
        Landing configuration (C_Lmax, flap drag, braking C_L [–]; free roll [s]).
    site : LandingSite
        Runway direction and day (``lda_m`` not used here).
    mass_kg : array_like
        Landing mass. [kg]
    dry : bool, optional
        Use the runway's dry braking friction (``site.mu_brake_dry``) instead of its own. [–]

    Returns
    -------
    LandingDistance
        V_SR0, VREF, touchdown speed [m/s]; airborne, free-roll, braking and total distance
        [m] (NaN where the aircraft cannot stop).

    Notes
    -----
    D = S_air(VREF) + S_fr(V_TD) + S_brake(V_TD → 0) with VREF = 1.23 V_SR0 and
    V_TD = 1.15 V_SR0 (module docstring).

    References
    ----------
    .. [1] 14 CFR 25.125. .. [4] Raymer, §17.9.
    """
    if dry:
        site = LandingSite(site.lda_m, site.slope, site.mu_brake_dry, site.mu_brake_dry, 0.0,
                           site.pressure_pa, site.temperature_k, site.headwind_mps)
    prep = _prepare(aircraft, config, site)
    return _distance_parts(prep, mass_kg, prep.brake)


def _required(prep, mass_kg, share, wet_increase):
    own = _distance_parts(prep, mass_kg, prep.brake).distance_m
    if prep.brake_dry is None:
        return own / share
    dry = _distance_parts(prep, mass_kg, prep.brake_dry).distance_m
    return required_landing_distance_m(np.where(prep.wet, dry, own), share, wet=prep.wet, wet_distance_m=own,
                                       wet_increase=wet_increase)


def required_distance_m(aircraft, config, site, mass_kg, *, share, wet_increase=WET_INCREASE):
    """Required landing distance at a mass under the dispatch rule.

    Parameters
    ----------
    aircraft : physics.weightlimit.Aircraft
        Type fields.
    config : LandingConfig
        Landing configuration (C_Lmax, flap drag, braking C_L [–]; free roll [s]).
    site : LandingSite
        Runway direction and day.
    mass_kg : array_like
        Landing mass. [kg]
    share : array_like
        Share of the LDA the dry distance may use (:func:`dispatch_share`). [–]
    wet_increase : float, optional
        Wet increase (0.15). [–]

    Returns
    -------
    numpy.ndarray
        Required landing distance (:func:`required_landing_distance_m`). [m]

    Notes
    -----
    D_req = D(μ_dry)/s dry; max((1 + i) D(μ_dry)/s, D(μ_wet)/s) wet.

    References
    ----------
    .. [2] 14 CFR 121.195(b), (d).
    """
    prep = _prepare(aircraft, config, site)
    return _required(prep, mass_kg, _f(share), wet_increase)


# ---------------------------------------------------------------------------------------------
# Climb


def climb_limited_mass_kg(thrust_law, *, speed_per_root_mass, lift_coefficient, drag_coefficient,
                          required_gradient):
    """Largest mass meeting a climb gradient at a speed proportional to the stall speed.

    Parameters
    ----------
    thrust_law : physics.thrust.ThrustLaw
        Thrust of the engines operating in the climb.
    speed_per_root_mass : array_like
        k with the climb speed V = k sqrt(m) (true airspeed). [m/(s √kg)]
    lift_coefficient : array_like
        C_L in the climb (the same at every mass). [–]
    drag_coefficient : array_like
        C_D in the climb. [–]
    required_gradient : array_like
        Minimum gradient (rise over run); NaN: no requirement. [–]

    Returns
    -------
    numpy.ndarray
        The mass where the gradient equals the requirement; +inf where it is met at every
        mass or there is no requirement; NaN for invalid input. [kg]

    Notes
    -----
    sin γ = T(V)/(m g) − C_D/C_L = s, s = G/sqrt(1 + G²) for the gradient G; with r = s + C_D/C_L
    and u = √m: polynomial thrust T = t0 + t1 k u + t2 k² u² gives A u² − B u − t0 = 0,
    A = r g − t2 k², B = t1 k, u = (B + √(B² + 4 A t0))/(2A) (written without cancellation);
    propeller T = min(t0, P/V): m = t0/(r g) on the static branch (V ≤ P/t0), else
    m = (P/(k r g))^(2/3). T/W falls with the mass on both, so the root is the limit.

    References
    ----------
    .. [4] Raymer, §17.3 (steady climb, sin γ = T/W − D/W).
    .. [5] Anderson (1999), §5.3.
    """
    grad = _f(required_gradient)
    k = _f(speed_per_root_mass)
    s = grad / np.sqrt(1.0 + grad * grad)
    r = s + _f(drag_coefficient) / _f(lift_coefficient)
    t0, t1, t2 = _f(thrust_law.t0_n), _f(thrust_law.t1_n_per_mps), _f(thrust_law.t2_n_per_mps2)
    with np.errstate(divide="ignore", invalid="ignore"):
        a = r * c.G0 - t2 * k * k
        b = t1 * k
        d = np.sqrt(b * b + 4.0 * a * t0)
        u = np.where(b >= 0.0, (b + d) / (2.0 * a), 2.0 * t0 / (d - b))
        poly = np.where(a > 0.0, u * u, np.inf)
        p = _f(thrust_law.propeller_power_w)
        static = t0 / (r * c.G0)
        power = np.cbrt(p / (k * r * c.G0)) ** 2
        prop = np.where(k * np.sqrt(static) <= p / t0, static, power)
    out = np.where(np.asarray(thrust_law.is_propeller, dtype=bool), prop, poly)
    out = np.where(r <= 0.0, np.inf, out)
    return np.where(np.isnan(grad), np.inf, out)


def _induced(aircraft):
    from fieldlimits.physics import aerodynamics

    return aerodynamics.induced_drag_factor(aircraft.oswald_efficiency,
                                            aerodynamics.aspect_ratio(aircraft.wing_span_m, aircraft.wing_area_m2))


class ClimbSetup(NamedTuple):
    """Climb configuration of one requirement (arrays; mass-independent)."""

    thrust_law: object             # physics.thrust.ThrustLaw of the engines operating
    speed_per_root_mass: np.ndarray  # V = k √m [m/(s √kg)]
    lift_coefficient: np.ndarray   # [–]
    drag_coefficient: np.ndarray   # [–]
    required_gradient: np.ndarray  # [–] (NaN: not applicable)


def approach_climb_setup(aircraft, *, pressure_pa, temperature_k):
    """Approach climb, one engine inoperative (14 CFR 25.121(d)): thrust, speed, C_L, C_D.

    Parameters
    ----------
    aircraft : physics.weightlimit.Aircraft
        Type fields.
    pressure_pa : array_like
        Station pressure. [Pa]
    temperature_k : array_like
        Outside air temperature. [K]

    Returns
    -------
    ClimbSetup
        N − 1 engines at takeoff rating; V = (V2/V_S) V_S with takeoff flaps; C_L =
        C_Lmax,TO/(V2/V_S)²; C_D gear up, takeoff flaps, engine-out increment, free air;
        the 25.121(d) minimum. [N, m/(s √kg), –, –, –]

    Notes
    -----
    C_D = C_D0,clean + ΔC_D0,TO flaps + ΔC_D,eo + K C_L²; V = k √m with
    k = (V2/V_S) sqrt(2 g/(ρ S C_Lmax,TO)).

    References
    ----------
    .. [1] 14 CFR 25.121(d). .. [4] Raymer, §17.3.
    """
    from fieldlimits.physics import atmosphere, climb

    a = aircraft
    rho = _f(atmosphere.density_kg_m3(pressure_pa, temperature_k))
    ratio = _f(a.v2_over_vs)
    k = ratio * np.sqrt(2.0 * c.G0 / (rho * _f(a.wing_area_m2) * _f(a.cl_max_takeoff)))
    cl = _f(a.cl_max_takeoff) / (ratio * ratio)
    cd = climb.climb_drag_coefficient(cd0_clean=a.cd0_clean, cd0_takeoff_flaps=a.cd0_takeoff_flaps,
                                      engine_out_drag_cd=a.engine_out_drag_cd, engine_count=a.engine_count,
                                      lift_coefficient=cl, induced_drag_factor=_induced(a))
    law = climb.climb_thrust_law(a, pressure_pa, temperature_k)
    return ClimbSetup(law, k, cl, cd, _f(approach_climb_required_gradient(a.engine_count)))


def landing_climb_setup(aircraft, config, *, pressure_pa, temperature_k):
    """Landing climb, all engines (14 CFR 25.119): thrust, speed, C_L, C_D.

    Parameters
    ----------
    aircraft : physics.weightlimit.Aircraft
        Type fields.
    config : LandingConfig
        Landing configuration (C_Lmax, flap drag, braking C_L [–]; free roll [s]).
    pressure_pa : array_like
        Station pressure. [Pa]
    temperature_k : array_like
        Outside air temperature. [K]

    Returns
    -------
    ClimbSetup
        All engines at takeoff rating; V = VREF = 1.23 V_SR0; C_L = C_Lmax,L/1.23²; C_D
        gear down, landing flaps, free air; 3.2 %. [N, m/(s √kg), –, –, –]

    Notes
    -----
    C_D = C_D0,clean + ΔC_D0,gear + ΔC_D0,landing flaps + K C_L².

    References
    ----------
    .. [1] 14 CFR 25.119. .. [4] Raymer, §17.3.
    """
    from fieldlimits.physics import atmosphere, thrust

    a, lc = aircraft, config
    rho = _f(atmosphere.density_kg_m3(pressure_pa, temperature_k))
    k = VREF_OVER_VSR0 * np.sqrt(2.0 * c.G0 / (rho * _f(a.wing_area_m2) * _f(lc.cl_max_landing)))
    cl = _f(lc.cl_max_landing) / VREF_OVER_VSR0 ** 2
    cd = _f(a.cd0_clean) + _f(a.cd0_gear) + _f(lc.cd0_landing_flaps) + _induced(a) * cl * cl
    law = thrust.thrust_law_for_aircraft(a, pressure_pa, temperature_k)
    return ClimbSetup(law, k, cl, cd, _f(landing_climb_required_gradient(a.engine_count)))


def climb_gradient_at(setup, mass_kg):
    """Gross climb gradient of a climb setup at a mass.

    Parameters
    ----------
    setup : ClimbSetup
        From :func:`approach_climb_setup` or :func:`landing_climb_setup` (thrust [N], speed
        per root mass [m/(s √kg)], C_L, C_D, gradient [–]).
    mass_kg : array_like
        Mass. [kg]

    Returns
    -------
    numpy.ndarray
        tan γ with sin γ = T(k √m)/(m g) − C_D/C_L. [–]

    Notes
    -----
    :func:`physics.climb.climb_gradient` at V = k √m.

    References
    ----------
    .. [4] Raymer, §17.3.
    """
    from fieldlimits.physics import climb

    m = _f(mass_kg)
    v = setup.speed_per_root_mass * np.sqrt(m)
    t = setup.thrust_law.thrust_n(np.broadcast_to(v, np.broadcast_shapes(np.shape(v), np.shape(setup.thrust_law.t0_n))))
    return climb.climb_gradient(thrust_n=t, mass_kg=m, drag_coefficient=setup.drag_coefficient,
                                lift_coefficient=setup.lift_coefficient)


def _setup_limit(setup):
    return climb_limited_mass_kg(setup.thrust_law, speed_per_root_mass=setup.speed_per_root_mass,
                                 lift_coefficient=setup.lift_coefficient,
                                 drag_coefficient=setup.drag_coefficient,
                                 required_gradient=setup.required_gradient)


# ---------------------------------------------------------------------------------------------
# The limit


def distance_limited_mass_kg(aircraft, config, site, *, share, wet_increase=WET_INCREASE, tol_kg=1.0,
                             prepared=None):
    """Largest landing mass whose required landing distance fits the LDA.

    Parameters
    ----------
    aircraft : physics.weightlimit.Aircraft
        Type fields (``oew_kg``, ``max_landing_mass_kg`` bound the search).
    config : LandingConfig
        Landing configuration (C_Lmax, flap drag, braking C_L [–]; free roll [s]).
    site : LandingSite
        Runway direction and day.
    share : array_like
        Share of the LDA the dry distance may use. [–]
    wet_increase : float, optional
        Wet increase. [–]
    tol_kg : float, optional
        Width of the final bracket. [kg]
    prepared : object, optional
        Mass-independent parts (internal).

    Returns
    -------
    numpy.ndarray
        The mass (the feasible end of the final bracket); the maximum landing mass where it
        fits there; NaN where it does not fit even at OEW, or there is no LDA. [kg]

    Notes
    -----
    g(x) = ln(D_req(e^x)/LDA) rises with x = ln m and is nearly linear in it (D ∝ m roughly),
    so regula falsi with the Illinois modification on [ln OEW, ln MLM] closes the bracket to
    ``tol_kg`` in a few steps; the cases still open are gathered each step (no Python loop
    over cases).

    References
    ----------
    .. [6] M. Dowell, P. Jarratt, "A modified regula falsi method for computing the root of an
       equation", BIT 11 (1971) 168–174 (the Illinois method).
    """
    prep = _prepare(aircraft, config, site) if prepared is None else prepared
    n = np.broadcast_shapes(np.shape(prep.rho), np.shape(_f(aircraft.oew_kg)), np.shape(_f(site.lda_m)),
                            np.shape(_f(share))) or (1,)
    b = lambda x: np.broadcast_to(_f(x), n).ravel()  # noqa: E731
    lda, share_b = b(site.lda_m), b(share)
    lo_m, hi_m = b(aircraft.oew_kg), b(aircraft.max_landing_mass_kg)
    sub = _PreparedTake(prep, n)

    def g(index, mass):
        req = _required(sub.take(index), mass, share_b[index], wet_increase)
        with np.errstate(divide="ignore", invalid="ignore"):
            out = np.log(req / lda[index])
        return np.where(np.isnan(out), np.inf, out)

    all_i = np.arange(lda.size)
    g_hi = g(all_i, hi_m)
    out = np.where(g_hi <= 0.0, hi_m, np.nan)
    open_i = np.flatnonzero(g_hi > 0.0)
    if open_i.size:
        g_lo = g(open_i, lo_m[open_i])
        ok = g_lo <= 0.0
        idx = open_i[ok]
        xl, xh = np.log(lo_m[idx]), np.log(hi_m[idx])
        gl, gh = g_lo[ok], g_hi[idx]
        gh = np.where(np.isfinite(gh), gh, 1.0)  # cannot stop at MLM: a finite stand-in end
        side = np.zeros(idx.size, dtype=np.int8)
        for _ in range(60):  # converges in a handful of steps; a bound, not a loop over cases
            active = np.flatnonzero(np.exp(xh) - np.exp(xl) > tol_kg)
            if active.size == 0:
                break
            al, ah, fl, fh = xl[active], xh[active], gl[active], gh[active]
            x = ah - fh * (ah - al) / (fh - fl)
            width = ah - al
            x = np.clip(x, al + 1e-3 * width, ah - 1e-3 * width)
            gx = g(idx[active], np.exp(x))
            good = gx <= 0.0
            gx = np.where(np.isfinite(gx), gx, 1.0)  # cannot stop there: a finite stand-in
            gi, bi = active[good], active[~good]
            xl[gi], gl[gi] = x[good], gx[good]
            gh[gi] = np.where(side[gi] == 1, 0.5 * gh[gi], gh[gi])  # Illinois: same side twice
            side[gi] = 1
            xh[bi], gh[bi] = x[~good], gx[~good]
            gl[bi] = np.where(side[bi] == -1, 0.5 * gl[bi], gl[bi])
            side[bi] = -1
        out[idx] = np.exp(xl)
    out = np.where(np.isnan(lda), np.nan, out)
    return out.reshape(n)


class _PreparedTake:
    """Subsets of the prepared arrays by case index (broadcast to the cases once)."""

    def __init__(self, prep, n):
        flat = lambda x: np.broadcast_to(_f(x), n).ravel()  # noqa: E731

        def terms(t):
            return None if t is None else BrakingTerms(*(flat(x) for x in t))

        self.prep = _Prepared(flat(prep.rho), flat(prep.stall_per_root_mass), flat(prep.headwind),
                              flat(prep.free_roll_s), terms(prep.brake), terms(prep.brake_dry),
                              np.broadcast_to(prep.wet, n).ravel())

    def take(self, index):
        p = self.prep

        def terms(t):
            return None if t is None else BrakingTerms(*(x.take(index) for x in t))

        wet = p.wet.take(index)
        return _Prepared(p.rho.take(index), p.stall_per_root_mass.take(index), p.headwind.take(index),
                         p.free_roll_s.take(index), terms(p.brake),
                         terms(p.brake_dry) if np.any(wet) else None, wet)


@dataclass(frozen=True)
class LandingLimit:
    """Landing-mass limit per case and the figures at that mass.

    Attributes
    ----------
    landing_limit_kg : numpy.ndarray
        Landing-mass limit; NaN for ``no_landing`` and ``not_checked``. [kg]
    limiting_factor : numpy.ndarray of int
        Code of :data:`LANDING_FACTORS`.
    distance_limited_kg, approach_climb_limited_kg, landing_climb_limited_kg : numpy.ndarray
        Each requirement's own limit, capped at the maximum landing mass; NaN where it is not
        met even at OEW (or not checked). [kg]
    landing_distance_m : numpy.ndarray
        Actual landing distance at the limit mass, the runway's own friction. [m]
    required_distance_m : numpy.ndarray
        Required landing distance at the limit mass (dispatch factors). [m]
    vref_mps : numpy.ndarray
        VREF at the limit mass, true airspeed. [m/s]
    approach_climb_gradient, landing_climb_gradient : numpy.ndarray
        Gradients at the limit mass (approach: NaN for single-engine types). [–]
    """

    landing_limit_kg: np.ndarray
    limiting_factor: np.ndarray
    distance_limited_kg: np.ndarray
    approach_climb_limited_kg: np.ndarray
    landing_climb_limited_kg: np.ndarray
    landing_distance_m: np.ndarray
    required_distance_m: np.ndarray
    vref_mps: np.ndarray
    approach_climb_gradient: np.ndarray
    landing_climb_gradient: np.ndarray


def landing_mass_limit(aircraft, config, site, *, share, wet_increase=WET_INCREASE, tol_kg=1.0, figures=True):
    """Landing-mass limit of runway directions: structural, distance and climb limits.

    Parameters
    ----------
    aircraft : physics.weightlimit.Aircraft
        Type fields (arrays over cases).
    config : LandingConfig
        Landing configuration, arrays over cases (C_Lmax, flap drag, braking C_L [–];
        free roll [s]).
    site : LandingSite
        Runway direction and day (arrays over cases); ``lda_m`` NaN: not checked.
    share : array_like
        Share of the LDA the dry distance may use (:func:`dispatch_share`). [–]
    wet_increase : float, optional
        Wet increase of the required distance (0.15). [–]
    tol_kg : float, optional
        Bracket of the distance limit. [kg]
    figures : bool, optional
        Compute the distances, VREF and gradients at the limit mass (else NaN). [–]

    Returns
    -------
    LandingLimit
        Limit [kg], factor code [-], each requirement's limit [kg] and the figures at the
        limit [m, m/s, –].

    Notes
    -----
    m_L = min(MLM, m_distance, m_approach climb, m_landing climb), the factor of the least
    (the structural one on a tie, then in the order of :data:`LANDING_FACTORS`); a
    requirement below OEW gives ``no_landing``.

    References
    ----------
    .. [1] 14 CFR 25.119, 25.121(d), 25.125. .. [2] 14 CFR 121.195.
    """
    a = aircraft
    n = np.broadcast_shapes(*(np.shape(_f(x)) for x in (site.lda_m, site.pressure_pa, site.temperature_k,
                                                        site.headwind_mps, a.oew_kg, config.cl_max_landing,
                                                        site.mu_brake, share))) or (1,)
    b = lambda x: np.broadcast_to(_f(x), n)  # noqa: E731
    oew, mlm, lda = b(a.oew_kg), b(a.max_landing_mass_kg), b(site.lda_m)
    prep = _prepare(a, config, site)
    m_dist = distance_limited_mass_kg(a, config, site, share=share, wet_increase=wet_increase, tol_kg=tol_kg,
                                      prepared=prep)
    m_dist = b(m_dist)
    app = approach_climb_setup(a, pressure_pa=site.pressure_pa, temperature_k=site.temperature_k)
    land = landing_climb_setup(a, config, pressure_pa=site.pressure_pa, temperature_k=site.temperature_k)
    m_app, m_land = b(_setup_limit(app)), b(_setup_limit(land))
    checked = ~np.isnan(lda)

    def capped(m):
        return np.where(checked & (m >= oew), np.minimum(m, mlm), np.nan)

    m_dist_c, m_app_c, m_land_c = capped(m_dist), capped(m_app), capped(m_land)
    stack = np.stack([mlm, np.where(np.isnan(m_dist_c), -np.inf, m_dist_c),
                      np.where(np.isnan(m_app_c), -np.inf, m_app_c), np.where(np.isnan(m_land_c), -np.inf, m_land_c)])
    index = np.argmin(stack, axis=0)
    least = np.min(stack, axis=0)
    possible = checked & np.isfinite(least)
    code = np.where(~checked, factor_code("not_checked"), np.where(possible, index, factor_code("no_landing")))
    limit = np.where(possible, least, np.nan)
    nan = np.full(n, np.nan)
    figs = dict(landing_distance_m=nan, required_distance_m=nan, vref_mps=nan, approach_climb_gradient=nan,
                landing_climb_gradient=nan)
    if figures and np.any(possible):
        at = np.where(possible, limit, oew)
        parts = _distance_parts(prep, at, prep.brake)
        req = _required(prep, at, b(share), wet_increase)
        keep = lambda x: np.where(possible, b(x), np.nan)  # noqa: E731
        figs = dict(landing_distance_m=keep(parts.distance_m), required_distance_m=keep(req),
                    vref_mps=keep(parts.vref_mps),
                    approach_climb_gradient=keep(np.where(np.isnan(app.required_gradient), np.nan,
                                                          climb_gradient_at(app, at))),
                    landing_climb_gradient=keep(climb_gradient_at(land, at)))
    return LandingLimit(landing_limit_kg=limit, limiting_factor=code.astype(np.int64), distance_limited_kg=m_dist_c,
                        approach_climb_limited_kg=m_app_c, landing_climb_limited_kg=m_land_c, **figs)
