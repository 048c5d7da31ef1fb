"""The optional reference_points table: a bad table gets one message per problem."""

from __future__ import annotations

import pytest

from fieldlimits.schemas.load import load_folder
from fieldlimits.schemas.tables import TABLES
from tests.schemas.conftest import read, write
from tests.schemas.test_validate import errors, only


def test_the_table_is_optional_and_loads_in_si(net):
    assert not TABLES["reference_points"].required_file
    tables = load_folder(net)
    pts = tables.reference_points
    assert len(pts) > 0
    user = tables.user["reference_points"]
    # °C -> K, kt -> m/s (headwind as reported: factored by the calibration), % -> rise/run
    assert (pts["temperature_k"] - user["oat_c"]).round(9).eq(273.15).all()
    assert pts["headwind_mps"].eq(0.0).all() and pts["slope"].eq(0.0).all()
    assert set(pts["surface"]) == {"paved"} and set(pts["condition"]) <= {"dry", "wet"}
    (net / "reference_points.csv").unlink()
    assert errors(net) == []
    assert len(load_folder(net).reference_points) == 0


def _points(net):
    return read(net, "reference_points")


def test_a_field_length_point_needs_its_length(net):
    df = _points(net)
    df.loc[1, "field_length_m"] = ""
    write(net, "reference_points", df)
    p = only(errors(net), file="reference_points.csv", row=2, column="field_length_m")
    assert "without its field length" in p.message


def test_a_climb_point_leaves_the_length_blank(net):
    df = _points(net)
    row = df.index[df["kind"] == "climb_limited_mass"][0]
    df.loc[row, "field_length_m"] = "1500"
    write(net, "reference_points", df)
    p = only(errors(net), file="reference_points.csv", row=row + 1, column="field_length_m")
    assert "mass_kg" in p.expected


def test_a_length_in_feet_is_recognised(net):
    df = _points(net)
    df.loc[0, "field_length_m"] = "9000"
    write(net, "reference_points", df)
    p = only(errors(net), file="reference_points.csv", row=1, column="field_length_m")
    assert "looks like feet" in p.message


def test_unknown_kind_gets_a_suggestion(net):
    df = _points(net)
    df.loc[2, "kind"] = "field-length"
    write(net, "reference_points", df)
    p = only(errors(net), file="reference_points.csv", row=3, column="kind")
    assert "field_length" in p.message


def test_unknown_type_and_duplicate_point(net):
    df = _points(net)
    df.loc[0, "aircraft_type_id"] = "no-such-jet"
    df.loc[4, "point_id"] = df.loc[3, "point_id"]
    write(net, "reference_points", df)
    probs = errors(net)
    only(probs, file="reference_points.csv", row=1, column="aircraft_type_id", text="unknown aircraft type")
    only(probs, file="reference_points.csv", row=5, column="point_id", text="duplicate key")


@pytest.mark.parametrize("column, value, text", [
    ("oat_c", "95", "looks like °F"),
    ("pressure_altitude_m", "8000", "looks like feet"),
    ("condition", "damp", "unknown value"),
    ("mass_kg", "heavy", "not a number"),
])
def test_cell_problems_name_file_row_and_column(net, column, value, text):
    df = _points(net)
    df.loc[5, column] = value
    write(net, "reference_points", df)
    only(errors(net), file="reference_points.csv", row=6, column=column, text=text)
