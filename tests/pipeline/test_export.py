"""CSV export: default readers open it, the caution is on every row, formula-like text is
neutralised, numbers are rounded by unit, one spelling of missing, an exact round trip."""

from __future__ import annotations

import io

import duckdb
import numpy as np
import pandas as pd
import pytest

from fieldlimits.pipeline import export, store
from fieldlimits.pipeline.errors import BadInput
from fieldlimits.schemas.caution import CAUTION


@pytest.fixture
def db(tmp_path):
    path = tmp_path / "e.duckdb"
    frame = pd.DataFrame({
        "run_id": [1, 1, 1, 2],
        "airfield_id": ["=HYPERLINK(\"x\")", "+saltmere", "plain", "'quoted"],
        "runway_id": ["09", "-1", "@sum", "27L"],
        "headwind_mps": [-3.5, 0.0, np.nan, 2.0],
    })
    with store.writer(path) as con:
        con.register("f", frame)
        store.run_sql(con, "CREATE TABLE sample AS SELECT * FROM f")
        store.run_sql(con, "CREATE TABLE noisy AS SELECT 23.100000000000023::DOUBLE AS oat_c, "
                           "60123.4::DOUBLE AS tow_limit_kg, NULL::DOUBLE AS v1_kt, "
                           "NULL::VARCHAR AS note, INTERVAL 4300 MILLISECOND AS took, "
                           "0.1::DOUBLE + 0.2::DOUBLE AS ratio")
    return path, frame


def test_neutralise_prefixes_formula_starts_only():
    # OWASP "CSV Injection" guidance: a leading single quote stops spreadsheet evaluation
    assert export.neutralise("=1+2") == "'=1+2"
    assert export.neutralise("+1") == "'+1"
    assert export.neutralise("-1") == "'-1"
    assert export.neutralise("@A1") == "'@A1"
    assert export.neutralise("saltmere") == "saltmere"
    assert export.neutralise(-1.5) == -1.5  # numbers are left alone


def test_export_round_trips_and_neutralises(db, tmp_path):
    path, frame = db
    out = tmp_path / "out.csv"
    assert export.export_csv(path, "sample", out) == 4
    lines = out.read_text(encoding="utf-8").splitlines()
    assert lines[0] == "run_id,airfield_id,runway_id,headwind_mps,scenario,caution"
    body = "\n".join(lines[1:])
    assert "'=HYPERLINK" in body and "'+saltmere" in body and "'-1" in body and "'@sum" in body
    assert "\n=" not in "\n" + body and ",=" not in body  # no cell starts with a formula character
    back = export.read_export(out, text_columns=["airfield_id", "runway_id"])
    pd.testing.assert_frame_equal(back.drop(columns="scenario"), frame, check_dtype=False)


def test_default_readers_open_an_export_with_the_caution_on_every_row(db, tmp_path):
    """pandas.read_csv and DuckDB's read_csv with no options: the header is the header, the
    numbers stay numbers, and every row carries the caution (issue 18)."""
    path, _ = db
    out = tmp_path / "out.csv"
    export.export_csv(path, "sample", out)
    frame = pd.read_csv(out)
    assert list(frame.columns) == ["run_id", "airfield_id", "runway_id", "headwind_mps",
                                   "scenario", "caution"]
    assert pd.api.types.is_float_dtype(frame["headwind_mps"])
    assert frame["headwind_mps"].tolist()[:2] == [-3.5, 0.0]
    assert (frame["caution"] == CAUTION).all() and len(frame) == 4
    con = duckdb.connect()
    rel = con.sql("SELECT * FROM read_csv($p)", params={"p": str(out)})
    assert rel.columns == list(frame.columns)
    types = dict(zip(rel.columns, map(str, rel.types)))
    assert types["headwind_mps"] == "DOUBLE" and types["run_id"] == "BIGINT"
    assert con.execute("SELECT count(*) FROM read_csv($p) WHERE caution = $c",
                       {"p": str(out), "c": CAUTION}).fetchall()[0][0] == 4


def test_numbers_are_rounded_by_unit_and_missing_is_one_empty_cell(db, tmp_path):
    path, _ = db
    out = tmp_path / "noisy.csv"
    export.export_csv(path, "noisy", out)
    header, row = out.read_text(encoding="utf-8").splitlines()
    assert header == "oat_c,tow_limit_kg,v1_kt,note,took_s,ratio,caution"
    # 23.100000000000023 degC to a tenth, kilograms whole, NULL number and NULL text both an
    # empty cell, the 4.3 s interval in seconds, 0.1 + 0.2 without its float noise
    assert row.startswith("23.1,60123,,,4.3,0.3,")


def test_text_table_spells_missing_one_way():
    frame = pd.DataFrame({"a_kg": [1.4, np.nan], "b": [None, "x"], "c": pd.array([1, None], "Int64")})
    text = export.text_table(frame)
    assert "NaN" not in text and "None" not in text and "<NA>" not in text
    assert text.splitlines()[2].split() == ["-", "x", "-"]


def test_export_of_a_query_and_of_one_run(db, tmp_path):
    path, _ = db
    out = tmp_path / "q.csv"
    assert export.export_csv(path, "SELECT run_id FROM sample WHERE run_id = 2", out) == 1
    with store.writer(path) as con:  # runs 1 and 2 exist
        for r in (1, 2):
            store.run_sql(con, "INSERT INTO runs (run_id, status, started_at) VALUES ($r, 'complete', now())",
                          {"r": r})
    assert export.export_csv(path, "sample", out, run_id=1) == 3


def test_export_of_a_run_that_does_not_exist_says_so(db, tmp_path):
    path, _ = db
    with store.writer(path) as con:
        for r in (1, 2, 3, 5):
            store.run_sql(con, "INSERT INTO runs (run_id, status, started_at) VALUES ($r, 'complete', now())",
                          {"r": r})
    with pytest.raises(BadInput, match=r"run 99 does not exist .*stored runs: 1-3, 5"):
        export.export_csv(path, "sample", tmp_path / "x.csv", run_id=99)
    assert not (tmp_path / "x.csv").exists()


def test_export_errors_are_bad_input(db, tmp_path):
    path, _ = db
    with pytest.raises(BadInput, match="no table or view named"):
        export.export_csv(path, "nosuchtable", tmp_path / "x.csv")
    with pytest.raises(BadInput, match="query failed"):
        export.export_csv(path, "SELECT nope FROM sample", tmp_path / "x.csv")
    with pytest.raises(BadInput, match="does not exist"):
        export.export_csv(path, "sample", tmp_path / "missing-folder" / "x.csv")
    assert not (tmp_path / "x.csv").exists()


def test_query_errors_keep_duckdbs_hints(db, tmp_path):
    path, _ = db
    with pytest.raises(BadInput, match='Did you mean "sample"'):
        export.export_csv(path, "SELECT * FROM sampel", tmp_path / "x.csv")
    with pytest.raises(BadInput, match='Candidate bindings: .*"headwind_mps"'):
        export.export_csv(path, "SELECT headwind FROM sample", tmp_path / "x.csv")


def test_sql_csv_to_a_stream_parses_with_default_readers():
    buf = io.StringIO()
    export.to_csv(export.file_frame(pd.DataFrame({"x_m": [1.26, np.nan], "id": ["a", None]})), buf)
    back = pd.read_csv(io.StringIO(buf.getvalue()))
    assert list(back.columns) == ["x_m", "id", "caution"]
    assert back["x_m"].tolist()[0] == 1.3  # to a tenth of a metre
    assert back["x_m"].isna().tolist() == [False, True] and back["id"].isna().tolist() == [False, True]
