"""A chunk reads only its own rows of the work folder's input tables (issue 19, point 1).

``build_cases`` writes every input table with an ``airfield_id`` (and rewrites the streamed
wind rose) sorted by airfield id, each airfield's rows in the table's order, with a Parquet
row group per chunk of the plan; :func:`pipeline.chunks.read_chunk_table` reads the row
groups whose airfield-id range meets the chunk. The slices must be exactly the rows of the
chunk's airfields in the input, whatever the row-group cuts, and a chunk's rows must not
depend on the layout.
"""

from __future__ import annotations

import shutil

import pandas as pd
import pyarrow.parquet as pq
import pytest

from fieldlimits.pipeline import cases as case_io
from fieldlimits.pipeline import chunks, steps
from fieldlimits.pipeline.steps import RunParams
from tests.pipeline.conftest import needs_physics

pytestmark = needs_physics

KEYED = ("airfields", "runways", "climate_monthly", "wind_rose", "obstacles")


@pytest.fixture(scope="module")
def demo_work(tmp_path_factory, demo_dir):
    """A registered demo run with its work folder built (chunks of 3 000 cases, one level)."""
    folder = tmp_path_factory.mktemp("chunk-tables")
    prepared = steps.prepare_run(demo_dir, folder / "t.duckdb",
                                 RunParams(chunk_size=3000, reliability_levels=(0.5,)))
    run_id = steps.register(prepared)
    work = steps.build_cases(prepared, run_id)
    yield prepared, run_id, work
    steps.cleanup(prepared, run_id)


@pytest.fixture(scope="module")
def whole(demo_dir):
    """Every demo table (SI) loaded whole, in the files' row order: the reference."""
    from fieldlimits.schemas.load import load_folder

    tables = load_folder(demo_dir)
    return {name: tables[name] for name in KEYED}


def expected_rows(frame: pd.DataFrame, airfields) -> pd.DataFrame:
    """The input rows of ``airfields``, by airfield id and in the input's order within each."""
    rows = frame[frame["airfield_id"].isin(list(airfields))]
    return rows.sort_values("airfield_id", kind="stable").reset_index(drop=True)


def groups_meeting(path, airfields) -> list[int]:
    """Row groups of ``path`` whose airfield-id statistics hold one of ``airfields``."""
    meta = pq.ParquetFile(path).metadata
    column = meta.schema.to_arrow_schema().get_field_index("airfield_id")
    out = []
    for g in range(meta.num_row_groups):
        stats = meta.row_group(g).column(column).statistics
        if any(stats.min <= a <= stats.max for a in airfields):
            out.append(g)
    return out


def test_every_chunk_reads_exactly_its_airfields_rows_from_one_row_group(demo_work, whole):
    prepared, _, work = demo_work
    blocks = prepared.plan.airfield_blocks
    assert len(blocks) >= 4  # first, inner and last chunks: the file's edges are covered
    # the demo's files are not in airfield order, so the tables are sorted when written
    assert not whole["wind_rose"]["airfield_id"].is_monotonic_increasing
    assert "wind_rose" in prepared.inputs.released  # streamed: its spooled file is rewritten
    for name in KEYED:
        path = work / case_io.TABLES_DIR / f"{name}.parquet"
        assert pq.ParquetFile(path).metadata.num_rows == len(whole[name]), name  # nothing lost
        for i, block in enumerate(blocks):
            got = chunks.read_chunk_table(work, name, list(block))
            want = expected_rows(whole[name], block)
            pd.testing.assert_frame_equal(got, want, check_exact=True, obj=f"{name}, chunk {i}")
            if len(want):
                met = groups_meeting(path, block)
                assert len(met) == 1, (name, i, met)
                assert pq.ParquetFile(path).metadata.row_group(met[0]).num_rows == len(want)


def test_a_slice_equals_a_filtered_read_of_the_whole_file(demo_work):
    """Any set of airfields (not a chunk: scattered over the file) reads as a filter would."""
    prepared, _, work = demo_work
    every = sorted(a for block in prepared.plan.airfield_blocks for a in block)
    scattered = every[::5] + [every[-1]]
    for name in KEYED:
        path = work / case_io.TABLES_DIR / f"{name}.parquet"
        want = pq.read_table(path, filters=[("airfield_id", "in", scattered)]).to_pandas()
        got = chunks.read_chunk_table(work, name, scattered)
        pd.testing.assert_frame_equal(got, want, check_exact=True, obj=name)
    assert chunks.read_chunk_table(work, "wind_rose", []).empty
    assert chunks.read_chunk_table(work, "no_such_table", every) is None


