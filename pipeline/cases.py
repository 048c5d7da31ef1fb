"""Build the case arrays of a run and split them into chunks of whole airfields.

A *case* is one runway direction × month × aircraft type × condition on the design day:
the month's mean daily maximum temperature (plus the run's climate scenario offset
``temperature_offset_k``), calm wind, station pressure from the month's QNH and the airfield
elevation. Conditions: ``dry`` (dry friction, 35 ft screen) and ``wet`` (wet friction, 15 ft
screen, 14 CFR 25.113).

The cases are written, never held whole in memory, to ``<work>/cases.parquet``: one Parquet
row group per chunk, each chunk holding **complete airfields** (every direction, month,
type and condition of each of its airfields), so an airfield-level row producer (e.g. the
best usable direction for each wind) sees everything it needs inside one chunk. A chunk
task reads its row group only. The aircraft table (SI) goes to ``<work>/aircraft.parquet``
and every validated input table to ``<work>/tables/<name>.parquet`` for row producers; a
table with an ``airfield_id`` is sorted by it (stable: each airfield's rows in the table's
order) and cut into a row group per chunk (:func:`write_chunk_aligned`, and
:func:`align_table_file` for the streamed wind rose), so a chunk reads only its own rows.

No formulas here: the atmosphere comes from :mod:`physics.atmosphere`, friction from
:mod:`physics.friction`, screen heights from :mod:`physics.constants`.
"""

from __future__ import annotations

import json
import os
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.parquet as pq

from fieldlimits.physics import atmosphere, constants
from fieldlimits.schemas.results import CONDITIONS

STATIONS_FILE = "stations.parquet"  # runway direction × month rows, a row group per chunk
CASE_SPEC_FILE = "cases.json"  # conditions, reused pairs and case counts of the chunks
AIRCRAFT_FILE = "aircraft.parquet"
TABLES_DIR = "tables"

SCREEN_HEIGHT_M = {
    "dry": constants.SCREEN_HEIGHT_35FT_M,  # 14 CFR 25.113(a), dry runway
    "wet": constants.SCREEN_HEIGHT_15FT_M,  # 14 CFR 25.113, wet runway
}

CASE_KEYS = ("airfield_id", "runway_id", "aircraft_type_id", "month", "condition")
"""Key columns of a case, in sort order."""


@dataclass(frozen=True)
class ChunkPlan:
    """Which airfields go into which chunk, and how many cases each chunk has."""

    airfield_blocks: tuple[tuple[str, ...], ...]
    cases_per_chunk: tuple[int, ...]

    @property
    def n_chunks(self) -> int:
        return len(self.airfield_blocks)

    @property
    def n_cases(self) -> int:
        return int(sum(self.cases_per_chunk))

    @property
    def n_airfields(self) -> int:
        return sum(len(b) for b in self.airfield_blocks)


def friction_for(surface: np.ndarray, condition: str) -> tuple[np.ndarray, np.ndarray]:
    """Rolling and braking friction per runway for one condition (from :mod:`physics.friction`)."""
    from fieldlimits.physics import friction

    surface_codes = friction.surface_code(np.asarray(surface, dtype=object))
    condition_codes = np.full(np.shape(surface_codes), friction.condition_code(condition))
    return (np.asarray(friction.rolling_friction(surface_codes, condition_codes), dtype=float),
            np.asarray(friction.braking_friction(surface_codes, condition_codes), dtype=float))


@dataclass(frozen=True)
class Skip:
    """Airfield × type pairs not to compute (reused): unchanged airfields × unchanged types."""

    airfields: frozenset = frozenset()
    types: frozenset = frozenset()

    def __bool__(self) -> bool:
        return bool(self.airfields) and bool(self.types)


