"""Synthetic (invented) networks of any size, for benchmarks and scale tests.

    python -m fieldlimits.demo_network.synthetic --airfields 2000 --seed 7 --out /tmp/net2000
    python -m fieldlimits.demo_network.synthetic --airfields 20000 --seed 7 --out /tmp/net --format parquet

or ``generate_network(n_airfields, seed, out_dir)``. The same seed gives the same tables,
byte for byte. Tables and columns are those of :mod:`schemas.tables`; the result validates
cleanly.

Spreads (invented, chosen to look like a real continent's network):

* Latitude uniform in −55 … 70°, longitude uniform. Elevation: 75 % exponential with a
  150 m mean (coast and lowland), 20 % uniform 300 … 2 000 m, 5 % uniform 2 000 … 4 000 m.
* 1 to 3 runways per airfield (60 / 30 / 10 %), lognormal length (median 2 100 m) clipped
  to 800 … 4 000 m, used both ways (92 %) or one way; runways under 1 300 m are mostly
  gravel, grass or dirt. Clearway and stopway on some, slopes up to ±1.5 % paved, ±3 % strips.
* Climate by latitude band: the annual mean of the daily maximum falls about 0.42 °C per
  degree of latitude beyond 12° and 6.5 °C per km of elevation; the annual swing grows with
  latitude; a quarter of the 15 … 35° band is hot desert (+5 °C, dry). Wet-day share from
  dry desert to wet high latitudes.
* Wind roses: 16 sectors × 3 speed classes (1.5–5, 5–10, 10–25 m/s) plus calm, a von Mises
  distribution around a prevailing direction, Weibull (shape 2) speeds
  (:func:`rose_frequencies`).
* Aircraft types: the demo network's eight (``n_types`` < 8 picks a spread of them, more
  than 8 adds variants with masses and thrust scaled by 0.8 … 1.2). Routes: as many as
  airfields, between near neighbours, flown by a type suited to the distance (none for a
  single airfield).
* Obstacles: a share of the runway directions (``obstacle_share``, 10 % by default) get 1 to
  10 obstacles past the end of TODA, inside the departure area (:func:`_obstacles`).

Every value drawn is kept inside the limits of :mod:`schemas.tables` and the rules across
columns of :mod:`schemas.validate` whatever the seed: unbounded draws are clipped where they
are used (each clip says why), and the tables are checked against the column limits before
anything is written (:func:`_check_specs`; a failure is a bug here, never written out).
"""

from __future__ import annotations

import argparse
import time
from pathlib import Path

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.csv as pacsv
import pyarrow.parquet as pq

from fieldlimits.demo_network.build_demo import AIRCRAFT, AIRCRAFT_COLUMNS
from fieldlimits.schemas.caution import CAUTION
from fieldlimits.schemas.tables import TABLES

SPEED_CLASSES = ((1.5, 5.0), (5.0, 10.0), (10.0, 25.0))
CALM_MPS = 1.5
SECTORS = 16
RAYLEIGH_MEAN_OVER_SCALE = 0.8862
"""Mean / scale of a Weibull distribution of shape 2 (Rayleigh): Γ(1.5) = 0.88623."""
MIN_SCALE_MPS = 0.01
"""Smallest Weibull scale used [m/s]: a calmer site (mean speed 0 included) is taken at this
scale, where every wind above the calm threshold already falls in the lowest class."""


def _designator(heading_true, variation):
    mag = (heading_true - variation) % 360.0
    num = np.round(mag / 10.0).astype(int)
    return np.where(num == 0, 36, num)


def _airfields(rng, n):
    lat = rng.uniform(-55.0, 70.0, n)
    lon = rng.uniform(-180.0, 180.0, n)
    kind = rng.choice(3, size=n, p=[0.75, 0.20, 0.05])
    elev = np.where(kind == 0, rng.exponential(150.0, n),
                    np.where(kind == 1, rng.uniform(300, 2000, n), rng.uniform(2000, 4000, n)))
    elev = np.round(np.clip(elev, -10.0, 4200.0))
    ids = np.char.add("syn-", np.char.zfill(np.arange(1, n + 1).astype(str), 6))
    names = np.char.add("Synthetic field ", np.arange(1, n + 1).astype(str))
    desert = (np.abs(lat) > 15) & (np.abs(lat) < 35) & (rng.random(n) < 0.25)
    return dict(airfield_id=ids, name=names, latitude_deg=np.round(lat, 4),
                longitude_deg=np.round(lon, 4), elevation_m=elev), desert


