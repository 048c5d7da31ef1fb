"""One test per bad-input case: the problem names the right file, row and column.

Row numbers are 1-based data rows (row 1 is the first row below the header), so the
DataFrame index i of a table written with ``to_csv(index=False)`` is row i + 1.
"""

from __future__ import annotations

import codecs
import errno
import os
import re

import numpy as np
import pandas as pd
import pytest

from fieldlimits.schemas.load import load_folder
from fieldlimits.schemas.validate import InputError, Problem, validate_folder
from tests.schemas.conftest import read, write


def errors(folder):
    return [p for p in validate_folder(folder) if p.severity == "error"]


def find(problems, file=None, row=None, column=None, text=None, severity=None):
    """Problems matching every given field (``text`` is a substring of the message)."""
    out = []
    for p in problems:
        if file is not None and p.file != file:
            continue
        if row is not None and p.row != row:
            continue
        if column is not None and p.column != column:
            continue
        if text is not None and text not in p.message:
            continue
        if severity is not None and p.severity != severity:
            continue
        out.append(p)
    return out


def only(problems, **kw):
    hits = find(problems, **kw)
    assert hits, f"no problem matching {kw}; got:\n" + "\n".join(map(str, problems))
    return hits[0]


# ---------------------------------------------------------------------------------------
# the clean fixture and the message format

def test_small_network_is_clean(net):
    assert validate_folder(net) == []


def test_problem_str_names_file_row_line_column_value_expected():
    p = Problem("error", "runways.csv", 4, "tora_m", "-5", "200 … 6000 m", "value out of range")
    text = str(p)
    assert text.startswith("ERROR runways.csv, row 4 (line 5 of the file), column 'tora_m'")
    assert "found '-5'" in text and "expected 200 … 6000 m" in text


def test_load_folder_raises_input_error_listing_every_problem(net):
    df = read(net, "runways")
    df.loc[0, "tora_m"] = "abc"
    df.loc[1, "surface"] = "lava"
    write(net, "runways", df)
    with pytest.raises(InputError, match=r"runways.csv, row 1 \(line 2 of the file\), column 'tora_m'") as exc:
        load_folder(net)
    assert find(exc.value.errors, row=2, column="surface")
    assert len(exc.value.errors) == 2


def test_missing_folder(tmp_path):
    p = only(validate_folder(tmp_path / "nowhere"), text="not found")
    assert p.severity == "error"


# ---------------------------------------------------------------------------------------
# files

def test_missing_file(net):
    (net / "runways.csv").unlink()
    p = only(errors(net), file="runways.csv", text="missing")
    assert p.row is None and "runways.parquet" in p.expected


def test_missing_file_with_near_name_suggests_rename(net):
    (net / "runways.csv").rename(net / "Runways.CSV")
    only(errors(net), file="runways.csv", text="rename it to runways.csv")


def test_routes_file_is_optional(net):
    (net / "routes.csv").unlink()
    assert validate_folder(net) == []


def test_both_csv_and_parquet_present(net):
    pd.read_csv(net / "airfields.csv").to_parquet(net / "airfields.parquet")
    only(errors(net), file="airfields.csv", text="keep only one")


def test_empty_file(net):
    (net / "airfields.csv").write_text("")
    only(errors(net), file="airfields.csv", text="empty")


def test_header_only_file(net):
    (net / "aircraft_types.csv").write_text(
        (net / "aircraft_types.csv").read_text().splitlines()[0] + "\n")
    only(errors(net), file="aircraft_types.csv", text="no data rows")


def test_invalid_csv_extra_field(net):
    lines = (net / "airfields.csv").read_text().splitlines()
    lines[3] = lines[3] + ",surplus"  # line 4 of the file = data row 3
    (net / "airfields.csv").write_text("\n".join(lines) + "\n")
    p = only(errors(net), file="airfields.csv", row=3, text="number of fields")
    assert "line 4" in str(p)


def test_invalid_csv_unclosed_quote(net):
    lines = (net / "airfields.csv").read_text().splitlines()
    lines[2] = lines[2].replace("Dunmarrow", '"Dunmarrow', 1)
    (net / "airfields.csv").write_text("\n".join(lines) + "\n")
    probs = errors(net)
    assert find(probs, file="airfields.csv", text="CSV") or find(probs, file="airfields.csv")
    # whatever the parser made of it, the rows after the quote are not silently accepted
    assert probs


