"""The input contract of a takeoff case: which values the takeoff model accepts.

A batch of a million cases must not fail because one of them is outside the model's domain
(a NaN mass, an OEW above MTOW, TODA shorter than TORA). :func:`refusal_codes` names, per
case, why the takeoff model cannot be applied, so that the weight-limit search gives that
case NaN and the reason while every other case is solved as usual.

=====================================  ==================================================
refused when                           reason (``physics.limits`` name)
=====================================  ==================================================
a field the takeoff model reads is     ``invalid_input``
NaN or infinite (``TAKEOFF_FIELDS``)
mass, wing, runway, air or speed-      ``invalid_input``
ratio value not positive; OEW > MTOW;
TODA < TORA; fewer than one engine;
unknown thrust model; negative
friction, thrust or drag increment
reported tailwind above the type's     ``tailwind_limit``
limit (the factored tailwind
divided by the 150 % factor)
=====================================  ==================================================

``invalid_input`` is checked first: a case with a bad value never reports a wind limit.

References
----------
.. [1] 14 CFR 25.105(d)(1) (wind factoring); 14 CFR 25.113 (TORA ≤ TODA by the definition of
   clearway); ICAO Annex 14, Vol. I, §3.1 (declared distances).
"""

from __future__ import annotations

from dataclasses import fields

import numpy as np

from fieldlimits.physics import limits
from fieldlimits.physics import thrust
from fieldlimits.physics import wind

#: Aircraft fields the takeoff model reads (the cruise and landing figures are not needed).
AIRCRAFT_TAKEOFF_FIELDS = (
    "mtow_kg", "oew_kg", "wing_area_m2", "wing_span_m", "wing_height_m", "cd0_clean", "cd0_gear",
    "cd0_takeoff_flaps", "oswald_efficiency", "cl_ground_roll", "cl_max_takeoff", "vr_over_vs",
    "vlof_over_vs", "v2_over_vs", "engine_count", "thrust_model", "static_thrust_per_engine_n",
    "thrust_linear_per_engine_n_per_mps", "thrust_quadratic_per_engine_n_per_mps2", "bypass_ratio",
    "flat_rate_oat_k", "shaft_power_per_engine_w", "propeller_efficiency", "engine_out_drag_cd",
    "vmcg_mps", "braking_cl", "braking_cd_increment", "idle_thrust_fraction", "tailwind_limit_mps",
)

#: Site fields the takeoff model reads (``mu_roll_dry``/``mu_brake_dry`` are optional: NaN
#: means "no dry comparison").
SITE_TAKEOFF_FIELDS = (
    "tora_m", "toda_m", "asda_m", "slope", "mu_roll", "mu_brake", "pressure_pa", "temperature_k",
    "headwind_mps", "screen_height_m",
)

#: Fields that must be strictly positive.
POSITIVE_FIELDS = (
    "mtow_kg", "oew_kg", "wing_area_m2", "wing_span_m", "oswald_efficiency", "cl_max_takeoff",
    "vr_over_vs", "vlof_over_vs", "v2_over_vs", "tora_m", "toda_m", "asda_m", "pressure_pa",
    "temperature_k", "screen_height_m",
)

#: Fields that must not be negative.
NON_NEGATIVE_FIELDS = (
    "wing_height_m", "cd0_clean", "cd0_gear", "cd0_takeoff_flaps", "static_thrust_per_engine_n",
    "bypass_ratio", "shaft_power_per_engine_w", "propeller_efficiency", "engine_out_drag_cd",
    "vmcg_mps", "braking_cd_increment", "idle_thrust_fraction", "tailwind_limit_mps", "mu_roll",
    "mu_brake",
)

#: Absolute tolerance on the tailwind limit, as in ``physics.climatology.runway_usability``:
#: a wind exactly on the limit is allowed. [m/s]
TAILWIND_TOLERANCE_MPS = 1e-9


def refusal_codes(aircraft, site, n):
    """Why the takeoff model cannot be applied to each case (−1 where it can).

    Parameters
    ----------
    aircraft : physics.weightlimit.Aircraft
        Per-case aircraft parameters (SI), broadcastable to ``(n,)``.
    site : physics.weightlimit.Site
        Per-case runway, day and factored wind (SI), broadcastable to ``(n,)``.
    n : int
        Number of cases. [–]

    Returns
    -------
    numpy.ndarray of int
        ``physics.limits`` code per case: ``invalid_input``, ``tailwind_limit``, or −1 for
        a case inside the contract; shape ``(n,)``. [–]

    Notes
    -----
    The checks are those of the module table. The tailwind check undoes the 150 % factor of
    the stored headwind: reported tailwind = −headwind / 1.5 for headwind < 0, refused when
    it exceeds the type's limit by more than 1e-9 m/s.

    References
    ----------
    .. [1] 14 CFR 25.105(d)(1).
    """
    vals = {}
    for obj, names in ((aircraft, AIRCRAFT_TAKEOFF_FIELDS), (site, SITE_TAKEOFF_FIELDS)):
        present = {f.name for f in fields(obj)}
        for name in names:
            if name in present:
                vals[name] = np.broadcast_to(np.asarray(getattr(obj, name), dtype=float), (n,))
    ok = np.ones(n, dtype=bool)
    with np.errstate(invalid="ignore"):
        for v in vals.values():
            ok &= np.isfinite(v)
        for name in POSITIVE_FIELDS:
            if name in vals:
                ok &= vals[name] > 0.0
        for name in NON_NEGATIVE_FIELDS:
            if name in vals:
                ok &= vals[name] >= 0.0
        ok &= vals["oew_kg"] <= vals["mtow_kg"]
        ok &= vals["toda_m"] >= vals["tora_m"]
        ok &= vals["engine_count"] >= 1.0
        ok &= np.isin(vals["thrust_model"], np.array(sorted(thrust.MODEL_CODES.values()), dtype=float))
        reported_tail = -np.minimum(vals["headwind_mps"], 0.0) / wind.TAILWIND_FACTOR
        too_much_tail = reported_tail > vals["tailwind_limit_mps"] + TAILWIND_TOLERANCE_MPS
    out = np.full(n, -1, dtype=np.int64)
    out[too_much_tail] = limits.code("tailwind_limit")
    out[~ok] = limits.code("invalid_input")
    return out
