"""Large tables are checked and hashed in blocks: the block size must not change anything.

These compare a run with tiny blocks against one with the default size on the same
folder, and the block-wise hash against a hash of a whole sorted copy of the table (the
recipe documented in :mod:`schemas.hashing`), so any seam between blocks shows.
"""

from __future__ import annotations

import hashlib

import numpy as np
import pandas as pd
import pytest

from fieldlimits.schemas import hashing, validate
from fieldlimits.schemas.load import load_folder
from fieldlimits.schemas.tables import TABLES

from .conftest import read, write


def _broken_wind_rose(net):
    """Shuffled rows (airfield-months not contiguous) with errors across many groups."""
    w = read(net, "wind_rose")
    rows = np.random.default_rng(3).permutation(len(w))
    w = w.iloc[rows].reset_index(drop=True)
    w.loc[5, "direction_deg"] = "7"          # off the sector grid
    w.loc[40, "sector_width_deg"] = "30"     # mixed widths
    w.loc[90, "frequency"] = "0.9"           # sum not 1
    w.loc[120, "speed_low_mps"] = "0.5"      # class overlap / missing sectors
    w = pd.concat([w, w.iloc[[200, 201]]])   # duplicate sectors
    write(net, "wind_rose", w)


def test_wind_rose_problems_do_not_depend_on_block_size(net, monkeypatch):
    _broken_wind_rose(net)
    default = [str(p) for p in validate.validate_folder(net)]
    monkeypatch.setattr(validate, "_BLOCK_ROWS", 7)
    tiny = [str(p) for p in validate.validate_folder(net)]
    assert tiny == default
    assert any("sector grid" in p for p in default)
    assert any("do not sum to 1" in p for p in default)
    assert any("sector appears twice" in p for p in default)


def _whole_copy_hash(df: pd.DataFrame, table: str) -> str:
    """The recipe of schemas.hashing done on a whole sorted copy, as a reference."""
    spec = TABLES[table]
    can = df[[c.name for c in spec.columns]].copy()
    num = [c.name for c in spec.columns if c.dtype != "str"]
    txt = [c.name for c in spec.columns if c.dtype == "str"]
    for c in num:
        can[c] = hashing._rounded(can[c].to_numpy())
    can = can.sort_values(list(spec.key), kind="mergesort", na_position="first",
                          ignore_index=True)
    parts = [",".join(c.name for c in spec.columns).encode()]
    if num:
        parts.append(np.ascontiguousarray(can[num].to_numpy(dtype=np.float64)).tobytes())
    for c in txt:
        parts.append(hashing._text_bytes(can[c].to_numpy(dtype=object)))
    h = hashlib.sha256(f"{hashing.VERSION}:{table}:".encode())
    h.update(b"\x1e".join(parts))
    return f"{hashing.VERSION}:{h.hexdigest()}"


def test_block_hashes_equal_whole_copy_hashes(net, monkeypatch):
    tables = load_folder(net)
    ref = {t: _whole_copy_hash(tables.user[t], t) for t in TABLES}
    by_airfield = hashing.airfield_hashes(tables)
    monkeypatch.setattr(hashing, "_BLOCK_ROWS", 5)
    assert hashing.table_hashes(tables) == ref
    assert hashing.airfield_hashes(tables) == by_airfield
    # rows in another order: same hashes
    shuffled = {t: df.sample(frac=1.0, random_state=1) for t, df in tables.user.items()}
    assert hashing.table_hashes(shuffled) == ref
    assert hashing.airfield_hashes(shuffled) == by_airfield


# ---------------------------------------------------------------------------------------
# check_folder(frames=False): the wind rose read block by block (what `check` does)

