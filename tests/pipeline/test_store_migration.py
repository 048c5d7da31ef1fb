"""A file written before results were stored by reference keeps working (migrated on the
next write, nothing copied, nothing lost). The file is rebuilt from the export of one written
by the earlier version (``tests/pipeline/data/store_before_by_reference/README.md``)."""

from __future__ import annotations

from pathlib import Path

import duckdb
import pandas as pd
import pytest

from fieldlimits.pipeline import prune, store
from tests.pipeline.conftest import needs_physics

FIXTURE = Path(__file__).with_name("data") / "store_before_by_reference"
TABLES = ("results_direction", "results_airfield", "route_payload", "landing_direction",
          "landing_airfield")


def _statements(text: str) -> list[str]:
    return [s.strip() for s in text.split(";\n") if s.strip()]


def old_store(path: Path) -> Path:
    """The earlier version's file: its tables and views as it wrote them, its rows."""
    statements = _statements((FIXTURE / "schema.sql").read_text())
    con = duckdb.connect(str(path))
    try:
        tables = [s for s in statements if s.upper().startswith("CREATE TABLE")]
        views = [s for s in statements if s.upper().startswith("CREATE VIEW")]
        assert len(tables) + len(views) == len(statements)
        for s in tables:
            con.execute(s)
        while views:  # in an order where each view's views exist
            left = []
            for s in views:
                try:
                    con.execute(s)
                except duckdb.CatalogException:
                    left.append(s)
            assert len(left) < len(views), left
            views = left
        for parquet in sorted(FIXTURE.glob("*.parquet")):
            con.execute(f"INSERT INTO {parquet.stem} SELECT * FROM read_parquet($p)", {"p": str(parquet)})
    finally:
        con.close()
    return path


def _snapshot(db) -> dict:
    out = {}
    with store.reader(db) as con:
        for table in TABLES + ("latest_results_airfield", "scenario_results_airfield"):
            frame = con.execute(f"SELECT * FROM {table}").df()
            out[table] = frame.sort_values(list(frame.columns)).reset_index(drop=True)
    return out


def _same(left: pd.DataFrame, right: pd.DataFrame, name: str) -> None:
    """Equal row for row; a column's pandas dtype may differ where one side has only blanks."""
    left, right = (f.reset_index(drop=True).astype(object) for f in (left, right))
    pd.testing.assert_frame_equal(left.where(left.notna(), None), right.where(right.notna(), None), obj=name)


def _types(db) -> dict:
    with store.reader(db) as con:
        return dict(con.execute("SELECT table_name, table_type FROM information_schema.tables").fetchall())


@pytest.fixture
def old_db(tmp_path) -> Path:
    return old_store(tmp_path / "old.duckdb")


def test_the_fixture_is_the_old_layout(old_db):
    kinds = _types(old_db)
    assert all(kinds[t] == "BASE TABLE" for t in TABLES)
    with store.reader(old_db) as con:  # run 2 copied run 1's rows in full
        counts = con.execute("SELECT run_id, count(*) FROM results_direction GROUP BY 1 ORDER BY 1").fetchall()
    assert [c for _, c in counts] == [counts[0][1]] * 3 and counts[0][1] > 0


def test_migration_keeps_every_run_whole_and_copies_nothing(old_db):
    before = _snapshot(old_db)
    with store.reader(old_db) as con:
        rows = {t: con.execute(f"SELECT count(*) FROM {t}").fetchall()[0][0] for t in TABLES}
    with store.writer(old_db):  # what the next run does first
        pass
    kinds = _types(old_db)
    for table in TABLES:
        assert kinds[table] == "VIEW" and kinds[f"{table}_stored"] == "BASE TABLE"
        with store.reader(old_db) as con:
            assert con.execute(f"SELECT count(*) FROM {table}_stored").fetchall()[0][0] == rows[table]
    after = _snapshot(old_db)
    for name, frame in before.items():
        pd.testing.assert_frame_equal(after[name], frame, obj=name)
    with store.writer(old_db):  # a second open changes nothing
        pass
    for name, frame in _snapshot(old_db).items():
        pd.testing.assert_frame_equal(frame, before[name], obj=name)


def test_a_failed_migration_leaves_the_old_file(old_db, monkeypatch):
    before = _snapshot(old_db)
    real = store.sql
    monkeypatch.setattr(store, "sql", lambda name: "SELECT error('power cut')"
                        if name == "migrate_run_sources" else real(name))
    with pytest.raises(Exception, match="power cut"):
        with store.writer(old_db):
            pass
    monkeypatch.undo()
    assert all(_types(old_db)[t] == "BASE TABLE" for t in TABLES)
    for name, frame in _snapshot(old_db).items():
        pd.testing.assert_frame_equal(frame, before[name], obj=name)


@needs_physics
def test_runs_and_prune_on_a_migrated_file(old_db, tmp_path):
    from fieldlimits.demo_network import synthetic  # noqa: F401  (the generator of the fixture's network)
    from fieldlimits.pipeline import cli
    from fieldlimits.pipeline.steps import RunParams, run_local

    before = _snapshot(old_db)
    net = tmp_path / "net"
    assert cli.main(["generate", str(net), "--airfields", "2", "--seed", "3"]) == 0
    params = RunParams(reliability_levels=(0.85,))
    run_local(net, old_db, params, progress=lambda *a: None)   # 4: new code, computed
    run_local(net, old_db, params, progress=lambda *a: None)   # 5: references 4
    with store.reader(old_db) as con:
        assert con.execute("SELECT DISTINCT run_id FROM results_direction_stored ORDER BY 1").fetchall() == \
            [(1,), (2,), (3,), (4,)]
    full = _snapshot(old_db)
    for name in TABLES:  # the old runs read as before
        _same(full[name][full[name]["run_id"] <= 3], before[name], name)
    result = prune.prune(old_db, keep=1)
    assert result.plan.remove == [1, 2, 4]  # run 3, the last +2 K run, stays
    after = _snapshot(old_db)
    for name in TABLES:
        kept = full[name][full[name]["run_id"].isin([3, 5])]
        assert len(kept) > 0
        _same(after[name], kept, name)