def _runways(rng, ids):
    n = ids.size
    n_strips = rng.choice([1, 2, 3], size=n, p=[0.6, 0.3, 0.1])
    af = np.repeat(np.arange(n), n_strips)
    k = np.arange(af.size) - np.repeat(np.cumsum(n_strips) - n_strips, n_strips)
    base = rng.uniform(0, 180, n)[af]
    heading = (base + 60.0 * k + rng.uniform(-8, 8, af.size)) % 360.0
    variation = rng.uniform(-15, 15, n)[af]
    length = np.clip(np.round(rng.lognormal(np.log(2100.0), 0.38, af.size) / 10) * 10,
                     800, 4000)
    short = length < 1300
    surf_short = rng.choice(["paved", "gravel", "grass", "dirt"], size=af.size,
                            p=[0.3, 0.35, 0.25, 0.1])
    surf_long = np.where(rng.random(af.size) < 0.95, "paved", "gravel")
    surface = np.where(short, surf_short, surf_long)
    paved = surface == "paved"
    slope = np.round(np.where(paved, np.clip(rng.normal(0, 0.4, af.size), -1.5, 1.5),
                              np.clip(rng.normal(0, 1.2, af.size), -3, 3)), 1)
    both = rng.random(af.size) < 0.92

    def clear(m):
        return np.where(rng.random(m) < 0.5, 0.0, np.round(rng.uniform(60, 300, m), -1))

    def stop(m):
        return np.where(rng.random(m) < 0.7, 0.0, np.round(rng.uniform(60, 300, m), -1))

    des_a = _designator(heading, variation)
    des_b = (des_a + 18 - 1) % 36 + 1
    # direction A for every strip, direction B for strips used both ways
    s = np.r_[np.arange(af.size), np.flatnonzero(both)]
    is_b = np.r_[np.zeros(af.size, bool), np.ones(both.sum(), bool)]
    hdg = np.where(is_b, (heading[s] + 180.0) % 360.0, heading[s])
    des = np.where(is_b, des_b[s], des_a[s])
    tora = length[s]
    out = dict(
        airfield_id=ids[af[s]],
        runway_id=np.char.zfill(des.astype(str), 2),
        heading_true_deg=np.round(hdg, 1),
        tora_m=tora, toda_m=tora + clear(s.size), asda_m=tora + stop(s.size),
        slope_pct=np.where(is_b, -slope[s], slope[s]) + 0.0,
        surface=surface[s],
    )
    order = np.lexsort((is_b, s))
    return {key: v[order] for key, v in out.items()}


def _climate(rng, lat, elev, desert):
    n = lat.size
    alat = np.abs(lat)
    # At most 39.5 °C: the hottest places on Earth have an annual mean daily maximum near
    # 40 °C (from memory), and validation flags a whole year at 30 or more with a mean
    # above 40 as probably °F. Reached only beyond +3σ in the hot-desert band.
    tmean = np.minimum(31.0 - 0.42 * np.maximum(alat - 12.0, 0.0) - 6.5e-3 * elev
                       + 5.0 * desert + rng.normal(0, 1.5, n), 39.5)
    amp = np.clip(1.0 + 0.22 * alat + 2.0 * desert + rng.normal(0, 1.0, n), 0.5, 15.0)
    sd = np.clip(1.4 + 0.05 * alat + rng.normal(0, 0.3, n), 0.8, 6.0)
    # 990 … 1036 hPa, ±7.7σ of the draw (never reached by an ordinary seed): about the span
    # of monthly mean sea-level pressure over the world (from memory), and inside the
    # allowed 870 … 1090 hPa with the seasonal ±3 hPa whatever the seed.
    qnh = np.clip(1013.0 + rng.normal(0, 3.0, n), 990.0, 1036.0)
    wet = np.where(desert, rng.uniform(0.01, 0.05, n),
                   np.clip(0.08 + 0.005 * alat + rng.normal(0, 0.06, n), 0.02, 0.6))
    peak = np.where(lat >= 0, 7.3, 1.3)
    m = np.arange(1, 13)
    phase = np.cos(2 * np.pi * (m[None, :] - peak[:, None]) / 12.0)
    t = np.clip(tmean[:, None] + amp[:, None] * phase, -55.0, 50.0)
    s = np.clip(sd[:, None] * (1.0 - 0.12 * phase), 0.5, 8.0)
    q = qnh[:, None] - 3.0 * phase * (alat[:, None] > 20)
    w = np.clip(wet[:, None] * (1.0 - 0.4 * phase), 0.0, 0.95)
    return dict(month=np.tile(m, n), mean_daily_max_c=np.round(t, 1).ravel(),
                sd_daily_max_c=np.round(s, 1).ravel(), qnh_hpa=np.round(q, 1).ravel(),
                wet_day_share=np.round(w, 2).ravel())


