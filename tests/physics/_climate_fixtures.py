"""Invented closed-form mass functions and wind roses shared by the climatology, solving-grid
and reliability-level tests (no real airfield's or aircraft's figures)."""

from __future__ import annotations

import numpy as np

from fieldlimits.physics import climatology, solvinggrid

Z = np.asarray(solvinggrid.DEFAULT_SCORE_NODES)


def linear_mass(temperature_k, headwind_mps):
    """Invented mass function: 60 t at 300 K calm, −800 kg/K, +900 kg per m/s headwind."""
    return 60_000.0 - 800.0 * (np.asarray(temperature_k) - 300.0) + 900.0 * np.asarray(headwind_mps)


def curved_mass(temperature_k, headwind_mps):
    """Invented smooth, curved mass function (decreasing in T, increasing in headwind)."""
    t = np.asarray(temperature_k) - 300.0
    h = np.asarray(headwind_mps)
    return 60_000.0 - 700.0 * t - 12.0 * t**2 + 1_100.0 * h - 25.0 * h**2


def point_masses(mass_fn, mean_k, sd_k, headwind_factored):
    """(N, J, G) masses of points on their direction at the temperature nodes."""
    t = climatology.daily_max_temperature_k(Z, np.asarray(mean_k)[..., None], np.asarray(sd_k)[..., None])
    return mass_fn(t[..., None, :], np.asarray(headwind_factored)[..., None])


def rose16(speed_edges=(0.0, 3.0, 6.0, 10.0, 15.0), seed=0, calm=0.08, percent=False):
    """Invented 16-sector wind rose (random shares, fewer strong winds): sector centres,
    widths, speed class bounds, cell shares and the calm share."""
    rng = np.random.default_rng(seed)
    centres = np.arange(16) * 22.5
    n_cls = len(speed_edges) - 1
    c = np.repeat(centres, n_cls)
    lo = np.tile(speed_edges[:-1], 16)
    hi = np.tile(speed_edges[1:], 16)
    f = rng.random(c.size) * np.tile(np.linspace(1.0, 0.2, n_cls), 16)
    f = f / f.sum() * (1.0 - calm)
    scale = 100.0 if percent else 1.0
    return c, np.full(c.size, 22.5), lo, hi, f * scale, calm * scale