def plan_chunks(tables: dict[str, pd.DataFrame], chunk_size: int,
                conditions: tuple[str, ...] = CONDITIONS, skip: Skip = Skip()) -> ChunkPlan:
    """Group airfields (in id order) into chunks of about ``chunk_size`` cases.

    An airfield is never split; a chunk closes once it reaches ``chunk_size`` cases, so a
    chunk holds at most ``chunk_size`` plus one airfield's cases. Pairs in ``skip`` are not
    counted (an airfield whose every type is skipped is left out).
    """
    if chunk_size < 1:
        raise ValueError("chunk_size must be at least 1")
    types = set(tables["aircraft_types"]["aircraft_type_id"].astype(str))
    n_types = len(types)
    n_skip_types = len(types & set(skip.types))
    counts = tables["runways"].groupby("airfield_id", sort=True).size()
    blocks, sizes, current, size = [], [], [], 0
    for airfield_id, n_dirs in counts.items():
        n_compute = n_types - (n_skip_types if str(airfield_id) in skip.airfields else 0)
        if n_compute == 0:
            continue
        current.append(str(airfield_id))
        size += int(n_dirs) * 12 * n_compute * len(conditions)
        if size >= chunk_size:
            blocks.append(tuple(current))
            sizes.append(size)
            current, size = [], 0
    if current:
        blocks.append(tuple(current))
        sizes.append(size)
    return ChunkPlan(tuple(blocks), tuple(sizes))


def station_frame(tables: dict[str, pd.DataFrame], runways: pd.DataFrame,
                  temperature_offset_k: float) -> pd.DataFrame:
    """Runway directions × 12 months with the design-day atmosphere (one row each)."""
    airfields = tables["airfields"][["airfield_id", "elevation_m"]]
    climate = tables["climate_monthly"][["airfield_id", "month", "mean_daily_max_k", "qnh_pa"]]
    frame = runways.merge(airfields, on="airfield_id", how="left", validate="many_to_one")
    frame = frame.merge(climate, on="airfield_id", how="left", validate="many_to_many")
    temperature_k = frame["mean_daily_max_k"].to_numpy(float) + float(temperature_offset_k)
    pressure_pa = atmosphere.station_pressure_pa(frame["elevation_m"].to_numpy(float),
                                                 frame["qnh_pa"].to_numpy(float))
    density = atmosphere.density_kg_m3(pressure_pa, temperature_k)
    frame["temperature_k"] = temperature_k
    frame["oat_c"] = temperature_k - constants.ZERO_CELSIUS_K
    frame["pressure_pa"] = pressure_pa
    frame["pressure_altitude_m"] = atmosphere.pressure_altitude_m(pressure_pa)
    frame["density_altitude_m"] = atmosphere.density_altitude_m(density)
    return frame


def expand_cases(stations: pd.DataFrame, types: np.ndarray,
                 conditions: tuple[str, ...] = CONDITIONS) -> pd.DataFrame:
    """Cases from station rows (runway × 12 months, sorted by airfield, runway, month).

    Order: airfield, runway, aircraft type, month, condition (the :data:`CASE_KEYS` order).
    """
    n_st = len(stations)
    if n_st % 12:
        raise RuntimeError("every runway needs twelve months of climate")  # validated upstream
    n_rw, n_t, n_c = n_st // 12, len(types), len(conditions)
    r, t, m, c = (a.ravel() for a in np.indices((n_rw, n_t, 12, n_c)))
    st = r * 12 + m
    surface = stations["surface"].to_numpy(object)[::12]
    mu = [friction_for(surface, cond) for cond in conditions]
    mu_roll = np.stack([x[0] for x in mu])  # [condition, runway]
    mu_brake = np.stack([x[1] for x in mu])
    # Dry friction of the same runway: a wet case is also solved dry and keeps the lower
    # limit (physics.weightlimit.Site.mu_roll_dry), so wet is never better than dry.
    mu_roll_dry, mu_brake_dry = friction_for(surface, "dry")
    cond_names = np.asarray(conditions, dtype=object)
    screens = np.asarray([SCREEN_HEIGHT_M[cond] for cond in conditions])
    out = {
        "airfield_id": stations["airfield_id"].to_numpy(object)[st],
        "runway_id": stations["runway_id"].to_numpy(object)[st],
        "aircraft_type_id": np.asarray(types, dtype=object)[t],
        "aircraft_index": t.astype(np.int32),
        "month": stations["month"].to_numpy(np.int8)[st],
        "condition": cond_names[c],
    }
    for col in ("tora_m", "toda_m", "asda_m", "slope", "pressure_pa", "temperature_k",
                "oat_c", "pressure_altitude_m", "density_altitude_m"):
        out[col] = stations[col].to_numpy(float)[st]
    out["mu_roll"] = mu_roll[c, r]
    out["mu_brake"] = mu_brake[c, r]
    out["mu_roll_dry"] = mu_roll_dry[r]
    out["mu_brake_dry"] = mu_brake_dry[r]
    out["headwind_mps"] = np.zeros(len(st))  # design day: calm
    out["screen_height_m"] = screens[c]
    return pd.DataFrame(out)