def speed_class_shares(scale_mps, classes=SPEED_CLASSES):
    """Share of each speed class among the winds above the calm threshold (Rayleigh speeds).

    Parameters
    ----------
    scale_mps : array_like
        Scale c of the Weibull distribution of shape 2 of the wind speed; any value ≥ 0.
        [m/s]
    classes : sequence of (float, float)
        Contiguous speed classes (low, high), ascending; the top class is taken as open
        ended. [m/s]

    Returns
    -------
    numpy.ndarray
        Shares, shape ``scale_mps.shape + (len(classes),)``, finite, ≥ 0 and summing to 1.
        [–]

    Notes
    -----
    With the survival function S(v) = exp(−(v/c)²) and v0 the lowest class bound, the share
    of class k among winds of at least v0 is

        S(lo_k)/S(v0) − S(hi_k)/S(v0) = exp(−a_k) (1 − exp(−(b_k − a_k))),
        a_k = (lo_k² − v0²)/c², b_k = (hi_k² − v0²)/c²,

    evaluated with ``expm1``. The lowest class gets 1 − exp(−b_0) > 0 at any scale, so a
    near-calm site (c → 0) puts every non-calm wind in it. Differences of the cumulative
    distribution 1 − S(v) instead round to 1 − 1 = 0 for every class once c is below about
    0.25 m/s, and normalising them gives 0/0 (blank frequencies).
    """
    c = np.maximum(np.asarray(scale_mps, dtype=float), MIN_SCALE_MPS)[..., None]
    lo = np.array([k[0] for k in classes], dtype=float)
    hi = np.array([k[1] for k in classes], dtype=float)
    hi[-1] = np.inf
    a = (lo ** 2 - lo[0] ** 2) / c ** 2
    b = (hi ** 2 - lo[0] ** 2) / c ** 2
    share = np.exp(-a) * -np.expm1(a - b)
    return share / share.sum(axis=-1, keepdims=True)


def rose_frequencies(mean_speed_mps, prevailing_deg, kappa, calm_share):
    """One month's wind rose: calm share and the share of each sector and speed class.

    Parameters
    ----------
    mean_speed_mps : array_like
        Mean wind speed; any value ≥ 0. [m/s]
    prevailing_deg : array_like
        Prevailing direction the wind blows from, true. [deg]
    kappa : array_like
        Concentration of the von Mises-like spread of directions around it (0: uniform). [–]
    calm_share : array_like
        Share of calm observations (below ``CALM_MPS``), 0.01 … 0.5. [–]

    Returns
    -------
    calm : numpy.ndarray
        Calm share, shape of the broadcast inputs, rounded to 5 decimals. [–]
    freq : numpy.ndarray
        Shares by sector (``SECTORS`` centres 0, 22.5, … °) and speed class
        (``SPEED_CLASSES``), shape ``(..., SECTORS, len(SPEED_CLASSES))``, rounded to 5
        decimals; with ``calm`` they sum to 1 within 5e-6. [–]

    Notes
    -----
    Direction weight 0.25/16 + 0.75 exp(κ cos(θ − θ_prevailing)), normalised; speeds
    Weibull of shape 2 with scale mean / Γ(1.5), 25 % stronger from the prevailing
    direction and 25 % weaker from the opposite one (:func:`speed_class_shares`).
    """
    speed = np.asarray(mean_speed_mps, dtype=float)
    centres = np.arange(SECTORS) * 360.0 / SECTORS
    diff = np.deg2rad(centres - np.asarray(prevailing_deg, dtype=float)[..., None])
    p_dir = 0.25 / SECTORS + 0.75 * np.exp(np.asarray(kappa, dtype=float)[..., None]
                                           * np.cos(diff))
    p_dir /= p_dir.sum(axis=-1, keepdims=True)
    scale = speed[..., None] / RAYLEIGH_MEAN_OVER_SCALE * (1.0 + 0.25 * np.cos(diff))
    p_cls = speed_class_shares(scale)
    calm = np.asarray(calm_share, dtype=float)
    freq = np.round((1.0 - calm)[..., None, None] * p_dir[..., None] * p_cls, 5)
    calm_f = np.round(1.0 - freq.sum(axis=(-2, -1)), 5)
    return calm_f, freq


