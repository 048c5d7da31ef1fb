"""Stable content hashes of the input tables, for run records and incremental reruns.

A hash depends only on the validated content (user units, defaults filled): not on the
order of rows, the file format (CSV or Parquet), spacing, or the order of columns. Floats
are hashed by their IEEE-754 bytes after a canonical rounding to 12 significant digits, so
``3200`` and ``3200.0`` hash alike; text by its UTF-8 bytes. SHA-256, hex digest, with a
version prefix (``v1:``) that changes whenever the recipe changes.

* :func:`table_hashes` -> one hash per table.
* :func:`airfield_hashes` -> one hash per airfield over its airfield row, runway rows,
  climate rows, wind-rose rows and obstacle rows (only where it has obstacles: the hash of an
  airfield without any is unchanged): a changed hash means that airfield's results must be
  recomputed.
* :func:`aircraft_type_hashes` -> one hash per aircraft type over its row.
"""

from __future__ import annotations

import hashlib

import numpy as np
import pandas as pd

from fieldlimits.schemas.tables import TABLES

VERSION = "v1"


_BLOCK_ROWS = 262_144
"""Rows hashed per block: the digest is fed block by block, never the whole table at once."""


def _canonical(df: pd.DataFrame, table: str) -> pd.DataFrame:
    """The whole table in canonical form (rounded, sorted by the key); small tables, tests."""
    spec = TABLES[table]
    order = _canonical_order(df, table)
    return _canonical_rows(df, table, order)


def _rounded(values) -> np.ndarray:
    v = np.asarray(values).astype(float)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(np.isnan(v), np.nan, _round_sig(v, 12)) + 0.0


def _canonical_rows(df: pd.DataFrame, table: str, rows: np.ndarray) -> pd.DataFrame:
    """Rows ``rows`` (positions) of ``df`` in canonical form, in that order."""
    spec = TABLES[table]
    out = {}
    for c in spec.columns:
        col = df[c.name].to_numpy()[rows]
        out[c.name] = col if c.dtype == "str" else _rounded(col)
    return pd.DataFrame(out)


def _canonical_order(df: pd.DataFrame, table: str) -> np.ndarray:
    """Row positions sorting the table by its key (rounded numbers, blanks first, stable).

    The same order as a stable multi-column sort of the rounded table with blanks first,
    computed from one integer code per key column instead of a sorted copy of the table.
    """
    spec = TABLES[table]
    n = len(df)
    code = np.zeros(n, dtype=np.int64)
    span = 1
    codes = []
    for k in spec.key:
        codes.append(_key_codes(df[k], spec.column(k).dtype == "str"))
    for f, m in codes:
        span *= m
    if span >= 2 ** 62:  # pragma: no cover - only for absurdly many distinct keys
        return np.lexsort([f for f, _ in reversed(codes)]) if codes else np.arange(n)
    for f, m in codes:
        code *= m
        code += f
    return np.argsort(code, kind="stable")


def _key_codes(series: pd.Series, text: bool) -> tuple[np.ndarray, int]:
    """Codes 1 … m in ascending order of the (rounded) values, 0 for blanks; and m + 1."""
    if text:
        # the series' own factorize: no Python string per row for Arrow-backed text
        f, uniq = pd.factorize(series if pd.api.types.is_string_dtype(series)
                               else series.astype(object), sort=True, use_na_sentinel=True)
        return f.astype(np.int64) + 1, len(uniq) + 1
    v = series.to_numpy()
    n = v.size
    uniq = np.empty(0)
    for s in range(0, n, _BLOCK_ROWS):
        r = _rounded(v[s:s + _BLOCK_ROWS])
        uniq = np.union1d(uniq, np.unique(r[~np.isnan(r)]))
    out = np.empty(n, dtype=np.int64)
    for s in range(0, n, _BLOCK_ROWS):
        r = _rounded(v[s:s + _BLOCK_ROWS])
        c = np.searchsorted(uniq, r) + 1
        c[np.isnan(r)] = 0
        out[s:s + _BLOCK_ROWS] = c
    return out, uniq.size + 1


