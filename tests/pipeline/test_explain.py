"""``fieldlimits explain``: the plain function on the bundled demo network."""

import re

import numpy as np
import pytest

from pipeline.errors import BadInput
from pipeline.explain import explain_case
from schemas.caution import CAUTION


def test_explain_prints_every_step_with_units_and_the_caution():
    r = explain_case(None, "saltmere", "08", 7, "narrowbody-180", "dry")
    text = r.text
    assert CAUTION in text
    for needle in ("station pressure", "air density", "pressure altitude", "density altitude",
                   "ISA deviation", "VS (stall", "VMCG", "V1 (decision", "VR (rotation)", "VLOF", "V2 (takeoff",
                   "TODA", "TORA", "ASDA", "accelerate-stop", "gross gradient", "balanced field length",
                   "takeoff-weight limit", "limited by"):
        assert needle in text, needle
    assert re.search(r"V1 \(decision speed chosen\)\s+[\d.]+ kt", text)
    assert " hPa" in text and " kg/m³" in text and " m/s" in text
    assert r.limiting_factor in text
    assert np.isfinite(r.v1_kt) and 80 < r.v1_kt < 180


def test_explain_matches_the_solver_and_wet_is_not_better():
    dry = explain_case(None, "saltmere", "15", 7, "regional-jet90", "dry")
    wet = explain_case(None, "saltmere", "15", 7, "regional-jet90", "wet")
    screen = lambda t: t.split("screen height")[1].split("\n")[0].split()[0]  # noqa: E731
    assert screen(dry.text) == "35" and screen(wet.text) == "15"  # 14 CFR 25.113
    assert wet.tow_limit_kg <= dry.tow_limit_kg + 1e-6 or np.isnan(wet.tow_limit_kg)


@pytest.mark.parametrize("kw, fragment", [
    (dict(airfield_id="nowhere"), "unknown airfield"),
    (dict(runway_id="99"), "has no runway"),
    (dict(month=13), "month must be"),
    (dict(aircraft_type_id="no-such-type"), "unknown aircraft type"),
])
def test_explain_bad_arguments_name_what_to_fix(kw, fragment):
    args = dict(input_dir=None, airfield_id="saltmere", runway_id="08", month=7,
                aircraft_type_id="narrowbody-180", condition="dry")
    args.update(kw)
    with pytest.raises(BadInput, match=fragment):
        explain_case(**args)


def test_explain_cli_runs(capsys):
    from pipeline.cli import main

    assert main(["explain", "--airfield", "saltmere", "--runway", "08", "--month", "1",
                 "--type", "light-single-4"]) == 0
    out = capsys.readouterr().out
    assert "all engines, 14 CFR 23.65(a)" in out
    assert CAUTION in out