def _wind(rng, n, lat):
    prevailing = rng.uniform(0, 360, n)
    # Gamma: any mean speed ≥ 0 gives valid shares (speed_class_shares), no clip needed
    mean_speed = rng.gamma(6.0, 5.0 / 6.0, n)
    calm = rng.uniform(0.02, 0.20, n)
    kappa = rng.uniform(0.3, 2.0, n)
    m = np.arange(1, 13)
    winter = np.cos(2 * np.pi * (m[None, :] - np.where(lat >= 0, 1.0, 7.0)[:, None]) / 12.0)
    prev_m = prevailing[:, None] + 20.0 * winter                          # (n, 12)
    speed_m = mean_speed[:, None] * (1.0 + 0.15 * winter)
    calm_m = np.clip(calm[:, None] * (1.0 - 0.4 * winter), 0.01, 0.5)
    calm_f, freq = rose_frequencies(speed_m, prev_m, kappa[:, None], calm_m)  # (n, 12, 16, 3)
    centres = np.arange(SECTORS) * 360.0 / SECTORS
    lo = np.array([c[0] for c in SPEED_CLASSES])
    hi = np.array([c[1] for c in SPEED_CLASSES])
    per_month = 1 + SECTORS * len(SPEED_CLASSES)
    rows = n * 12 * per_month
    direction = np.full((n, 12, per_month), np.nan)
    direction[:, :, 1:] = np.repeat(centres, len(SPEED_CLASSES))[None, None, :]
    low = np.empty((n, 12, per_month))
    high = np.empty((n, 12, per_month))
    low[:, :, 0], high[:, :, 0] = 0.0, CALM_MPS
    low[:, :, 1:] = np.tile(lo, SECTORS)
    high[:, :, 1:] = np.tile(hi, SECTORS)
    f = np.empty((n, 12, per_month))
    f[:, :, 0] = calm_f
    f[:, :, 1:] = freq.reshape(n, 12, -1)
    width = np.where(np.isnan(direction), np.nan, 360.0 / SECTORS)
    return dict(af_index=np.repeat(np.arange(n), 12 * per_month),
                month=np.tile(np.repeat(m, per_month), n),
                direction_deg=direction.reshape(rows), sector_width_deg=width.reshape(rows),
                speed_low_mps=low.reshape(rows), speed_high_mps=high.reshape(rows),
                frequency=f.reshape(rows))


def _aircraft(n_types: int) -> pd.DataFrame:
    base = pd.DataFrame(AIRCRAFT, columns=AIRCRAFT_COLUMNS)
    if n_types <= len(base):
        pick = np.unique(np.round(np.linspace(0, len(base) - 1, max(n_types, 1))).astype(int))
        return base.iloc[pick].reset_index(drop=True)
    rows = [base]
    for v in range(2, int(np.ceil(n_types / len(base))) + 1):
        # 0.96, 1.08, 0.88, 1.16, 0.80, then again from 1.04, 0.92, …: the scale repeats
        # every ten variants and stays within ±20 %, so the scaled masses and thrust stay
        # inside their allowed ranges (the largest type's thrust × 1.38 would pass 600 kN,
        # the smallest type's MTOW × 0.26 fall under 300 kg) for any number of types
        f = 1.0 + 0.04 * (1 + (v - 2) % 5) * (1 if v % 2 else -1)
        var = base.copy()
        var["aircraft_type_id"] = var["aircraft_type_id"] + f"-v{v}"
        var["name"] = var["name"] + f" (variant {v})"
        for c in ("mtow_kg", "oew_kg", "max_payload_kg", "max_fuel_kg", "max_landing_mass_kg",
                  "static_thrust_per_engine_kn", "shaft_power_per_engine_kw"):
            var[c] = np.round(pd.to_numeric(var[c]) * f, 1)
        rows.append(var)
    return pd.concat(rows, ignore_index=True).iloc[:n_types]


