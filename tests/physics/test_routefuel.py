"""Tests of physics.routefuel: Breguet range and fuel, reserves, payload available."""

import math

import numpy as np
import pytest
from numpy.testing import assert_allclose
from scipy.integrate import solve_ivp

from fieldlimits.physics import routefuel as rf

# An invented twin jet and an invented turboprop (plausible round figures of our own).
JET = dict(oew_kg=40_000.0, mtow_kg=70_000.0, max_payload_kg=18_000.0, max_fuel_kg=20_000.0,
           max_landing_mass_kg=62_000.0, taxi_fuel_kg=200.0, cruise_tas_mps=230.0,
           cruise_lift_to_drag=16.0, cruise_tsfc_kg_per_n_s=1.6e-5)
PROP = dict(oew_kg=13_000.0, mtow_kg=21_000.0, max_payload_kg=6_500.0, max_fuel_kg=4_500.0,
            max_landing_mass_kg=20_500.0, taxi_fuel_kg=60.0, cruise_tas_mps=140.0,
            cruise_lift_to_drag=14.0, cruise_psfc_kg_per_w_s=0.30 / 3.6e6,
            propeller_efficiency=0.82)

LB = 0.45359237       # kg per pound (exact, international avoirdupois pound)
HP = 745.69987158227  # W per mechanical horsepower (550 ft lbf/s), NIST SP 811
FT = 0.3048           # m per foot (exact)


def jet_k():
    return rf.range_coefficient_per_m(JET["cruise_tas_mps"], JET["cruise_lift_to_drag"],
                                      JET["cruise_tsfc_kg_per_n_s"])


def prop_k():
    return rf.range_coefficient_per_m(PROP["cruise_tas_mps"], PROP["cruise_lift_to_drag"],
                                      cruise_psfc_kg_per_w_s=PROP["cruise_psfc_kg_per_w_s"],
                                      propeller_efficiency=PROP["propeller_efficiency"])


def jet_payload(tow_kg, distance_m, policy=rf.ReservePolicy(), **over):
    a = dict(JET, **over)
    return rf.payload_available(
        tow_kg, a["oew_kg"], a["max_payload_kg"], a["max_fuel_kg"], a["max_landing_mass_kg"],
        a["taxi_fuel_kg"], jet_k(), distance_m, a["cruise_tas_mps"], policy, mtow_kg=a["mtow_kg"])


# --- Breguet against published / hand-computable values ---------------------------------

def test_propeller_breguet_light_aircraft_worked_example():
    # Anderson, *Introduction to Flight* (McGraw-Hill), range example for the light
    # single-engine "CP-1" — inputs and answer from memory: W0 2 950 lb, 65 gal of fuel at
    # 5.64 lb/gal, eta_p 0.80, SFC 0.45 lb/(hp h), (L/D)max 13.6 → range about 6.35e6 ft
    # (≈ 1 200 statute miles). Converted exactly to SI here; the 1 % tolerance covers the
    # rounding of the recalled inputs and answer.
    w0 = 2950.0 * LB
    w1 = (2950.0 - 65.0 * 5.64) * LB
    psfc = 0.45 * LB / (HP * 3600.0)  # kg/(W s)
    r = rf.breguet_range_propeller_m(0.80, 13.6, psfc, w0, w1)
    assert_allclose(r / FT, 6.35e6, rtol=0.01)
    assert_allclose(r / 1609.344, 1203.0, rtol=0.01)


def test_jet_cruise_weight_fraction_hand_computed():
    # Raymer, *Aircraft Design: A Conceptual Approach*, cruise segment weight fraction
    # W_f/W_i = exp(-R C / (V L/D)) (§3.4, Eq. 3.6; equation number from memory).
    # Hand computed: R = 1000 NM, C = 0.5 /h, V = 500 kt, L/D = 15 → exp(-1/15) = 0.935507.
    nm = 1852.0
    v = 500.0 * nm / 3600.0
    tsfc = 0.5 / 3600.0 / rf.G0_MPS2  # C [1/s] = c g, so c = C/g [kg/(N s)]
    k = rf.range_coefficient_per_m(v, 15.0, tsfc)
    fuel = rf.cruise_fuel_from_initial_mass_kg(k, 1000.0 * nm, 1.0)
    assert_allclose(1.0 - fuel, math.exp(-1.0 / 15.0), rtol=1e-12)
    assert_allclose(1.0 - fuel, 0.935507, atol=1e-6)
    # and the range equation recovers the 1000 NM
    assert_allclose(rf.breguet_range_jet_m(v, 15.0, tsfc, 1.0, 1.0 - fuel), 1000.0 * nm,
                    rtol=1e-12)