def _take(series: pd.Series, rows: np.ndarray) -> np.ndarray:
    """Values of ``series`` at positions ``rows`` as an object array (only those rows)."""
    return np.asarray(series.array.take(rows), dtype=object)


def _round_sig(v: np.ndarray, digits: int) -> np.ndarray:
    with np.errstate(invalid="ignore", divide="ignore"):
        mag = np.where(v == 0, 0, np.floor(np.log10(np.abs(np.where(v == 0, 1, v)))))
    scale = 10.0 ** (digits - 1 - mag)
    return np.where(v == 0, 0.0, np.round(v * scale) / scale)


def _text_bytes(values) -> bytes:
    return "\x1f".join("\x00" if v is None or (isinstance(v, float) and np.isnan(v))
                        else str(v) for v in values).encode("utf-8")


def _num_block(df: pd.DataFrame, num: list[str], rows: np.ndarray) -> bytes:
    mat = np.empty((rows.size, len(num)), dtype=np.float64)
    for j, c in enumerate(num):
        mat[:, j] = _rounded(df[c].to_numpy()[rows])
    return mat.tobytes()


def frame_hash(df: pd.DataFrame, table: str) -> str:
    """Hash of one table (user units, validated)."""
    spec = TABLES[table]
    h = hashlib.sha256(f"{VERSION}:{table}:".encode())
    order = _canonical_order(df, table)
    num = [c.name for c in spec.columns if c.dtype != "str"]
    txt = [c.name for c in spec.columns if c.dtype == "str"]
    h.update(",".join(c.name for c in spec.columns).encode())
    blocks = [order[s:s + _BLOCK_ROWS] for s in range(0, order.size, _BLOCK_ROWS)]
    if num:
        h.update(b"\x1e")
        for rows in blocks:
            h.update(_num_block(df, num, rows))
    for c in txt:
        h.update(b"\x1e")
        for i, rows in enumerate(blocks):
            if i:
                h.update(b"\x1f")
            h.update(_text_bytes(_take(df[c], rows)))
    return f"{VERSION}:{h.hexdigest()}"


def _group_hashes(df: pd.DataFrame, table: str, by: str) -> dict[str, bytes]:
    """Digest per value of ``by`` over that value's rows (sorted by the table key)."""
    spec = TABLES[table]
    assert spec.key[0] == by
    order = _canonical_order(df, table)  # sorted by the key, whose first column is ``by``
    if order.size == 0:
        return {}
    kcode, kuniq = pd.factorize(df[by], use_na_sentinel=False)
    kuniq = np.asarray(kuniq, dtype=object)
    keys = kcode[order]
    del kcode
    num = [c.name for c in spec.columns if c.dtype != "str"]
    txt = [c.name for c in spec.columns if c.dtype == "str" and c.name != by]
    header = ",".join(c.name for c in spec.columns).encode()
    starts = np.flatnonzero(np.r_[True, keys[1:] != keys[:-1]])
    ends = np.r_[starts[1:], keys.size]
    out = {}
    g = 0
    while g < starts.size:
        # a block of whole groups of about _BLOCK_ROWS rows
        last = int(np.searchsorted(starts, starts[g] + _BLOCK_ROWS, side="left"))
        last = max(last, g + 1)
        b0, b1 = int(starts[g]), int(ends[last - 1])
        rows = order[b0:b1]
        mat = np.frombuffer(_num_block(df, num, rows), dtype=np.float64).reshape(
            rows.size, len(num)) if num else np.empty((rows.size, 0))
        texts = [_take(df[c], rows) for c in txt]
        for s, e in zip(starts[g:last] - b0, ends[g:last] - b0):
            h = hashlib.sha256(header)
            key = kuniq[keys[b0 + s]]
            h.update(str(key).encode("utf-8"))
            h.update(mat[s:e].tobytes())
            for t in texts:
                h.update(b"\x1e" + _text_bytes(t[s:e]))
            out[key] = h.digest()
        g = last
    return out