def _routes(rng, af, types: pd.DataFrame):
    n = af["airfield_id"].size
    lat, lon = af["latitude_deg"], af["longitude_deg"]
    order = np.lexsort((lon, np.round(lat / 4.0)))
    pos = np.empty(n, int)
    pos[order] = np.arange(n)
    n_routes = max(n, 2)
    origin = rng.integers(0, n, n_routes)
    step = rng.integers(1, 25, n_routes) * rng.choice([-1, 1], n_routes)
    dest = order[(pos[origin] + step) % n]
    same = dest == origin
    dest[same] = (dest[same] + 1) % n
    # spherical distance only to choose a plausible type (payloads use pyproj later)
    p1, p2 = np.deg2rad(lat[origin]), np.deg2rad(lat[dest])
    dl = np.deg2rad(lon[dest] - lon[origin])
    d_km = 6371.0 * np.arccos(np.clip(np.sin(p1) * np.sin(p2)
                                      + np.cos(p1) * np.cos(p2) * np.cos(dl), -1, 1))
    mtow = types["mtow_kg"].to_numpy(float)
    rank = np.argsort(np.argsort(mtow)) / max(len(mtow) - 1, 1)       # 0 small … 1 large
    want = np.clip(np.log10(np.maximum(d_km, 50)) / 4.0 + rng.normal(0, 0.15, n_routes), 0, 1)
    t = np.argmin(np.abs(want[:, None] - rank[None, :]), axis=1)
    ids = af["airfield_id"]
    return dict(route_id=np.char.add("synr-", np.char.zfill(np.arange(1, n_routes + 1).astype(str), 6)),
                origin_id=ids[origin], destination_id=ids[dest],
                aircraft_type_id=types["aircraft_type_id"].to_numpy()[t])


#: Share of runway directions that declare a landing distance available; of those, the
#: share with a displaced threshold (60 … 300 m off the length). The rest give none (no
#: landing check, as a planner without the figure would leave it blank).
LDA_SHARE, DISPLACED_SHARE = 0.85, 0.15


def _landing_distances(seed, tora_m) -> np.ndarray:
    """lda_m of each runway direction, from a stream of its own (the other tables do not
    change with it): TORA, less a displaced threshold for some, blank (NaN) for others."""
    base = int(seed) if isinstance(seed, (int, np.integer)) else 0
    rng = np.random.default_rng([base, 17])
    tora = np.asarray(tora_m, dtype=float)
    u = rng.random(tora.size)
    displaced = np.round(rng.uniform(60.0, 300.0, tora.size), -1)
    lda = np.where(u < LDA_SHARE * DISPLACED_SHARE, tora - displaced, tora)
    return np.where(u < LDA_SHARE, lda, np.nan)


#: Share of runway directions with obstacles past the end of TODA (default), and how many
#: each gets (1 … 10, uniform).
OBSTACLE_SHARE, MAX_OBSTACLES = 0.1, 10


def _obstacles(rng, runways, share) -> dict | None:
    """Obstacles past the end of TODA for a share of the runway directions (None: none).

    Each chosen direction gets 1 … 10 obstacles: distance log-uniform 150 … 12 000 m from the
    end of TODA (10 m steps), height above the runway end distance × 0.2 … 2.5 % plus
    2 … 15 m (terrain rising from the runway end, masts and trees near it; at most 440 m,
    under the end of the takeoff path), lateral offset up to 90 % of the departure area's
    half-width either side (``schemas.departure``), so every one counts and ``check`` stays
    silent whatever the draws.
    """
    from fieldlimits.schemas.departure import half_width_m

    if share <= 0:
        return None
    n_dir = runways["airfield_id"].size
    chosen = np.flatnonzero(rng.random(n_dir) < share)
    if chosen.size == 0:
        return None
    count = rng.integers(1, MAX_OBSTACLES + 1, chosen.size)
    d = np.repeat(chosen, count)
    k = np.arange(d.size) - np.repeat(np.cumsum(count) - count, count)
    m = d.size
    dist = np.round(10.0 ** rng.uniform(np.log10(150.0), np.log10(12000.0), m), -1)
    dist = np.clip(dist, 150.0, 12000.0)  # rounding and the tails stay inside
    height = np.minimum(dist * rng.uniform(0.002, 0.025, m) + rng.uniform(2.0, 15.0, m), 440.0)
    offset = np.trunc(rng.uniform(-0.9, 0.9, m) * half_width_m(dist))
    return dict(airfield_id=runways["airfield_id"][d], runway_id=runways["runway_id"][d],
                obstacle_id=np.char.add("obs-", np.char.zfill((k + 1).astype(str), 2)),
                distance_from_toda_end_m=dist, height_m=np.round(height, 1), lateral_offset_m=offset + 0.0)


