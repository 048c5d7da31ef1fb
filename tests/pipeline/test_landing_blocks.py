"""The landing step of a run in blocks of destinations: each block built, solved and written to
Parquet parts on its own (in worker processes on a large run), the same rows as all
destinations solved at once in this process."""

from __future__ import annotations

import multiprocessing
from concurrent.futures import ProcessPoolExecutor

import duckdb
import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq
import pytest

from fieldlimits.pipeline import landing, steps
from fieldlimits.schemas.load import load_folder
from tests.pipeline.conftest import needs_physics

pytestmark = needs_physics

PARAMS = {"reliability_levels": (0.5, 0.85, 0.95), "reliability_conditions": ("dry", "wet")}
KEYS = ["airfield_id", "runway_id", "aircraft_type_id", "month", "condition", "basis", "reliability"]


@pytest.fixture(scope="module")
def demo_tables(demo_dir):
    return dict(load_folder(demo_dir))


def _read(files) -> pd.DataFrame:
    return pa.concat_tables([pq.read_table(f) for f in files]).to_pandas()


def test_blocks_in_worker_processes_equal_one_block_in_this_process(demo_tables, tmp_path):
    """Blocks of three destinations solved in two worker processes, each reading its own
    wind-rose rows from a Parquet copy, give the rows of all destinations solved in one block
    here: to the bit and in the same order. The demo mixes destinations with and without an
    LDA, and airfield-months with and without temperature percentiles in the same block."""
    tables = demo_tables
    one = landing.landing_frames(tables, PARAMS)
    rose = tmp_path / "wind_rose.parquet"
    tables["wind_rose"].to_parquet(rose, index=False)
    without_rose = {k: v for k, v in tables.items() if k != "wind_rose"}
    pairs = landing.destination_pairs(tables["routes"])
    n_blocks = len(landing.destination_blocks(pairs, 3))
    with ProcessPoolExecutor(2, mp_context=multiprocessing.get_context("spawn")) as pool:
        parts = landing.write_landing_parts(without_rose, PARAMS, tmp_path, wind_rose=str(rose),
                                            block_airfields=3, executor=pool)
    assert n_blocks >= 5 and len(parts.direction) == n_blocks
    assert len(parts.airfield) == 2 * n_blocks  # design day and reliability of each block
    # the demo is a real test of the mix: checked and unchecked destinations, percentiles
    # given at some destinations of a block and not at others
    checked = one.airfield.groupby("airfield_id")["lda_m"].apply(lambda s: s.notna().any())
    assert checked.any() and not checked.all()
    climate = tables["climate_monthly"]
    given = climate.groupby("airfield_id")["p50_daily_max_k"].apply(lambda s: s.notna().any())
    dest = given.reindex(pairs["airfield_id"].unique())
    assert dest.any() and not dest.all()
    assert (one.airfield["basis"] == "reliability").sum() > 1000
    for files, frame in ((parts.direction, one.direction), (parts.airfield, one.airfield)):
        pd.testing.assert_frame_equal(_read(files), frame, check_exact=True, check_dtype=False)
    assert (parts.rows_direction, parts.rows_airfield) == (len(one.direction), len(one.airfield))
    # what the route step reads: the airfield rows' keys and limits
    pd.testing.assert_frame_equal(landing.route_rows(parts), one.airfield[list(landing.ROUTE_COLUMNS)],
                                  check_exact=True, check_dtype=False)


def test_blocks_in_this_process_equal_the_blocks_in_workers(demo_tables, tmp_path):
    """Without a pool the same blocks run one after the other here: the same part files, and
    a second call (a retried step) starts from empty part folders."""
    (tmp_path / landing.AIRFIELD_PARTS).mkdir()
    stale = tmp_path / landing.AIRFIELD_PARTS / "reliability-99999.parquet"
    stale.write_bytes(b"left by an earlier attempt")
    here = landing.write_landing_parts(demo_tables, PARAMS, tmp_path / "a", block_airfields=4)
    again = landing.write_landing_parts(demo_tables, PARAMS, tmp_path, block_airfields=4)
    assert not stale.exists()
    assert [p.rsplit("/", 1)[1] for p in here.airfield] == [p.rsplit("/", 1)[1] for p in again.airfield]
    for a, b in zip(here.direction + here.airfield, again.direction + again.airfield):
        assert pq.read_table(a).equals(pq.read_table(b))
        assert pq.read_schema(a).equals(landing.PART_SCHEMA)


def test_no_routes_no_parts(demo_tables, tmp_path):
    tables = dict(demo_tables, routes=demo_tables["routes"].iloc[:0])
    parts = landing.write_landing_parts(tables, PARAMS, tmp_path)
    assert parts.direction == () and parts.airfield == () and parts.rows_airfield == 0
    assert len(landing.route_rows(parts)) == 0


