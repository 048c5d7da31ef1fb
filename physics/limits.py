"""The one list of limiting factors of a takeoff-weight limit and their integer codes.

========================  ====  ===========================================================
name                      code  meaning
========================  ====  ===========================================================
``structural``            0     MTOW reached: every requirement is met at MTOW
``takeoff_distance``      1     takeoff distance against TODA (14 CFR 25.113(a))
``takeoff_run``           2     takeoff run against TORA (14 CFR 25.113(b))
``accelerate_stop``       3     accelerate-stop distance against ASDA (14 CFR 25.109)
``climb_gradient``        4     second-segment climb gradient (14 CFR 25.121(b))
``tailwind_limit``        5     reported tailwind above the type's limit
``crosswind_limit``       6     reported crosswind above the type's limit
``no_takeoff``            7     a requirement fails even at OEW (no mass is possible)
``invalid_input``         8     the case is outside the model's input contract
                                (``physics.caseinput``: NaN, OEW > MTOW, TODA < TORA, …)
``obstacle_clearance``    9     the net takeoff flight path does not clear an obstacle by
                                35 ft (14 CFR 25.111, 25.115; ``physics.flightpath``)
========================  ====  ===========================================================

Codes are stable: new factors are appended, never renumbered.

References
----------
.. [1] 14 CFR Part 25, §§25.109, 25.111, 25.113, 25.115, 25.121 (EASA CS-25 identical in these
   provisions).
"""

from __future__ import annotations

import numpy as np

FACTORS = (
    "structural",
    "takeoff_distance",
    "takeoff_run",
    "accelerate_stop",
    "climb_gradient",
    "tailwind_limit",
    "crosswind_limit",
    "no_takeoff",
    "invalid_input",
    "obstacle_clearance",
)

_CODE = {n: i for i, n in enumerate(FACTORS)}


def code(name):
    """Integer code of a limiting-factor name (or of an array of names).

    Parameters
    ----------
    name : str or array_like of str
        Names from ``FACTORS``. [–]

    Returns
    -------
    int or numpy.ndarray of int
        Codes. [–]

    Raises
    ------
    ValueError
        For an unknown name, listing the known ones.

    Notes
    -----
    code = FACTORS.index(name).

    References
    ----------
    .. [1] 14 CFR Part 25 (the requirement each factor stands for).
    """
    arr = np.asarray(name, dtype=object)
    flat = [str(v) for v in arr.ravel()]
    bad = sorted({v for v in flat if v not in _CODE})
    if bad:
        raise ValueError(f"unknown limiting factor {bad}; expected one of {list(FACTORS)}")
    out = np.array([_CODE[v] for v in flat], dtype=np.int64).reshape(arr.shape)
    return int(out) if out.ndim == 0 else out


def name(codes):
    """Limiting-factor names of integer codes (``""`` for an unknown code).

    Parameters
    ----------
    codes : int or array_like of int
        Codes. [–]

    Returns
    -------
    str or numpy.ndarray of object
        Names from ``FACTORS``. [–]

    Notes
    -----
    name = FACTORS[code].

    References
    ----------
    .. [1] 14 CFR Part 25.
    """
    arr = np.asarray(codes)
    table = np.array(FACTORS + ("",), dtype=object)
    idx = np.where((arr >= 0) & (arr < len(FACTORS)), arr, len(FACTORS)).astype(int)
    out = table[idx]
    return str(out) if np.ndim(arr) == 0 else out