def all_stations(tables: dict[str, pd.DataFrame], temperature_offset_k: float) -> pd.DataFrame:
    """Every runway direction × month with its design-day atmosphere, sorted."""
    stations = station_frame(tables, tables["runways"], temperature_offset_k)
    return stations.sort_values(["airfield_id", "runway_id", "month"], kind="stable", ignore_index=True)


def block_stations(stations: pd.DataFrame, airfield_ids, airfield: np.ndarray | None = None) -> pd.DataFrame:
    """The rows of ``stations`` (sorted, :func:`all_stations`) of some airfields;
    ``airfield``: its ``airfield_id`` column as an object array, when the caller has it."""
    ids = list(airfield_ids)
    if airfield is None:
        airfield = stations["airfield_id"].to_numpy(object)
    lo = np.searchsorted(airfield, ids[0], side="left") if len(ids) else 0
    hi = np.searchsorted(airfield, ids[-1], side="right") if len(ids) else 0
    block = stations.iloc[lo:hi]
    if set(block["airfield_id"].unique()) != set(ids):  # ids not a contiguous sorted run
        block = stations[stations["airfield_id"].isin(ids)]
    return block


def station_cases(block: pd.DataFrame, types, conditions: tuple[str, ...] = CONDITIONS,
                  skip: Skip = Skip()) -> pd.DataFrame:
    """The cases of station rows (:func:`expand_cases`) minus the pairs in ``skip``."""
    cases = expand_cases(block, np.asarray(types, dtype=object), conditions)
    if skip:
        reused = (cases["airfield_id"].isin(list(skip.airfields))
                  & cases["aircraft_type_id"].isin(list(skip.types))).to_numpy()
        cases = cases[~reused].reset_index(drop=True)
    return cases


def block_cases(tables: dict[str, pd.DataFrame], airfield_ids, temperature_offset_k: float,
                conditions: tuple[str, ...] = CONDITIONS, stations: pd.DataFrame | None = None,
                skip: Skip = Skip()) -> pd.DataFrame:
    """All cases of some airfields: directions × months × types × conditions (minus ``skip``)."""
    if stations is None:
        stations = all_stations(tables, temperature_offset_k)
    types = tables["aircraft_types"]["aircraft_type_id"].astype(str).to_numpy()
    return station_cases(block_stations(stations, airfield_ids), types, conditions, skip)


def obstacle_arrays(cases: pd.DataFrame, obstacles: pd.DataFrame | None):
    """The obstacles of each case's runway direction, padded into arrays of shape (n, K).

    Only obstacles inside the departure area count (:func:`schemas.departure.in_departure_area`;
    ``check`` warns about the others). Each direction's obstacles are ordered by distance,
    then id, so a case's arrays do not depend on the row order of the table.

    Parameters
    ----------
    cases : DataFrame
        Cases with ``airfield_id`` and ``runway_id``.
    obstacles : DataFrame or None
        The ``obstacles`` table (SI = user units), any airfields.

    Returns
    -------
    (physics.flightpath.Obstacles, numpy.ndarray) or (None, None)
        Distances from the end of TODA and heights above the runway end (NaN padding), and
        the ``obstacle_id`` texts in the same places (None padding); ``(None, None)`` when no
        case has an obstacle, so those cases are solved exactly as without the table.
    """
    from fieldlimits.physics.flightpath import Obstacles
    from fieldlimits.schemas.departure import in_departure_area

    if obstacles is None or len(obstacles) == 0 or len(cases) == 0:
        return None, None
    d = obstacles["distance_from_toda_end_m"].to_numpy(float)
    keep = in_departure_area(d, obstacles["lateral_offset_m"].to_numpy(float)) & (d > 0)
    ob = obstacles.loc[keep, ["airfield_id", "runway_id", "obstacle_id", "distance_from_toda_end_m", "height_m"]]
    directions = pd.MultiIndex.from_frame(cases[["airfield_id", "runway_id"]].astype(object))
    ob = ob[pd.MultiIndex.from_frame(ob[["airfield_id", "runway_id"]].astype(object)).isin(directions)]
    if len(ob) == 0:
        return None, None
    ob = ob.sort_values(["airfield_id", "runway_id", "distance_from_toda_end_m", "obstacle_id"],
                        kind="stable", ignore_index=True)
    keys = ob[["airfield_id", "runway_id"]].astype(object)
    slot = keys.groupby(["airfield_id", "runway_id"], sort=False).cumcount().to_numpy()
    owners = pd.MultiIndex.from_frame(keys.drop_duplicates())
    row = owners.get_indexer(pd.MultiIndex.from_frame(keys))
    n_dir, k = len(owners), int(slot.max()) + 1
    # one padding row (index n_dir) for the directions without obstacles
    dist = np.full((n_dir + 1, k), np.nan)
    height = np.full((n_dir + 1, k), np.nan)
    ids = np.full((n_dir + 1, k), None, dtype=object)
    dist[row, slot] = ob["distance_from_toda_end_m"].to_numpy(float)
    height[row, slot] = ob["height_m"].to_numpy(float)
    ids[row, slot] = ob["obstacle_id"].to_numpy(object)
    at = owners.get_indexer(directions)
    at = np.where(at < 0, n_dir, at)
    return Obstacles(dist[at], height[at]), ids[at]