def test_not_utf8_encoding(net):
    text = (net / "airfields.csv").read_text()
    text = text.replace("Frostwick", "Frøstwick")  # data row 3, line 4
    (net / "airfields.csv").write_bytes(text.encode("cp1252"))
    p = only(errors(net), file="airfields.csv", text="not UTF-8")
    assert p.row == 3 and "line 4" in p.message and "Windows-1252" in p.message


def test_utf16_encoding(net):
    text = (net / "airfields.csv").read_text()
    (net / "airfields.csv").write_bytes(codecs.BOM_UTF16_LE + text.encode("utf-16-le"))
    only(errors(net), file="airfields.csv", text="UTF-16")


def test_utf8_with_bom_is_accepted(net):
    text = (net / "airfields.csv").read_text()
    (net / "airfields.csv").write_bytes(codecs.BOM_UTF8 + text.encode())
    assert validate_folder(net) == []


def test_semicolon_separated(net):
    df = read(net, "airfields")
    df.to_csv(net / "airfields.csv", index=False, sep=";")
    only(errors(net), file="airfields.csv", text="separated by ';'")


def test_excel_workbook_named_csv(net):
    (net / "airfields.csv").write_bytes(b"PK\x03\x04" + b"\x00" * 100)
    only(errors(net), file="airfields.csv", text="Excel")


# ---------------------------------------------------------------------------------------
# columns and cells

def test_missing_column(net):
    write(net, "runways", read(net, "runways").drop(columns="tora_m"))
    p = only(errors(net), file="runways.csv", column="tora_m", text="missing")
    assert p.row is None


def test_unknown_column_is_a_warning_with_suggestion(net):
    df = read(net, "airfields").rename(columns={"elevation_m": "elevation_ft"})
    write(net, "airfields", df)
    probs = validate_folder(net)
    w = only(probs, file="airfields.csv", column="elevation_ft", severity="warning")
    assert "did you mean 'elevation_m'" in w.message and "0.3048" in w.message
    only(probs, file="airfields.csv", column="elevation_m", severity="error", text="missing")


def test_duplicate_column_in_header(net):
    lines = (net / "airfields.csv").read_text().splitlines()
    lines = [line + "," + line.split(",")[-1] for line in lines]
    lines[0] = lines[0].rsplit(",", 1)[0] + ",elevation_m"
    (net / "airfields.csv").write_text("\n".join(lines) + "\n")
    only(errors(net), file="airfields.csv", column="elevation_m", text="more than once")


def test_wrong_type(net):
    df = read(net, "runways")
    df.loc[1, "tora_m"] = "long"
    write(net, "runways", df)
    p = only(errors(net), file="runways.csv", row=2, column="tora_m", text="not a number")
    assert p.value == "long"


def test_decimal_comma_hint(net):
    df = read(net, "runways")
    df.loc[0, "slope_pct"] = "0,5"
    write(net, "runways", df)
    only(errors(net), file="runways.csv", row=1, column="slope_pct", text="decimal separator")


def test_not_a_whole_number(net):
    df = read(net, "climate_monthly")
    df.loc[4, "month"] = "5.5"
    write(net, "climate_monthly", df)
    only(errors(net), file="climate_monthly.csv", row=5, column="month", text="whole number")


def test_blank_required_value(net):
    df = read(net, "airfields")
    df.loc[0, "elevation_m"] = ""
    write(net, "airfields", df)
    only(errors(net), file="airfields.csv", row=1, column="elevation_m", text="blank or NaN")


def test_nan_text_in_required_value(net):
    df = read(net, "aircraft_types")
    df.loc[2, "wing_area_m2"] = "NaN"
    write(net, "aircraft_types", df)
    only(errors(net), file="aircraft_types.csv", row=3, column="wing_area_m2",
         text="blank or NaN")


def test_blank_required_text(net):
    df = read(net, "runways")
    df.loc[3, "runway_id"] = ""
    write(net, "runways", df)
    only(errors(net), file="runways.csv", row=4, column="runway_id", text="blank")


