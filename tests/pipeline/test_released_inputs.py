"""Large input tables are dropped from memory after the work folder is written, and the run
stores them from the work folder's Parquet copies: the stored run must not change."""

from __future__ import annotations

import duckdb
import pandas as pd

from tests.pipeline.conftest import needs_physics


@needs_physics
def test_released_inputs_store_the_same_run(tmp_path, monkeypatch, demo_run, demo_dir):
    from fieldlimits.pipeline import steps
    from fieldlimits.pipeline.steps import RunParams, run_local

    monkeypatch.setattr(steps, "RELEASE_MIN_ROWS", 1)  # release every table
    seen = {}
    build = steps.build_cases

    def spy(prepared, run_id):
        work = build(prepared, run_id)
        seen["released"] = prepared.inputs.released
        return work

    monkeypatch.setattr(steps, "build_cases", spy)
    db = tmp_path / "released.duckdb"
    run_local(demo_dir, db, RunParams(reliability_levels=()), progress=lambda *a: None)
    assert "wind_rose" in seen["released"] and "runways" in seen["released"]

    ref_db, _ = demo_run
    order = "airfield_id, runway_id, aircraft_type_id, month, condition, basis"
    with duckdb.connect(str(ref_db), read_only=True) as ref, duckdb.connect(str(db), read_only=True) as new:
        for table in ("input_wind_rose", "input_runways", "input_aircraft_types"):
            a = ref.sql(f"SELECT * FROM {table} ORDER BY ALL").df()
            b = new.sql(f"SELECT * FROM {table} ORDER BY ALL").df()
            pd.testing.assert_frame_equal(a, b)
        q = f"SELECT * EXCLUDE (run_id) FROM results_direction ORDER BY {order}"
        pd.testing.assert_frame_equal(ref.sql(q).df(), new.sql(q).df())
        counts = "SELECT table_name, row_count, sha256 FROM run_inputs ORDER BY table_name"
        assert ref.sql(counts).fetchall() == new.sql(counts).fetchall()