def governing_obstacle_ids(ids: np.ndarray | None, index) -> np.ndarray:
    """``obstacle_id`` of each case's governing obstacle (None where there is none).

    Parameters
    ----------
    ids : numpy.ndarray or None
        From :func:`obstacle_arrays`, shape (n, K).
    index : array_like
        ``WeightLimit.governing_obstacle``: index into the case's K obstacles, NaN none.
    """
    index = np.asarray(index, dtype=float)
    out = np.full(index.shape, None, dtype=object)
    if ids is None:
        return out
    has = np.flatnonzero(np.isfinite(index))
    out[has] = ids[has, index[has].astype(np.int64)]
    return out


def _atomic_write_table(table: pa.Table, path: Path) -> None:
    tmp = path.with_name(f".{path.name}.{os.getpid()}.tmp")
    pq.write_table(table, tmp)
    os.replace(tmp, path)


#: Rows converted to Arrow at a time when a frame is written to Parquet (bounded memory for
#: the large wind rose).
WRITE_SLICE_ROWS = 1_000_000


def _write_parquet_parts(path: Path, parts) -> bool:
    """Write ``(table, row_group_size)`` parts to ``path`` as one Parquet file, atomically
    (temp name + rename); return False, leaving ``path`` untouched, when there is no part."""
    path = Path(path)
    tmp = path.with_name(f".{path.name}.{os.getpid()}.tmp")
    writer = None
    try:
        for table, row_group_size in parts:
            if writer is None:
                writer = pq.ParquetWriter(tmp, table.schema)
            writer.write_table(table, row_group_size=row_group_size)
        if writer is None:
            return False
        writer.close()
        writer = None
        os.replace(tmp, path)
        return True
    finally:
        if writer is not None:
            writer.close()
        if tmp.exists():
            tmp.unlink()


def write_frame(frame: pd.DataFrame, path: Path) -> None:
    """Write ``frame`` to ``path`` (Parquet, atomic), converting a slice of rows at a time."""
    def parts():
        schema = None
        for start in range(0, max(len(frame), 1), WRITE_SLICE_ROWS):
            table = pa.Table.from_pandas(frame.iloc[start:start + WRITE_SLICE_ROWS], preserve_index=False,
                                         schema=schema)
            schema = table.schema
            yield table, None

    _write_parquet_parts(path, parts())


AIRFIELD_KEY = "airfield_id"
"""The column by which input tables are cut into chunks."""


def chunk_cuts(plan: ChunkPlan) -> tuple[tuple[str, str], ...]:
    """Where the row groups of an airfield-keyed table file are cut, in airfield-id order:
    before each chunk's first airfield (``"left"``) and after its last (``"right"``)."""
    cuts = []
    for block in plan.airfield_blocks:
        if block:
            cuts += [(str(block[0]), "left"), (str(block[-1]), "right")]
    return tuple(cuts)


def is_text(arrow_type: pa.DataType) -> bool:
    """Whether an Arrow type is text (``string`` or ``large_string``)."""
    return pa.types.is_string(arrow_type) or pa.types.is_large_string(arrow_type)


class _Texts:
    """An Arrow text array as a sequence for :mod:`bisect` (one element converted per look)."""

    def __init__(self, values: pa.Array):
        self.values = values

    def __len__(self) -> int:
        return len(self.values)

    def __getitem__(self, i: int) -> str:
        return self.values[i].as_py()


