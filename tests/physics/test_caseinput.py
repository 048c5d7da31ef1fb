"""One bad case never fails a batch, and an empty batch gives empty results.

A case outside the takeoff model's input contract (``physics.caseinput``) gets NaN and its
reason in ``solve_takeoff_weight`` itself; every other case of the batch is solved exactly as
it would be without it (to the bit). Physics functions return empty arrays for zero cases.
"""

import dataclasses

import numpy as np
import pytest

from fieldlimits.physics import caseinput
from fieldlimits.physics import climatology, reliabilitylevels
from fieldlimits.physics import enginefailure
from fieldlimits.physics import limits
from fieldlimits.physics import weightlimit as wl
from fieldlimits.physics import wind
from tests.physics import fleet

INVALID, TAIL = limits.code("invalid_input"), limits.code("tailwind_limit")


def _assert_same(result, reference, index):
    for f in dataclasses.fields(result):
        got, want = getattr(result, f.name)[index], getattr(reference, f.name)[index]
        assert np.array_equal(got, want, equal_nan=True), f.name


@pytest.mark.parametrize("rules", ["transport", "all_engines"])
@pytest.mark.parametrize("figures", [True, False])
def test_empty_batch_gives_empty_results(rules, figures):
    r = wl.solve_takeoff_weight(fleet.aircraft([]), fleet.site(0), rules=rules, figures=figures)
    for f in dataclasses.fields(r):
        assert getattr(r, f.name).shape == (0,), f.name
    assert r.limiting_factor.dtype.kind == "i"


def test_empty_batch_elsewhere_in_physics():
    ac, st, none = fleet.aircraft([]), fleet.site(0), np.zeros(0)
    assert enginefailure.engine_failure_takeoff(ac, st, none).v1_mps.shape == (0,)
    bfl, v1 = enginefailure.balanced_field_length_m(ac, st, none)
    assert bfl.shape == (0,) and v1.shape == (0,)
    d, s, w = climatology.wind_rose_points(*(np.zeros((0, 3)),) * 5, np.zeros(0))
    assert d.shape == s.shape == w.shape == (0, 1 + 3 * 5 * 2)
    lv = reliabilitylevels.reliability_masses(np.zeros((0, 4, 5)), np.linspace(-2.0, 2.0, 5), np.zeros((0, 4)),
                                        none, none, levels=(0.5, 0.95))
    assert lv.mass_kg.shape == (0, 2)


def test_one_bad_value_among_300_cases_fails_only_that_case():
    # the catalogue: NaN in mtow_kg / oew_kg and inf in mtow_kg among 300 cases
    ac, st = fleet.random_cases(300, seed=3)
    reference = wl.solve_takeoff_weight(ac, st)
    mtow, oew = ac.mtow_kg.copy(), ac.oew_kg.copy()
    mtow[[4, 120]] = [np.nan, np.inf]
    oew[[77, 299]] = [np.nan, -np.inf]
    r = wl.solve_takeoff_weight(dataclasses.replace(ac, mtow_kg=mtow, oew_kg=oew), st)
    bad = [4, 77, 120, 299]
    assert np.all(np.isnan(r.tow_limit_kg[bad])) and np.all(r.limiting_factor[bad] == INVALID)
    assert np.all(np.isnan(r.takeoff_distance_m[bad]))
    _assert_same(r, reference, np.setdiff1d(np.arange(300), bad))


def test_oew_above_mtow_toda_below_tora_and_tailwind_beyond_the_limit_get_their_reasons():
    ac, st = fleet.random_cases(40, seed=5)
    reference = wl.solve_takeoff_weight(ac, st)
    oew, toda, head = ac.oew_kg.copy(), st.toda_m.copy(), st.headwind_mps.copy()
    oew[1] = ac.mtow_kg[1] + 1.0
    toda[2] = st.tora_m[2] - 1.0
    # 14 CFR 25.105(d)(1): 150 % of the reported tailwind is what the performance uses, so a
    # reported tailwind just above the limit is a factored headwind of -1.5 (limit + 0.01)
    head[3] = -wind.TAILWIND_FACTOR * (ac.tailwind_limit_mps[3] + 0.01)
    head[4] = -wind.TAILWIND_FACTOR * ac.tailwind_limit_mps[4]  # exactly on the limit: allowed
    r = wl.solve_takeoff_weight(dataclasses.replace(ac, oew_kg=oew),
                                dataclasses.replace(st, toda_m=toda, headwind_mps=head))
    assert list(r.limiting_factor[1:4]) == [INVALID, INVALID, TAIL]
    assert np.all(np.isnan(r.tow_limit_kg[1:4]))
    assert r.limiting_factor[4] not in (INVALID, TAIL) and r.limiting_factor[4] >= 0
    _assert_same(r, reference, np.r_[0, 5:40])


def test_refusal_codes_bad_value_wins_over_the_wind():
    ac = fleet.aircraft(["turbofan", "propeller", "quadratic"])
    st = fleet.site(3, headwind_mps=-50.0)
    pressure = st.pressure_pa.copy()
    pressure[0] = 0.0
    codes = caseinput.refusal_codes(ac, dataclasses.replace(st, pressure_pa=pressure), 3)
    assert list(codes) == [INVALID, TAIL, TAIL]
    assert list(caseinput.refusal_codes(ac, fleet.site(3), 3)) == [-1, -1, -1]


def test_unknown_thrust_model_code_is_invalid_input():
    ac = fleet.aircraft(["turbofan", "turbofan"])
    model = ac.thrust_model.copy()
    model[1] = 9.0
    r = wl.solve_takeoff_weight(dataclasses.replace(ac, thrust_model=model), fleet.site(2))
    assert r.limiting_factor[1] == INVALID and np.isfinite(r.tow_limit_kg[0])
