"""The chunk as a Dask worker computes it, without a cluster (issue 19, point 5).

What travels: :func:`pipeline.chunks.chunk_payload` (the chunk's cases and its airfields'
part of the tables) and back the rows of :func:`pipeline.chunks.compute_on_worker`. Here the
worker side runs in this process on the payload alone, after the client's work folder is
gone, and must give the rows a local chunk writes; a payload made by other code (another
code version) is refused with both versions named. The real cluster is in
``test_dask_cluster.py``.
"""

from __future__ import annotations

import pickle
import shutil

import pyarrow.parquet as pq
import pytest

from fieldlimits.pipeline import chunks, steps
from fieldlimits.pipeline.steps import RunParams
from tests.pipeline.conftest import needs_physics

pytestmark = needs_physics


@pytest.fixture(scope="module")
def prepared_work(tmp_path_factory, demo_dir):
    """A registered demo run with its work folder built (chunks of 3 000 cases, two levels)."""
    folder = tmp_path_factory.mktemp("payload")
    prepared = steps.prepare_run(demo_dir, folder / "p.duckdb",
                                 RunParams(chunk_size=3000, reliability_levels=(0.5, 0.9)))
    run_id = steps.register(prepared)
    work = steps.build_cases(prepared, run_id)
    yield prepared, run_id, work
    steps.cleanup(prepared, run_id)


def test_a_worker_needs_only_the_payload_and_gives_the_local_rows(prepared_work, tmp_path):
    prepared, run_id, work = prepared_work
    params = prepared.chunk_params()
    chunk = 1
    payload = pickle.dumps(chunks.chunk_payload(work, chunk, run_id, params))  # as Dask sends it
    local = chunks.compute_chunk(work, chunk, run_id, params)
    # the client's folder is out of the worker's reach: a copy of it is moved away meanwhile
    moved = shutil.move(str(work), tmp_path / "away")
    try:
        rows = chunks.compute_on_worker(pickle.loads(payload))
    finally:
        shutil.move(moved, str(work))
    assert rows.chunk == chunk and rows.cases == local.cases
    assert rows.direction.num_rows == local.rows > 0
    assert rows.direction.equals(pq.read_table(local.direction_path).replace_schema_metadata(None))
    assert local.airfield_path is not None and "reliability" in rows.bases
    assert rows.airfield.equals(pq.read_table(local.airfield_path).replace_schema_metadata(None))


def test_the_payload_carries_only_the_chunks_airfields(prepared_work):
    prepared, run_id, work = prepared_work
    payload = chunks.chunk_payload(work, 0, run_id, prepared.chunk_params())
    mine = set(payload.cases.column("airfield_id").to_pylist())
    everyone = set(prepared.inputs.tables["runways"]["airfield_id"])
    assert mine and mine < everyone
    import io

    for name in ("tables/runways.parquet", "tables/climate_monthly.parquet", "tables/wind_rose.parquet"):
        seen = set(pq.read_table(io.BytesIO(payload.files[name])).column("airfield_id").to_pylist())
        assert seen == mine, name


def test_a_worker_with_other_code_refuses_the_chunk_naming_both_versions(prepared_work):
    prepared, run_id, work = prepared_work
    params = {**prepared.chunk_params(), "code_version": "0.0.1+000000000000"}
    payload = chunks.chunk_payload(work, 0, run_id, params)
    with pytest.raises(chunks.VersionMismatch) as err:
        chunks.compute_on_worker(payload)
    text = str(err.value)
    assert "0.0.1+000000000000" in text and chunks.worker_code_version() in text
    assert "install the same fieldlimits" in text
