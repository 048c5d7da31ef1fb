"""Route fuel and payload: Breguet trip fuel, a reserve policy, taxi fuel and payload available.

A flight is planned backwards from the zero-fuel mass ``m_zf = OEW + payload``. In still air,
at constant cruise speed, lift-to-drag ratio and specific fuel consumption, the Breguet range
equation gives an exponential mass ratio per metre flown,

    m_start / m_end = exp(k s),   k = c g / (V (L/D))        (jet, c = TSFC [kg/(N s)])
                                  k = c_p g / (eta_p (L/D))  (propeller, c_p = PSFC [kg/(W s)])

and, for holding at the same figures, exp(k V t) per second. Every fuel quantity below is
therefore the zero-fuel mass times a factor that depends only on the route and the type, so
the takeoff mass, the fuel and the payload are solved *exactly and consistently* in closed form
(no iteration):

- final reserve: ``t_res`` of holding, ending at ``m_zf``;
- alternate: ``s_alt`` of cruise, ending where the final reserve starts;
- contingency: a fraction ``c`` of the trip fuel, carried and not burnt;
- planned landing mass at destination ``m_L = m_zf exp(k V t_res + k s_alt) + contingency``;
- trip fuel ``m_L (exp(k s) - 1)``; takeoff mass ``m_TO = m_L exp(k s)``;
- taxi fuel is burnt before brake release: block fuel = taxi + trip + contingency + alternate
  + final reserve; the fuel on board at takeoff (takeoff fuel) = block fuel - taxi fuel.

With ``E = exp(k s) - 1`` and ``A = exp(k V t_res + k s_alt)``:
``m_L = m_zf A / (1 - c E)``, ``trip = m_zf A E / (1 - c E)``, ``m_TO = m_zf G`` with the mass
growth factor ``G = A (1 + E) / (1 - c E)``.

Payload available is the least of four limits, and the binding one is named (codes in
:data:`ROUTE_LIMITS`):

- ``max_payload``: the structural payload limit;
- ``takeoff_limit``: ``m_TO <= TOW limit`` (the airfield takeoff-weight limit, itself capped by
  MTOW) → ``payload <= TOW/G - OEW``;
- ``fuel_capacity``: ``block fuel <= max fuel`` → ``payload <= (max_fuel - taxi)/(G - 1) - OEW``;
- ``landing_mass``: ``m_L <= max landing mass`` → ``payload <= MLM (1 - c E)/A - OEW``.

A fifth limit comes from the destination runway when it was checked (``physics.landing``):
``m_L <= landing-mass limit`` → ``payload <= m_land (1 - c E)/A - OEW``, named by what sets the
landing limit (``landing_distance``, ``approach_climb``, ``landing_climb``); where it equals
the structural maximum landing mass the route keeps ``landing_mass``. The planned landing mass
carries the reserves (alternate, final reserve, contingency) on board: they are not burnt
when the aircraft lands at its destination.

A route whose fuel alone breaks a limit (the least limit is below zero payload), whose origin
gives no takeoff mass (NaN), whose destination allows no landing mass (``no_landing``) or
whose type has no usable cruise figures is not possible: payload NaN, ``possible`` False and
the reason in ``limiting_factor``.

Not modelled (planning simplifications): en-route wind, climb and descent fuel beyond what the
cruise figures and the route factor absorb, step climbs, maximum ramp mass and maximum
zero-fuel mass other than through the structural payload limit.

References
----------
.. [1] Raymer, D. P., *Aircraft Design: A Conceptual Approach*, 6th ed., AIAA, 2018,
   §17.2 (Breguet range and endurance; section number from memory).
.. [2] Anderson, J. D., *Aircraft Performance and Design*, McGraw-Hill, 1999, ch. 5
   (range and endurance, jet and propeller forms).
.. [3] ICAO Annex 6, Part I, 4.3.6 (fuel: taxi, trip, contingency, alternate, final reserve
   of 30 min holding at 450 m above the aerodrome for turbine aircraft); EASA Air OPS
   AMC1 CAT.OP.MPA.150(b) (contingency 5 % of trip fuel) — paragraph numbers from memory.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from fieldlimits.physics.constants import G0 as G0_MPS2  # standard gravity [m/s^2], ICAO Doc 7488

#: Route payload limits and not-possible reasons, in code order (index = integer code).
ROUTE_LIMITS: tuple[str, ...] = (
    "max_payload",      # structural payload limit binds
    "takeoff_limit",    # the origin takeoff-weight limit binds
    "fuel_capacity",    # the fuel tanks cannot hold the block fuel
    "landing_mass",     # the destination structural landing mass binds
    "no_takeoff",       # the origin gives no takeoff mass at all (NaN limit)
    "no_cruise_data",   # the type has no usable cruise speed / L/D / fuel consumption
    "landing_distance",  # the destination runway's landing distance binds
    "approach_climb",   # the destination's approach climb (one engine out) binds
    "landing_climb",    # the destination's landing climb (all engines) binds
    "no_landing",       # the destination allows no landing mass at all
)

#: Default reserve policy and passenger mass (common practice; see module docstring).
CONTINGENCY_FRACTION_DEFAULT = 0.05     # 5 % of trip fuel [3]
ALTERNATE_DISTANCE_M_DEFAULT = 370.0e3  # 200 NM (370 km) planning alternate, common practice
FINAL_RESERVE_S_DEFAULT = 30.0 * 60.0   # 30 min holding, turbine aircraft [3]
PASSENGER_MASS_KG_DEFAULT = 100.0       # per passenger with baggage (common practice)


def route_limit_code(name: str) -> int:
    """Integer code of a route limit name.

    Parameters
    ----------
    name : str
        One of :data:`ROUTE_LIMITS`. [text]

    Returns
    -------
    int
        Its index in :data:`ROUTE_LIMITS`. [-]

    Notes
    -----
    Bookkeeping only (no equation); ``ValueError`` names the known limits.

    References
    ----------
    .. [1] This module's docstring (the four payload limits).
    """
    try:
        return ROUTE_LIMITS.index(name)
    except ValueError:
        raise ValueError(f"unknown route limit {name!r}; expected one of {ROUTE_LIMITS}") from None


def route_limit_name(codes):
    """Names of route limit codes.

    Parameters
    ----------
    codes : array_like of int
        Codes from :func:`payload_available`. [-]

    Returns
    -------
    numpy.ndarray
        Object array of names from :data:`ROUTE_LIMITS` (a 0-d array for a scalar). [text]

    Notes
    -----
    Bookkeeping only (no equation).

    References
    ----------
    .. [1] This module's docstring (the four payload limits).
    """
    table = np.array(ROUTE_LIMITS, dtype=object)
    return table[np.asarray(codes, dtype=int)]


def air_distance_m(great_circle_m, route_factor):
    """Distance flown: the great-circle distance times a route factor.

    Parameters
    ----------
    great_circle_m : array_like
        Geodesic (great-circle) distance between origin and destination. [m]
    route_factor : array_like
        Ratio of the distance flown on airways to the geodesic distance, >= 1. [-]

    Returns
    -------
    numpy.ndarray
        Still-air distance flown. [m]

    Notes
    -----
    ``s = f_route * s_gc``. Airway routing, departure and arrival procedures make the flown
    distance a few per cent longer than the geodesic; a factor near 1.05 is common practice
    for planning.

    References
    ----------
    .. [1] Raymer (2018), §17.2: mission ranges are still-air distances (from memory).
    """
    return np.asarray(great_circle_m, dtype=float) * np.asarray(route_factor, dtype=float)


def range_coefficient_per_m(cruise_tas_mps, cruise_lift_to_drag, cruise_tsfc_kg_per_n_s=np.nan,
                            cruise_psfc_kg_per_w_s=np.nan, propeller_efficiency=np.nan):
    """Breguet mass-ratio exponent per metre of cruise, jet or propeller form.

    Parameters
    ----------
    cruise_tas_mps : array_like
        Cruise true airspeed. [m/s]
    cruise_lift_to_drag : array_like
        Cruise lift-to-drag ratio. [-]
    cruise_tsfc_kg_per_n_s : array_like, optional
        Thrust-specific fuel consumption (jets; NaN or 0 for propeller aircraft). [kg/(N s)]
    cruise_psfc_kg_per_w_s : array_like, optional
        Power-specific fuel consumption (propeller aircraft). [kg/(W s)]
    propeller_efficiency : array_like, optional
        Propeller efficiency in cruise. [-]

    Returns
    -------
    numpy.ndarray
        ``k`` with ``m_start/m_end = exp(k s)`` over a cruise distance ``s``. [1/m]
        The jet form is used where a positive TSFC is given, else the propeller form; NaN
        where neither set of figures is usable.

    Notes
    -----
    Jet: ``R = V/(c g) (L/D) ln(m_i/m_f)`` so ``k = c g/(V L/D)``.
    Propeller: ``R = eta_p/(c_p g) (L/D) ln(m_i/m_f)`` so ``k = c_p g/(eta_p L/D)``.

    References
    ----------
    .. [1] Raymer (2018), §17.2, Breguet range equation, jet and propeller forms.
    .. [2] Anderson (1999), ch. 5, Eqs. for range of jet and propeller airplanes.
    """
    v = np.asarray(cruise_tas_mps, dtype=float)
    ld = np.asarray(cruise_lift_to_drag, dtype=float)
    c = np.asarray(cruise_tsfc_kg_per_n_s, dtype=float)
    cp = np.asarray(cruise_psfc_kg_per_w_s, dtype=float)
    eta = np.asarray(propeller_efficiency, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        k_jet = c * G0_MPS2 / (v * ld)
        k_prop = cp * G0_MPS2 / (eta * ld)
    is_jet = np.isfinite(k_jet) & (c > 0)
    prop_ok = np.isfinite(k_prop) & (cp > 0) & (eta > 0)
    k = np.where(is_jet, k_jet, np.where(prop_ok, k_prop, np.nan))
    return np.where((k > 0) & (ld > 0) & (v > 0), k, np.nan)


def breguet_range_jet_m(cruise_tas_mps, cruise_lift_to_drag, cruise_tsfc_kg_per_n_s,
                        initial_mass_kg, final_mass_kg):
    """Still-air cruise range of a jet from the Breguet equation.

    Parameters
    ----------
    cruise_tas_mps : array_like
        Cruise true airspeed. [m/s]
    cruise_lift_to_drag : array_like
        Cruise lift-to-drag ratio. [-]
    cruise_tsfc_kg_per_n_s : array_like
        Thrust-specific fuel consumption. [kg/(N s)]
    initial_mass_kg, final_mass_kg : array_like
        Mass at the start and end of the cruise. [kg]

    Returns
    -------
    numpy.ndarray
        Range. [m]

    Notes
    -----
    ``R = V/(c g) (L/D) ln(m_i/m_f)`` at constant V, L/D and c.

    References
    ----------
    .. [1] Raymer (2018), §17.2, Breguet range equation (jet).
    """
    v = np.asarray(cruise_tas_mps, dtype=float)
    c = np.asarray(cruise_tsfc_kg_per_n_s, dtype=float)
    ratio = np.asarray(initial_mass_kg, dtype=float) / np.asarray(final_mass_kg, dtype=float)
    return v / (c * G0_MPS2) * np.asarray(cruise_lift_to_drag, dtype=float) * np.log(ratio)


def breguet_range_propeller_m(propeller_efficiency, cruise_lift_to_drag, cruise_psfc_kg_per_w_s,
                              initial_mass_kg, final_mass_kg):
    """Still-air cruise range of a propeller aircraft from the Breguet equation.

    Parameters
    ----------
    propeller_efficiency : array_like
        Propeller efficiency. [-]
    cruise_lift_to_drag : array_like
        Cruise lift-to-drag ratio. [-]
    cruise_psfc_kg_per_w_s : array_like
        Power-specific fuel consumption. [kg/(W s)]
    initial_mass_kg, final_mass_kg : array_like
        Mass at the start and end of the cruise. [kg]

    Returns
    -------
    numpy.ndarray
        Range. [m]

    Notes
    -----
    ``R = eta_p/(c_p g) (L/D) ln(m_i/m_f)`` at constant eta_p, L/D and c_p.

    References
    ----------
    .. [1] Raymer (2018), §17.2, Breguet range equation (propeller).
    .. [2] Anderson (1999), ch. 5, range of a propeller-driven airplane.
    """
    eta = np.asarray(propeller_efficiency, dtype=float)
    cp = np.asarray(cruise_psfc_kg_per_w_s, dtype=float)
    ratio = np.asarray(initial_mass_kg, dtype=float) / np.asarray(final_mass_kg, dtype=float)
    return eta / (cp * G0_MPS2) * np.asarray(cruise_lift_to_drag, dtype=float) * np.log(ratio)


def cruise_fuel_from_final_mass_kg(range_coefficient_per_m, distance_m, final_mass_kg):
    """Fuel burnt over a cruise distance, given the mass at its end.

    Parameters
    ----------
    range_coefficient_per_m : array_like
        Breguet exponent ``k`` (:func:`range_coefficient_per_m`). [1/m]
    distance_m : array_like
        Cruise distance. [m]
    final_mass_kg : array_like
        Mass at the end of the cruise. [kg]

    Returns
    -------
    numpy.ndarray
        Fuel burnt. [kg]

    Notes
    -----
    ``m_f (exp(k s) - 1)``, the Breguet equation solved for the initial mass.

    References
    ----------
    .. [1] Raymer (2018), §17.2.
    """
    ks = np.asarray(range_coefficient_per_m, dtype=float) * np.asarray(distance_m, dtype=float)
    return np.asarray(final_mass_kg, dtype=float) * np.expm1(ks)


def cruise_fuel_from_initial_mass_kg(range_coefficient_per_m, distance_m, initial_mass_kg):
    """Fuel burnt over a cruise distance, given the mass at its start.

    Parameters
    ----------
    range_coefficient_per_m : array_like
        Breguet exponent ``k``. [1/m]
    distance_m : array_like
        Cruise distance. [m]
    initial_mass_kg : array_like
        Mass at the start of the cruise. [kg]

    Returns
    -------
    numpy.ndarray
        Fuel burnt. [kg]

    Notes
    -----
    ``m_i (1 - exp(-k s))``.

    References
    ----------
    .. [1] Raymer (2018), §17.2.
    """
    ks = np.asarray(range_coefficient_per_m, dtype=float) * np.asarray(distance_m, dtype=float)
    return -np.asarray(initial_mass_kg, dtype=float) * np.expm1(-ks)


def holding_fuel_kg(range_coefficient_per_m, cruise_tas_mps, duration_s, final_mass_kg):
    """Fuel for a holding (endurance) segment at the cruise figures, given the mass at its end.

    Parameters
    ----------
    range_coefficient_per_m : array_like
        Breguet exponent ``k``. [1/m]
    cruise_tas_mps : array_like
        True airspeed at which the figures hold. [m/s]
    duration_s : array_like
        Holding time. [s]
    final_mass_kg : array_like
        Mass at the end of the holding. [kg]

    Returns
    -------
    numpy.ndarray
        Fuel burnt. [kg]

    Notes
    -----
    Breguet endurance: jet ``E = (1/(c g)) (L/D) ln(m_i/m_f)``; propeller
    ``E = eta_p/(c_p g V) (L/D) ln(m_i/m_f)``. Both give ``m_i/m_f = exp(k V t)`` with the
    range exponent ``k``. Using the cruise L/D, fuel consumption and (for propellers) speed is
    a conservative simplification: holding near best endurance burns less.

    References
    ----------
    .. [1] Raymer (2018), §17.2, Breguet endurance equation.
    .. [2] Anderson (1999), ch. 5, endurance of jet and propeller airplanes.
    """
    kvt = (np.asarray(range_coefficient_per_m, dtype=float)
           * np.asarray(cruise_tas_mps, dtype=float) * np.asarray(duration_s, dtype=float))
    return np.asarray(final_mass_kg, dtype=float) * np.expm1(kvt)


@dataclass(frozen=True)
class ReservePolicy:
    """Reserve-fuel policy, arrays broadcastable to the cases.

    Attributes
    ----------
    contingency_fraction : array_like
        Contingency fuel as a share of the trip fuel. [-]
    alternate_distance_m : array_like
        Cruise distance from destination to the alternate. [m]
    final_reserve_s : array_like
        Final reserve: holding time. [s]
    """

    contingency_fraction: np.ndarray | float = CONTINGENCY_FRACTION_DEFAULT
    alternate_distance_m: np.ndarray | float = ALTERNATE_DISTANCE_M_DEFAULT
    final_reserve_s: np.ndarray | float = FINAL_RESERVE_S_DEFAULT


@dataclass(frozen=True)
class FuelPlan:
    """Fuel and masses of a planned flight (arrays, kg). NaN where the flight cannot be planned."""

    zero_fuel_mass_kg: np.ndarray
    trip_fuel_kg: np.ndarray
    contingency_fuel_kg: np.ndarray
    alternate_fuel_kg: np.ndarray
    final_reserve_fuel_kg: np.ndarray
    taxi_fuel_kg: np.ndarray
    takeoff_fuel_kg: np.ndarray
    block_fuel_kg: np.ndarray
    takeoff_mass_kg: np.ndarray
    landing_mass_kg: np.ndarray
    ramp_mass_kg: np.ndarray


def _growth_terms(k, distance_m, cruise_tas_mps, policy):
    """``(A, E, c, one_minus_cE)`` of the module docstring; ``one_minus_cE`` NaN where <= 0."""
    k = np.asarray(k, dtype=float)
    c = np.asarray(policy.contingency_fraction, dtype=float)
    reserve_exponent = (k * np.asarray(cruise_tas_mps, dtype=float)
                        * np.asarray(policy.final_reserve_s, dtype=float)
                        + k * np.asarray(policy.alternate_distance_m, dtype=float))
    a = np.exp(reserve_exponent)
    e = np.expm1(k * np.asarray(distance_m, dtype=float))
    one_minus_ce = 1.0 - c * e
    return a, e, c, np.where(one_minus_ce > 0, one_minus_ce, np.nan)


def mass_growth_factor(range_coefficient_per_m, distance_m, cruise_tas_mps,
                       policy: ReservePolicy = ReservePolicy()):
    """Takeoff mass over zero-fuel mass for a route and reserve policy.

    Parameters
    ----------
    range_coefficient_per_m : array_like
        Breguet exponent ``k``. [1/m]
    distance_m : array_like
        Trip (still-air) distance. [m]
    cruise_tas_mps : array_like
        Cruise true airspeed (for the holding reserve). [m/s]
    policy : ReservePolicy
        Contingency share [-], alternate distance [m] and final reserve time [s].

    Returns
    -------
    numpy.ndarray
        ``G = m_TO / m_zf``. [-] NaN where the contingency makes the fuel diverge
        (``c (exp(k s) - 1) >= 1``) or the cruise figures are missing.

    Notes
    -----
    ``G = A (1 + E)/(1 - c E)`` with ``E = exp(k s) - 1`` and
    ``A = exp(k V t_res + k s_alt)`` (module docstring).

    References
    ----------
    .. [1] Raymer (2018), §17.2 (Breguet); ICAO Annex 6 Part I, 4.3.6 (fuel policy).
    """
    a, e, _, one_minus_ce = _growth_terms(range_coefficient_per_m, distance_m, cruise_tas_mps,
                                          policy)
    return a * (1.0 + e) / one_minus_ce


def fuel_plan(zero_fuel_mass_kg, range_coefficient_per_m, distance_m, cruise_tas_mps,
              taxi_fuel_kg, policy: ReservePolicy = ReservePolicy()) -> FuelPlan:
    """Fuel and masses of a flight planned backwards from its zero-fuel mass.

    Parameters
    ----------
    zero_fuel_mass_kg : array_like
        Operating empty mass plus payload. [kg]
    range_coefficient_per_m : array_like
        Breguet exponent ``k``. [1/m]
    distance_m : array_like
        Trip (still-air) distance. [m]
    cruise_tas_mps : array_like
        Cruise true airspeed (for the holding reserve). [m/s]
    taxi_fuel_kg : array_like
        Fuel burnt before brake release. [kg]
    policy : ReservePolicy
        Reserve policy: contingency share [-], alternate distance [m], final reserve [s].

    Returns
    -------
    FuelPlan
        [kg] Trip, contingency, alternate, final reserve, taxi, takeoff and block fuel; takeoff,
        landing (destination, reserves on board) and ramp mass. [kg]

    Notes
    -----
    Final reserve ``m_zf (exp(k V t) - 1)``; alternate ``m_zf exp(k V t) (exp(k s_alt) - 1)``;
    trip ``m_zf A E/(1 - c E)``; contingency ``c`` × trip; landing mass ``m_zf A/(1 - c E)``;
    takeoff mass ``m_zf G``; block = taxi + trip + contingency + alternate + final reserve;
    ramp mass = takeoff mass + taxi fuel.

    References
    ----------
    .. [1] Raymer (2018), §17.2; ICAO Annex 6 Part I, 4.3.6 (fuel components).
    """
    mzf = np.asarray(zero_fuel_mass_kg, dtype=float)
    k = np.asarray(range_coefficient_per_m, dtype=float)
    taxi = np.asarray(taxi_fuel_kg, dtype=float)
    a, e, c, one_minus_ce = _growth_terms(k, distance_m, cruise_tas_mps, policy)
    final_reserve = holding_fuel_kg(k, cruise_tas_mps, policy.final_reserve_s, mzf)
    alternate = cruise_fuel_from_final_mass_kg(k, policy.alternate_distance_m, mzf + final_reserve)
    landing = mzf * a / one_minus_ce
    trip = landing * e
    contingency = c * trip
    takeoff = landing + trip
    takeoff_fuel = takeoff - mzf
    block = taxi + takeoff_fuel
    nan = ~np.isfinite(takeoff)
    return FuelPlan(
        zero_fuel_mass_kg=np.broadcast_to(mzf, takeoff.shape).astype(float),
        trip_fuel_kg=trip,
        contingency_fuel_kg=contingency,
        alternate_fuel_kg=np.where(nan, np.nan, alternate),
        final_reserve_fuel_kg=np.where(nan, np.nan, final_reserve),
        taxi_fuel_kg=np.broadcast_to(taxi, takeoff.shape).astype(float),
        takeoff_fuel_kg=takeoff_fuel,
        block_fuel_kg=block,
        takeoff_mass_kg=takeoff,
        landing_mass_kg=landing,
        ramp_mass_kg=takeoff + taxi,
    )


@dataclass(frozen=True)
class RoutePayload:
    """Payload available on a route (arrays).

    Attributes
    ----------
    payload_kg : numpy.ndarray
        Payload available, 0 … max payload; NaN where not possible. [kg]
    limiting_factor : numpy.ndarray
        Integer code of :data:`ROUTE_LIMITS`: the binding limit, or the reason the route is
        not possible.
    possible : numpy.ndarray
        Bool: the route can be flown with zero or more payload.
    payload_takeoff_limit_kg, payload_fuel_capacity_kg, payload_landing_mass_kg : numpy.ndarray
        Payload each limit alone would allow (may be negative). [kg]
    payload_at_mtow_kg : numpy.ndarray
        Payload available if the origin allowed MTOW (NaN if no MTOW given); the difference
        to ``payload_kg`` is what the origin's takeoff limit costs. [kg]
    plan : FuelPlan
        Fuel and masses at the available payload (NaN where not possible).
    payload_destination_kg : numpy.ndarray
        Payload the destination's landing-mass limit alone would allow (+inf where the
        destination was not checked). [kg]
    payload_without_destination_kg : numpy.ndarray
        Payload available if the destination's landing limit were its structural maximum
        landing mass (NaN where not possible so); the difference to ``payload_kg`` is what
        the destination runway costs. [kg]
    """

    payload_kg: np.ndarray
    limiting_factor: np.ndarray
    possible: np.ndarray
    payload_takeoff_limit_kg: np.ndarray
    payload_fuel_capacity_kg: np.ndarray
    payload_landing_mass_kg: np.ndarray
    payload_at_mtow_kg: np.ndarray
    plan: FuelPlan
    payload_destination_kg: np.ndarray | None = None
    payload_without_destination_kg: np.ndarray | None = None


def _least_payload(takeoff_mass_limit, oew, max_payload, max_fuel, max_landing, taxi, g, a,
                   one_minus_ce):
    """Least of the four payload limits and the index of the binding one (0..3)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        p_takeoff = takeoff_mass_limit / g - oew
        p_fuel = (max_fuel - taxi) / (g - 1.0) - oew
        p_landing = max_landing * one_minus_ce / a - oew
    stack = np.stack(np.broadcast_arrays(max_payload, p_takeoff, p_fuel, p_landing))
    # order = code order in ROUTE_LIMITS: on a tie the earlier (structural) limit is named
    filled = np.where(np.isnan(stack), np.inf, stack)
    index = np.argmin(filled, axis=0)
    least = np.take_along_axis(filled, index[None], axis=0)[0]
    return least, index, p_takeoff, p_fuel, p_landing