def _assert_stored_landing_is_one_block(db, demo_tables, params):
    """The stored landing tables hold the rows of all destinations solved at once here, and
    the route payloads carry the same destination limits; returns the route payload rows."""
    one = landing.landing_frames(demo_tables, params.as_dict())
    with duckdb.connect(str(db), read_only=True) as con:
        stored = {t: con.sql(f"SELECT * EXCLUDE (run_id) FROM {t}").df()
                  for t in ("landing_direction", "landing_airfield")}
        rp = con.sql("SELECT destination_id, aircraft_type_id, month, condition, basis, reliability, "
                     "destination_landing_limit_kg FROM route_payload").df()
    for table, frame in (("landing_direction", one.direction), ("landing_airfield", one.airfield)):
        got = stored[table].sort_values(KEYS, ignore_index=True)
        exp = frame.sort_values(KEYS, ignore_index=True)
        assert len(got) == len(exp) > 0
        pd.testing.assert_frame_equal(got, exp, check_exact=True, check_dtype=False)
    limits = one.airfield.rename(columns={"airfield_id": "destination_id"})
    m = rp.merge(limits, on=["destination_id", "aircraft_type_id", "month", "condition", "basis"], how="left")
    m = m[(m["reliability_x"] == m["reliability_y"]) | (m["reliability_x"].isna() & m["reliability_y"].isna())]
    assert len(m) == len(rp)
    np.testing.assert_array_equal(m["destination_landing_limit_kg"].to_numpy(float),
                                  m["landing_limit_kg"].to_numpy(float))
    return rp


def test_a_run_with_landing_blocks_in_worker_processes_stores_the_rows_of_one_block(
        demo_dir, demo_tables, tmp_path, monkeypatch):
    """A whole run with the landing step in blocks of three destinations on two worker
    processes: the stored landing tables hold the rows of all destinations solved at once
    here, and the route payloads carry the same destination limits."""
    monkeypatch.setenv("FIELDLIMITS_CHUNK_PROCESSES", "2")
    monkeypatch.setattr(landing, "BLOCK_AIRFIELDS", 3)
    pools = []
    real = steps._landing_pool
    monkeypatch.setattr(steps, "_landing_pool", lambda n: pools.append(real(n)) or pools[-1])
    params = steps.RunParams(reliability_levels=(0.5, 0.95), conditions=("dry",))
    db = tmp_path / "blocks.duckdb"
    steps.run_local(demo_dir, db, params, progress=lambda *a: None)
    assert len(pools) == 1 and pools[0] is not None  # the landing step used worker processes
    _assert_stored_landing_is_one_block(db, demo_tables, params)


def test_landing_blocks_beside_the_chunks_in_their_pool_store_the_rows_of_one_block(
        demo_dir, demo_tables, tmp_path, monkeypatch):
    """A run whose chunks use the worker processes starts the landing step beside them, its
    blocks in the same pool (no pool of its own): the stored landing tables and the route
    payloads' destination limits are those of all destinations solved at once here."""
    from fieldlimits.pipeline import chunks

    monkeypatch.setenv("FIELDLIMITS_CHUNK_PROCESSES", "2")
    monkeypatch.setattr(chunks, "PROCESS_MIN_CASES", 1)  # the demo is a small run
    monkeypatch.setattr(landing, "BLOCK_AIRFIELDS", 3)
    own_pools, started = [], []
    monkeypatch.setattr(steps, "_landing_pool", lambda n: own_pools.append(n))
    real_start = steps.start_landing
    monkeypatch.setattr(steps, "start_landing", lambda p, w: started.append(real_start(p, w)) or started[-1])
    params = steps.RunParams(reliability_levels=(0.5, 0.95), conditions=("dry",))
    db = tmp_path / "beside.duckdb"
    chunks.shutdown_pool()
    try:
        steps.run_local(demo_dir, db, params, progress=lambda *a: None)
    finally:
        chunks.shutdown_pool()
    assert started == [True] and own_pools == []  # started early, in the chunks' pool
    assert steps._LANDING == {}
    assert len(_assert_stored_landing_is_one_block(db, demo_tables, params)) > 0


def test_a_failed_run_stops_its_early_landing_step_and_leaves_the_pool_to_the_chunks(
        demo_dir, tmp_path, monkeypatch):
    """A run that fails (or is stopped) while its landing step runs beside the chunks: the
    clean-up hands no further block to the pool, cancels those waiting, waits for the step's
    thread and removes the folder; the pool stays up for chunk tasks still running (closing
    it under them started a new one that outlived the run)."""
    import threading

    from fieldlimits.pipeline import chunks

    monkeypatch.setenv("FIELDLIMITS_CHUNK_PROCESSES", "2")
    monkeypatch.setattr(chunks, "PROCESS_MIN_CASES", 1)  # the demo is a small run
    monkeypatch.setattr(landing, "BLOCK_AIRFIELDS", 1)  # many blocks: most still waiting
    params = steps.RunParams(reliability_levels=(0.5,), conditions=("dry",))
    prepared = steps.prepare_run(demo_dir, tmp_path / "stop.duckdb", params)
    run_id = steps.register(prepared)
    work = steps.build_cases(prepared, run_id)
    chunks.shutdown_pool()
    try:
        assert steps.start_landing(prepared, work)
        pool = chunks._POOL
        steps.cleanup(prepared, run_id)
        assert steps._LANDING == {} and chunks._POOL is pool
        assert not any(t.name == "fieldlimits-landing" and t.is_alive() for t in threading.enumerate())
        assert pool.submit(int, "7").result() == 7
    finally:
        chunks.shutdown_pool()
    assert not work.exists()