def test_identifier_with_space(net):
    df = read(net, "aircraft_types")
    df.loc[0, "aircraft_type_id"] = "light single"
    write(net, "aircraft_types", df)
    only(errors(net), file="aircraft_types.csv", row=1, column="aircraft_type_id",
         text="identifier")


@pytest.mark.parametrize("table,column,row,value,hint", [
    ("airfields", "elevation_m", 2, "-900", None),
    ("airfields", "latitude_deg", 1, "95", None),
    ("airfields", "longitude_deg", 1, "320.5", "−180 … 180"),
    ("runways", "tora_m", 2, "150", None),
    ("runways", "asda_m", 1, "7000", None),
    ("runways", "slope_pct", 3, "6", None),
    ("runways", "heading_true_deg", 1, "400", None),
    ("runways", "heading_true_deg", 2, "-10", None),
    ("climate_monthly", "month", 3, "13", None),
    ("climate_monthly", "mean_daily_max_c", 7, "-70", None),
    ("climate_monthly", "sd_daily_max_c", 2, "-1", None),
    ("climate_monthly", "wet_day_share", 2, "35", "percentage"),
    ("climate_monthly", "qnh_hpa", 1, "30.1", "inches of mercury"),
    ("climate_monthly", "mean_daily_max_c", 1, "300", "kelvin"),
    ("wind_rose", "speed_low_mps", 3, "-2", None),
    ("wind_rose", "direction_deg", 2, "400", None),
    ("aircraft_types", "mtow_kg", 8, "286", "tonnes"),
    ("aircraft_types", "engine_count", 1, "6", None),
])
def test_value_out_of_range(net, table, column, row, value, hint):
    df = read(net, table)
    df.loc[row - 1, column] = value
    write(net, table, df)
    p = only(errors(net), file=f"{table}.csv", row=row, column=column, text="out of range")
    if hint:
        assert hint in p.message, p.message


def test_elevation_in_feet(net):
    df = read(net, "airfields")
    df.loc[1, "elevation_m"] = "9000"
    write(net, "airfields", df)
    p = only(errors(net), file="airfields.csv", row=2, column="elevation_m")
    assert "looks like feet" in p.message and "2743 m" in p.message  # 9000 ft × 0.3048


def test_elevation_near_5000_is_a_warning(net):
    df = read(net, "airfields")
    df.loc[1, "elevation_m"] = "4800"
    write(net, "airfields", df)
    only(validate_folder(net), file="airfields.csv", row=2, column="elevation_m",
         severity="warning", text="feet")


def test_temperatures_in_fahrenheit(net):
    df = read(net, "climate_monthly")
    rows = df["airfield_id"] == "dunmarrow"
    t = df.loc[rows, "mean_daily_max_c"].astype(float)
    df.loc[rows, "mean_daily_max_c"] = (t * 9 / 5 + 32).round(1).astype(str)
    for c in ("p50_daily_max_c", "p85_daily_max_c", "p95_daily_max_c"):
        df.loc[rows, c] = ""
    write(net, "climate_monthly", df)
    probs = errors(net)
    first = int(np.flatnonzero(rows)[0]) + 1
    p = only(probs, file="climate_monthly.csv", row=first, column="mean_daily_max_c",
             text="look like °F")
    assert "dunmarrow" in p.message
    # the hottest months are also out of range, each with the conversion
    assert find(probs, file="climate_monthly.csv", column="mean_daily_max_c", text="°F =")


def test_warm_fahrenheit_within_range_is_flagged(net):
    df = read(net, "climate_monthly")
    rows = df["airfield_id"] == "frostwick"
    df.loc[rows, "mean_daily_max_c"] = [str(v) for v in
                                        [33, 36, 41, 48, 54, 59, 60, 59, 53, 46, 39, 34]]
    write(net, "climate_monthly", df)
    only(validate_folder(net), file="climate_monthly.csv", column="mean_daily_max_c",
         severity="warning", text="°F")


def test_unknown_surface(net):
    df = read(net, "runways")
    df.loc[2, "surface"] = "concrete"
    write(net, "runways", df)
    p = only(errors(net), file="runways.csv", row=3, column="surface", text="unknown value")
    assert "paved" in p.expected


