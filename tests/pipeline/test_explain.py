"""``fieldlimits explain``: the plain function on the bundled demo network."""

import re

import numpy as np
import pytest

from fieldlimits.pipeline.errors import BadInput
from fieldlimits.pipeline.explain import explain_case
from fieldlimits.schemas.caution import CAUTION


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
    from fieldlimits.pipeline.cli import main

    assert main(["explain", "--airfield", "saltmere", "--runway", "08", "--month", "1",
                 "--type", "light-single-4"]) == 0
    out = capsys.readouterr().out
    assert "all engines, 14 CFR 23.65(a)" in out
    assert CAUTION in out


def test_explain_shows_the_event_sequence_and_the_lineup(tmp_path):
    import shutil

    import pandas as pd

    from fieldlimits.demo_network import demo_path

    r = explain_case(None, "saltmere", "08", 7, "narrowbody-180", "dry")
    for needle in ("VEF (engine failure)", "recognition time, VEF to V1", "time between stop actions",
                   "rotation"):
        assert needle in r.text, needle
    # defaults (blank columns): 1 s, 1 s and 8° at 3°/s = 2.67 s (common flight-test practice)
    assert re.search(r"recognition time, VEF to V1\s+1\.0 s", r.text)
    assert re.search(r"rotation\s+2\.67 s", r.text)
    folder = tmp_path / "net"
    shutil.copytree(demo_path(), folder)
    types = pd.read_csv(folder / "aircraft_types.csv", dtype=str, keep_default_na=False)
    types.loc[types["aircraft_type_id"] == "narrowbody-180", "lineup_allowance_m"] = "60"
    types.to_csv(folder / "aircraft_types.csv", index=False)
    lined = explain_case(folder, "saltmere", "08", 7, "narrowbody-180", "dry")
    assert "line-up allowance" in lined.text
    # saltmere 08: TORA 3400, TODA 3680, ASDA 3460 (demo), less 60 m each
    assert re.search(r"available after line-up\s+3,340 / 3,620 / 3,400 m", lined.text)
