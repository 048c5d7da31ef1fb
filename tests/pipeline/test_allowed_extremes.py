"""What passes ``check`` always runs: networks built from extreme but allowed values.

A small network of two demo airfields and one type of each thrust model is widened with
*variants*: a copy of an aircraft type, runway, airfield (with its climate and wind rose) or
route whose one column sits at that column's smallest or largest allowed value
(``schemas.tables``). Variants that ``check`` refuses (a cross-column rule: an OEW at its
maximum above the MTOW, say) are dropped whole; every variant ``check`` accepts must then run
to completion with the default reliability levels, give every case a limit or a named reason,
and never reach the physics as ``invalid_input`` (what ``check`` accepts is inside the
model's input contract, ``physics.caseinput``).
"""

from __future__ import annotations

import shutil
from pathlib import Path

import duckdb
import numpy as np
import pandas as pd
import pytest

from fieldlimits.physics import limits
from fieldlimits.pipeline.steps import RunParams, run_local
from fieldlimits.schemas.tables import TABLES
from fieldlimits.schemas.validate import validate_folder



AIRFIELDS = ("saltmere", "highcrag-north")
TYPES = ("bizjet-quadratic", "regional-jet90", "utility-tp19")  # quadratic, turbofan, propeller
TABLE_NAMES = ("airfields", "runways", "climate_monthly", "wind_rose", "aircraft_types", "routes")


def _read(folder: Path, table: str) -> pd.DataFrame:
    return pd.read_csv(folder / f"{table}.csv", dtype=str, keep_default_na=False)


def _bounds(table: str):
    """(column, 'min'|'max', value text) for every numeric column with a hard limit."""
    spec = TABLES[table]
    for col in spec.columns:
        if col.dtype not in ("float", "int") or col.name in spec.key:
            continue
        for which in ("min", "max"):
            value = getattr(col, which)
            if value is not None:
                yield col.name, which, (f"{int(value)}" if float(value).is_integer() else repr(float(value)))


class Network:
    """The tables as text frames, each row tagged with the variant it belongs to ('' = base)."""

    def __init__(self, src: Path):
        f = {t: _read(src, t) for t in TABLE_NAMES}
        for t in ("airfields", "runways", "climate_monthly", "wind_rose"):
            f[t] = f[t][f[t]["airfield_id"].isin(AIRFIELDS)]
        f["aircraft_types"] = f["aircraft_types"][f["aircraft_types"]["aircraft_type_id"].isin(TYPES)]
        f["routes"] = pd.DataFrame([
            {"route_id": f"base-{t}", "origin_id": AIRFIELDS[0], "destination_id": AIRFIELDS[1],
             "aircraft_type_id": t, "route_factor": "", "contingency_pct": "", "alternate_distance_km": "",
             "final_reserve_min": "", "passenger_mass_kg": ""} for t in TYPES])
        self.frames = {t: df.reset_index(drop=True).assign(_variant="") for t, df in f.items()}

    def add(self, table: str, rows: pd.DataFrame, variant: str) -> None:
        self.frames[table] = pd.concat([self.frames[table], rows.assign(_variant=variant)], ignore_index=True)

    def variants(self) -> set[str]:
        return {v for df in self.frames.values() for v in df["_variant"] if v}

    def drop(self, variants: set[str]) -> None:
        for t, df in self.frames.items():
            self.frames[t] = df[~df["_variant"].isin(variants)].reset_index(drop=True)

    def write(self, folder: Path) -> None:
        folder.mkdir(parents=True, exist_ok=True)
        for t, df in self.frames.items():
            df.drop(columns="_variant").to_csv(folder / f"{t}.csv", index=False)


def _airfield_copy(net: Network, new_id: str, variant: str, **changes) -> None:
    """A copy of the first airfield (runways, climate, wind rose) as ``new_id``; ``changes``
    maps table -> {column: value} applied to all of the copy's rows in that table."""
    for t in ("airfields", "runways", "climate_monthly", "wind_rose"):
        df = net.frames[t]
        rows = df[(df["airfield_id"] == AIRFIELDS[0]) & (df["_variant"] == "")].drop(columns="_variant").copy()
        rows["airfield_id"] = new_id
        for col, val in changes.get(t, {}).items():
            rows[col] = val(rows) if callable(val) else val
        net.add(t, rows, variant)
    routes = pd.DataFrame([{**net.frames["routes"].iloc[0].drop("_variant").to_dict(),
                            "route_id": f"to-{new_id}", "destination_id": new_id}])
    net.add("routes", routes, variant)


def build(src: Path, part: str) -> Network:
    """``part`` 'aircraft': type variants on the two base airfields; 'sites': runway,
    airfield, climate, wind-rose and route variants for the three base types (apart, so that
    the cases do not multiply)."""
    net = Network(src)
    if part == "aircraft":
        types = net.frames["aircraft_types"]
        for col, which, value in _bounds("aircraft_types"):
            for base in TYPES:
                row = types[types["aircraft_type_id"] == base].drop(columns="_variant").copy()
                row["aircraft_type_id"] = f"{base}.{col}.{which}"
                row[col] = value
                net.add("aircraft_types", row, f"aircraft_types.{base}.{col}.{which}")
        return net
    runways = net.frames["runways"]
    for col, which, value in _bounds("runways"):
        row = runways[runways["airfield_id"] == AIRFIELDS[0]].iloc[[0]].drop(columns="_variant").copy()
        row["runway_id"] = f"x-{col}-{which}"
        row[col] = value
        net.add("runways", row, f"runways.{col}.{which}")
    for table in ("airfields", "climate_monthly"):
        for col, which, value in _bounds(table):
            _airfield_copy(net, f"x-{col}-{which}", f"{table}.{col}.{which}", **{table: {col: value}})
    speed_max = TABLES["wind_rose"].column("speed_high_mps").max

    def strongest_class_to_the_limit(rows):
        high = rows["speed_high_mps"].astype(float)
        return np.where(high == high.max(), f"{speed_max:g}", rows["speed_high_mps"])

    _airfield_copy(net, "x-wind-top-speed", "wind_rose.speed_high_mps.max",
                   wind_rose={"speed_high_mps": strongest_class_to_the_limit})
    _airfield_copy(net, "x-wind-calm-only", "wind_rose.frequency.calm_only",
                   wind_rose={"frequency": lambda r: np.where(r["direction_deg"] == "", "1", "0")})
    base_route = net.frames["routes"].iloc[[0]].drop(columns="_variant")
    for col, which, value in _bounds("routes"):
        row = base_route.copy()
        row["route_id"] = f"r-{col}-{which}"
        row[col] = value
        net.add("routes", row, f"routes.{col}.{which}")
    return net


