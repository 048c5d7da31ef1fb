"""The DuckDB store: one-transaction loads, failed runs, read-only readers, the lock message."""

from __future__ import annotations

import subprocess
import sys
import textwrap
import time

import duckdb
import numpy as np
import pandas as pd
import pytest

from fieldlimits.pipeline import chunks, store
from fieldlimits.pipeline.errors import BadInput, StoreBusy
from fieldlimits.schemas.results import RESULT_COLUMNS


def _rows(run_id: int, n_runways: int = 2, tow=(60000.0, 65000.0)) -> pd.DataFrame:
    """Hand-made results_direction rows: one airfield, n runways, one type, one month."""
    rows = []
    for i in range(n_runways):
        rows.append({
            "run_id": run_id, "airfield_id": "saltmere", "runway_id": f"{9 + 18 * i:02d}",
            "aircraft_type_id": "twin-a", "month": 7, "condition": "dry", "basis": "design_day",
            "reliability": np.nan, "oat_c": 31.0, "pressure_altitude_m": 120.0,
            "density_altitude_m": 1000.0, "headwind_mps": 0.0, "tow_limit_kg": tow[i],
            "limiting_factor": "takeoff_distance", "takeoff_distance_m": 2000.0,
            "takeoff_run_m": 1800.0, "accelerate_stop_m": np.nan, "v1_kt": np.nan,
            "vr_kt": 140.0, "v2_kt": 150.0, "v_lof_kt": 145.0, "climb_gradient": np.nan})
    return pd.DataFrame(rows, columns=list(RESULT_COLUMNS))


def _record(**kw) -> store.RunRecord:
    base = dict(input_dir="/nowhere", parameters={"temperature_offset_k": 0.0},
                temperature_offset_k=0.0, input_hash="h", input_hashes={"airfields": "h"},
                code_version="test", airfields=1, cases=2, chunks=1)
    base.update(kw)
    return store.RunRecord(**base)


def _write_part(tmp_path, run_id, frame, name="direction"):
    import pyarrow.parquet as pq

    path = tmp_path / f"run{run_id}.{name}.parquet"
    pq.write_table(chunks.to_result_table(frame), path)
    return str(path)


def _best(tmp_path, run_id, direction_path):
    import pyarrow.parquet as pq

    table = chunks.best_direction_rows(pq.read_table(direction_path), [])
    path = tmp_path / f"run{run_id}.best.parquet"
    pq.write_table(table, path)
    return str(path)


def _complete_run(tmp_path, db, tow=(60000.0, 65000.0)) -> int:
    run_id = store.register_run(db, _record())
    part = _write_part(tmp_path, run_id, _rows(run_id, tow=tow))
    inputs = [store.InputTable("airfields", "/nowhere/airfields.csv", "h1",
                               pd.DataFrame({"airfield_id": ["saltmere"], "name": ["Saltmere"],
                                             "latitude_deg": [1.0], "longitude_deg": [2.0],
                                             "elevation_m": [10.0]}))]
    store.load_run(db, store.LoadSpec(run_id, [part], [_best(tmp_path, run_id, part)], inputs))
    return run_id


def test_load_writes_run_results_best_direction_and_views(tmp_path):
    db = tmp_path / "s.duckdb"
    run_id = _complete_run(tmp_path, db)
    with store.reader(db) as con:
        status, rows_dir, rows_af = con.execute(
            "SELECT status, rows_direction, rows_airfield FROM runs WHERE run_id = $r", {"r": run_id}).fetchall()[0]
        best = con.execute("SELECT runway_id, tow_limit_kg FROM latest_results_airfield").fetchall()
        n_latest = con.execute("SELECT count(*) FROM latest_results_direction").fetchall()[0][0]
        stored_inputs = con.execute("SELECT count(*) FROM input_airfields WHERE input_sha256 = 'h1'").fetchall()[0][0]
    assert (status, rows_dir, rows_af) == ("complete", 2, 1)
    assert best == [("27", 65000.0)]  # the direction with the higher limit
    assert n_latest == 2
    assert stored_inputs == 1


def test_same_input_content_is_stored_once(tmp_path):
    db = tmp_path / "s.duckdb"
    _complete_run(tmp_path, db)
    _complete_run(tmp_path, db)
    with store.reader(db) as con:
        assert con.execute("SELECT count(*) FROM input_airfields").fetchall()[0][0] == 1
        assert con.execute("SELECT count(*) FROM run_inputs").fetchall()[0][0] == 2