def test_surface_in_capitals_hint(net):
    df = read(net, "runways")
    df.loc[0, "surface"] = "Paved"
    write(net, "runways", df)
    only(errors(net), file="runways.csv", row=1, column="surface", text="lower case")


def test_unknown_thrust_model(net):
    df = read(net, "aircraft_types")
    df.loc[3, "thrust_model"] = "rocket"
    write(net, "aircraft_types", df)
    only(errors(net), file="aircraft_types.csv", row=4, column="thrust_model")


# ---------------------------------------------------------------------------------------
# rows and tables

def test_toda_shorter_than_tora(net):
    df = read(net, "runways")
    df.loc[1, "toda_m"] = str(float(df.loc[1, "tora_m"]) - 100)
    write(net, "runways", df)
    only(errors(net), file="runways.csv", row=2, column="toda_m", text="TODA shorter")


def test_asda_shorter_than_tora(net):
    df = read(net, "runways")
    df.loc[4, "asda_m"] = str(float(df.loc[4, "tora_m"]) - 1)
    write(net, "runways", df)
    only(errors(net), file="runways.csv", row=5, column="asda_m", text="ASDA shorter")


def test_heading_far_from_designator_is_a_warning(net):
    df = read(net, "runways")
    df.loc[0, "heading_true_deg"] = "253"  # designator 08: reciprocal heading typed
    write(net, "runways", df)
    only(validate_folder(net), file="runways.csv", row=1, column="heading_true_deg",
         severity="warning")


def test_duplicate_key(net):
    df = read(net, "runways")
    dup = df.iloc[[0]]
    df = pd.concat([df, dup], ignore_index=True)
    write(net, "runways", df)
    p = only(errors(net), file="runways.csv", row=len(df), column="runway_id",
             text="duplicate key")
    assert "row 1" in p.message


def test_duplicate_aircraft_type(net):
    df = read(net, "aircraft_types")
    df.loc[5, "aircraft_type_id"] = df.loc[2, "aircraft_type_id"]
    write(net, "aircraft_types", df)
    only(errors(net), file="aircraft_types.csv", row=6, column="aircraft_type_id",
         text="on row 3")


def test_unknown_airfield_reference(net):
    df = read(net, "runways")
    df.loc[2, "airfield_id"] = "saltmer"
    write(net, "runways", df)
    p = only(errors(net), file="runways.csv", row=3, column="airfield_id",
             text="unknown airfield")
    assert "did you mean 'saltmere'" in p.message


def test_unknown_aircraft_type_reference(net):
    df = read(net, "routes")
    df.loc[0, "aircraft_type_id"] = "jumbo-9"
    write(net, "routes", df)
    only(errors(net), file="routes.csv", row=1, column="aircraft_type_id",
         text="unknown aircraft type")


def test_route_to_itself(net):
    df = read(net, "routes")
    df.loc[0, "destination_id"] = df.loc[0, "origin_id"]
    write(net, "routes", df)
    only(errors(net), file="routes.csv", row=1, column="destination_id", text="same airfield")


def test_airfield_without_runway_is_a_warning(net):
    df = read(net, "runways")
    write(net, "runways", df[df["airfield_id"] != "frostwick"])
    only(validate_folder(net), file="airfields.csv", row=3, column="airfield_id",
         severity="warning", text="no runway")


def test_months_incomplete(net):
    df = read(net, "climate_monthly")
    df = df[~((df["airfield_id"] == "dunmarrow") & (df["month"] == "7"))]
    write(net, "climate_monthly", df)
    p = only(errors(net), file="climate_monthly.csv", column="month", text="missing month")
    assert "dunmarrow" in p.message and "7" in p.message


def test_airfield_without_climate(net):
    df = read(net, "climate_monthly")
    write(net, "climate_monthly", df[df["airfield_id"] != "frostwick"])
    p = only(errors(net), file="climate_monthly.csv", column="airfield_id", text="no rows")
    assert "frostwick" in p.message and "row 3 of airfields.csv" in p.message


