"""``fieldlimits calibrate``: a checked calibrated folder and an honest report; bad points refused.

The points are invented: the demo's (build_demo.REFERENCE_CONDITIONS) and, for a type
described only by its planner figures, the model's own field lengths made 5 % longer.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import duckdb
import numpy as np
import pandas as pd
import pytest

from fieldlimits.pipeline import calibration
from fieldlimits.pipeline.errors import BadInput
from fieldlimits.schemas.caution import CAUTION
from fieldlimits.schemas.typeclasses import DEFAULTED_COLUMNS
from fieldlimits.schemas.validate import validate_folder
from tests.pipeline.conftest import cli, needs_physics

AIRFIELDS = ("saltmere", "dunmarrow")
PLANNER = "planner-jet"


def _read(folder: Path, table: str) -> pd.DataFrame:
    return pd.read_csv(folder / f"{table}.csv", dtype=str, keep_default_na=False)


@pytest.fixture(scope="module")
def small(tmp_path_factory, demo_dir) -> Path:
    """Two demo airfields, the narrowbody and a copy of it with only the planner figures."""
    out = tmp_path_factory.mktemp("small_calibration")
    for t in ("airfields", "runways", "climate_monthly", "wind_rose"):
        df = _read(demo_dir, t)
        df[df["airfield_id"].isin(AIRFIELDS)].to_csv(out / f"{t}.csv", index=False)
    types = _read(demo_dir, "aircraft_types")
    jet = types[types["aircraft_type_id"] == "narrowbody-180"]
    planner = jet.copy()
    planner["aircraft_type_id"] = PLANNER
    planner["name"] = "Planner-figures twin jet"
    for c in DEFAULTED_COLUMNS:
        planner[c] = ""
    pd.concat([jet, planner]).to_csv(out / "aircraft_types.csv", index=False)
    points = _read(demo_dir, "reference_points")
    points[points["aircraft_type_id"] == "narrowbody-180"].to_csv(out / "reference_points.csv", index=False)
    return out


@pytest.fixture
def net(small, tmp_path) -> Path:
    dst = tmp_path / "net"
    shutil.copytree(small, dst)
    return dst


def _longer_points_for_the_planner_type(folder: Path) -> None:
    """Published field lengths 5 % longer than the class-default model at the demo conditions."""
    from fieldlimits.demo_network.build_demo import reference_point_frame
    from fieldlimits.schemas.load import load_folder

    tables = load_folder(folder)
    mine = tables.aircraft_types[tables.aircraft_types["aircraft_type_id"] == PLANNER]
    pts = reference_point_frame(mine)
    fl = pts["kind"] == "field_length"
    pts.loc[fl, "field_length_m"] = (pts.loc[fl, "field_length_m"] * 1.05).round(-1)
    pts["source"] = "invented: class-default model + 5 %"
    old = _read(folder, "reference_points")
    pd.concat([old, pts.astype(str).replace("nan", "")]).to_csv(folder / "reference_points.csv", index=False)


def _limits(db: Path, type_id: str) -> np.ndarray:
    con = duckdb.connect(str(db), read_only=True)
    try:
        rows = con.execute("SELECT tow_limit_kg FROM results_direction WHERE aircraft_type_id = $t "
                           "AND basis = 'design_day' ORDER BY airfield_id, runway_id, month, condition",
                           {"t": type_id}).fetchall()
    finally:
        con.close()
    return np.array([r[0] for r in rows], dtype=float)


# --- the demo ---------------------------------------------------------------------------------

@pytest.fixture(scope="module")
def demo_calibrated(tmp_path_factory, demo_dir):
    out = tmp_path_factory.mktemp("demo_calibrated") / "calibrated"
    result = calibration.calibrate(demo_dir, fit="all")
    index = calibration.write_calibration(result, out)
    return result, out, index


def test_the_calibrated_demo_is_a_clean_input_folder(demo_calibrated, demo_dir):
    result, out, index = demo_calibrated
    assert validate_folder(out) == []
    for f in demo_dir.glob("*.csv"):
        if f.name != "aircraft_types.csv":
            assert (out / f.name).read_bytes() == f.read_bytes(), f.name
    before, after = _read(demo_dir, "aircraft_types"), _read(out, "aircraft_types")
    changed = {c for c in before.columns if not before[c].equals(after[c])}
    assert changed <= set(calibration.FIT_COLUMNS)
    assert set(after["type_class"]) <= {"transport_jet", "business_jet", "regional_turboprop", "light_single"}


def test_the_report_shows_every_point_and_coefficient_with_the_caution(demo_calibrated):
    result, out, index = demo_calibrated
    page = index.read_text(encoding="utf-8")
    assert page.count("Planning estimates only") >= 2
    for name in ("coefficients.csv", "points.csv"):
        # the caution travels with every row (a last column: default CSV readers open it)
        table = pd.read_csv(out / "calibration" / name)
        assert table.columns[-1] == "caution" and (table["caution"] == CAUTION).all()
    pts = pd.read_csv(out / "calibration" / "points.csv")
    assert len(pts) == len(_read(Path(result.input_dir), "reference_points"))
    # residuals are model/published − 1 of the figures listed beside them (model to 0.1 m or
    # kg, residual to 0.01 %: 0.025 points on the shortest, 490 m)
    np.testing.assert_allclose(pts["residual_after_pct"],
                               100 * (pts["model_after"] / pts["published"] - 1), atol=0.025)
    coefs = pd.read_csv(out / "calibration" / "coefficients.csv")
    assert set(coefs["determined"]) == {"yes", "no: stays near its start"}
    assert len(list((out / "calibration").glob("field-length-*.png"))) == 8


def test_the_invented_demo_points_are_met_within_their_spread(demo_calibrated):
    result, _, _ = demo_calibrated
    for tf in result.fits:
        # the points are the model moved by up to 1 % and rounded to 10 m / 10 kg
        assert np.nanmax(np.abs(tf.fit.model_start / tf.fit.published - 1)) < 0.02
        assert np.nanmax(np.abs(tf.fit.residual)) < 0.02
        assert np.sqrt(np.nanmean(tf.fit.residual ** 2)) <= np.sqrt(np.nanmean(
            (tf.fit.model_start / tf.fit.published - 1) ** 2)) + 1e-9


def test_by_default_only_blank_coefficients_are_fitted(demo_dir):
    result = calibration.calibrate(demo_dir, type_ids=["narrowbody-180"])
    (tf,) = result.fits
    assert tf.fit.names == ()  # every coefficient is given in the demo table
    assert result.without_points == []


# --- refusals ---------------------------------------------------------------------------------

def test_the_input_folder_and_a_full_destination_are_refused(net, tmp_path):
    result = calibration.calibrate(net)
    with pytest.raises(BadInput, match="is the input folder"):
        calibration.write_calibration(result, net)
    full = tmp_path / "full"
    full.mkdir()
    (full / "keep.txt").write_text("mine")
    with pytest.raises(BadInput, match="--overwrite"):
        calibration.write_calibration(result, full)
    assert (full / "keep.txt").read_text() == "mine"
    calibration.write_calibration(result, full, overwrite=True)
    assert not (full / "keep.txt").exists() and (full / "calibration" / "index.html").is_file()
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".")]  # no temporary folder left


def test_points_outside_the_type_are_refused_with_file_row_and_column(net):
    pts = _read(net, "reference_points")
    pts.loc[1, "mass_kg"] = "80000"    # above the narrowbody's 74 600 kg MTOW
    pts.loc[2, "headwind_kt"] = "-20"  # tailwind above its 15 kt limit
    pts.to_csv(net / "reference_points.csv", index=False)
    with pytest.raises(BadInput) as err:
        calibration.calibrate(net)
    text = str(err.value)
    assert "reference_points.csv, row 2 (line 3 of the file), column 'mass_kg'" in text
    assert "outside the type's empty mass and MTOW" in text
    assert "row 3 (line 4 of the file), column 'headwind_kt'" in text and "tailwind above" in text


def test_a_folder_without_points_and_bad_options_get_plain_messages(net):
    (net / "reference_points.csv").unlink()
    with pytest.raises(BadInput, match="no reference_points table"):
        calibration.calibrate(net)
    with pytest.raises(BadInput, match="unknown: cl_max"):
        calibration.parse_fit_choice("cl_max,cd0_gear")


def test_the_command_line_exit_codes(net, tmp_path):
    done = cli("calibrate", net, "--out", tmp_path / "out", "--type", "narrowbody-180", "--fit", "cl_max_takeoff")
    assert done.returncode == 0, done.stderr
    assert "narrowbody-180: 7 points" in done.stdout and CAUTION in done.stdout
    bad = cli("calibrate", net, "--out", tmp_path / "out2", "--type", "no-such-type")
    assert bad.returncode == 2 and "no-such-type" in bad.stderr
    assert not (tmp_path / "out2").exists()


# --- a type with only the planner figures --------------------------------------------------------

@needs_physics
def test_a_planner_figures_type_passes_check_runs_and_calibrates(net, tmp_path):
    from fieldlimits.pipeline.explain import explain_case
    from fieldlimits.pipeline.steps import RunParams, run_local

    assert [p for p in validate_folder(net) if p.severity == "error"] == []
    db = tmp_path / "before.duckdb"
    run_local(net, db, RunParams(reliability_levels=()), progress=lambda *a: None)
    before = _limits(db, PLANNER)
    assert before.size and np.isfinite(before).sum() >= 0.5 * before.size
    text = explain_case(net, "saltmere", "08", 7, PLANNER).text
    assert "class defaults (blank in the table)" in text and "cd0_gear" in text

    _longer_points_for_the_planner_type(net)
    result = calibration.calibrate(net, type_ids=[PLANNER])
    (tf,) = result.fits
    assert set(tf.fit.names) == set(calibration.FIT_COLUMNS)  # all blank: all fitted
    start = np.abs(tf.fit.model_start / tf.fit.published - 1)
    assert np.nanmedian(start) > 0.03  # the class-default model was 5 % short
    assert np.sqrt(np.nanmean(tf.fit.residual ** 2)) < 0.5 * np.sqrt(np.nanmean(start ** 2))
    out = tmp_path / "calibrated"
    calibration.write_calibration(result, out)
    assert [p for p in validate_folder(out) if p.severity == "error"] == []
    written = _read(out, "aircraft_types").set_index("aircraft_type_id")
    assert all(written.loc[PLANNER, c] != "" for c in DEFAULTED_COLUMNS)  # the model made explicit
    db2 = tmp_path / "after.duckdb"
    run_local(out, db2, RunParams(reliability_levels=()), progress=lambda *a: None)
    after = _limits(db2, PLANNER)
    # longer published field lengths: the calibrated type takes off lighter, never heavier
    ok = np.isfinite(before) & np.isfinite(after)
    assert np.all(after[ok] <= before[ok] + 1.0) and np.any(after[ok] < before[ok] - 100.0)
    # the narrowbody (no coefficient fitted) is untouched
    np.testing.assert_array_equal(_limits(db2, "narrowbody-180"), _limits(db, "narrowbody-180"))
