"""Loading, SI conversion, CSV <-> Parquet round trip, hashes and DDL."""

from __future__ import annotations

import dataclasses
import shutil

import duckdb
import numpy as np
import pandas as pd
import pytest

from fieldlimits.demo_network import demo_path
from fieldlimits.demo_network.synthetic import generate_network
from fieldlimits.schemas import hashing
from fieldlimits.schemas.ddl import all_tables_sql, create_table_sql
from fieldlimits.schemas.load import AIRCRAFT_FIELDS, Tables, load_folder
from fieldlimits.schemas.tables import TABLES
from fieldlimits.schemas.validate import validate_folder


@pytest.fixture(scope="module")
def demo() -> Tables:
    return load_folder(demo_path())


def test_demo_loads_without_warnings(demo):
    assert demo.warnings == []
    assert set(dict(demo)) == set(TABLES)  # also a mapping: table name -> SI frame


def test_si_conversions(demo):
    user = demo.user
    # slope: per cent -> rise over run
    np.testing.assert_allclose(demo.runways["slope"], user["runways"]["slope_pct"] / 100)
    # °C -> K (ICAO Doc 7488 / SI: T[K] = t[°C] + 273.15)
    np.testing.assert_allclose(demo.climate_monthly["mean_daily_max_k"],
                               user["climate_monthly"]["mean_daily_max_c"] + 273.15)
    np.testing.assert_allclose(demo.climate_monthly["qnh_pa"],
                               user["climate_monthly"]["qnh_hpa"] * 100)
    ac, uac = demo.aircraft_types, user["aircraft_types"]
    # 1 kt = 1852 m / 3600 s exactly (international nautical mile; BIPM SI Brochure,
    # 9th ed., Table 8): 10 kt = 5.14444 m/s
    np.testing.assert_allclose(ac["tailwind_limit_mps"], uac["tailwind_limit_kt"] * 0.514444,
                               rtol=1e-6)
    np.testing.assert_allclose(ac["static_thrust_per_engine_n"],
                               uac["static_thrust_per_engine_kn"] * 1000)
    # 1 kWh = 3.6e6 J, so kg/kWh ÷ 3.6e6 = kg/(W s)
    prop = uac["thrust_model"] == "propeller"
    np.testing.assert_allclose(ac["cruise_psfc_kg_per_w_s"][prop],
                               uac["cruise_psfc_kg_per_kwh"][prop] / 3.6e6)
    assert ac["cruise_psfc_kg_per_w_s"][~prop].isna().all()
    # g/(kN s) -> kg/(N s) is 1e-6
    np.testing.assert_allclose(ac["cruise_tsfc_kg_per_n_s"][~prop],
                               uac["cruise_tsfc_g_per_kn_s"][~prop] * 1e-6)


def test_aircraft_frame_has_the_aircraft_dataclass_fields(demo):
    cols = list(demo.aircraft_types.columns)
    assert cols == ["aircraft_type_id", "name", *AIRCRAFT_FIELDS, "max_passengers"]
    targets = {c.target for c in TABLES["aircraft_types"].columns}
    assert set(AIRCRAFT_FIELDS) <= targets
    wl = pytest.importorskip("fieldlimits.physics.weightlimit")
    fields = [f.name for f in dataclasses.fields(wl.Aircraft)]
    assert set(fields) <= set(cols), set(fields) - set(cols)


def test_thrust_model_codes_and_blank_defaults(demo):
    from fieldlimits.physics.thrust import MODEL_CODES

    ac, uac = demo.aircraft_types, demo.user["aircraft_types"]
    assert list(ac["thrust_model"]) == [MODEL_CODES[m] for m in uac["thrust_model"]]
    prop = uac["thrust_model"] == "propeller"
    assert (ac.loc[prop, "bypass_ratio"] == 0).all()  # blank -> 0
    assert (ac.loc[~prop, "shaft_power_per_engine_w"] == 0).all()


def test_route_defaults_fill_blanks(demo):
    from fieldlimits.schemas.tables import ROUTE_DEFAULTS

    r = demo.routes
    first = r.iloc[0]  # saltmere-southreach: every policy cell blank
    assert first["route_factor"] == ROUTE_DEFAULTS["route_factor"]
    assert first["final_reserve_s"] == ROUTE_DEFAULTS["final_reserve_min"] * 60
    assert first["alternate_distance_m"] == ROUTE_DEFAULTS["alternate_distance_km"] * 1000
    assert not r[["route_factor", "contingency_fraction", "passenger_mass_kg"]].isna().any().any()