def _sorted_by_key(values: pa.Array, previous: str | None) -> bool:
    """Whether ``values`` (no nulls) never fall, and do not fall below ``previous``."""
    import pyarrow.compute as pc

    if len(values) == 0:
        return True
    if previous is not None and values[0].as_py() < previous:
        return False
    return len(values) < 2 or pc.all(pc.greater_equal(values[1:], values[:-1])).as_py()


class _Unsorted(Exception):
    """The rows handed to :func:`_aligned_groups` are not in airfield-id order."""


def _aligned_groups(tables, cuts: tuple[tuple[str, str], ...], max_rows: int):
    """Row groups of rows sorted by airfield id: cut at ``cuts`` (:func:`chunk_cuts`) and after
    ``max_rows`` rows; ``tables`` gives the rows in order as Arrow tables. Yields
    ``(table, row count)`` for :func:`_write_parquet_parts`; raises :class:`_Unsorted`."""
    from bisect import bisect_left, bisect_right

    pending, n_pending, k, last = [], 0, 0, None

    def group(rows: int):
        nonlocal pending, n_pending
        whole = pa.concat_tables(pending) if len(pending) > 1 else pending[0]
        pending = [whole.slice(rows)] if rows < whole.num_rows else []
        n_pending -= rows
        return whole.slice(0, rows), rows

    for table in tables:
        n = table.num_rows
        if n == 0:
            continue
        ids = table.column(AIRFIELD_KEY).combine_chunks()
        if not is_text(ids.type) or ids.null_count or not _sorted_by_key(ids, last):
            raise _Unsorted
        last = ids[n - 1].as_py()
        texts, start = _Texts(ids), 0
        while start < n:
            stop = n
            if k < len(cuts):
                value, side = cuts[k]
                pos = (bisect_left if side == "left" else bisect_right)(texts, value, lo=start)
                if pos < n:
                    stop, k = pos, k + 1
            if stop > start:
                pending.append(table.slice(start, stop - start))
                n_pending += stop - start
            while n_pending >= max_rows:
                yield group(max_rows)
            if stop < n and n_pending:
                yield group(n_pending)
            start = stop
    if n_pending:
        yield group(n_pending)


def write_chunk_aligned(frame: pd.DataFrame, path: Path, plan: ChunkPlan) -> None:
    """Write an input table (Parquet, atomic) sorted by airfield id, with its row groups cut
    where the chunks of ``plan`` begin and end (:func:`chunk_cuts`), so a chunk reads only
    its own rows (:func:`pipeline.chunks.read_chunk_table`).

    The sort is stable: each airfield keeps its rows in the table's order. A table without
    ``airfield_id``, or without rows, is written as it is (:func:`write_frame`).
    """
    if AIRFIELD_KEY not in frame.columns or len(frame) == 0 or frame[AIRFIELD_KEY].isna().any():
        write_frame(frame, path)
        return
    if not frame[AIRFIELD_KEY].astype(str).is_monotonic_increasing:
        frame = frame.sort_values(AIRFIELD_KEY, kind="stable", key=lambda s: s.astype(str))

    def tables():
        schema = None
        for start in range(0, len(frame), WRITE_SLICE_ROWS):
            table = pa.Table.from_pandas(frame.iloc[start:start + WRITE_SLICE_ROWS], preserve_index=False,
                                         schema=schema)
            schema = table.schema
            yield table

    try:
        _write_parquet_parts(path, _aligned_groups(tables(), chunk_cuts(plan), WRITE_SLICE_ROWS))
    except _Unsorted:  # ids that are not text: written as they are
        write_frame(frame, path)


#: Rows read at a time when a table file is rewritten in chunk order.
ALIGN_BATCH_ROWS = 1 << 16


