"""Runway wind components and the regulatory wind factoring.

References
----------
.. [1] 14 CFR Part 25, §25.105(d)(1) (EASA CS 25.105(d)(1) identical): not more than 50 % of
   the reported headwind and not less than 150 % of the reported tailwind.
"""

from __future__ import annotations

import numpy as np

#: Share of a reported headwind that may be used, 14 CFR 25.105(d)(1).
HEADWIND_FACTOR = 0.5
#: Factor on a reported tailwind, 14 CFR 25.105(d)(1).
TAILWIND_FACTOR = 1.5


def runway_wind_components(wind_from_true_deg, wind_speed, runway_heading_true_deg):
    """Headwind and crosswind components of a wind on a runway.

    Parameters
    ----------
    wind_from_true_deg : array_like
        Direction the wind blows **from**, true. [deg]
    wind_speed : array_like
        Wind speed, any unit (the components come out in the same unit). [m/s or kt]
    runway_heading_true_deg : array_like
        True heading of the takeoff direction. [deg]

    Returns
    -------
    headwind : numpy.ndarray or float
        Component along the runway, positive against the takeoff direction (headwind),
        negative for a tailwind. [same unit as wind_speed]
    crosswind : numpy.ndarray or float
        Component across the runway, positive from the right of the takeoff direction.
        [same unit as wind_speed]

    Notes
    -----
    theta = wind direction − runway heading; headwind = W cos(theta), crosswind = W sin(theta).

    References
    ----------
    .. [2] Common practice (resolution of a vector); any flight-training manual.
    """
    theta = np.deg2rad(np.asarray(wind_from_true_deg, dtype=float) - np.asarray(runway_heading_true_deg, dtype=float))
    speed = np.asarray(wind_speed, dtype=float)
    return speed * np.cos(theta), speed * np.sin(theta)


def factored_headwind(headwind, headwind_factor=HEADWIND_FACTOR, tailwind_factor=TAILWIND_FACTOR):
    """Apply the regulatory factoring to a runway wind component.

    Parameters
    ----------
    headwind : array_like
        Reported headwind component, negative for a tailwind. [m/s or kt]
    headwind_factor : float, optional
        Share of a headwind to use. [–]
    tailwind_factor : float, optional
        Factor on a tailwind. [–]

    Returns
    -------
    numpy.ndarray or float
        Factored component: headwind × 0.5 or tailwind × 1.5 by default. [same unit]

    Notes
    -----
    w_f = f_h w if w ≥ 0 else f_t w.

    References
    ----------
    .. [1] 14 CFR 25.105(d)(1).
    """
    w = np.asarray(headwind, dtype=float)
    return np.where(w >= 0.0, headwind_factor * w, tailwind_factor * w)