def _variant_of(net: Network, problem) -> str | None:
    table = Path(problem.file).stem
    if table not in net.frames or problem.row is None or not 1 <= problem.row <= len(net.frames[table]):
        return None
    return net.frames[table]["_variant"].iloc[problem.row - 1]


def accepted_network(src: Path, folder: Path, part: str) -> tuple[Network, set[str]]:
    """The network with every variant that ``check`` refuses dropped; and those dropped."""
    net, dropped = build(src, part), set()
    for _ in range(6):
        shutil.rmtree(folder, ignore_errors=True)
        net.write(folder)
        errors = [p for p in validate_folder(folder) if p.severity == "error"]
        if not errors:
            return net, dropped
        bad = {_variant_of(net, p) for p in errors}
        assert None not in bad and "" not in bad, [str(p) for p in errors if _variant_of(net, p) in (None, "")]
        dropped |= bad
        net.drop(bad)
    raise AssertionError("variants still refused after six rounds")


@pytest.mark.parametrize("part, at_least", [("aircraft", 150), ("sites", 30)])
def test_every_folder_check_accepts_runs_to_completion(tmp_path, demo_dir, part, at_least):
    net, dropped = accepted_network(demo_dir, tmp_path / "net", part)
    kept = net.variants()
    # the check refuses only a minority (cross-column rules); the rest must all run
    assert len(kept) >= 2 * len(dropped) and len(kept) >= at_least, (len(kept), sorted(dropped))
    db = tmp_path / "extremes.duckdb"
    summary = run_local(tmp_path / "net", db, RunParams(), progress=lambda *a: None)
    with duckdb.connect(str(db), read_only=True) as con:
        status = con.execute("SELECT status FROM runs WHERE run_id = ?", [summary.run_id]).fetchone()[0]
        types = {r[0] for r in con.execute("SELECT DISTINCT aircraft_type_id FROM results_direction").fetchall()}
        factors = con.execute("SELECT limiting_factor, count(*) FROM results_direction GROUP BY 1").fetchall()
        no_limit_without_reason = con.execute(
            "SELECT count(*) FROM results_direction WHERE tow_limit_kg IS NULL "
            "AND limiting_factor NOT IN ('no_takeoff', 'tailwind_limit', 'crosswind_limit')").fetchone()[0]
        routes = {r[0] for r in con.execute("SELECT DISTINCT route_id FROM route_payload").fetchall()}
        airfields = {r[0] for r in con.execute("SELECT DISTINCT airfield_id FROM results_airfield").fetchall()}
    assert status == "complete"
    assert types == set(net.frames["aircraft_types"]["aircraft_type_id"])
    assert airfields == set(net.frames["airfields"]["airfield_id"])
    assert routes == set(net.frames["routes"]["route_id"])
    names = dict(factors)
    assert set(names) <= set(limits.FACTORS) and "invalid_input" not in names, names
    assert no_limit_without_reason == 0


def test_an_underpowered_type_rerun_into_a_store_gives_no_takeoff_rows(tmp_path, demo_dir):
    # The case: the demo run, then one type made too weak to fly (thrust and CLmax
    # inside the allowed ranges) and run again into the same store, so that only that type is
    # recomputed: the reliability step meets a batch with no case to solve.
    net = tmp_path / "net"
    shutil.copytree(demo_dir, net)
    db = tmp_path / "store.duckdb"
    run_local(net, db, RunParams(), progress=lambda *a: None)
    types = _read(net, "aircraft_types")
    weak = types["aircraft_type_id"] == "bizjet-quadratic"
    types.loc[weak, "static_thrust_per_engine_kn"] = "0.5"
    types.loc[weak, "cl_max_takeoff"] = "1.0"
    types.to_csv(net / "aircraft_types.csv", index=False)
    assert not [p for p in validate_folder(net) if p.severity == "error"]
    summary = run_local(net, db, RunParams(), progress=lambda *a: None)
    assert summary.reused_cases > 0  # the other types came from the first run
    with duckdb.connect(str(db), read_only=True) as con:
        rows = con.execute(
            "SELECT basis, limiting_factor, count(*), count(tow_limit_kg) FROM results_airfield "
            "WHERE run_id = ? AND aircraft_type_id = 'bizjet-quadratic' GROUP BY ALL ORDER BY ALL",
            [summary.run_id]).fetchall()
        others = con.execute(
            "SELECT count(*) FROM results_airfield WHERE run_id = ? AND aircraft_type_id <> 'bizjet-quadratic' "
            "AND tow_limit_kg IS NOT NULL", [summary.run_id]).fetchone()[0]
    assert {(basis, factor) for basis, factor, _, _ in rows} == {("design_day", "no_takeoff"),
                                                                 ("reliability", "no_takeoff")}
    assert all(with_limit == 0 for *_, with_limit in rows)
    assert others > 0
