"""The departure area: which obstacles of the ``obstacles`` table the takeoff path must clear.

The net takeoff flight path must clear the obstacles inside an area that starts at the end
of TODA and widens along the extended runway centreline. fieldlimits uses one area for every
runway direction and type:

    half-width(D) = 90 m + 0.125 × D, at most 900 m,

with D the ground distance from the end of TODA. The shape and numbers are those of EASA Air
OPS, CAT.POL.A.210 (take-off obstacle clearance), quoted from memory: the rule's starting
half-width is 60 m + half the wing span (90 m for a span of 60 m, so 90 m is the wider,
conservative start for smaller types), and its cap is 300 m, 600 m or 900 m depending on the
navigation accuracy and on a change of track over 15°; 900 m, the widest, is used for every
runway, so an obstacle another cap would leave out is kept (conservative). Turns are not
modelled: the area follows the extended centreline.

An obstacle whose lateral offset lies outside the area is reported by ``check`` as a warning
and left out of the run (:func:`in_departure_area`).
"""

from __future__ import annotations

import numpy as np

START_HALF_WIDTH_M = 90.0
"""Half-width of the departure area at the end of TODA (CAT.POL.A.210, from memory). [m]"""
SPLAY = 0.125
"""Widening of the half-width per metre of distance from the end of TODA (from memory). [–]"""
MAX_HALF_WIDTH_M = 900.0
"""Largest half-width (the widest cap of CAT.POL.A.210, from memory). [m]"""


def half_width_m(distance_m):
    """Half-width of the departure area at ground distances from the end of TODA.

    Parameters
    ----------
    distance_m : array_like
        Ground distance from the end of TODA along the extended centreline. [m]

    Returns
    -------
    numpy.ndarray
        min(90 + 0.125 D, 900). [m]
    """
    d = np.asarray(distance_m, dtype=float)
    return np.minimum(START_HALF_WIDTH_M + SPLAY * d, MAX_HALF_WIDTH_M)


def in_departure_area(distance_m, lateral_offset_m):
    """True where an obstacle lies inside the departure area.

    Parameters
    ----------
    distance_m : array_like
        Ground distance from the end of TODA. [m]
    lateral_offset_m : array_like
        Offset from the extended centreline, either side (sign ignored; NaN: on it). [m]

    Returns
    -------
    numpy.ndarray of bool
        ``|offset| ≤ half_width_m(distance)`` (False for a NaN distance).
    """
    off = np.abs(np.nan_to_num(np.asarray(lateral_offset_m, dtype=float), nan=0.0))
    with np.errstate(invalid="ignore"):
        return off <= half_width_m(distance_m)


def area_text() -> str:
    """The area in words, for messages and the README."""
    return (f"half-width {START_HALF_WIDTH_M:g} m + {SPLAY:g} × distance from the end of TODA, "
            f"at most {MAX_HALF_WIDTH_M:g} m")