def test_airfields_split_over_row_groups_and_reading_batches(tmp_path, monkeypatch, demo_work, whole):
    """Row groups capped at 50 rows (an airfield's wind rose spans many) and rewritten 64 rows
    at a time (cuts fall across reading batches): still exactly each chunk's rows."""
    prepared, _, _ = demo_work
    monkeypatch.setattr(case_io, "WRITE_SLICE_ROWS", 50)
    monkeypatch.setattr(case_io, "ALIGN_BATCH_ROWS", 64)
    frame = whole["wind_rose"]
    (tmp_path / "a" / case_io.TABLES_DIR).mkdir(parents=True)
    (tmp_path / "b" / case_io.TABLES_DIR).mkdir(parents=True)
    held = tmp_path / "a" / case_io.TABLES_DIR / "wind_rose.parquet"
    case_io.write_chunk_aligned(frame, held, prepared.plan)  # a table held in memory
    streamed = tmp_path / "b" / case_io.TABLES_DIR / "wind_rose.parquet"
    case_io.write_frame(expected_rows(frame, frame["airfield_id"].unique()), streamed)
    assert case_io.align_table_file(streamed, prepared.plan)  # a spooled file already in order
    for path in (held, streamed):
        meta = pq.ParquetFile(path).metadata
        assert meta.num_rows == len(frame) and max(meta.row_group(g).num_rows
                                                   for g in range(meta.num_row_groups)) == 50
        for i, block in enumerate(prepared.plan.airfield_blocks):
            got = chunks.read_chunk_table(path.parent.parent, "wind_rose", list(block))
            pd.testing.assert_frame_equal(got, expected_rows(frame, block), check_exact=True,
                                          obj=f"{path.parent.parent.name}, chunk {i}")
            assert len(groups_meeting(path, block)) > 1  # each chunk spans several groups


def test_airfields_outside_every_chunk_keep_their_rows(tmp_path, demo_work, whole):
    """A rerun leaves unchanged airfields out of the plan; the file still holds their rows
    (the route step reads destinations' wind roses from it) and a chunk gets only its own."""
    prepared, _, _ = demo_work
    airfields = sorted(whole["runways"]["airfield_id"].unique())
    types = frozenset(prepared.inputs.tables["aircraft_types"]["aircraft_type_id"])
    skip = case_io.Skip(frozenset(airfields[1::3]), types)
    plan = case_io.plan_chunks(prepared.inputs.tables, 3000, skip=skip)
    assert not set(skip.airfields) & {a for b in plan.airfield_blocks for a in b}
    (tmp_path / case_io.TABLES_DIR).mkdir()
    for name in ("runways", "climate_monthly"):
        path = tmp_path / case_io.TABLES_DIR / f"{name}.parquet"
        case_io.write_chunk_aligned(whole[name], path, plan)
        everything = pq.read_table(path).to_pandas()
        pd.testing.assert_frame_equal(everything, expected_rows(whole[name], airfields), check_exact=True)
        for block in plan.airfield_blocks:
            pd.testing.assert_frame_equal(chunks.read_chunk_table(tmp_path, name, list(block)),
                                          expected_rows(whole[name], block), check_exact=True)


def test_a_chunk_gives_the_same_rows_from_the_tables_in_input_order(tmp_path, demo_work, whole):
    """The rows of a chunk (design day and reliability levels) are the same to the bit when
    its tables are read from files in the input's order (the layout before the cut)."""
    prepared, run_id, work = demo_work
    params = prepared.chunk_params()
    chunk = 1
    cases = case_io.read_chunk_cases(work, chunk)
    aligned = chunks.solve_chunk(work, cases, chunk, run_id, params)
    plain = tmp_path / "plain"
    shutil.copytree(work, plain, ignore=shutil.ignore_patterns(chunks.PARTS_DIR))
    for name in KEYED:
        case_io.write_frame(whole[name], plain / case_io.TABLES_DIR / f"{name}.parquet")
        assert pq.ParquetFile(plain / case_io.TABLES_DIR / f"{name}.parquet").metadata.num_row_groups == 1
    before = chunks.solve_chunk(plain, cases, chunk, run_id, params)
    assert aligned[0].num_rows == len(cases) and aligned[1].num_rows > 0  # reliability rows too
    assert aligned[0].equals(before[0]) and aligned[1].equals(before[1]) and aligned[2] == before[2]


def test_chunk_processes_get_the_workers_memory_settings(tmp_path, monkeypatch, demo_work):
    """The chunk processes run with glibc's settings of the Dask workers (``WORKER_MALLOC_ENV``:
    in their environment and applied with mallopt), return freed memory after each chunk,
    and give the rows of a chunk computed here."""
    prepared, run_id, work = demo_work
    monkeypatch.setenv("FIELDLIMITS_CHUNK_PROCESSES", "2")
    monkeypatch.setattr(chunks, "PROCESS_MIN_CASES", 1)  # the demo is a small run
    chunks.shutdown_pool()
    try:
        pool = chunks._process_pool(work)
        assert pool is not None
        seen = pool.submit(chunks.chunk_process_settings).result()
        assert seen["environ"] == chunks.WORKER_MALLOC_ENV
        assert seen["applied"] == {"started": True, **{name: True for name in chunks.WORKER_MALLOC_ENV}}
        params = prepared.chunk_params()
        shutil.copytree(work, tmp_path / "there", ignore=shutil.ignore_patterns(chunks.PARTS_DIR))
        shutil.copytree(work, tmp_path / "here", ignore=shutil.ignore_patterns(chunks.PARTS_DIR))
        there = pool.submit(chunks._compute_chunk_here, str(tmp_path / "there"), 0, run_id, params).result()
    finally:
        chunks.shutdown_pool()
    assert chunks.chunk_process_settings()["applied"] == {}  # this process is left as it was
    here = chunks._compute_chunk_here(tmp_path / "here", 0, run_id, params)
    assert not there.reused and there.rows == here.rows > 0
    for a, b in ((there.direction_path, here.direction_path), (there.airfield_path, here.airfield_path)):
        assert pq.read_table(a).equals(pq.read_table(b))
