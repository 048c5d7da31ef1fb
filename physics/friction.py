"""Rolling and braking friction coefficients by runway surface and condition.

Surfaces are ``SURFACES`` (codes 0, 1, ... in that order), conditions ``CONDITIONS``.
Lookups take integer codes (vectorised); ``surface_code`` / ``condition_code`` turn names
into codes, ``surface_name`` / ``condition_name`` the reverse. An unknown code gives NaN.

==========  =========  =======  =======  =====================================================
surface     condition  rolling  braking  source
==========  =========  =======  =======  =====================================================
paved       dry        0.03     0.40     [1] Table 17.1 dry concrete/asphalt (typical 0.03;
                                         braking 0.3–0.5, mid-range 0.4 as in [2] Ex. 6.7)
paved       wet        0.05     0.225    [1] wet concrete/asphalt (braking mid of 0.15–0.3)
gravel      dry        0.04     0.30     rolling: [3]; braking: assumed as firm dirt [1]
gravel      wet        0.05     0.20     assumed (no published value): wet-paved rolling,
                                         soft-turf / wet-grass braking [1]
grass       dry        0.05     0.40     [1] hard turf
grass       wet        0.08     0.20     [1] wet grass
dirt        dry        0.04     0.30     [1] firm dirt
dirt        wet        0.07     0.20     assumed as soft turf [1]
==========  =========  =======  =======  =====================================================

References
----------
.. [1] D. P. Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, §17.8, Table 17.1.
.. [2] J. D. Anderson, *Aircraft Performance and Design*, McGraw-Hill, 1999, Example 6.7.
.. [3] W. H. Mason, takeoff analysis notes, Virginia Tech (gravel rolling friction 0.04).
"""

from __future__ import annotations

import numpy as np

SURFACES = ("paved", "gravel", "grass", "dirt")
CONDITIONS = ("dry", "wet")

#: Rolling friction [surface code, condition code]. [–]
ROLLING_MU = np.array(
    [
        [0.03, 0.05],  # paved
        [0.04, 0.05],  # gravel
        [0.05, 0.08],  # grass
        [0.04, 0.07],  # dirt
    ]
)
#: Braking friction [surface code, condition code]. [–]
BRAKING_MU = np.array(
    [
        [0.40, 0.225],  # paved
        [0.30, 0.20],  # gravel
        [0.40, 0.20],  # grass
        [0.30, 0.20],  # dirt
    ]
)


def _codes_to_names(codes, names):
    arr = np.asarray(codes)
    table = np.array(names + ("",), dtype=object)
    idx = np.where((arr >= 0) & (arr < len(names)), arr, len(names)).astype(int)
    out = table[idx]
    return str(out) if np.ndim(arr) == 0 else out


def _names_to_codes(values, names, what):
    arr = np.asarray(values, dtype=object)
    flat = [str(v).strip().lower() for v in arr.ravel()]
    bad = sorted({v for v in flat if v not in names})
    if bad:
        raise ValueError(f"unknown {what} {bad}; expected one of {list(names)}")
    lookup = {n: i for i, n in enumerate(names)}
    out = np.array([lookup[v] for v in flat], dtype=np.int64).reshape(arr.shape)
    return int(out) if out.ndim == 0 else out


def surface_code(names):
    """Integer codes of runway surface names.

    Parameters
    ----------
    names : str or array_like of str
        Surface names from ``SURFACES`` (case and surrounding spaces ignored). [–]

    Returns
    -------
    int or numpy.ndarray
        Index in ``SURFACES``. [–]

    Raises
    ------
    ValueError
        Naming every unknown surface and listing the allowed ones (a boundary check).

    Notes
    -----
    code = SURFACES.index(name).

    References
    ----------
    .. [1] Raymer, Table 17.1 (surface classes).
    """
    return _names_to_codes(names, SURFACES, "runway surface")


def condition_code(names):
    """Integer codes of runway condition names (``dry``, ``wet``).

    Parameters
    ----------
    names : str or array_like of str
        Condition names from ``CONDITIONS``. [–]

    Returns
    -------
    int or numpy.ndarray
        Index in ``CONDITIONS``. [–]

    Raises
    ------
    ValueError
        Naming every unknown condition.

    Notes
    -----
    code = CONDITIONS.index(name).

    References
    ----------
    .. [1] Raymer, Table 17.1.
    """
    return _names_to_codes(names, CONDITIONS, "runway condition")


def surface_name(codes):
    """Surface names of integer codes (``""`` for an unknown code).

    Parameters
    ----------
    codes : int or array_like of int
        Surface codes. [–]

    Returns
    -------
    str or numpy.ndarray of object
        Names from ``SURFACES``. [–]

    Notes
    -----
    name = SURFACES[code].

    References
    ----------
    .. [1] Raymer, Table 17.1.
    """
    return _codes_to_names(codes, SURFACES)


def condition_name(codes):
    """Condition names of integer codes (``""`` for an unknown code).

    Parameters
    ----------
    codes : int or array_like of int
        Condition codes. [–]

    Returns
    -------
    str or numpy.ndarray of object
        Names from ``CONDITIONS``. [–]

    Notes
    -----
    name = CONDITIONS[code].

    References
    ----------
    .. [1] Raymer, Table 17.1.
    """
    return _codes_to_names(codes, CONDITIONS)


def _lookup(table, surface_codes, condition_codes):
    s = np.asarray(surface_codes)
    k = np.asarray(condition_codes)
    s, k = np.broadcast_arrays(s, k)
    ok = (s >= 0) & (s < table.shape[0]) & (k >= 0) & (k < table.shape[1])
    vals = table[np.where(ok, s, 0).astype(int), np.where(ok, k, 0).astype(int)]
    out = np.where(ok, vals, np.nan)
    return float(out) if out.ndim == 0 else out


def rolling_friction(surface_codes, condition_codes):
    """Rolling friction coefficient for runway surface and condition codes.

    Parameters
    ----------
    surface_codes : array_like of int
        Codes of ``SURFACES``. [–]
    condition_codes : array_like of int
        Codes of ``CONDITIONS``. [–]

    Returns
    -------
    numpy.ndarray or float
        Rolling friction coefficient mu (NaN for an unknown code). [–]

    Notes
    -----
    Friction force = mu (W cos(gamma) − L); values in the module table.

    References
    ----------
    .. [1] Raymer, §17.8, Table 17.1.
    .. [3] Mason, takeoff analysis notes (gravel).
    """
    return _lookup(ROLLING_MU, surface_codes, condition_codes)


def braking_friction(surface_codes, condition_codes):
    """Braking friction coefficient for runway surface and condition codes.

    Parameters
    ----------
    surface_codes : array_like of int
        Codes of ``SURFACES``. [–]
    condition_codes : array_like of int
        Codes of ``CONDITIONS``. [–]

    Returns
    -------
    numpy.ndarray or float
        Braking friction coefficient mu_b (NaN for an unknown code). [–]

    Notes
    -----
    Braking force = mu_b (W cos(gamma) − L); values in the module table.

    References
    ----------
    .. [1] Raymer, §17.8, Table 17.1.
    .. [2] Anderson (1999), Example 6.7 (mu_b 0.4 dry concrete).
    """
    return _lookup(BRAKING_MU, surface_codes, condition_codes)
