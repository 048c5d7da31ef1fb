"""Large tables are checked and hashed in blocks: the block size must not change anything.

These compare a run with tiny blocks against one with the default size on the same
folder, and the block-wise hash against a hash of a whole sorted copy of the table (the
recipe documented in :mod:`schemas.hashing`), so any seam between blocks shows.
"""

from __future__ import annotations

import hashlib

import numpy as np
import pandas as pd

from schemas import hashing, validate
from schemas.load import load_folder
from schemas.tables import TABLES

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
