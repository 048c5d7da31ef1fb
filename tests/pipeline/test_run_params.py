"""Run parameters: what a run stores about itself and what it refuses."""

import pytest

from fieldlimits.pipeline.errors import BadInput
from fieldlimits.pipeline.steps import RunParams


def test_run_parameters_round_trip_through_their_stored_form():
    p = RunParams(temperature_offset_k=2.0, conditions=("dry", "wet"),
                  reliability_levels=(0.5, 0.9), reliability_conditions=("dry", "wet"))
    d = p.as_dict()
    assert d["reliability_conditions"] == ["dry", "wet"]
    assert RunParams.from_dict(d) == p


def test_reliability_defaults_to_the_dry_runway():
    assert RunParams().reliability_conditions == ("dry",)


def test_reliability_condition_outside_the_run_is_refused_with_what_to_fix():
    with pytest.raises(BadInput, match=r"among the run's conditions \(wet\); got dry"):
        RunParams(conditions=("wet",), reliability_conditions=("dry",))


def test_unknown_stored_parameter_is_refused():
    with pytest.raises(BadInput, match="unknown run parameters: colour"):
        RunParams.from_dict({"colour": "red"})
