"""The input folder is validated once per run and the wind rose is never held whole: it is
written to Parquet and hashed block by block while it is checked (a spool folder in the
work root), then moved into the run's work folder.

References: the tables and hashes of the folder loaded the plain way (``schemas.load``,
every table held), which the stored run has always been built from.
"""

from __future__ import annotations

import duckdb
import pandas as pd
import pytest

from fieldlimits.pipeline import inputs as inputs_mod
from fieldlimits.pipeline import steps
from fieldlimits.pipeline.errors import BadInput
from fieldlimits.schemas import hashing, validate
from fieldlimits.schemas.load import load_folder
from tests.pipeline.conftest import needs_physics


def _copy(demo_dir, out, sort: bool):
    out.mkdir()
    for path in demo_dir.iterdir():
        if path.suffix == ".csv":
            frame = pd.read_csv(path, dtype=str, keep_default_na=False)
            if sort and path.stem == "wind_rose":  # airfield-months in key order: streamed hashes
                frame = frame.sort_values(["airfield_id", "month"], kind="stable",
                                          key=lambda s: s if s.name == "airfield_id" else s.astype(int))
            frame.to_csv(out / path.name, index=False)
    return out


@pytest.mark.parametrize("sort", [True, False])
def test_spooled_inputs_match_the_held_tables(tmp_path, demo_dir, monkeypatch, sort):
    folder = _copy(demo_dir, tmp_path / "net", sort)
    held = load_folder(folder)
    plain = inputs_mod.load_inputs(folder)
    monkeypatch.setattr(validate, "_READ_ROWS", 4000)  # several blocks
    spool = tmp_path / "spool"
    got = inputs_mod.load_inputs(folder, spool=spool)
    assert got.tables["wind_rose"] is None and got.user_tables["wind_rose"] is None
    assert got.released == ("wind_rose",) and got.spool == spool
    assert got.hashes == plain.hashes == hashing.table_hashes(held)
    assert list(got.hashes) == list(plain.hashes)
    pd.testing.assert_frame_equal(steps.content_hashes(got), steps.content_hashes(plain))
    user = pd.read_parquet(spool / "inputs" / "wind_rose.parquet")
    si = pd.read_parquet(spool / "tables" / "wind_rose.parquet")
    expected = held.user["wind_rose"]
    order = ["airfield_id", "month", "direction_deg", "speed_low_mps"]
    for frame, ref in ((user, expected), (si, held.wind_rose)):
        pd.testing.assert_frame_equal(
            frame.sort_values(order, kind="stable", ignore_index=True),
            pd.DataFrame({c: ref[c].to_numpy() for c in ref.columns}).sort_values(
                order, kind="stable", ignore_index=True), check_dtype=False)


def test_bad_input_leaves_no_spool(tmp_path, demo_dir):
    folder = _copy(demo_dir, tmp_path / "net", sort=False)
    rose = pd.read_csv(folder / "wind_rose.csv", dtype=str, keep_default_na=False)
    rose.loc[10, "speed_high_mps"] = "fast"
    rose.to_csv(folder / "wind_rose.csv", index=False)
    spool = tmp_path / "work" / "spool"
    with pytest.raises(BadInput, match="speed_high_mps"):
        inputs_mod.load_inputs(folder, spool=spool)
    assert not spool.exists()


@needs_physics
def test_a_run_validates_once_and_leaves_no_spool(tmp_path, demo_dir, demo_run, monkeypatch):
    calls = []
    real = steps.load_inputs

    def counting(folder, spool=None):
        calls.append(spool)
        return real(folder, spool=spool)

    monkeypatch.setattr(steps, "load_inputs", counting)
    monkeypatch.setattr(steps, "_PREPARED", {})
    monkeypatch.setattr(steps, "_PREPARED_RUNS", {})
    db = tmp_path / "once.duckdb"
    params = steps.RunParams(reliability_levels=())
    first = steps.prepare_run(demo_dir, db, params)  # what `fieldlimits run` does first
    assert steps.prepare_run(demo_dir, db, params) is first  # the flow's first task
    summary = steps.run_local(demo_dir, db, params, progress=lambda *a: None)
    assert len(calls) == 1 and calls[0] is not None  # one validation, streamed to a spool
    assert summary.cases == first.plan.n_cases
    root = steps.default_work_root(db.resolve())
    assert not root.exists() or not any(root.iterdir())  # spool and work folder gone
    # the stored inputs and results are those of the run built from the held tables
    ref_db, _ = demo_run
    held = load_folder(demo_dir)
    with duckdb.connect(str(ref_db), read_only=True) as ref, duckdb.connect(str(db), read_only=True) as new:
        stored = new.sql("SELECT * EXCLUDE (input_sha256) FROM input_wind_rose").df()
        cols = ["airfield_id", "month", "direction_deg", "speed_low_mps"]
        pd.testing.assert_frame_equal(
            stored.sort_values(cols, ignore_index=True),
            held.user["wind_rose"].sort_values(cols, ignore_index=True), check_dtype=False)
        hashes = dict(new.sql("SELECT table_name, sha256 FROM run_inputs").fetchall())
        assert hashes == {k: v for k, v in hashing.table_hashes(held).items()}
        order = "airfield_id, runway_id, aircraft_type_id, month, condition, basis"
        q = f"SELECT * EXCLUDE (run_id) FROM results_direction ORDER BY {order}"
        pd.testing.assert_frame_equal(ref.sql(q).df(), new.sql(q).df())
    # a second run in the same process validates again (the first one's spool was used up)
    steps.run_local(demo_dir, db, steps.RunParams(reliability_levels=(), reuse=False),
                    progress=lambda *a: None)
    assert len(calls) == 2


def test_a_killed_process_spool_is_removed_by_the_next_run(tmp_path):
    import os
    import socket
    import subprocess
    import sys

    from fieldlimits.pipeline import store

    host = socket.gethostname().replace("-", "_") or "host"
    gone = subprocess.run([sys.executable, "-c", "import os; print(os.getpid())"],
                          capture_output=True, text=True, check=True)
    dead = tmp_path / f"prepare-{host}-{int(gone.stdout)}-0123abcd"
    alive = tmp_path / f"prepare-{host}-{os.getpid()}-4567cdef"
    other = tmp_path / f"prepare-another_host-{int(gone.stdout)}-89abcdef"  # not ours to judge
    for folder in (dead, alive, other):
        (folder / "inputs").mkdir(parents=True)
    store._tidy_spools(tmp_path)
    assert not dead.exists() and alive.exists() and other.exists()