def test_closed_form_equals_numerical_integration_of_fuel_flow():
    # First principles: level cruise T = D = m g/(L/D), fuel flow = c T (jet) or
    # c_p T V/eta_p (propeller); integrate dm/ds = -fuel flow / V numerically (scipy) and
    # compare with the closed-form Breguet fuel.
    s = 1_500e3
    for k_fn, a in ((jet_k, JET), (prop_k, PROP)):
        m_end = a["oew_kg"] + 2_000.0
        if "cruise_tsfc_kg_per_n_s" in a:
            def rate(_, m):
                return [a["cruise_tsfc_kg_per_n_s"] * m[0] * rf.G0_MPS2
                        / a["cruise_lift_to_drag"] / a["cruise_tas_mps"]]
        else:
            def rate(_, m):
                return [a["cruise_psfc_kg_per_w_s"] * m[0] * rf.G0_MPS2
                        / a["cruise_lift_to_drag"] / a["propeller_efficiency"]]
        # integrate backwards from the end mass (ds < 0 gives the mass growing)
        sol = solve_ivp(rate, (0.0, s), [m_end], rtol=1e-10, atol=1e-8)
        fuel_numeric = sol.y[0, -1] - m_end
        fuel_closed = rf.cruise_fuel_from_final_mass_kg(k_fn(), s, m_end)
        assert_allclose(fuel_closed, fuel_numeric, rtol=1e-7)


def test_range_coefficient_picks_jet_or_propeller_form():
    k = rf.range_coefficient_per_m(
        np.array([230.0, 140.0, 140.0]), np.array([16.0, 14.0, 14.0]),
        np.array([1.6e-5, np.nan, 0.0]), np.array([np.nan, 8e-8, np.nan]),
        np.array([np.nan, 0.8, 0.8]))
    assert_allclose(k[0], 1.6e-5 * rf.G0_MPS2 / (230.0 * 16.0), rtol=1e-14)
    assert_allclose(k[1], 8e-8 * rf.G0_MPS2 / (0.8 * 14.0), rtol=1e-14)
    assert np.isnan(k[2])  # neither form usable


def test_round_trip_fuel_and_range():
    k = jet_k()
    s = np.array([300e3, 1_200e3, 4_000e3])
    m_f = np.array([45_000.0, 50_000.0, 55_000.0])
    fuel = rf.cruise_fuel_from_final_mass_kg(k, s, m_f)
    assert_allclose(rf.breguet_range_jet_m(JET["cruise_tas_mps"], JET["cruise_lift_to_drag"],
                                           JET["cruise_tsfc_kg_per_n_s"], m_f + fuel, m_f),
                    s, rtol=1e-12)
    assert_allclose(rf.cruise_fuel_from_initial_mass_kg(k, s, m_f + fuel), fuel, rtol=1e-12)


def test_holding_fuel_is_breguet_endurance():
    # Breguet endurance for a jet, E = (1/(c g)) (L/D) ln(m_i/m_f) (Raymer §17.2).
    k = jet_k()
    m_f = 45_000.0
    fuel = rf.holding_fuel_kg(k, JET["cruise_tas_mps"], 1800.0, m_f)
    e = (JET["cruise_lift_to_drag"] / (JET["cruise_tsfc_kg_per_n_s"] * rf.G0_MPS2)
         * math.log((m_f + fuel) / m_f))
    assert_allclose(e, 1800.0, rtol=1e-12)


# --- fuel plan consistency ----------------------------------------------------------------