def align_table_file(path: Path, plan: ChunkPlan) -> bool:
    """Rewrite an input table's Parquet file (the streamed wind rose) like
    :func:`write_chunk_aligned`, in place (atomic); return whether it was rewritten.

    A file already in airfield-id order is read and written ``ALIGN_BATCH_ROWS`` rows at a
    time (memory of one row group); a file out of order is sorted whole (stable), as the
    whole table is then read once for its hashes anyway (``pipeline.inputs``). A file
    without ``airfield_id``, without rows or with a blank id is left as it is.
    """
    import pyarrow.compute as pc

    path = Path(path)
    with pq.ParquetFile(path) as source:
        field = source.schema_arrow.field(AIRFIELD_KEY) if AIRFIELD_KEY in source.schema_arrow.names else None
        if field is None or not is_text(field.type) or source.metadata.num_rows == 0:
            return False
        cuts = chunk_cuts(plan)

        def batches():
            for batch in source.iter_batches(batch_size=ALIGN_BATCH_ROWS, use_threads=False):
                yield pa.Table.from_batches([batch])

        try:
            # written to a temporary name and renamed: the source stays readable meanwhile
            _write_parquet_parts(path, _aligned_groups(batches(), cuts, WRITE_SLICE_ROWS))
            return True
        except _Unsorted:
            pass
        table = source.read(use_threads=False)
    if table.column(AIRFIELD_KEY).null_count:
        return False
    table = table.take(pc.sort_indices(table, [(AIRFIELD_KEY, "ascending")]))  # a stable sort
    _write_parquet_parts(path, _aligned_groups([table], cuts, WRITE_SLICE_ROWS))
    return True


def write_cases(tables: dict[str, pd.DataFrame], plan: ChunkPlan, work_dir: str | os.PathLike,
                temperature_offset_k: float, conditions: tuple[str, ...] = CONDITIONS,
                skip: Skip = Skip()) -> Path:
    """Write the run's inputs for the chunk tasks into ``work_dir``; return its path.

    The cases themselves are not written: ``stations.parquet`` holds each runway direction ×
    month with its design-day atmosphere, one row group per chunk of ``plan``, and
    ``cases.json`` the conditions, the reused pairs and the planned case counts; a chunk
    expands its own row group into its cases (:func:`read_chunk_cases`), so the main
    process neither builds nor writes the run's millions of case rows.
    """
    work = Path(work_dir)
    (work / TABLES_DIR).mkdir(parents=True, exist_ok=True)
    for name, frame in tables.items():
        write_chunk_aligned(frame, work / TABLES_DIR / f"{name}.parquet", plan)
    aircraft = tables["aircraft_types"].reset_index(drop=True)
    _atomic_write_table(pa.Table.from_pandas(aircraft, preserve_index=False), work / AIRCRAFT_FILE)

    stations = all_stations(tables, temperature_offset_k)
    airfield = stations["airfield_id"].to_numpy(object)  # once, not per chunk

    def parts():
        schema = None
        for block in plan.airfield_blocks:
            rows = block_stations(stations, block, airfield)
            table = pa.Table.from_pandas(rows, preserve_index=False, schema=schema)
            schema = table.schema
            yield table, max(len(rows), 1)

    _write_parquet_parts(work / STATIONS_FILE, parts())
    spec = {"conditions": list(conditions), "skip_airfields": sorted(skip.airfields),
            "skip_types": sorted(skip.types), "cases_per_chunk": [int(n) for n in plan.cases_per_chunk]}
    tmp = work / f".{CASE_SPEC_FILE}.{os.getpid()}.tmp"
    tmp.write_text(json.dumps(spec))
    os.replace(tmp, work / CASE_SPEC_FILE)
    return work


def _case_spec(work: Path) -> dict:
    return json.loads((work / CASE_SPEC_FILE).read_text())


def planned_cases(work_dir: str | os.PathLike, chunk: int | None = None) -> int:
    """Cases of chunk ``chunk`` of the run in ``work_dir`` (all chunks': None), as planned."""
    counts = _case_spec(Path(work_dir))["cases_per_chunk"]
    return int(sum(counts)) if chunk is None else int(counts[chunk])


def read_chunk_cases(work_dir: str | os.PathLike, chunk: int) -> pd.DataFrame:
    """The cases of one chunk, expanded from its row group of ``stations.parquet``."""
    work = Path(work_dir)
    spec = _case_spec(work)
    block = pq.ParquetFile(work / STATIONS_FILE).read_row_group(chunk).to_pandas()
    types = pq.read_table(work / AIRCRAFT_FILE, columns=["aircraft_type_id"]).column(0).to_pylist()
    skip = Skip(frozenset(spec["skip_airfields"]), frozenset(spec["skip_types"]))
    cases = station_cases(block, [str(t) for t in types], tuple(spec["conditions"]), skip)
    if len(cases) != spec["cases_per_chunk"][chunk]:  # a broken invariant, not a user error
        raise RuntimeError(f"chunk {chunk} has {len(cases)} cases, planned {spec['cases_per_chunk'][chunk]}")
    return cases