def test_percentiles_must_rise(net):
    df = read(net, "climate_monthly")
    df.loc[0, "p95_daily_max_c"] = str(float(df.loc[0, "p85_daily_max_c"]) - 1)
    write(net, "climate_monthly", df)
    only(errors(net), file="climate_monthly.csv", row=1, column="p95_daily_max_c",
         text="rise")


def test_inconsistent_masses_oew_above_mtow(net):
    df = read(net, "aircraft_types")
    df.loc[1, "oew_kg"] = str(float(df.loc[1, "mtow_kg"]) + 10)
    write(net, "aircraft_types", df)
    only(errors(net), file="aircraft_types.csv", row=2, column="oew_kg", text="MTOW")


def test_inconsistent_masses_payload(net):
    df = read(net, "aircraft_types")
    df.loc[6, "max_payload_kg"] = str(float(df.loc[6, "mtow_kg"]) - float(df.loc[6, "oew_kg"]) + 1)
    write(net, "aircraft_types", df)
    only(errors(net), file="aircraft_types.csv", row=7, column="max_payload_kg",
         text="exceeds MTOW")


def test_landing_mass_above_mtow(net):
    df = read(net, "aircraft_types")
    df.loc[0, "max_landing_mass_kg"] = str(float(df.loc[0, "mtow_kg"]) + 1)
    write(net, "aircraft_types", df)
    only(errors(net), file="aircraft_types.csv", row=1, column="max_landing_mass_kg")


def test_propeller_type_needs_shaft_power(net):
    df = read(net, "aircraft_types")
    i = int(np.flatnonzero(df["thrust_model"] == "propeller")[0])
    df.loc[i, "shaft_power_per_engine_kw"] = ""
    write(net, "aircraft_types", df)
    only(errors(net), file="aircraft_types.csv", row=i + 1,
         column="shaft_power_per_engine_kw", text="shaft power")


def test_turbofan_type_needs_bypass_ratio(net):
    df = read(net, "aircraft_types")
    i = int(np.flatnonzero(df["thrust_model"] == "turbofan")[0])
    df.loc[i, "bypass_ratio"] = ""
    write(net, "aircraft_types", df)
    only(errors(net), file="aircraft_types.csv", row=i + 1, column="bypass_ratio")


# ---------------------------------------------------------------------------------------
# wind rose

def _group(df, airfield="saltmere", month=3):
    return (df["airfield_id"] == airfield) & (_num(df, "month") == month)


def _num(df, column):
    return pd.to_numeric(df[column], errors="coerce")


def test_wind_rose_frequencies_do_not_sum_to_one(net):
    df = read(net, "wind_rose")
    g = _group(df)
    df.loc[g, "frequency"] = (df.loc[g, "frequency"].astype(float) * 0.9).astype(str)
    write(net, "wind_rose", df)
    first = int(np.flatnonzero(g)[0]) + 1
    p = only(errors(net), file="wind_rose.csv", row=first, column="frequency",
             text="do not sum to 1")
    assert p.value.startswith("0.9")


def test_wind_rose_in_percent_is_converted(net):
    df = read(net, "wind_rose")
    df["frequency"] = (df["frequency"].astype(float) * 100).round(4).astype(str)
    write(net, "wind_rose", df)
    probs = validate_folder(net)
    assert not [p for p in probs if p.severity == "error"]
    only(probs, file="wind_rose.csv", column="frequency", severity="warning",
         text="percentages")
    t = load_folder(net)
    sums = t.wind_rose.groupby(["airfield_id", "month"])["frequency"].sum()
    np.testing.assert_allclose(sums, 1.0, atol=1e-3)


def test_wind_rose_missing_sector(net):
    df = read(net, "wind_rose")
    g = _group(df) & (_num(df, "direction_deg") == 90) & (_num(df, "speed_low_mps") == 4)
    assert g.sum() == 1
    missing_row = int(np.flatnonzero(g)[0])
    df = df.drop(index=missing_row).reset_index(drop=True)
    write(net, "wind_rose", df)
    probs = errors(net)
    p = only(probs, file="wind_rose.csv", column="direction_deg", text="misses sector(s) 90")
    assert "saltmere" in p.message and "month 3" in p.message and "4–8 m/s" in p.message