def _arrow(cols: dict) -> pa.Table:
    arrays = {}
    for k, v in cols.items():
        if isinstance(v, pa.Array):
            arrays[k] = v
        elif v.dtype.kind in "US" or v.dtype == object:
            arrays[k] = pa.array(v.astype(str))
        elif v.dtype.kind == "f":
            arrays[k] = pa.array(v, mask=np.isnan(v))
        else:
            arrays[k] = pa.array(v)
    return pa.table(arrays)


def _write(table: pa.Table, path_stem: Path, fmt: str) -> Path:
    if fmt == "parquet":
        path = path_stem.with_suffix(".parquet")
        pq.write_table(table, path)
    else:
        path = path_stem.with_suffix(".csv")
        pacsv.write_csv(table, path, pacsv.WriteOptions(quoting_style="needed"))
    return path


def generate_network(n_airfields: int, seed: int, out_dir, n_types: int = 8,
                     fmt: str = "csv", obstacle_share: float = OBSTACLE_SHARE) -> dict[str, Path]:
    """Write a synthetic invented network of ``n_airfields`` airfields.

    Parameters
    ----------
    n_airfields : int
        Number of airfields (≥ 1; a single airfield gets no routes table).
    seed : int or numpy.random.Generator
        Random seed (≥ 0); the same seed gives the same tables. A generator is used as it
        is (the tests pass one whose draws sit in the tails).
    out_dir : str or Path
        Folder to write (created if needed); existing table files are replaced (an old
        routes table removed when none is written).
    n_types : int, optional
        Number of aircraft types (default 8, the demo network's types).
    fmt : {'csv', 'parquet'}, optional
        File format of the tables.
    obstacle_share : float, optional
        Share of runway directions with 1 … 10 obstacles (default 0.1; 0: no obstacles
        table). Drawn after every other table, so those do not change with it.

    Returns
    -------
    dict of str to Path
        Table name -> file written.
    """
    if n_airfields < 1:
        raise ValueError("n_airfields must be at least 1")
    if fmt not in ("csv", "parquet"):
        raise ValueError("fmt must be 'csv' or 'parquet'")
    if not 0.0 <= obstacle_share <= 1.0:
        raise ValueError("obstacle_share must be 0 … 1")
    out = Path(out_dir)
    rng = np.random.default_rng(seed)
    af, desert = _airfields(rng, n_airfields)
    ids = af["airfield_id"]
    rw = _runways(rng, ids)
    rw["lda_m"] = _landing_distances(seed, rw["tora_m"])
    cl = _climate(rng, af["latitude_deg"], af["elevation_m"], desert)
    cl = {"airfield_id": np.repeat(ids, 12), **cl}
    for c in ("p50_daily_max_c", "p85_daily_max_c", "p95_daily_max_c"):
        cl[c] = np.full(cl["month"].size, np.nan)
    wind = _wind(rng, n_airfields, af["latitude_deg"])
    dict_ids = pa.array(ids.astype(str))
    wind_cols = {"airfield_id": pa.DictionaryArray.from_arrays(
        pa.array(wind.pop("af_index"), pa.int32()), dict_ids).cast(pa.string()), **wind}
    types = _aircraft(n_types)
    # a route joins two different airfields: a single airfield has none (routes are optional)
    routes = _routes(rng, af, types) if n_airfields >= 2 else None
    # obstacles last, from a stream of their own for a numeric seed: the other tables do not
    # change with them
    obstacle_rng = rng if isinstance(seed, np.random.Generator) else np.random.default_rng([int(seed), 16])
    obstacles = _obstacles(obstacle_rng, rw, obstacle_share)
    tables = {"airfields": af, "runways": rw, "climate_monthly": cl, "wind_rose": wind_cols,
              "routes": routes, "aircraft_types": {c: types[c].to_numpy() for c in types},
              "obstacles": obstacles}
    for name, cols in tables.items():
        if cols is not None:
            _check_specs(name, cols)
    out.mkdir(parents=True, exist_ok=True)
    written = {}
    for name, cols in tables.items():
        if name == "aircraft_types":
            written[name] = _write(pa.Table.from_pandas(types, preserve_index=False),
                                   out / name, fmt)
        elif cols is not None:
            written[name] = _write(_arrow(cols), out / name, fmt)
    for name in tables:  # never leave the other format's file (or an old table) behind
        for suffix in (".csv", ".parquet"):
            stale = (out / name).with_suffix(suffix)
            if stale != written.get(name) and stale.exists():
                stale.unlink()
    return written


