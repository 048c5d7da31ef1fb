"""The synthetic network generator."""

from __future__ import annotations

import subprocess
import sys

import numpy as np
import pandas as pd

from demo_network.synthetic import generate_network
from schemas.load import load_folder
from schemas.validate import validate_folder


def test_same_seed_same_bytes_other_seed_other_tables(tmp_path):
    a = generate_network(60, 5, tmp_path / "a")
    b = generate_network(60, 5, tmp_path / "b")
    c = generate_network(60, 6, tmp_path / "c")
    for name in a:
        assert a[name].read_bytes() == b[name].read_bytes()
    assert a["runways"].read_bytes() != c["runways"].read_bytes()


def test_200_airfields_validate_cleanly_with_realistic_spreads(tmp_path):
    generate_network(200, 3, tmp_path)
    assert validate_folder(tmp_path) == []
    t = load_folder(tmp_path)
    assert len(t.airfields) == 200 and len(t.aircraft_types) == 8
    e = t.airfields["elevation_m"]
    assert e.median() < 300 and e.max() > 2000 and e.max() <= 4200
    rw = t.runways
    assert rw["tora_m"].between(800, 4000).all()
    assert len(rw) >= 200 * 1.5
    assert set(rw["surface"]) >= {"paved", "gravel", "grass"}
    cl = t.climate_monthly
    hot = cl.groupby("airfield_id")["mean_daily_max_k"].max() - 273.15
    assert hot.max() > 38 and hot.min() < 15
    assert len(t.routes) == 200
    assert (t.routes["origin_id"] != t.routes["destination_id"]).all()


def test_type_count_option(tmp_path):
    generate_network(20, 1, tmp_path / "few", n_types=3)
    generate_network(20, 1, tmp_path / "many", n_types=12)
    assert len(load_folder(tmp_path / "few").aircraft_types) == 3
    many = load_folder(tmp_path / "many").aircraft_types
    assert len(many) == 12 and many["aircraft_type_id"].is_unique


def test_command_line(tmp_path):
    out = tmp_path / "cli"
    res = subprocess.run([sys.executable, "-m", "demo_network.synthetic", "--airfields", "30",
                          "--seed", "2", "--out", str(out), "--format", "parquet"],
                         capture_output=True, text=True, check=True)
    assert "30 airfields" in res.stdout
    assert validate_folder(out) == []
    assert pd.read_parquet(out / "airfields.parquet").shape[0] == 30
    assert np.isfinite(pd.read_parquet(out / "wind_rose.parquet")["frequency"]).all()