def test_wind_rose_overlapping_sector(net):
    df = read(net, "wind_rose")
    g = _group(df) & (_num(df, "direction_deg") == 45) & (_num(df, "speed_low_mps") == 1.5)
    i = int(np.flatnonzero(g)[0])
    df.loc[i, "direction_deg"] = "50"
    write(net, "wind_rose", df)
    only(errors(net), file="wind_rose.csv", row=i + 1, column="direction_deg",
         text="sectors overlap")


def test_wind_rose_mixed_sector_width(net):
    df = read(net, "wind_rose")
    g = _group(df) & (_num(df, "direction_deg") == 45) & (_num(df, "speed_low_mps") == 1.5)
    i = int(np.flatnonzero(g)[0])
    df.loc[i, "sector_width_deg"] = "30"
    write(net, "wind_rose", df)
    only(errors(net), file="wind_rose.csv", row=i + 1, column="sector_width_deg")


def test_wind_rose_speed_high_not_above_low(net):
    df = read(net, "wind_rose")
    df.loc[5, "speed_high_mps"] = df.loc[5, "speed_low_mps"]
    write(net, "wind_rose", df)
    only(errors(net), file="wind_rose.csv", row=6, column="speed_high_mps", text="not above")


def test_wind_rose_overlapping_speed_classes(net):
    df = read(net, "wind_rose")
    g = _group(df) & (_num(df, "speed_low_mps") == 8)
    df.loc[g, "speed_low_mps"] = "7.0"
    write(net, "wind_rose", df)
    only(errors(net), file="wind_rose.csv", column="speed_low_mps", text="overlaps")


def test_wind_rose_two_calm_rows(net):
    df = read(net, "wind_rose")
    calm = df[_group(df) & (df["direction_deg"] == "")]
    df = pd.concat([df, calm], ignore_index=True)
    write(net, "wind_rose", df)
    only(errors(net), file="wind_rose.csv", row=len(df), text="duplicate key")


def test_wind_rose_direction_without_width(net):
    df = read(net, "wind_rose")
    df.loc[3, "sector_width_deg"] = ""
    write(net, "wind_rose", df)
    only(errors(net), file="wind_rose.csv", row=4, column="sector_width_deg", text="blank")


def test_wind_rose_months_incomplete(net):
    df = read(net, "wind_rose")
    write(net, "wind_rose", df[~((df["airfield_id"] == "frostwick") & (_num(df, "month") == 12))])
    p = only(errors(net), file="wind_rose.csv", column="month", text="missing month")
    assert "frostwick" in p.message and "12" in p.message


# ---------------------------------------------------------------------------------------
# Parquet input gets the same checks and row numbers

def test_parquet_bad_value_row(net):
    df = pd.read_csv(net / "runways.csv", keep_default_na=False, dtype={"runway_id": str})
    df.loc[2, "tora_m"] = 9.0
    df.to_parquet(net / "runways.parquet")
    (net / "runways.csv").unlink()
    p = only(errors(net), file="runways.parquet", row=3, column="tora_m", text="out of range")
    assert str(p).startswith("ERROR runways.parquet, row 3, column 'tora_m'")


def test_many_bad_rows_are_summarised(net):
    df = read(net, "wind_rose")
    df["speed_low_mps"] = "-1"
    write(net, "wind_rose", df)
    probs = find(errors(net), file="wind_rose.csv", column="speed_low_mps",
                 text="out of range")
    assert len(probs) == 50
    summary = only(errors(net), file="wind_rose.csv", column="speed_low_mps", text="more rows")
    assert str(len(df) - 50) in summary.message


# ---------------------------------------------------------------------------------------
# table files that exist but cannot be read: an error naming the file and what is wrong

def _replace_with_folder(net, name):
    (net / name).unlink()
    (net / name).mkdir()


def test_optional_table_as_a_folder(net):
    _replace_with_folder(net, "routes.csv")
    p = only(errors(net), file="routes.csv", text="is a folder, not a file")
    assert p.row is None


def test_required_table_as_a_folder(net):
    _replace_with_folder(net, "runways.csv")
    probs = errors(net)
    only(probs, file="runways.csv", text="is a folder, not a file")
    assert not find(probs, file="runways.csv", text="missing")


