"""Runway wind components and regulatory factoring."""

import numpy as np
import pytest

from fieldlimits.physics import wind


def test_components_worked_check():
    # [computed] references file §7: wind from 180° at 20 kt, runway heading 140° →
    # headwind 15.32 kt, crosswind 12.86 kt (from the right).
    head, cross = wind.runway_wind_components(180.0, 20.0, 140.0)
    assert head == pytest.approx(15.32, abs=0.005)
    assert cross == pytest.approx(12.86, abs=0.005)


def test_tailwind_and_left_crosswind_signs():
    head, cross = wind.runway_wind_components(np.array([270.0, 0.0]), 10.0, np.array([90.0, 90.0]))
    assert head[0] == pytest.approx(-10.0)  # straight tailwind
    assert cross[1] == pytest.approx(-10.0)  # wind from the left (north on an east heading)


def test_factoring_50_150():
    # 14 CFR 25.105(d)(1): 50 % of headwind, 150 % of tailwind.
    out = wind.factored_headwind(np.array([10.0, -4.0, 0.0]))
    np.testing.assert_allclose(out, [5.0, -6.0, 0.0])
