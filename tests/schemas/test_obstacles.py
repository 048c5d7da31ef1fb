"""The optional obstacles table: each bad row gets its own message, the departure area, loading
and the per-airfield hashes (an airfield without obstacles keeps its hash)."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from fieldlimits.schemas import departure, hashing
from fieldlimits.schemas.load import load_folder
from fieldlimits.schemas.validate import validate_folder
from tests.schemas.conftest import write
from tests.schemas.test_validate import errors, find, only

GOOD = [
    # airfield_id, runway_id, obstacle_id, distance m, height m, lateral offset m
    ("saltmere", "08", "mast-1", "1200", "25", ""),
    ("saltmere", "08", "ridge", "5400", "110", "-300"),
    ("dunmarrow", "17", "tower", "800", "18", "40"),
]
COLUMNS = ["airfield_id", "runway_id", "obstacle_id", "distance_from_toda_end_m", "height_m",
           "lateral_offset_m"]


def _obstacles(net, rows=GOOD):
    write(net, "obstacles", pd.DataFrame(rows, columns=COLUMNS))


def test_good_obstacles_are_clean_and_load(net):
    _obstacles(net)
    assert validate_folder(net) == []
    t = load_folder(net)
    ob = t.obstacles.sort_values("obstacle_id").reset_index(drop=True)
    assert list(ob["obstacle_id"]) == ["mast-1", "ridge", "tower"]
    # blank lateral offset = 0: on the extended centreline
    assert ob.loc[0, "lateral_offset_m"] == 0.0
    assert ob.loc[1, "distance_from_toda_end_m"] == 5400.0
    assert t.user["obstacles"].shape[0] == 3


def test_without_the_table_obstacles_is_empty_with_its_columns(net):
    t = load_folder(net)
    assert len(t.obstacles) == 0
    assert list(t.obstacles.columns) == COLUMNS


def test_distance_zero_or_negative_lies_not_past_the_end_of_toda(net):
    rows = list(GOOD) + [("saltmere", "08", "fence", "0", "3", ""),
                         ("saltmere", "26", "pole", "-150", "8", "")]
    _obstacles(net, rows)
    errs = errors(net)
    for row, value in ((4, "0"), (5, "-150")):
        p = only(errs, file="obstacles.csv", row=row, column="distance_from_toda_end_m",
                 text="does not lie past the end of TODA")
        assert p.value == value
        assert "end of toda" in p.expected.lower()
    assert len(find(errs, column="distance_from_toda_end_m")) == 2


def test_unknown_runway_of_a_known_airfield_names_its_runways(net):
    rows = list(GOOD) + [("saltmere", "08L", "mast-2", "900", "20", "")]
    _obstacles(net, rows)
    p = only(errors(net), file="obstacles.csv", row=4, column="runway_id",
             text="unknown runway of that airfield")
    assert p.value == "08L"
    # the airfield's own runway directions, as listed in runways.csv
    for rid in ("08", "26", "15", "33"):
        assert rid in p.expected
    assert "did you mean '08'?" in p.message


def test_unknown_airfield_gets_one_message_not_two(net):
    rows = list(GOOD) + [("saltmeer", "08", "mast-2", "900", "20", "")]
    _obstacles(net, rows)
    errs = errors(net)
    p = only(errs, file="obstacles.csv", row=4, column="airfield_id", text="unknown airfield")
    assert "did you mean 'saltmere'?" in p.message
    assert find(errs, file="obstacles.csv", column="runway_id") == []


def test_duplicate_obstacle_id_on_the_same_runway(net):
    rows = list(GOOD) + [("saltmere", "08", "ridge", "6000", "130", "")]
    _obstacles(net, rows)
    only(errors(net), file="obstacles.csv", row=4, text="duplicate key")


def test_the_same_obstacle_id_on_another_runway_is_fine(net):
    rows = list(GOOD) + [("saltmere", "26", "ridge", "6000", "130", "")]
    _obstacles(net, rows)
    assert errors(net) == []


@pytest.mark.parametrize("column, value, text", [
    ("height_m", "4000", "out of range"),         # above 3 000 m
    ("height_m", "", "blank"),
    ("distance_from_toda_end_m", "abc", "not a number"),
    ("distance_from_toda_end_m", "250000", "out of range"),
    ("obstacle_id", "", "blank"),
    ("obstacle_id", "mast 3", "identifier"),
])
def test_bad_cells_each_get_their_message(net, column, value, text):
    df = pd.DataFrame(GOOD, columns=COLUMNS)
    df.loc[1, column] = value
    write(net, "obstacles", df)
    p = only(errors(net), file="obstacles.csv", row=2, column=column)
    assert text in (p.message + " " + str(p.expected)).lower(), str(p)


def test_several_bad_rows_each_get_their_own_message(net):
    rows = list(GOOD) + [("saltmere", "08", "a", "-1", "5", ""),
                         ("saltmere", "08", "b", "700", "9000", ""),
                         ("saltmere", "99", "c", "700", "5", "")]
    _obstacles(net, rows)
    errs = [p for p in errors(net) if p.file == "obstacles.csv"]
    assert sorted((p.row, p.column) for p in errs) == [
        (4, "distance_from_toda_end_m"), (5, "height_m"), (6, "runway_id")]
    for p in errs:  # file, row, column, value and what to fix, all in the text
        text = str(p)
        assert "obstacles.csv" in text and f"row {p.row}" in text and p.column in text
        assert p.expected


def test_obstacle_outside_the_departure_area_is_a_warning(net):
    # at 1 200 m the half-width is 90 + 0.125 × 1 200 = 240 m (CAT.POL.A.210, from memory)
    rows = list(GOOD) + [("saltmere", "08", "hangar", "1200", "15", "241"),
                         ("saltmere", "08", "shed", "1200", "15", "-240"),
                         ("saltmere", "08", "far-hill", "20000", "300", "905")]
    _obstacles(net, rows)
    problems = validate_folder(net)
    assert errors(net) == []
    warned = find(problems, file="obstacles.csv", column="lateral_offset_m", severity="warning")
    assert sorted(p.row for p in warned) == [4, 6]
    assert "left out of the run" in warned[0].message
    assert "90 m + 0.125" in warned[0].expected and "900 m" in warned[0].expected


def test_departure_area_half_width_by_hand():
    # 90 m + 0.125 D, at most 900 m (EASA Air OPS CAT.POL.A.210, from memory): 90 m at the
    # end of TODA, 215 m at 1 000 m, the cap from D = (900 − 90)/0.125 = 6 480 m
    np.testing.assert_allclose(departure.half_width_m([0.0, 1000.0, 6480.0, 20000.0]),
                               [90.0, 215.0, 900.0, 900.0])
    inside = departure.in_departure_area([1000.0, 1000.0, 1000.0, 30000.0], [215.0, -215.1, np.nan, 899.0])
    assert inside.tolist() == [True, False, True, True]


def test_airfield_hash_changes_only_where_obstacles_are(net):
    before = hashing.airfield_hashes(load_folder(net))
    _obstacles(net)
    after = hashing.airfield_hashes(load_folder(net))
    assert after["frostwick"] == before["frostwick"]  # no obstacles: same hash, reused
    assert after["saltmere"] != before["saltmere"]
    assert after["dunmarrow"] != before["dunmarrow"]
    rows = [list(r) for r in GOOD]
    rows[0][4] = "26"  # a higher mast at saltmere only
    _obstacles(net, rows)
    again = hashing.airfield_hashes(load_folder(net))
    assert again["saltmere"] != after["saltmere"]
    assert again["dunmarrow"] == after["dunmarrow"]


def test_obstacle_rows_in_another_order_hash_alike(net):
    _obstacles(net)
    h1 = hashing.airfield_hashes(load_folder(net))
    _obstacles(net, list(reversed(GOOD)))
    assert hashing.airfield_hashes(load_folder(net)) == h1



def test_obstacle_above_the_end_of_the_takeoff_path_is_a_warning(net):
    # 1 500 ft − 35 ft = 1 465 ft = 446.5 m above the runway end (14 CFR 25.111(a), 121.189)
    rows = list(GOOD) + [("saltmere", "08", "peak", "15000", "447", ""),
                         ("saltmere", "08", "hill", "15000", "446", "")]
    _obstacles(net, rows)
    assert errors(net) == []
    warned = find(validate_folder(net), file="obstacles.csv", column="height_m", severity="warning")
    assert [p.row for p in warned] == [4]
    assert "1 500 ft" in warned[0].message and "447" == warned[0].value


def test_flight_path_columns_of_aircraft_types_blank_and_given(net):
    """Blank = the documented defaults (6 s, 400 ft, 1 000 ft, 0.9, 1.5); feet converted to
    metres (1 ft = 0.3048 m exactly, by definition)."""
    types = pd.read_csv(net / "aircraft_types.csv", dtype=str, keep_default_na=False)
    for c in ("gear_retraction_s", "acceleration_height_ft", "max_acceleration_height_ft", "mct_share",
              "cl_max_clean"):
        types[c] = ""
    types.loc[0, ["gear_retraction_s", "acceleration_height_ft", "max_acceleration_height_ft", "mct_share",
                  "cl_max_clean"]] = ["8", "800", "1500", "0.85", "1.4"]
    write(net, "aircraft_types", types)
    a = load_folder(net).aircraft_types
    np.testing.assert_allclose(a.loc[0, ["gear_retraction_s", "acceleration_height_m", "max_acceleration_height_m",
                                         "mct_share", "cl_max_clean"]].to_numpy(float),
                               [8.0, 243.84, 457.2, 0.85, 1.4])
    np.testing.assert_allclose(a.loc[1, ["gear_retraction_s", "acceleration_height_m", "max_acceleration_height_m",
                                         "mct_share", "cl_max_clean"]].to_numpy(float),
                               [6.0, 121.92, 304.8, 0.9, 1.5])


def test_acceleration_height_below_400_ft_is_refused(net):
    # 14 CFR 25.111(c)(2): the acceleration height is at least 400 ft
    types = pd.read_csv(net / "aircraft_types.csv", dtype=str, keep_default_na=False)
    types["acceleration_height_ft"] = ""
    types.loc[2, "acceleration_height_ft"] = "350"
    write(net, "aircraft_types", types)
    p = only(errors(net), file="aircraft_types.csv", row=3, column="acceleration_height_ft")
    assert p.value == "350" and "400" in p.expected
