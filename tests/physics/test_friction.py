"""Friction table lookups (Raymer, Aircraft Design: A Conceptual Approach, §17.8, Table 17.1)."""

import numpy as np
import pytest

from fieldlimits.physics import friction as f


def test_table_values_from_raymer():
    # Raymer Table 17.1: dry concrete rolling 0.03 (typical); wet concrete 0.05; wet grass 0.08;
    # hard turf 0.05 rolling / 0.4 braking; firm dirt 0.04 / 0.3.
    s = f.surface_code(["paved", "paved", "grass", "grass", "dirt"])
    k = f.condition_code(["dry", "wet", "wet", "dry", "dry"])
    np.testing.assert_allclose(f.rolling_friction(s, k), [0.03, 0.05, 0.08, 0.05, 0.04])
    assert f.braking_friction(f.surface_code("grass"), f.condition_code("dry")) == 0.4
    assert f.braking_friction(f.surface_code("dirt"), 0) == 0.3
    # Anderson, Aircraft Performance and Design (1999), Example 6.7: braking 0.4 dry concrete.
    assert f.braking_friction(0, 0) == 0.4


def test_gravel_rolling_from_mason():
    # W. H. Mason, takeoff analysis notes: gravel rolling friction about 0.04.
    assert f.rolling_friction(f.surface_code("gravel"), f.condition_code("dry")) == 0.04


def test_wet_never_better_than_dry():
    s = np.repeat(np.arange(len(f.SURFACES)), 1)
    assert np.all(f.rolling_friction(s, 1) >= f.rolling_friction(s, 0))
    assert np.all(f.braking_friction(s, 1) <= f.braking_friction(s, 0))


def test_names_round_trip_and_unknowns():
    assert list(f.surface_name(np.arange(4))) == list(f.SURFACES)
    assert f.condition_name(1) == "wet"
    assert f.surface_code(" Grass ") == 2
    with pytest.raises(ValueError, match="tarmac"):
        f.surface_code(["paved", "tarmac"])
    assert np.isnan(f.rolling_friction(np.array([9]), np.array([0]))[0])
    assert f.surface_name(9) == ""