def test_parquet_table_as_a_folder(net):
    (net / "routes.csv").unlink()
    (net / "routes.parquet").mkdir()
    only(errors(net), file="routes.parquet", text="is a folder")


def test_optional_table_as_a_symlink_loop(net):
    (net / "routes.csv").unlink()
    (net / "routes.csv").symlink_to("routes.csv")
    only(errors(net), file="routes.csv", text="symbolic link that loops")


def test_required_table_as_a_symlink_loop_is_not_called_missing(net):
    (net / "airfields.csv").unlink()
    (net / "airfields.csv").symlink_to("other.csv")
    (net / "other.csv").symlink_to("airfields.csv")
    probs = errors(net)
    only(probs, file="airfields.csv", text="loops")
    assert not find(probs, file="airfields.csv", text="missing")


def test_dangling_symlink(net):
    (net / "routes.csv").unlink()
    (net / "routes.csv").symlink_to(net / "gone" / "routes.csv")
    p = only(errors(net), file="routes.csv", text="which does not exist")
    assert str(net / "gone" / "routes.csv") in p.message


def test_symlink_to_a_good_file_is_read(net, tmp_path):
    (net / "routes.csv").rename(tmp_path / "kept_routes.csv")
    (net / "routes.csv").symlink_to(tmp_path / "kept_routes.csv")
    assert validate_folder(net) == []


def test_table_that_is_a_pipe(net):
    (net / "routes.csv").unlink()
    os.mkfifo(net / "routes.csv")
    only(errors(net), file="routes.csv", text="not a regular file")


def test_table_without_read_permission_reported(net, monkeypatch):
    # the permission check opens the file; we run as root in CI, where chmod cannot deny
    # reading, so the refusal the system would give is simulated here (the test below
    # does it for real when not root)
    import fieldlimits.schemas.validate as validate

    real_open = os.open

    def refuse(path, flags, *args, **kw):
        if os.fspath(path).endswith("routes.csv"):
            raise PermissionError(errno.EACCES, "Permission denied", os.fspath(path))
        return real_open(path, flags, *args, **kw)

    monkeypatch.setattr(validate.os, "open", refuse)
    only(errors(net), file="routes.csv", text="cannot be read: permission denied")


@pytest.mark.skipif(not hasattr(os, "geteuid") or os.geteuid() == 0,
                    reason="root reads any file: chmod cannot make it unreadable")
def test_table_without_read_permission(net):
    (net / "routes.csv").chmod(0)
    only(errors(net), file="routes.csv", text="permission denied")


def test_unreadable_table_stops_load(net):
    _replace_with_folder(net, "routes.csv")
    with pytest.raises(InputError, match="routes.csv: routes.csv is a folder"):
        load_folder(net)


def test_input_folder_that_is_a_file(tmp_path):
    (tmp_path / "tables.csv").write_text("a,b\n")
    only(validate_folder(tmp_path / "tables.csv"), text="is a file, not a folder")


# ---------------------------------------------------------------------------------------
# identifiers and other text: kept as written; messages that say the true rule

NA_SPELLINGS = ["null", "NA", "None", "nan", "N/A", "NULL", "#N/A"]


@pytest.mark.parametrize("spelling", NA_SPELLINGS)
def test_id_spelled_like_a_missing_value_is_kept(net, spelling):
    # pandas reads these as missing by default; here they are identifiers like any other
    for table in ("airfields", "runways", "climate_monthly", "wind_rose"):
        df = read(net, table)
        df.loc[df["airfield_id"] == "frostwick", "airfield_id"] = spelling
        write(net, table, df)
    df = read(net, "routes")
    for col in ("origin_id", "destination_id"):
        df.loc[df[col] == "frostwick", col] = spelling
    write(net, "routes", df)
    probs = validate_folder(net)
    if spelling in ("N/A", "#N/A"):  # '/' and '#' are not allowed in identifiers
        p = only(probs, file="airfields.csv", row=3, column="airfield_id",
                 text="not a valid identifier")
        assert p.value == spelling
        assert not find(probs, text="blank")
        return
    assert probs == []
    tables = load_folder(net)
    assert spelling in set(tables.airfields["airfield_id"])
    assert (tables.runways["airfield_id"] == spelling).sum() == (
        read(net, "runways")["airfield_id"] == spelling).sum()
    assert spelling in set(tables.wind_rose["airfield_id"])