def _user(tables) -> dict[str, pd.DataFrame]:
    return tables.user if hasattr(tables, "user") else tables


def table_hashes(tables) -> dict[str, str]:
    """One hash per table of a :class:`schemas.load.Tables` (or a dict of user frames)."""
    user = _user(tables)
    return {name: frame_hash(user[name], name) for name in TABLES
            if name in user and user[name] is not None}


def airfield_hashes(tables, digests: dict | None = None) -> dict[str, str]:
    """One hash per airfield over its airfield, runway, climate and wind-rose rows, and its
    obstacle rows where it has any.

    An airfield without obstacles hashes exactly as before the obstacles table existed (the
    table is left out of its hash, not hashed as empty), so adding obstacles to some airfields
    leaves the others' hashes, and their reusable results, unchanged. ``digests`` gives, for
    a table not held in memory, its per-airfield digests (:meth:`StreamedHashes.group_digests`).
    """
    user = _user(tables)
    digests = digests or {}
    parts = {t: digests[t] if t in digests else _group_hashes(user[t], t, "airfield_id")
             for t in ("airfields", "runways", "climate_monthly", "wind_rose")}
    obstacles = user.get("obstacles")
    obstacle_parts = ({} if obstacles is None or len(obstacles) == 0
                      else _group_hashes(obstacles, "obstacles", "airfield_id"))
    out = {}
    for afid in user["airfields"]["airfield_id"]:
        h = hashlib.sha256(f"{VERSION}:airfield:".encode())
        for t in ("airfields", "runways", "climate_monthly", "wind_rose"):
            h.update(t.encode())
            h.update(parts[t].get(afid, b"-"))
        if afid in obstacle_parts:
            h.update(b"obstacles")
            h.update(obstacle_parts[afid])
        out[afid] = f"{VERSION}:{h.hexdigest()}"
    return out


def aircraft_type_hashes(tables) -> dict[str, str]:
    """One hash per aircraft type over its row."""
    user = _user(tables)
    parts = _group_hashes(user["aircraft_types"], "aircraft_types", "aircraft_type_id")
    return {k: f"{VERSION}:{hashlib.sha256(f'{VERSION}:type:'.encode() + v).hexdigest()}"
            for k, v in parts.items()}