def test_exception_in_load_keeps_previous_run_and_records_failure(tmp_path, monkeypatch):
    db = tmp_path / "s.duckdb"
    first = _complete_run(tmp_path, db)
    run_id = store.register_run(db, _record())
    part = _write_part(tmp_path, run_id, _rows(run_id, tow=(1.0, 2.0)))

    def broken(con, spec):  # fails after results_direction rows were inserted
        raise RuntimeError("disk on fire")

    monkeypatch.setattr(store, "_load_results_airfield", broken)
    with pytest.raises(RuntimeError, match="disk on fire"):
        store.load_run(db, store.LoadSpec(run_id, [part], [part]))
    with store.reader(db) as con:
        runs = dict(con.execute("SELECT run_id, status FROM runs").fetchall())
        error = con.execute("SELECT error FROM runs WHERE run_id = $r", {"r": run_id}).fetchall()[0][0]
        leftovers = con.execute("SELECT count(*) FROM results_direction WHERE run_id = $r", {"r": run_id}).fetchall()[0][0]
        latest = con.execute("SELECT DISTINCT run_id FROM latest_results_airfield").fetchall()
    assert runs == {first: "complete", run_id: "failed"}
    assert "disk on fire" in error
    assert leftovers == 0  # rolled back
    assert latest == [(first,)]


def test_reader_is_read_only_and_has_no_file_access(tmp_path):
    db = tmp_path / "s.duckdb"
    _complete_run(tmp_path, db)
    with store.reader(db) as con:
        with pytest.raises(duckdb.Error, match="read-only"):
            con.execute("DELETE FROM runs")
        with pytest.raises(duckdb.Error):
            con.execute(f"COPY runs TO '{tmp_path / 'leak.csv'}'")
    assert not (tmp_path / "leak.csv").exists()


def test_writer_is_capped_at_512_mb_unless_the_environment_says_otherwise(tmp_path, monkeypatch):
    # The run's writer spills to disk beyond its cap; DuckDB reports the setting back in
    # its own units (512 MB = 488.2 MiB, DuckDB's memory_limit documentation: a size text
    # in base 10 units, shown in base 2).
    monkeypatch.delenv("FIELDLIMITS_DUCKDB_MEMORY_LIMIT", raising=False)
    with store.writer(tmp_path / "s.duckdb") as con:
        assert con.execute("SELECT current_setting('memory_limit')").fetchone()[0] == "488.2 MiB"
    monkeypatch.setenv("FIELDLIMITS_DUCKDB_MEMORY_LIMIT", "2GB")
    with store.writer(tmp_path / "s.duckdb") as con:
        assert con.execute("SELECT current_setting('memory_limit')").fetchone()[0] == "1.8 GiB"


def test_missing_database_is_bad_input(tmp_path):
    with pytest.raises(BadInput, match="no database"):
        with store.reader(tmp_path / "absent.duckdb"):
            pass


def test_reader_meeting_a_writer_gets_the_busy_message(tmp_path):
    db = tmp_path / "s.duckdb"
    _complete_run(tmp_path, db)
    holder = subprocess.Popen([sys.executable, "-c", textwrap.dedent(f"""
        import duckdb, sys, time
        con = duckdb.connect({str(db)!r})
        print("locked", flush=True)
        time.sleep(30)
        """)], stdout=subprocess.PIPE, text=True)
    try:
        assert holder.stdout.readline().strip() == "locked"
        t0 = time.monotonic()
        with pytest.raises(StoreBusy, match="being written by a fieldlimits run"):
            with store.reader(db, wait_s=1.0):
                pass
        assert 0.9 <= time.monotonic() - t0 < 10  # it waited, then gave up
    finally:
        holder.kill()
        holder.wait()
    with store.reader(db) as con:  # free again
        assert con.execute("SELECT count(*) FROM runs").fetchall()[0][0] == 1


def test_run_of_a_dead_process_is_marked_interrupted(tmp_path):
    db = tmp_path / "s.duckdb"
    dead = subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"],
                          capture_output=True, text=True).stdout.strip()
    run_id = store.register_run(db, _record())
    with store.writer(db) as con:
        store.run_sql(con, "UPDATE runs SET pid = $p WHERE run_id = $r", {"p": int(dead), "r": run_id})
    store.register_run(db, _record())
    with store.reader(db) as con:
        status = con.execute("SELECT status FROM runs WHERE run_id = $r", {"r": run_id}).fetchall()[0][0]
    assert status == "interrupted"


def test_failed_run_record_does_not_overwrite_a_complete_run(tmp_path):
    db = tmp_path / "s.duckdb"
    run_id = _complete_run(tmp_path, db)
    store.fail_run(db, run_id, "late failure")
    with store.reader(db) as con:
        assert con.execute("SELECT status FROM runs WHERE run_id = $r", {"r": run_id}).fetchall()[0][0] == "complete"


def test_scenario_view_keeps_each_offset_side_by_side(tmp_path):
    db = tmp_path / "s.duckdb"
    for offset, tow in ((0.0, (60000.0, 65000.0)), (2.0, (59000.0, 64000.0))):
        run_id = store.register_run(db, _record(temperature_offset_k=offset))
        part = _write_part(tmp_path, run_id, _rows(run_id, tow=tow))
        store.load_run(db, store.LoadSpec(run_id, [part], [_best(tmp_path, run_id, part)]))
    with store.reader(db) as con:
        got = con.execute("SELECT temperature_offset_k, tow_limit_kg FROM scenario_results_airfield "
                          "ORDER BY 1").fetchall()
    assert got == [(0.0, 65000.0), (2.0, 64000.0)]