def test_fuel_plan_components_are_consistent():
    k = jet_k()
    policy = rf.ReservePolicy(0.05, 200e3, 1800.0)
    s = 2_000e3
    mzf = 52_000.0
    p = rf.fuel_plan(mzf, k, s, JET["cruise_tas_mps"], 200.0, policy)
    v, ld, c = JET["cruise_tas_mps"], JET["cruise_lift_to_drag"], JET["cruise_tsfc_kg_per_n_s"]
    # the trip fuel flies exactly the trip from the takeoff mass to the landing mass
    assert_allclose(rf.breguet_range_jet_m(v, ld, c, p.takeoff_mass_kg, p.landing_mass_kg), s,
                    rtol=1e-12)
    assert_allclose(p.contingency_fuel_kg, 0.05 * p.trip_fuel_kg, rtol=1e-12)
    # the alternate leg starts with contingency still on board and ends at mzf + final reserve
    m_alt_end = mzf + p.final_reserve_fuel_kg
    assert_allclose(rf.breguet_range_jet_m(v, ld, c, m_alt_end + p.alternate_fuel_kg, m_alt_end),
                    200e3, rtol=1e-12)
    assert_allclose(p.landing_mass_kg,
                    mzf + p.final_reserve_fuel_kg + p.alternate_fuel_kg + p.contingency_fuel_kg,
                    rtol=1e-12)
    assert_allclose(p.block_fuel_kg, 200.0 + p.trip_fuel_kg + p.contingency_fuel_kg
                    + p.alternate_fuel_kg + p.final_reserve_fuel_kg, rtol=1e-12)
    assert_allclose(p.takeoff_fuel_kg, p.block_fuel_kg - 200.0, rtol=1e-12)
    assert_allclose(p.ramp_mass_kg, p.takeoff_mass_kg + 200.0, rtol=1e-12)
    assert_allclose(p.takeoff_mass_kg,
                    mzf * rf.mass_growth_factor(k, s, v, policy), rtol=1e-12)


def test_contingency_that_cannot_converge_gives_nan():
    # c (exp(k s) - 1) >= 1: no finite fuel load covers the contingency.
    k = jet_k()
    s = math.log(1.0 + 1.0 / 0.05) / k * 1.01
    assert np.isnan(rf.mass_growth_factor(k, s, 230.0))
    r = jet_payload(70_000.0, s)
    assert not r.possible and rf.route_limit_name(r.limiting_factor) == "fuel_capacity"


# --- payload available --------------------------------------------------------------------

def test_each_binding_limit_is_met_exactly():
    policy = rf.ReservePolicy()
    # takeoff-limited: short field, medium route
    r = jet_payload(60_000.0, 1_000e3)
    assert rf.route_limit_name(r.limiting_factor) == "takeoff_limit"
    assert_allclose(r.plan.takeoff_mass_kg, 60_000.0, rtol=1e-12)
    # structural payload: no field limit, short route
    r = jet_payload(70_000.0, 500e3)
    assert rf.route_limit_name(r.limiting_factor) == "max_payload"
    assert_allclose(r.payload_kg, 18_000.0)
    # fuel capacity: small tanks, long route
    r = jet_payload(70_000.0, 3_000e3, max_fuel_kg=9_000.0)
    assert rf.route_limit_name(r.limiting_factor) == "fuel_capacity"
    assert_allclose(r.plan.block_fuel_kg, 9_000.0, rtol=1e-12)
    # landing mass: low landing mass limit, short route
    r = jet_payload(70_000.0, 300e3, max_landing_mass_kg=56_000.0)
    assert rf.route_limit_name(r.limiting_factor) == "landing_mass"
    assert_allclose(r.plan.landing_mass_kg, 56_000.0, rtol=1e-12)
    assert r.possible and policy.contingency_fraction == rf.CONTINGENCY_FRACTION_DEFAULT


def test_payload_never_negative_nor_above_max_payload():
    rng = np.random.default_rng(7)
    n = 5_000
    tow = rng.uniform(30_000.0, 75_000.0, n)
    s = rng.uniform(50e3, 9_000e3, n)
    tow[::50] = np.nan
    r = jet_payload(tow, s)
    ok = r.possible
    assert ok.any() and (~ok).any()
    assert np.all(r.payload_kg[ok] >= 0.0)
    assert np.all(r.payload_kg[ok] <= JET["max_payload_kg"] + 1e-9)
    assert np.all(np.isnan(r.payload_kg[~ok]))
    assert np.all(r.plan.takeoff_mass_kg[ok] <= tow[ok] * (1 + 1e-12))
    assert np.all(r.plan.block_fuel_kg[ok] <= JET["max_fuel_kg"] * (1 + 1e-12))
    assert np.all(r.plan.landing_mass_kg[ok] <= JET["max_landing_mass_kg"] * (1 + 1e-12))
    assert set(rf.route_limit_name(r.limiting_factor[np.isnan(tow)])) == {"no_takeoff"}