def payload_available(tow_limit_kg, oew_kg, max_payload_kg, max_fuel_kg, max_landing_mass_kg,
                      taxi_fuel_kg, range_coefficient_per_m, distance_m, cruise_tas_mps,
                      policy: ReservePolicy = ReservePolicy(), mtow_kg=np.nan,
                      destination_limit_kg=np.inf, destination_code=None) -> RoutePayload:
    """Payload a route can carry: the least of the structural, takeoff, fuel and landing limits.

    Parameters
    ----------
    tow_limit_kg : array_like
        Takeoff-weight limit at the origin (already capped by MTOW; NaN = no takeoff). [kg]
    oew_kg : array_like
        Operating empty mass. [kg]
    max_payload_kg : array_like
        Maximum structural payload. [kg]
    max_fuel_kg : array_like
        Usable fuel capacity. [kg]
    max_landing_mass_kg : array_like
        Maximum structural landing mass (applied at the destination). [kg]
    taxi_fuel_kg : array_like
        Taxi fuel, burnt before brake release. [kg]
    range_coefficient_per_m : array_like
        Breguet exponent ``k`` (:func:`range_coefficient_per_m`). [1/m]
    distance_m : array_like
        Trip (still-air) distance. [m]
    cruise_tas_mps : array_like
        Cruise true airspeed. [m/s]
    policy : ReservePolicy
        Reserve policy: contingency share [-], alternate distance [m], final reserve [s].
    mtow_kg : array_like, optional
        Maximum takeoff mass, for ``payload_at_mtow_kg``. [kg]
    destination_limit_kg : array_like, optional
        Landing-mass limit of the destination runway (``physics.landing``); +inf where the
        destination is not checked (the default), NaN where no landing mass is possible. [kg]
    destination_code : array_like of int, optional
        Code of :data:`ROUTE_LIMITS` naming the destination limit where it binds (default
        ``landing_distance``). [-]

    Returns
    -------
    RoutePayload
        Payload [kg], binding limit code [-], possible flag, each limit's payload [kg] and the
        fuel plan [kg].

    Notes
    -----
    ``payload = min(max_payload, TOW/G - OEW, (max_fuel - taxi)/(G - 1) - OEW,
    MLM (1 - c E)/A - OEW, m_land (1 - c E)/A - OEW)`` (module docstring); the destination's
    limit is named only where it is strictly the least. Each limit is exact because the fuel
    scales with the zero-fuel mass. If the least limit is below zero the route is not
    possible and the limit that fails is the reason; ``no_takeoff`` where the origin limit
    is NaN, ``no_landing`` where the destination limit is NaN and ``no_cruise_data`` where
    ``k`` is not usable. With the destination not checked (+inf) the results are those of
    the four limits to the bit.

    References
    ----------
    .. [1] Raymer (2018), §17.2 (Breguet); Anderson (1999), ch. 5 (payload-range reasoning).
    .. [2] ICAO Annex 6 Part I, 4.3.6 (fuel components).
    """
    tow = np.asarray(tow_limit_kg, dtype=float)
    oew = np.asarray(oew_kg, dtype=float)
    max_payload = np.asarray(max_payload_kg, dtype=float)
    max_fuel = np.asarray(max_fuel_kg, dtype=float)
    max_landing = np.asarray(max_landing_mass_kg, dtype=float)
    taxi = np.asarray(taxi_fuel_kg, dtype=float)
    k = np.asarray(range_coefficient_per_m, dtype=float)
    a, e, c, one_minus_ce = _growth_terms(k, distance_m, cruise_tas_mps, policy)
    g = a * (1.0 + e) / one_minus_ce

    least, index, p_takeoff, p_fuel, p_landing = _least_payload(
        tow, oew, max_payload, max_fuel, max_landing, taxi, g, a, one_minus_ce)
    least_mtow, _, _, _, _ = _least_payload(
        np.asarray(mtow_kg, dtype=float), oew, max_payload, max_fuel, max_landing, taxi, g, a,
        one_minus_ce)
    dest = np.asarray(destination_limit_kg, dtype=float)
    no_landing = np.isnan(dest)
    checked = ~np.isposinf(dest)
    without_dest = least
    if np.any(checked):  # the destination runway: a fifth limit, strictly the least to bind
        with np.errstate(invalid="ignore"):
            p_dest = dest * one_minus_ce / a - oew
        dest_code = (np.full(np.shape(p_dest), route_limit_code("landing_distance"))
                     if destination_code is None else np.asarray(destination_code, dtype=np.int64))
        binds = p_dest < least
        least = np.where(binds, p_dest, least)
        index = np.where(binds, dest_code, index)
        least_mtow = np.where(p_dest < least_mtow, p_dest, least_mtow)
    else:
        p_dest = np.broadcast_to(np.inf, np.shape(least))

    no_cruise = ~np.isfinite(k)
    diverges = ~no_cruise & ~np.isfinite(one_minus_ce)  # contingency never converges
    no_takeoff = ~np.isfinite(tow)
    code = np.where(
        no_cruise, route_limit_code("no_cruise_data"),
        np.where(no_takeoff, route_limit_code("no_takeoff"),
                 np.where(diverges, route_limit_code("fuel_capacity"), index)))
    if np.any(no_landing):
        code = np.where(~no_cruise & ~no_takeoff & ~diverges & no_landing, route_limit_code("no_landing"), code)
    possible = ~no_cruise & ~no_takeoff & ~diverges & ~no_landing & np.isfinite(least) & (least >= 0.0)
    ok_without = (~no_cruise & ~no_takeoff & ~diverges & np.isfinite(without_dest) & (without_dest >= 0.0))
    payload = np.where(possible, least, np.nan)
    plan = fuel_plan(oew + payload, k, distance_m, cruise_tas_mps, taxi, policy)
    mtow_ok = np.isfinite(np.asarray(mtow_kg, dtype=float)) & ~no_cruise & ~diverges
    at_mtow = np.where(mtow_ok & ~no_landing & np.isfinite(least_mtow) & (least_mtow >= 0), least_mtow, np.nan)
    return RoutePayload(
        payload_kg=payload,
        limiting_factor=code.astype(np.int64),
        possible=possible,
        payload_takeoff_limit_kg=p_takeoff,
        payload_fuel_capacity_kg=p_fuel,
        payload_landing_mass_kg=p_landing,
        payload_at_mtow_kg=np.broadcast_to(np.where(mtow_ok, at_mtow, np.nan),
                                           payload.shape).copy(),
        plan=plan,
        payload_destination_kg=np.broadcast_to(p_dest, payload.shape).copy(),
        payload_without_destination_kg=np.broadcast_to(np.where(ok_without, without_dest, np.nan),
                                                       payload.shape).copy(),
    )


def passengers_for_payload(payload_kg, passenger_mass_kg=PASSENGER_MASS_KG_DEFAULT,
                           max_passengers=np.inf):
    """Whole passengers a payload can carry at a standard mass per person with baggage.

    Parameters
    ----------
    payload_kg : array_like
        Payload available. [kg]
    passenger_mass_kg : array_like
        Standard mass per passenger including baggage; 100 kg is common practice for
        planning. [kg]
    max_passengers : array_like
        Seats. [-]

    Returns
    -------
    numpy.ndarray
        ``min(floor(payload / m_pax), seats)`` as float; NaN where the payload is NaN. [-]

    Notes
    -----
    Standard passenger masses are set by operators under their authority's rules (e.g.
    EASA Air OPS CAT.POL.MAB.100 standard masses; from memory); 100 kg with baggage is a
    round planning figure (common practice).

    References
    ----------
    .. [1] EASA, Air OPS Regulation (EU) 965/2012, CAT.POL.MAB.100 (from memory).
    """
    pax = np.floor(np.asarray(payload_kg, dtype=float) / np.asarray(passenger_mass_kg, dtype=float)
                   + 1e-9)
    return np.minimum(pax, np.asarray(max_passengers, dtype=float))