class StreamedHashes:
    """The table hash and the per-airfield digests of one table fed block by block.

    For a table too large to hold whole (the wind rose of a large network): each block is
    hashed as it is read and dropped. The results equal :func:`frame_hash` and the digests of
    :func:`airfield_hashes` of the whole table when the blocks come in key order, i.e. the
    ``prefix`` columns (the whole groups each block holds: airfield and month) of every
    block's first row in key order come strictly after those of the block before, as in a
    file sorted by airfield and month (what ``generate`` writes). Otherwise :attr:`ordered`
    turns False and the caller hashes the whole table instead.

    Parameters
    ----------
    table : str
        Table name (:data:`schemas.tables.TABLES`).
    prefix : tuple of str
        Leading key columns whose values no two blocks share.
    """

    def __init__(self, table: str, prefix: tuple[str, ...] = ("airfield_id", "month")):
        spec = TABLES[table]
        self.table = table
        self.prefix = prefix
        self.by = spec.key[0]
        self.num = [c.name for c in spec.columns if c.dtype != "str"]
        self.txt = [c.name for c in spec.columns if c.dtype == "str"]
        self.header = ",".join(c.name for c in spec.columns).encode()
        self.ordered = spec.key[:len(prefix)] == prefix
        # per-group digests cover the numbers and the text columns other than the group's;
        # the latter would follow all of a group's numbers: streamed only without them
        self.groups_ok = all(c == self.by for c in self.txt)
        self._h = hashlib.sha256(f"{VERSION}:{table}:".encode())
        self._h.update(self.header)
        if self.num:
            self._h.update(b"\x1e")
        self._runs: dict[str, list] = {c: [] for c in self.txt}  # (value, count), key order
        self._groups: dict = {}
        self._open = None  # (key, hasher) of the group that may go on in the next block
        self._last = None  # prefix of the last row so far, in key order
        self.rows = 0

    def _prefix_at(self, df: pd.DataFrame, row: int):
        out = []
        for c in self.prefix:
            v = df[c].iloc[row]
            if v is None or (isinstance(v, float) and np.isnan(v)):
                return None
            out.append(v if isinstance(v, str) else float(_rounded([v])[0]))
        return tuple(out)

    def add(self, df: pd.DataFrame) -> None:
        """Hash the rows of one block (user units, validated; whole groups of ``prefix``)."""
        if not self.ordered or len(df) == 0:
            return
        order = _canonical_order(df, self.table)
        first, last = self._prefix_at(df, int(order[0])), self._prefix_at(df, int(order[-1]))
        if first is None or last is None or (self._last is not None and not first > self._last):
            self.ordered = False
            return
        self._last = last
        self.rows += len(df)
        for s in range(0, order.size, _BLOCK_ROWS):
            self._add_rows(df, order[s:s + _BLOCK_ROWS])

    def _add_rows(self, df: pd.DataFrame, rows: np.ndarray) -> None:
        raw = _num_block(df, self.num, rows) if self.num else b""
        self._h.update(raw)
        for c in self.txt:
            self._add_runs(self._runs[c], _take(df[c], rows))
        if self.groups_ok:
            mat = np.frombuffer(raw, dtype=np.float64).reshape(rows.size, len(self.num))
            self._add_groups(_take(df[self.by], rows), mat)

    @staticmethod
    def _add_runs(runs: list, values: np.ndarray) -> None:
        codes, uniq = pd.factorize(pd.Series(values, dtype=object))
        starts = np.flatnonzero(np.r_[True, codes[1:] != codes[:-1]])
        counts = np.diff(np.r_[starts, codes.size])
        for s, n in zip(starts.tolist(), counts.tolist()):
            v = None if codes[s] < 0 else uniq[codes[s]]
            if runs and runs[-1][0] == v and (v is not None or runs[-1][0] is None):
                runs[-1][1] += n
            else:
                runs.append([v, n])

    def _add_groups(self, keys: np.ndarray, mat: np.ndarray) -> None:
        codes, uniq = pd.factorize(pd.Series(keys, dtype=object), use_na_sentinel=False)
        starts = np.flatnonzero(np.r_[True, codes[1:] != codes[:-1]])
        ends = np.r_[starts[1:], codes.size]
        for s, e in zip(starts.tolist(), ends.tolist()):
            key = uniq[codes[s]]
            if self._open is not None and self._open[0] == key:
                h = self._open[1]
            else:
                self._close_group()
                h = hashlib.sha256(self.header)
                h.update(str(key).encode("utf-8"))
                self._open = (key, h)
            h.update(mat[s:e].tobytes())

    def _close_group(self) -> None:
        if self._open is not None:
            self._groups[self._open[0]] = self._open[1].digest()
            self._open = None

    def table_hash(self) -> str:
        """:func:`frame_hash` of all rows added (only when :attr:`ordered`)."""
        assert self.ordered
        h = self._h.copy()
        for c in self.txt:
            h.update(b"\x1e")
            for i, (v, n) in enumerate(self._runs[c]):
                if i:
                    h.update(b"\x1f")
                text = ("\x00" if v is None or (isinstance(v, float) and np.isnan(v))
                        else str(v)).encode("utf-8")
                h.update(b"\x1f".join([text] * n))
        return f"{VERSION}:{h.hexdigest()}"

    def group_digests(self) -> dict:
        """The digest of each ``airfield_id`` over its rows, as :func:`airfield_hashes`
        uses them (only when :attr:`ordered` and :attr:`groups_ok`)."""
        assert self.ordered and self.groups_ok
        self._close_group()
        return dict(self._groups)