def test_payload_falls_with_route_length_and_with_takeoff_limit():
    s = np.linspace(100e3, 6_000e3, 200)
    p = jet_payload(np.full_like(s, 66_000.0), s).payload_kg
    finite = np.isfinite(p)
    assert finite.sum() > 100
    assert np.all(np.diff(p[finite]) <= 1e-9)
    assert p[finite][0] > p[finite][-1] + 1_000.0  # falls materially over the range
    tow = np.linspace(70_000.0, 45_000.0, 200)
    q = jet_payload(tow, np.full_like(tow, 1_500e3)).payload_kg
    fq = np.isfinite(q)
    assert np.all(np.diff(q[fq]) <= 1e-9)
    assert q[fq][0] > q[fq][-1] + 1_000.0


def test_payload_at_mtow_gives_the_airfield_restriction():
    r = jet_payload(np.array([70_000.0, 62_000.0]), 1_000e3)
    assert_allclose(r.payload_at_mtow_kg[0], r.payload_kg[0])
    restriction = r.payload_at_mtow_kg[1] - r.payload_kg[1]
    # takeoff-limited below MTOW: every kg of takeoff mass lost costs 1/G kg of payload
    g = rf.mass_growth_factor(jet_k(), 1_000e3, JET["cruise_tas_mps"])
    expected = min(JET["max_payload_kg"], 70_000.0 / g - JET["oew_kg"]) - (62_000.0 / g
                                                                          - JET["oew_kg"])
    assert_allclose(restriction, expected, rtol=1e-12)


def test_not_possible_when_fuel_alone_exceeds_the_limit():
    r = jet_payload(np.array([42_000.0, 70_000.0, 70_000.0]), np.array([800e3, 800e3, 20_000e3]))
    names = list(rf.route_limit_name(r.limiting_factor))
    assert list(r.possible) == [False, True, False]
    assert names[0] == "takeoff_limit"  # OEW plus fuel is above the takeoff limit
    assert names[2] == "fuel_capacity"  # tanks too small for the distance
    assert np.isnan(r.payload_kg[[0, 2]]).all()
    k_missing = rf.payload_available(70_000.0, 40_000.0, 18_000.0, 20_000.0, 62_000.0, 200.0,
                                     np.nan, 1_000e3, 230.0)
    assert rf.route_limit_name(k_missing.limiting_factor) == "no_cruise_data"


def test_scalar_equals_array_element_and_propeller_type():
    s = np.array([200e3, 700e3, 1_400e3])
    a = rf.payload_available(np.full(3, 20_000.0), PROP["oew_kg"], PROP["max_payload_kg"],
                             PROP["max_fuel_kg"], PROP["max_landing_mass_kg"],
                             PROP["taxi_fuel_kg"], prop_k(), s, PROP["cruise_tas_mps"])
    for i in range(3):
        b = rf.payload_available(20_000.0, PROP["oew_kg"], PROP["max_payload_kg"],
                                 PROP["max_fuel_kg"], PROP["max_landing_mass_kg"],
                                 PROP["taxi_fuel_kg"], prop_k(), s[i], PROP["cruise_tas_mps"])
        assert_allclose(b.payload_kg, a.payload_kg[i], rtol=1e-14)
        assert b.limiting_factor == a.limiting_factor[i]
    assert np.all(np.diff(a.payload_kg) <= 0)


def test_passengers_at_standard_mass():
    pax = rf.passengers_for_payload(np.array([0.0, 999.9, 1000.0, 9_000.0, np.nan]), 100.0, 70)
    assert_allclose(pax[:4], [0, 9, 10, 70])
    assert np.isnan(pax[4])


