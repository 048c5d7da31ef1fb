"""Stable content hashes of the input tables, for run records and incremental reruns.

A hash depends only on the validated content (user units, defaults filled): not on the
order of rows, the file format (CSV or Parquet), spacing, or the order of columns. Floats
are hashed by their IEEE-754 bytes after a canonical rounding to 12 significant digits, so
``3200`` and ``3200.0`` hash alike; text by its UTF-8 bytes. SHA-256, hex digest, with a
version prefix (``v1:``) that changes whenever the recipe changes.

* :func:`table_hashes` -> one hash per table.
* :func:`airfield_hashes` -> one hash per airfield over its airfield row, runway rows,
  climate rows and wind-rose rows: a changed hash means that airfield's results must be
  recomputed.
* :func:`aircraft_type_hashes` -> one hash per aircraft type over its row.
"""

from __future__ import annotations

import hashlib

import numpy as np
import pandas as pd

from schemas.tables import TABLES

VERSION = "v1"


def _canonical(df: pd.DataFrame, table: str) -> pd.DataFrame:
    spec = TABLES[table]
    cols = [c.name for c in spec.columns]
    out = df[cols].copy()
    for c in spec.columns:
        if c.dtype != "str":
            v = out[c.name].astype(float).to_numpy()
            with np.errstate(invalid="ignore", divide="ignore"):
                out[c.name] = np.where(np.isnan(v), np.nan, _round_sig(v, 12)) + 0.0
    return out.sort_values(list(spec.key), kind="mergesort", na_position="first",
                           ignore_index=True)


def _round_sig(v: np.ndarray, digits: int) -> np.ndarray:
    with np.errstate(invalid="ignore", divide="ignore"):
        mag = np.where(v == 0, 0, np.floor(np.log10(np.abs(np.where(v == 0, 1, v)))))
    scale = 10.0 ** (digits - 1 - mag)
    return np.where(v == 0, 0.0, np.round(v * scale) / scale)


def _digest_block(df: pd.DataFrame, table: str) -> bytes:
    """Bytes of a canonical block (already sorted) for hashing."""
    spec = TABLES[table]
    num = [c.name for c in spec.columns if c.dtype != "str"]
    txt = [c.name for c in spec.columns if c.dtype == "str"]
    parts = [",".join(c.name for c in spec.columns).encode()]
    if num:
        parts.append(np.ascontiguousarray(df[num].to_numpy(dtype=np.float64)).tobytes())
    for c in txt:
        parts.append(_text_bytes(df[c].to_numpy(dtype=object)))
    return b"\x1e".join(parts)


def _text_bytes(values) -> bytes:
    return "\x1f".join("\x00" if v is None or (isinstance(v, float) and np.isnan(v))
                        else str(v) for v in values).encode("utf-8")


def frame_hash(df: pd.DataFrame, table: str) -> str:
    """Hash of one table (user units, validated)."""
    h = hashlib.sha256(f"{VERSION}:{table}:".encode())
    h.update(_digest_block(_canonical(df, table), table))
    return f"{VERSION}:{h.hexdigest()}"


def _group_hashes(df: pd.DataFrame, table: str, by: str) -> dict[str, bytes]:
    """Digest per value of ``by`` over that value's rows (sorted by the table key)."""
    spec = TABLES[table]
    can = _canonical(df, table)  # sorted by the key, whose first column is ``by``
    assert spec.key[0] == by
    keys = can[by].to_numpy(dtype=object)
    if keys.size == 0:
        return {}
    num = [c.name for c in spec.columns if c.dtype != "str"]
    txt = [c.name for c in spec.columns if c.dtype == "str" and c.name != by]
    mat = np.ascontiguousarray(can[num].to_numpy(dtype=np.float64))
    texts = [can[c].to_numpy(dtype=object) for c in txt]
    header = ",".join(c.name for c in spec.columns).encode()
    starts = np.flatnonzero(np.r_[True, keys[1:] != keys[:-1]])
    ends = np.r_[starts[1:], keys.size]
    out = {}
    for s, e in zip(starts, ends):
        h = hashlib.sha256(header)
        h.update(str(keys[s]).encode("utf-8"))
        h.update(mat[s:e].tobytes())
        for t in texts:
            h.update(b"\x1e" + _text_bytes(t[s:e]))
        out[keys[s]] = h.digest()
    return out


def _user(tables) -> dict[str, pd.DataFrame]:
    return tables.user if hasattr(tables, "user") else tables


def table_hashes(tables) -> dict[str, str]:
    """One hash per table of a :class:`schemas.load.Tables` (or a dict of user frames)."""
    user = _user(tables)
    return {name: frame_hash(user[name], name) for name in TABLES if name in user}


def airfield_hashes(tables) -> dict[str, str]:
    """One hash per airfield over its airfield, runway, climate and wind-rose rows."""
    user = _user(tables)
    parts = {t: _group_hashes(user[t], t, "airfield_id")
             for t in ("airfields", "runways", "climate_monthly", "wind_rose")}
    out = {}
    for afid in user["airfields"]["airfield_id"]:
        h = hashlib.sha256(f"{VERSION}:airfield:".encode())
        for t in ("airfields", "runways", "climate_monthly", "wind_rose"):
            h.update(t.encode())
            h.update(parts[t].get(afid, b"-"))
        out[afid] = f"{VERSION}:{h.hexdigest()}"
    return out


def aircraft_type_hashes(tables) -> dict[str, str]:
    """One hash per aircraft type over its row."""
    user = _user(tables)
    parts = _group_hashes(user["aircraft_types"], "aircraft_types", "aircraft_type_id")
    return {k: f"{VERSION}:{hashlib.sha256(f'{VERSION}:type:'.encode() + v).hexdigest()}"
            for k, v in parts.items()}
