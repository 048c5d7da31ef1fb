"""CSV export: caution first, formula-like text neutralised, exact round trip."""

from __future__ import annotations

import numpy as np
import pandas as pd
import pytest

from pipeline import export, store
from pipeline.errors import BadInput
from schemas.caution import CAUTION


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
    assert lines[0] == f"# {CAUTION}"
    assert lines[1] == "run_id,airfield_id,runway_id,headwind_mps"
    body = "\n".join(lines[2:])
    assert "'=HYPERLINK" in body and "'+saltmere" in body and "'-1" in body and "'@sum" in body
    assert "\n=" not in "\n" + body and ",=" not in body  # no cell starts with a formula character
    back = export.read_export(out, text_columns=["airfield_id", "runway_id"])
    pd.testing.assert_frame_equal(back, frame, check_dtype=False)


def test_export_of_a_query_and_of_one_run(db, tmp_path):
    path, _ = db
    out = tmp_path / "q.csv"
    assert export.export_csv(path, "SELECT run_id FROM sample WHERE run_id = 2", out) == 1
    assert export.export_csv(path, "sample", out, run_id=1) == 3


def test_export_errors_are_bad_input(db, tmp_path):
    path, _ = db
    with pytest.raises(BadInput, match="no table or view named"):
        export.export_csv(path, "nosuchtable", tmp_path / "x.csv")
    with pytest.raises(BadInput, match="query failed"):
        export.export_csv(path, "SELECT nope FROM sample", tmp_path / "x.csv")
    with pytest.raises(BadInput, match="does not exist"):
        export.export_csv(path, "sample", tmp_path / "missing-folder" / "x.csv")
    assert not (tmp_path / "x.csv").exists()