def test_route_limit_names_and_codes():
    assert rf.ROUTE_LIMITS[:4] == ("max_payload", "takeoff_limit", "fuel_capacity",
                                   "landing_mass")
    for i, name in enumerate(rf.ROUTE_LIMITS):
        assert rf.route_limit_code(name) == i
    with pytest.raises(ValueError, match="unknown route limit"):
        rf.route_limit_code("weather")


def test_air_distance_applies_route_factor():
    assert_allclose(rf.air_distance_m(np.array([1000.0, 2000.0]), 1.05), [1050.0, 2100.0])


def test_docstrings_follow_the_house_style():
    # the same numpydoc / units check the core modules pass (tests/physics/test_docstrings.py)
    from tests.physics.test_docstrings import test_numpydoc_sections_and_units

    test_numpydoc_sections_and_units("routefuel")


# --- the destination runway's landing-mass limit -------------------------------------------

def _dest_payload(tow_kg, distance_m, dest_kg, code=None):
    a = JET
    return rf.payload_available(
        tow_kg, a["oew_kg"], a["max_payload_kg"], a["max_fuel_kg"], a["max_landing_mass_kg"],
        a["taxi_fuel_kg"], jet_k(), distance_m, a["cruise_tas_mps"], mtow_kg=a["mtow_kg"],
        destination_limit_kg=dest_kg, destination_code=code)


def test_unchecked_destination_keeps_the_four_limits_to_the_bit():
    # +inf (no landing check) is the default: every field identical to the bit
    rng = np.random.default_rng(3)
    tow = rng.uniform(45_000.0, 72_000.0, 2_000)
    s = rng.uniform(50e3, 8_000e3, 2_000)
    tow[::37] = np.nan
    old = jet_payload(tow, s)
    new = _dest_payload(tow, s, np.full(2_000, np.inf))
    for name in ("payload_kg", "limiting_factor", "possible", "payload_takeoff_limit_kg",
                 "payload_fuel_capacity_kg", "payload_landing_mass_kg", "payload_at_mtow_kg"):
        np.testing.assert_array_equal(getattr(new, name), getattr(old, name), err_msg=name)
    for f in ("takeoff_mass_kg", "landing_mass_kg", "trip_fuel_kg", "block_fuel_kg"):
        np.testing.assert_array_equal(getattr(new.plan, f), getattr(old.plan, f), err_msg=f)
    np.testing.assert_array_equal(new.payload_without_destination_kg, old.payload_kg)


def test_destination_limit_binds_lands_exactly_there_and_is_named():
    code = rf.route_limit_code("approach_climb")
    s = 600e3
    free = _dest_payload(70_000.0, s, np.inf)
    r = _dest_payload(70_000.0, s, 55_000.0, code)
    assert rf.route_limit_name(r.limiting_factor) == "approach_climb"
    # the planned landing mass, reserves on board, is the landing limit
    assert_allclose(r.plan.landing_mass_kg, 55_000.0, rtol=1e-12)
    assert r.payload_kg < free.payload_kg
    assert_allclose(r.payload_without_destination_kg, free.payload_kg, rtol=1e-15)
    # the origin costs nothing here: payload at MTOW keeps the destination limit
    assert_allclose(r.payload_at_mtow_kg, r.payload_kg, rtol=1e-15)
    # a destination limit equal to the structural landing mass keeps the structural name
    same = _dest_payload(70_000.0, 300e3, JET["max_landing_mass_kg"])
    assert rf.route_limit_name(same.limiting_factor) != "landing_distance"


def test_destination_limit_lowers_payload_monotonically_and_no_landing_is_not_possible():
    dest = np.linspace(62_000.0, 40_500.0, 120)
    r = _dest_payload(np.full(dest.size, 70_000.0), 800e3, dest)
    ok = r.possible
    assert np.all(np.diff(r.payload_kg[ok]) <= 0.0)
    names = rf.route_limit_name(r.limiting_factor)
    assert "landing_distance" in set(names[ok])
    # below OEW plus the reserves the route is not possible, named by the destination
    assert (~ok).any() and set(names[~ok]) == {"landing_distance"}
    nl = _dest_payload(70_000.0, 800e3, np.nan)
    assert not nl.possible and rf.route_limit_name(nl.limiting_factor) == "no_landing"
    assert np.isnan(nl.payload_at_mtow_kg)