def _broken_grouped_wind_rose(net):
    """Errors and warnings of every kind, rows in the usual order (airfield-months
    together; a stray row of an unknown airfield inside one), groups split wherever a
    small block ends."""
    w = read(net, "wind_rose")
    w.loc[5, "direction_deg"] = "7"           # off the sector grid
    w.loc[40, "sector_width_deg"] = "30"      # mixed widths
    w.loc[90, "frequency"] = "0.9"            # sum not 1
    w.loc[120, "speed_low_mps"] = "0.5"       # class overlap / missing sectors
    w.loc[130, "airfield_id"] = ""            # in no airfield-month
    w.loc[131, "month"] = ""
    g = w["airfield_id"] == "dunmarrow"
    w.loc[g & (w["month"] == "4"), "frequency"] = (
        w.loc[g & (w["month"] == "4"), "frequency"].astype(float) * 100).round(4).astype(str)
    w.loc[1000, "airfield_id"] = "nowhere"    # unknown airfield, a stray row in a group
    w.loc[len(w) - 3, "airfield_id"] = "nowhere"
    w = pd.concat([w.iloc[:202], w.iloc[[200, 201]], w.iloc[202:]], ignore_index=True)
    w.loc[400:460, "speed_low_mps"] = "-1"    # more than 50 rows: listed and counted
    write(net, "wind_rose", w)
    return w


def _texts(check):
    return [str(p) for p in check.problems]


def _whole(net, monkeypatch):
    """The check with every table read and checked whole (no blocks)."""
    with monkeypatch.context() as m:
        m.setattr(validate, "STREAMED", {})
        return validate.check_folder(net)


@pytest.mark.parametrize("read_rows", [29, 333, 1 << 20])  # 29: under one airfield-month
def test_check_in_blocks_finds_the_same_problems_in_the_same_order(net, monkeypatch,
                                                                   read_rows):
    w = _broken_grouped_wind_rose(net)
    whole = _whole(net, monkeypatch)
    monkeypatch.setattr(validate, "_READ_ROWS", read_rows)
    monkeypatch.setattr(validate, "_BLOCK_ROWS", 7)
    blocks = validate.check_folder(net, frames=False)
    assert _texts(blocks) == _texts(whole)
    assert blocks.rows == whole.rows == {t: len(whole.frames[t]) for t in whole.frames}
    assert blocks.rows["wind_rose"] == len(w)
    assert "wind_rose" not in blocks.frames and "wind_rose" in whole.frames
    kept = validate.check_folder(net)  # in blocks, the frames kept
    assert _texts(kept) == _texts(whole)
    for name, frame in whole.frames.items():
        pd.testing.assert_frame_equal(kept.frames[name], frame)
    texts = _texts(whole)
    for what in ("sector grid", "do not sum to 1", "sector appears twice", "duplicate key",
                 "read as percentages", "misses sector", "unknown airfield",
                 "more rows with the same problem", "blank"):
        assert any(what in t for t in texts), what


def test_check_in_blocks_reads_blocks_of_whole_airfield_months(net, monkeypatch):
    _broken_grouped_wind_rose(net)
    seen = []
    real = validate._table_checks

    def record(name, df, *args):
        if name == "wind_rose":
            seen.append(df[["airfield_id", "month"]].copy())
        return real(name, df, *args)

    monkeypatch.setattr(validate, "_table_checks", record)
    monkeypatch.setattr(validate, "_READ_ROWS", 100)
    validate.check_folder(net, frames=False)
    assert len(seen) > 10
    # each block holds at most what was read plus the airfield-month carried over
    # (at most 5 speed classes x 16 sectors + calm + the two duplicated rows)
    assert max(len(b) for b in seen) <= 100 + 83
    keys = [set(zip(b["airfield_id"].dropna(), b["month"].dropna())) for b in seen]
    for i, a in enumerate(keys):  # no airfield-month in two blocks
        for b in keys[i + 1:]:
            assert not a & b