def test_calm_rows_have_blank_direction(demo):
    w = demo.wind_rose
    calm = w["direction_deg"].isna()
    assert calm.sum() == len(demo.airfields) * 12
    assert (w.loc[calm, "speed_low_mps"] == 0).all()


def _to_parquet(src, dst):
    dst.mkdir()
    for name in TABLES:
        if (src / f"{name}.csv").exists():
            t = load_folder(src).user[name]
            t.to_parquet(dst / f"{name}.parquet", index=False)


def test_csv_parquet_round_trip(tmp_path, demo):
    _to_parquet(demo_path(), tmp_path / "pq")
    back = load_folder(tmp_path / "pq")
    for name in TABLES:
        pd.testing.assert_frame_equal(back.table(name), demo.table(name), check_dtype=True)
        pd.testing.assert_frame_equal(back.user[name], demo.user[name])
    assert hashing.table_hashes(back) == hashing.table_hashes(demo)
    # and back to CSV
    csv_dir = tmp_path / "csv"
    csv_dir.mkdir()
    for name, df in back.user.items():
        if len(df) or TABLES[name].required_file:  # an empty optional table: no file
            df.to_csv(csv_dir / f"{name}.csv", index=False)
    again = load_folder(csv_dir)
    for name in TABLES:
        pd.testing.assert_frame_equal(again.table(name), demo.table(name))


def test_generated_network_validates_cleanly_and_round_trips(tmp_path):
    generate_network(200, seed=11, out_dir=tmp_path / "csv")
    assert validate_folder(tmp_path / "csv") == []
    generate_network(200, seed=11, out_dir=tmp_path / "pq", fmt="parquet")
    assert validate_folder(tmp_path / "pq") == []
    a, b = load_folder(tmp_path / "csv"), load_folder(tmp_path / "pq")
    for name in TABLES:
        pd.testing.assert_frame_equal(a.table(name), b.table(name))


def test_hashes_ignore_row_order_and_see_changes(tmp_path, demo):
    dst = tmp_path / "net"
    shutil.copytree(demo_path(), dst)
    rw = pd.read_csv(dst / "runways.csv", dtype=str, keep_default_na=False)
    rw.iloc[::-1].to_csv(dst / "runways.csv", index=False)
    shuffled = load_folder(dst)
    assert hashing.table_hashes(shuffled) == hashing.table_hashes(demo)
    assert hashing.airfield_hashes(shuffled) == hashing.airfield_hashes(demo)
    # change one runway of one airfield: only that airfield's hash moves
    rw.loc[rw["airfield_id"] == "gullhaven", "tora_m"] = "2390"
    rw.to_csv(dst / "runways.csv", index=False)
    changed = load_folder(dst)
    before, after = hashing.airfield_hashes(demo), hashing.airfield_hashes(changed)
    assert [k for k in before if before[k] != after[k]] == ["gullhaven"]
    assert hashing.table_hashes(changed)["runways"] != hashing.table_hashes(demo)["runways"]
    assert hashing.table_hashes(changed)["airfields"] == hashing.table_hashes(demo)["airfields"]
    assert hashing.aircraft_type_hashes(changed) == hashing.aircraft_type_hashes(demo)
    assert all(h.startswith("v1:") for h in before.values())


def test_ddl_creates_tables_with_unit_comments(demo):
    con = duckdb.connect()
    con.execute(all_tables_sql("input_"))
    con.register("af", demo.user["airfields"])
    con.execute("INSERT INTO input_airfields SELECT * FROM af")
    assert con.execute("SELECT count(*) FROM input_airfields").fetchone()[0] == len(demo.airfields)
    comment = con.execute(
        "SELECT comment FROM duckdb_columns() WHERE table_name = 'input_runways' "
        "AND column_name = 'tora_m'").fetchone()[0]
    assert comment.startswith("[m] Takeoff run available")
    cols = con.execute("SELECT column_name FROM duckdb_columns() WHERE table_name = "
                       "'input_aircraft_types' ORDER BY column_index").fetchall()
    assert [c[0] for c in cols] == list(TABLES["aircraft_types"].names)


def test_ddl_leading_columns():
    sql = create_table_sql("routes", "stored_routes",
                           leading_columns=[("run_id", "VARCHAR NOT NULL", "run it belongs to")])
    con = duckdb.connect()
    con.execute(sql)
    first = con.execute("SELECT column_name, comment FROM duckdb_columns() WHERE table_name = "
                        "'stored_routes' ORDER BY column_index").fetchone()
    assert first == ("run_id", "run it belongs to")
