"""A small valid input folder (three demo airfields) that each test copies and breaks."""

from __future__ import annotations

import shutil
from pathlib import Path

import pandas as pd
import pytest

from fieldlimits.demo_network import demo_path

KEEP = ("saltmere", "dunmarrow", "frostwick")


@pytest.fixture(scope="session")
def small_network(tmp_path_factory) -> Path:
    out = tmp_path_factory.mktemp("small_network")
    src = demo_path()
    for name in ("airfields", "runways", "climate_monthly", "wind_rose"):
        df = pd.read_csv(src / f"{name}.csv", dtype=str, keep_default_na=False)
        df[df["airfield_id"].isin(KEEP)].to_csv(out / f"{name}.csv", index=False)
    shutil.copy(src / "aircraft_types.csv", out / "aircraft_types.csv")
    # the reference points of every type but the first (tests rename the first type's id and
    # mend the routes that refer to it)
    points = pd.read_csv(src / "reference_points.csv", dtype=str, keep_default_na=False)
    first = pd.read_csv(src / "aircraft_types.csv", dtype=str).loc[0, "aircraft_type_id"]
    points[points["aircraft_type_id"] != first].to_csv(out / "reference_points.csv", index=False)
    routes = pd.read_csv(src / "routes.csv", dtype=str, keep_default_na=False)
    keep = routes["origin_id"].isin(KEEP) & routes["destination_id"].isin(KEEP)
    routes[keep].to_csv(out / "routes.csv", index=False)
    return out


@pytest.fixture()
def net(small_network, tmp_path) -> Path:
    """A fresh copy of the small valid network."""
    dst = tmp_path / "net"
    shutil.copytree(small_network, dst)
    return dst


def read(folder: Path, table: str) -> pd.DataFrame:
    """A table as text, exactly as in the file."""
    return pd.read_csv(folder / f"{table}.csv", dtype=str, keep_default_na=False)


def write(folder: Path, table: str, df: pd.DataFrame) -> None:
    df.to_csv(folder / f"{table}.csv", index=False)