def _check_specs(name: str, cols: dict) -> None:
    """Raise if a generated column breaks its limits in :mod:`schemas.tables`.

    A failure is a bug in this module: it stops the generator before anything is written.
    Checks numeric limits, required values (no NaN, no blank) and allowed texts.
    """
    for col in TABLES[name].columns:
        v = cols.get(col.name)
        if v is None:
            bad, first = np.array([col.required]), "(no column)"
        elif isinstance(v, pa.Array):  # the wind rose's airfield ids, built from the ids
            bad, first = np.array([col.required and v.null_count > 0]), "(blank)"
        elif col.dtype in ("float", "int"):
            x = np.asarray(v, dtype=float)
            # one pass each for the least and largest value (NaN propagates through min/max
            # and is skipped by fmin/fmax); the masks only when something is wrong
            if col.required:
                lo, hi = np.min(x, initial=np.inf), np.max(x, initial=-np.inf)
            else:
                lo, hi = np.fmin.reduce(x, initial=np.inf), np.fmax.reduce(x, initial=-np.inf)
            if (not np.isnan(lo) and not np.isnan(hi) and (col.min is None or lo >= col.min)
                    and (col.max is None or hi <= col.max)):
                continue
            bad = np.isnan(x) if col.required else np.zeros(x.shape, bool)
            with np.errstate(invalid="ignore"):
                if col.min is not None:
                    bad |= x < col.min
                if col.max is not None:
                    bad |= x > col.max
            first = float(x[bad][0]) if bad.any() else None
        else:
            t = np.asarray(v)
            bad = (pd.isna(t) | (t == "")) if col.required else np.zeros(t.shape, bool)
            if col.allowed is not None:
                bad |= ~np.isin(t, col.allowed)
            first = str(t[bad][0]) if bad.any() else None
        if bad.any():
            raise RuntimeError(
                f"synthetic {name}: {int(bad.sum())} value(s) of {col.name} blank or outside "
                f"{col.range_text() or 'its allowed values'} (first: {first!r}); "
                "a bug in demo_network/synthetic.py, nothing was written")


def main(argv=None) -> int:
    p = argparse.ArgumentParser(
        prog="python -m fieldlimits.demo_network.synthetic",
        description="Write a synthetic, invented network (all tables) for benchmarks and "
                    f"scale tests. {CAUTION}")
    p.add_argument("--airfields", type=int, required=True, help="number of airfields")
    p.add_argument("--seed", type=int, default=1, help="random seed (default 1)")
    p.add_argument("--out", type=Path, required=True, help="folder to write")
    p.add_argument("--types", type=int, default=8, help="number of aircraft types (default 8)")
    p.add_argument("--format", choices=("csv", "parquet"), default="csv")
    p.add_argument("--obstacle-share", type=float, default=OBSTACLE_SHARE, metavar="S",
                   help=f"share of runway directions with 1 … {MAX_OBSTACLES} obstacles "
                        f"(default {OBSTACLE_SHARE}; 0: none)")
    args = p.parse_args(argv)
    if args.airfields < 1:
        p.error(f"--airfields must be at least 1; got {args.airfields}")
    if args.seed < 0:
        p.error(f"--seed must be a whole number ≥ 0; got {args.seed}")
    if not 0.0 <= args.obstacle_share <= 1.0:
        p.error(f"--obstacle-share must be 0 … 1; got {args.obstacle_share}")
    t0 = time.perf_counter()
    generate_network(args.airfields, args.seed, args.out, n_types=args.types, fmt=args.format,
                     obstacle_share=args.obstacle_share)
    print(f"synthetic network of {args.airfields} airfields written to {args.out} "
          f"in {time.perf_counter() - t0:.1f} s")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