@pytest.mark.parametrize("spelling", NA_SPELLINGS)
def test_name_spelled_like_a_missing_value_is_kept(net, spelling):
    df = read(net, "aircraft_types")
    df.loc[2, "name"] = spelling
    write(net, "aircraft_types", df)
    assert validate_folder(net) == []
    assert load_folder(net).aircraft_types["name"].iloc[2] == spelling


@pytest.mark.parametrize("spelling", ["null", "NA", "None", "N/A"])
def test_missing_value_spelling_in_a_number_column_is_blank(net, spelling):
    df = read(net, "airfields")
    df.loc[0, "elevation_m"] = spelling
    write(net, "airfields", df)
    only(errors(net), file="airfields.csv", row=1, column="elevation_m", text="blank")


@pytest.mark.parametrize("text", ["NA", "null"])
def test_missing_value_spelling_in_an_allowed_values_column_is_named(net, text):
    df = read(net, "runways")
    df.loc[1, "surface"] = text
    write(net, "runways", df)
    p = only(errors(net), file="runways.csv", row=2, column="surface", text="unknown value")
    assert p.value == text


def test_id_starting_with_a_dash_is_refused_with_the_true_rule(net):
    df = read(net, "aircraft_types")
    df.loc[0, "aircraft_type_id"] = "-jet"
    write(net, "aircraft_types", df)
    p = only(errors(net), file="aircraft_types.csv", row=1, column="aircraft_type_id",
             text="not a valid identifier")
    assert p.value == "-jet"
    assert "letter or digit first" in p.expected
    # the rule in words is the pattern the tables use
    from fieldlimits.schemas.tables import ID_PATTERN
    from fieldlimits.schemas.validate import ID_RULE

    assert ID_RULE in p.expected
    assert re.match(ID_PATTERN, "jet-2") and not re.match(ID_PATTERN, "-jet")
    assert not re.match(ID_PATTERN, "_jet") and not re.match(ID_PATTERN, ".jet")


@pytest.mark.parametrize("value", ["a-b", "a_b", "a.b", "9a", "A"])
def test_ids_the_rule_allows_are_accepted(net, value):
    df = read(net, "aircraft_types")
    old = df.loc[0, "aircraft_type_id"]
    df.loc[0, "aircraft_type_id"] = value
    write(net, "aircraft_types", df)
    routes = read(net, "routes")
    routes.loc[routes["aircraft_type_id"] == old, "aircraft_type_id"] = value
    write(net, "routes", routes)
    assert errors(net) == []


def test_long_value_is_cut_in_messages(net):
    long_id = "saltmere " + "x" * 200_000
    df = read(net, "airfields")
    df.loc[0, "airfield_id"] = long_id
    write(net, "airfields", df)
    df = read(net, "runways")
    df.loc[0, "tora_m"] = "9" * 200_000 + " m"
    write(net, "runways", df)
    probs = validate_folder(net)
    p = only(probs, file="airfields.csv", row=1, column="airfield_id",
             text="not a valid identifier")
    assert p.value == long_id[:60] + f"… ({len(long_id)} characters)"
    q = only(probs, file="runways.csv", row=1, column="tora_m", text="not a number")
    assert q.value.endswith("… (200002 characters)")
    # and no message anywhere echoes the value in full (months-missing names the airfield)
    only(probs, file="climate_monthly.csv", text="has no rows")
    assert all(len(str(x)) < 1000 for x in probs), max(len(str(x)) for x in probs)


def test_short_values_are_shown_whole():
    from fieldlimits.schemas.validate import shorten

    assert shorten("x" * 80) == "x" * 80  # within the allowance: nothing gained by a cut
    assert shorten("y" * 81) == "y" * 60 + "… (81 characters)"
    p = Problem("error", "a.csv", 1, "c", "z" * 500, None, "bad")
    assert p.value == "z" * 60 + "… (500 characters)"