def test_check_in_blocks_of_a_shuffled_wind_rose(net, monkeypatch):
    """Rows of an airfield-month apart: the table is checked whole, same problems."""
    _broken_wind_rose(net)
    whole = _whole(net, monkeypatch)
    monkeypatch.setattr(validate, "_READ_ROWS", 50)
    blocks = validate.check_folder(net, frames=False)
    assert _texts(blocks) == _texts(whole)
    assert blocks.rows == whole.rows
    assert "wind_rose" not in blocks.frames


def test_check_in_blocks_of_text_in_number_columns(net, monkeypatch):
    """A bad number cell sends the reading to the text path: still the same problems."""
    w = _broken_grouped_wind_rose(net)
    w.loc[333, "frequency"] = "0,02"
    w.loc[len(w) - 1, "speed_high_mps"] = "fast"
    write(net, "wind_rose", w)
    whole = _whole(net, monkeypatch)
    monkeypatch.setattr(validate, "_READ_ROWS", 64)
    blocks = validate.check_folder(net, frames=False)
    assert _texts(blocks) == _texts(whole)
    assert any("decimal separator" in t for t in _texts(blocks))


def test_check_in_blocks_of_a_file_that_breaks_late(net, monkeypatch):
    """A row with a field too many near the end: only that is reported, as when whole."""
    w = _broken_grouped_wind_rose(net)
    lines = (net / "wind_rose.csv").read_text().splitlines()
    lines[len(w) - 5] += ",7"
    (net / "wind_rose.csv").write_text("\n".join(lines) + "\n")
    whole = _whole(net, monkeypatch)
    monkeypatch.setattr(validate, "_READ_ROWS", 64)
    blocks = validate.check_folder(net, frames=False)
    assert _texts(blocks) == _texts(whole)
    wind = [p for p in blocks.problems if p.file == "wind_rose.csv"]
    assert [p.row for p in wind] == [len(w) - 5]  # lines[0] is the header
    assert "number of fields" in wind[0].message
    assert "wind_rose" not in blocks.rows


def test_check_in_blocks_of_a_parquet_wind_rose(net, monkeypatch):
    w = _broken_grouped_wind_rose(net)
    typed = w.replace("", np.nan)
    for c in w.columns:
        if c != "airfield_id":
            typed[c] = pd.to_numeric(typed[c])
    typed.to_parquet(net / "wind_rose.parquet")
    (net / "wind_rose.csv").unlink()
    whole = _whole(net, monkeypatch)
    monkeypatch.setattr(validate, "_READ_ROWS", 40)
    blocks = validate.check_folder(net, frames=False)
    assert _texts(blocks) == _texts(whole)
    assert blocks.rows["wind_rose"] == len(w)
    assert any("wind_rose.parquet" in t and "sector grid" in t for t in _texts(blocks))


def test_loaded_tables_do_not_depend_on_the_read_size(net, monkeypatch):
    with monkeypatch.context() as m:
        m.setattr(validate, "STREAMED", {})
        reference = load_folder(net)
    monkeypatch.setattr(validate, "_READ_ROWS", 40)
    monkeypatch.setattr(validate, "_BLOCK_ROWS", 9)
    again = load_folder(net)
    for name in TABLES:
        pd.testing.assert_frame_equal(again.user[name], reference.user[name])
        pd.testing.assert_frame_equal(again[name], reference[name])
    assert validate.check_folder(net, frames=False).rows == {
        t: len(reference.user[t]) for t in TABLES if (net / f"{t}.csv").exists()}


def test_check_reports_progress_in_bytes_up_to_the_total(net, monkeypatch):
    monkeypatch.setattr(validate, "_READ_ROWS", 200)
    calls = []
    validate.check_folder(net, frames=False, progress=lambda *a: calls.append(a))
    total = sum(p.stat().st_size for p in net.glob("*.csv"))
    assert {c[1] for c in calls} == {total}
    done = [c[0] for c in calls]
    assert done == sorted(done) and done[-1] == total
    wind = [c for c in calls if c[2] == "wind_rose.csv"]
    assert len(wind) > 5  # block by block, not only at the end of the table
