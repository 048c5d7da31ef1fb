"""Ground run: distance and time between airspeeds on the runway, closed form and numerical.

Equation of motion on a runway of gradient ``slope`` (rise over run, + uphill), with the
aerodynamic forces on the true airspeed V (V = ground speed + headwind w; the aircraft is at
rest at V = w)::

    m dV/dt = T(V) − D − mu (W cos g − L) − W sin g,   D, L = ½ rho S C_D,L V|V|
    ds = (V − w) dV / a(V),   dt = dV / a(V),   a = dV/dt.

Building blocks (other modules string segments together from them):

* :func:`acceleration_coefficients` — (a0, a1, a2) of a(V) = a0 + a1 V + a2 V² for a thrust
  polynomial, drag, lift, friction, slope and mass (``reverse_flow=True`` for V < 0).
* :func:`segment_distance_quadratic_m`, :func:`segment_time_quadratic_s` — closed form
  between any two airspeeds, accelerating or decelerating (e.g. braking from V1 to rest).
* :func:`acceleration_function` — a(V) as a vectorised callable for any :class:`ThrustLaw`.
* :func:`segment_distance_general_m`, :func:`segment_time_general_s` — Gauss–Legendre
  integration for any vectorised a(V), split at kinks (V = 0 and given breakpoints).
* :func:`ground_run_m` (fixed public signature), :func:`ground_run_detail` (time, reason
  code, rotation allowance) and :func:`ground_run_for_thrust_law` (any thrust model:
  closed form for polynomial thrust; for propellers closed form below the power kink and
  above it too, by the roots of a cubic, with Gauss–Legendre where that form does not apply).

A segment whose acceleration vanishes or changes sign before its end speed gives NaN
(``REASON_NO_ACCELERATION``), never an exception.

References
----------
.. [1] D. P. Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, §17.8, Eq. 17.100–17.104.
.. [2] J. D. Anderson, *Aircraft Performance and Design*, McGraw-Hill, 1999, §6.7,
   Eqs. 6.85–6.90, Example 6.6.
.. [3] I. S. Gradshteyn, I. M. Ryzhik, *Table of Integrals, Series, and Products*, 7th ed.,
   2.171–2.175 (integrals of x^m / (a + b x + c x²)).
.. [4] L. N. Trefethen, "Is Gauss quadrature better than Clenshaw–Curtis?", *SIAM Review*
   50(1), 2008, Theorem 4.5 (Gauss–Legendre error bound for analytic integrands).
.. [5] W. H. Press et al., *Numerical Recipes*, 3rd ed., §5.6 (stable quadratic roots).
.. [6] M. Abramowitz, I. A. Stegun, *Handbook of Mathematical Functions*, 3.8.2 (roots of a
   cubic).
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np

from fieldlimits.physics import constants as c
from fieldlimits.physics.compiled import kernel
from fieldlimits.physics.thrust import _trail

#: Reason codes returned beside NaN results.
REASONS = ("ok", "no_acceleration", "invalid_input")
REASON_OK = 0
REASON_NO_ACCELERATION = 1
REASON_INVALID = 2

#: Default Gauss–Legendre nodes per piece of a segment.
DEFAULT_NODES = 16

_GL_CACHE: dict = {}


def _gauss_legendre(n):
    if n not in _GL_CACHE:
        _GL_CACHE[n] = np.polynomial.legendre.leggauss(n)
    return _GL_CACHE[n]


def _f(x):
    return np.asarray(x, dtype=float)


def _kernel_args(args, shape):
    """``args`` (float arrays) as writable C-contiguous one-dimensional arrays of ``shape``'s
    size for a compiled kernel: one machine-code version per kernel (Numba compiles one for
    each layout and read-only flag it meets), broadcast and copied only where needed (a
    broadcast costs microseconds of Python, and the V1 search makes thousands of small calls).
    A broadcast array (stride 0) is always copied: numpy warns when one made by
    np.broadcast_arrays is inspected for writing."""
    out = []
    for x in args:
        if x.shape != shape or 0 in x.strides:
            x = np.array(np.broadcast_to(x, shape))
        x = x.reshape(-1)
        if not (x.flags.c_contiguous and x.flags.writeable):
            x = np.array(x)
        out.append(x)
    return out


class AccelerationCoefficients(NamedTuple):
    """a(V) = a0 + a1 V + a2 V² [m/s², 1/s, 1/m]."""

    a0: np.ndarray
    a1: np.ndarray
    a2: np.ndarray


class GroundRun(NamedTuple):
    """Result of a ground run: distance [m], time [s], reason code (``REASONS``)."""

    distance_m: np.ndarray
    time_s: np.ndarray
    reason: np.ndarray


def slope_sin_cos(slope):
    """Sine and cosine of the runway angle from a gradient.

    Parameters
    ----------
    slope : array_like
        Gradient, rise over run, + uphill. [–]

    Returns
    -------
    sin_g, cos_g : numpy.ndarray
        sin and cos of the runway angle. [–]

    Notes
    -----
    sin g = s/√(1 + s²), cos g = 1/√(1 + s²).

    References
    ----------
    .. [1] Raymer, §17.8.
    """
    s = _f(slope)
    r = 1.0 / np.sqrt(1.0 + s * s)
    return s * r, r


def acceleration_coefficients(*, mass_kg, wing_area_m2, density_kg_m3, cd, cl, mu, thrust0_n,
                              thrust1_n_per_mps=0.0, thrust2_n_per_mps2=0.0, slope=0.0,
                              reverse_flow=False):
    """Coefficients of the ground acceleration a(V) = a0 + a1 V + a2 V² in true airspeed.

    Parameters
    ----------
    mass_kg : array_like
        Aircraft mass. [kg]
    wing_area_m2 : array_like
        Reference area. [m²]
    density_kg_m3 : array_like
        Air density. [kg/m³]
    cd : array_like
        Drag coefficient on the ground (ground effect, gear, flaps; add spoiler or failed-
        engine increments here). [–]
    cl : array_like
        Lift coefficient on the ground. [–]
    mu : array_like
        Friction coefficient (rolling, or braking). [–]
    thrust0_n : array_like
        Total thrust at V = 0 (T0; idle or engine-out thrust for those segments). [N]
    thrust1_n_per_mps : array_like, optional
        T1 of T = T0 + T1 V + T2 V². [N/(m/s)]
    thrust2_n_per_mps2 : array_like, optional
        T2. [N/(m/s)²]
    slope : array_like, optional
        Gradient, rise over run, + uphill. [–]
    reverse_flow : bool, optional
        Coefficients valid for V < 0 (tailwind faster than the aircraft): drag and lift on
        V|V| then push forward and down. [–]

    Returns
    -------
    AccelerationCoefficients
        (a0, a1, a2). [m/s²], [1/s], [1/m]

    Notes
    -----
    a0 = T0/m − g (mu cos g + sin g); a1 = T1/m;
    a2 = T2/m − σ ½ rho S (C_D − mu C_L)/m, σ = +1 for V ≥ 0, −1 for V < 0.

    References
    ----------
    .. [1] Raymer, Eq. 17.100 (level case; slope term added from first principles).
    .. [2] Anderson (1999), Eq. 6.85.
    """
    m = _f(mass_kg)
    sin_g, cos_g = slope_sin_cos(slope)
    mu = _f(mu)
    aero = 0.5 * _f(density_kg_m3) * _f(wing_area_m2) * (_f(cd) - mu * _f(cl)) / m
    sign = -1.0 if reverse_flow else 1.0
    a0 = _f(thrust0_n) / m - c.G0 * (mu * cos_g + sin_g)
    a1 = _f(thrust1_n_per_mps) / m
    a2 = _f(thrust2_n_per_mps2) / m - sign * aero
    a0, a1, a2 = np.broadcast_arrays(a0, a1, a2)
    return AccelerationCoefficients(a0, a1, a2)


#: Form of a(V) = a0 + a1 V + a2 V² per case in :class:`QuadraticSegments`: distinct real
#: roots, complex roots, a double root (the last two, with constant acceleration where the
#: V terms vanish on the segment, are the special forms). [–]
FORM_REAL, FORM_COMPLEX, FORM_DOUBLE = 0, 1, 2


@kernel
def _form_one(a_0, a_1, a_2):
    """Form and constants (k0, k1, k2) of one case's a(V) (:class:`QuadraticSegments`)."""
    a1sq = a_1 * a_1
    four_a0a2 = 4.0 * a_0 * a_2
    disc = a1sq - four_a0a2
    # the real-root form is singular or ill-conditioned here (double root, constant
    # acceleration), or does not apply (complex roots)
    if disc <= 1e-12 * (a1sq + abs(four_a0a2)):  # includes every disc < 0
        form = FORM_DOUBLE if abs(disc) <= 1e-12 * (a1sq + abs(four_a0a2)) else FORM_COMPLEX
        return form, np.sqrt(abs(disc)), 0.0, 0.0
    # a = a2 (V − r1)(V − r2), r1 = q/a2 (may be → ∞), r2 = a0/q, a2 (r1 − r2) = −sq
    sq = math.copysign(np.sqrt(max(disc, 0.0)), a_1)
    q = -0.5 * (a_1 + sq)
    return FORM_REAL, sq, q, a_0 / q


@kernel
def _segment_forms(a0, a1, a2, form, k0, k1, k2):
    """Form and constants of each case's a(V) (:class:`QuadraticSegments`), in place."""
    for j in range(a0.shape[0]):
        form[j], k0[j], k1[j], k2[j] = _form_one(a0[j], a1[j], a2[j])


@kernel
def _segment_one(a_0, a_1, a_2, w_j, form, k0, k1, k2, v_i, v_f):
    """∫(V − w)/a dV and ∫dV/a from v_i to v_f for one case of :class:`QuadraticSegments`
    (its coefficients, form and constants). Returns (distance, time)."""
    dv = v_f - v_i
    if dv == 0.0:  # an empty segment (e.g. one side of a propeller kink): no logarithms
        return 0.0, 0.0
    a_i = a_0 + (a_1 + a_2 * v_i) * v_i
    if form == FORM_REAL:
        # written to stay exact as a2 → 0: (r1 − w) ln((vf − r1)/(vi − r1)) through log1p
        sq, q, r2 = k0, k1, k2
        inv_sq = 1.0 / sq
        u = dv / (a_2 * v_i - q)
        x1 = a_2 * u
        log1 = np.log1p(x1)
        ratio = 1.0 - x1 * (0.5 - x1 / 3.0) if abs(x1) < 1e-5 else log1 / x1
        term1 = (q - a_2 * w_j) * ratio * u
        log2 = np.log1p(dv / (v_i - r2))
        d = ((r2 - w_j) * log2 - term1) * inv_sq
        t = (log2 - log1) * inv_sq
    else:
        vmax = max(abs(v_i), abs(v_f))
        if (abs(a_1) + abs(a_2) * vmax) * vmax <= 1e-13 * abs(a_0):  # constant acceleration
            d = dv * (v_f + v_i - 2.0 * w_j) / (2.0 * a_0)
            t = dv / a_0
        elif form == FORM_DOUBLE:  # a = a2 (V − r)²
            r = -a_1 / (2.0 * a_2)
            inv = 1.0 / (v_i - r) - 1.0 / (v_f - r)
            d = (np.log((v_f - r) / (v_i - r)) + (r - w_j) * inv) / a_2
            t = inv / a_2
        else:  # complex roots ([3] 2.172, the atan difference written with atan2, exact branch)
            sd = k0
            two_a2 = 2.0 * a_2
            x = (two_a2 * v_f + a_1) / sd
            y = (two_a2 * v_i + a_1) / sd
            t = 2.0 / sd * np.arctan2(two_a2 * dv / sd, 1.0 + x * y)
            ln = np.log1p(dv * (a_1 + a_2 * (v_f + v_i)) / a_i)
            d = (ln - (two_a2 * w_j + a_1) * t) / two_a2
    # a(vi) with the sign of vf − vi (dv·ai cannot underflow for speeds and accelerations);
    # a root inside the segment makes a logarithm's argument negative: NaN or ±inf
    if not (dv * a_i > 0.0 and np.isfinite(d)):
        d = np.nan
        t = np.nan
    return d, t


@kernel
def _segment_integrals(a0, a1, a2, w, form, k0, k1, k2, vi, vf, dist, time):
    """∫(V − w)/a dV and ∫dV/a from vi to vf per case (:meth:`QuadraticSegments.integrals`)."""
    for j in range(a0.shape[0]):
        dist[j], time[j] = _segment_one(a0[j], a1[j], a2[j], w[j], form[j], k0[j], k1[j], k2[j], vi[j], vf[j])


class QuadraticSegments:
    """Closed-form ∫(V − w)/a dV and ∫dV/a between any two airspeeds for a = a0 + a1 V + a2 V²,
    with everything that does not depend on the airspeeds found once.

    Parameters
    ----------
    a0, a1, a2 : array_like
        Coefficients of a(V) per case, one-dimensional after broadcasting with ``w``.
        [m/s²], [1/s], [1/m]
    w : array_like
        Headwind; ground speed = V − w. [m/s]

    Notes
    -----
    The discriminant Δ = a1² − 4 a0 a2 sorts each case into the real-root form or the
    special forms (complex roots, double root, constant acceleration), and gives the roots
    and the constants of its form; :meth:`integrals` then evaluates the formulas of
    :func:`segment_distance_quadratic_m` for the segment's ends only. A caller integrating
    several segments of one a(V) (the V1 search of :mod:`physics.enginefailure`) builds
    this once; :func:`_quadratic_integrals` builds it for a single segment. Both steps are
    compiled kernels (:mod:`physics.compiled`: one pass over the cases, each case's own
    form, no temporaries); the closed forms written with numpy are the tests' reference.

    References
    ----------
    .. [3] Gradshteyn & Ryzhik, 2.172, 2.175. .. [5] Numerical Recipes §5.6.
    """

    def __init__(self, a0, a1, a2, w):
        a0, a1, a2, w = (_f(x) for x in (a0, a1, a2, w))
        shape = np.broadcast_shapes(a0.shape, a1.shape, a2.shape, w.shape) or (1,)
        a0, a1, a2, w = _kernel_args((a0, a1, a2, w), shape)
        self.a0, self.a1, self.a2, self.w = a0, a1, a2, w
        n = a0.shape[0]
        self.form = np.empty(n, dtype=np.int8)
        self.k = np.empty((3, n))  # real roots: sqrt(Δ) with a1's sign, q, r2; special: sqrt(|Δ|)
        _segment_forms(a0, a1, a2, self.form, *self.k)

    @classmethod
    def of_forms(cls, a0, a1, a2, w, form, k):
        """The segments whose forms and constants a caller's kernel has found already (the
        coefficients, headwind, ``form`` and ``k`` as :attr:`form`, :attr:`k`: contiguous
        one-dimensional arrays, kept as given)."""
        new = object.__new__(cls)
        new.a0, new.a1, new.a2, new.w, new.form, new.k = a0, a1, a2, w, form, k
        return new

    def take(self, index):
        """The segments of the cases at ``index`` (integer array): forms and constants
        gathered, so each case keeps the form it had."""
        index = np.asarray(index)
        new = object.__new__(type(self))
        new.a0, new.a1, new.a2, new.w = (x.take(index) for x in (self.a0, self.a1, self.a2, self.w))
        new.form, new.k = self.form.take(index), self.k.take(index, axis=1)
        return new

    def integrals(self, vi, vf):
        """Distance and time from airspeed ``vi`` to ``vf``.

        Parameters
        ----------
        vi, vf : array_like
            True airspeeds at the start and end, broadcastable to the cases. [m/s]

        Returns
        -------
        distance, time : numpy.ndarray
            Ground distance and time, shape (n,); NaN where the acceleration does not have the
            sign of vf − vi at vi, or vanishes inside the segment. [m], [s]

        Notes
        -----
        Feasibility: the acceleration must have the sign of (vf − vi) at vi; a root of a(V)
        inside the segment then makes one of the logarithms' arguments negative (or zero at
        an end), which gives NaN (or ±inf) — caught by the final finiteness check. With
        complex roots a(V) keeps its sign.

        References
        ----------
        .. [3] Gradshteyn & Ryzhik, 2.172, 2.175.
        """
        vi, vf = _kernel_args((_f(vi), _f(vf)), self.a0.shape)
        dist, time = np.empty(self.a0.shape), np.empty(self.a0.shape)
        _segment_integrals(self.a0, self.a1, self.a2, self.w, self.form, *self.k, vi, vf, dist, time)
        return dist, time


def _quadratic_integrals(a0, a1, a2, vi, vf, w):
    """Closed-form ∫(V − w)/a dV and ∫dV/a from vi to vf for a = a0 + a1 V + a2 V²
    (:class:`QuadraticSegments` for one segment). Returns (distance, time), NaN where the
    segment is infeasible. Arrays broadcast."""
    args = [_f(x) for x in (a0, a1, a2, vi, vf, w)]
    shape = np.broadcast_shapes(*(x.shape for x in args))
    a0, a1, a2, vi, vf, w = _kernel_args(args, shape)
    dist, time = QuadraticSegments(a0, a1, a2, w).integrals(vi, vf)
    return dist.reshape(shape), time.reshape(shape)


def _split_at_zero(a0, a1, a2, a2_reverse, va_start, va_end, headwind_mps, forward=None):
    """Closed-form integrals over a segment that may cross V = 0 (reverse flow below 0).

    The part at V ≥ 0 runs from max(V_s, 0) to max(V_e, 0), the part at V < 0 from
    min(V_s, 0) to min(V_e, 0); the second is computed only where it is not empty.
    ``forward``: the :class:`QuadraticSegments` of (a0, a1, a2, headwind) when the caller
    keeps it for several segments (one-dimensional cases).
    """
    if a2_reverse is None:
        if forward is not None:
            return forward.integrals(va_start, va_end)
        return _quadratic_integrals(a0, a1, a2, va_start, va_end, headwind_mps)
    a0, a1, a2, a2r, vi, vf, w = np.broadcast_arrays(*(_f(x) for x in (
        a0, a1, a2, a2_reverse, va_start, va_end, headwind_mps)))
    if forward is not None:
        s, t = forward.integrals(np.maximum(vi, 0.0), np.maximum(vf, 0.0))
    else:
        s, t = _quadratic_integrals(a0, a1, a2, np.maximum(vi, 0.0), np.maximum(vf, 0.0), w)
    rev = np.flatnonzero(np.minimum(vi, vf) < 0.0)  # integer indices: much faster than a mask
    if rev.size:
        shape = np.shape(s)
        s, t = np.atleast_1d(s).ravel(), np.atleast_1d(t).ravel()
        a0, a1, a2r, vi, vf, w = (np.atleast_1d(x).ravel() for x in (a0, a1, a2r, vi, vf, w))
        sr, tr = _quadratic_integrals(a0.take(rev), a1.take(rev), a2r.take(rev), np.minimum(vi.take(rev), 0.0),
                                      np.minimum(vf.take(rev), 0.0), w.take(rev))
        s[rev] += sr
        t[rev] += tr
        s, t = s.reshape(shape), t.reshape(shape)
    return s, t


def _scalar_out(x, *inputs):
    return float(x) if all(np.ndim(v) == 0 for v in inputs) else x


def segment_distance_quadratic_m(a0, a1, a2, va_start, va_end, headwind_mps=0.0, a2_reverse=None):
    """Ground distance between two airspeeds for an acceleration quadratic in airspeed.

    Parameters
    ----------
    a0 : array_like
        Constant term of a(V). [m/s²]
    a1 : array_like
        Linear term. [1/s]
    a2 : array_like
        Quadratic term, for V ≥ 0 (or everywhere if ``a2_reverse`` is None). [1/m]
    va_start : array_like
        True airspeed at the start of the segment (at rest: the headwind). [m/s]
    va_end : array_like
        True airspeed at the end; below ``va_start`` for a decelerating segment
        (braking to rest: ``va_end`` = headwind). [m/s]
    headwind_mps : array_like, optional
        Headwind component w (negative: tailwind); ground speed = V − w. [m/s]
    a2_reverse : array_like, optional
        Quadratic term valid for V < 0 (``acceleration_coefficients(..., reverse_flow=True)``);
        the segment is then split at V = 0. [1/m]

    Returns
    -------
    numpy.ndarray or float
        Ground distance, ≥ 0. NaN where the acceleration vanishes or has the wrong sign
        somewhere on the segment (cannot reach ``va_end``). [m]

    Notes
    -----
    s = ∫ (V − w) / (a0 + a1 V + a2 V²) dV from V_start to V_end, in closed form ([3]):
    with real roots r1 = q/a2, r2 = a0/q, q = −½ (a1 + sgn(a1) √Δ), Δ = a1² − 4 a0 a2,
    s = [(r1 − w) ln((V_e − r1)/(V_s − r1)) − (r2 − w) ln((V_e − r2)/(V_s − r2))] / (a2 (r1 − r2)),
    written with log1p so that it stays exact as a2 → 0 (linear or constant acceleration);
    with complex roots (Δ < 0), s = [ln(a_e/a_s) − (2 a2 w + a1) J]/(2 a2),
    J = (2/√−Δ)[atan((2 a2 V + a1)/√−Δ)] between the ends; double root and constant
    acceleration separately. For constant thrust and a1 = 0 this is Anderson's Eq. 6.90 /
    Raymer's Eq. 17.102. Accuracy: a few ulps relative in the tests (vs. 64-node Gauss–Legendre).

    References
    ----------
    .. [1] Raymer, §17.8, Eq. 17.102. .. [2] Anderson (1999), Eq. 6.90.
    .. [3] Gradshteyn & Ryzhik, 2.172, 2.175. .. [5] Numerical Recipes §5.6.
    """
    s, _ = _split_at_zero(a0, a1, a2, a2_reverse, va_start, va_end, headwind_mps)
    return _scalar_out(s, a0, a1, a2, va_start, va_end, headwind_mps)


def segment_time_quadratic_s(a0, a1, a2, va_start, va_end, headwind_mps=0.0, a2_reverse=None):
    """Time between two airspeeds for an acceleration quadratic in airspeed.

    Parameters
    ----------
    a0, a1, a2 : array_like
        Coefficients of a(V) = a0 + a1 V + a2 V². [m/s²], [1/s], [1/m]
    va_start, va_end : array_like
        True airspeeds at the ends of the segment. [m/s]
    headwind_mps : array_like, optional
        Headwind (unused in the time; kept for a signature like the distance's). [m/s]
    a2_reverse : array_like, optional
        Quadratic term for V < 0. [1/m]

    Returns
    -------
    numpy.ndarray or float
        Time, ≥ 0; NaN where the end speed cannot be reached. [s]

    Notes
    -----
    t = ∫ dV / (a0 + a1 V + a2 V²) = [ln((V_e − r1)/(V_s − r1)) − ln((V_e − r2)/(V_s − r2))]
    / (a2 (r1 − r2)) (real roots), (2/√−Δ)[atan(...)] (complex roots) ([3] 2.172).

    References
    ----------
    .. [3] Gradshteyn & Ryzhik, 2.172.
    """
    _, t = _split_at_zero(a0, a1, a2, a2_reverse, va_start, va_end, headwind_mps)
    return _scalar_out(t, a0, a1, a2, va_start, va_end, headwind_mps)


# Short names used by other modules.
segment_distance_m = segment_distance_quadratic_m
segment_time_s = segment_time_quadratic_s


def acceleration_function(thrust_law, *, mass_kg, wing_area_m2, density_kg_m3, cd, cl, mu, slope=0.0):
    """Ground acceleration a(V) as a vectorised callable, for any thrust law.

    Parameters
    ----------
    thrust_law : physics.thrust.ThrustLaw
        Total thrust against airspeed (n cases).
    mass_kg, wing_area_m2, density_kg_m3, cd, cl, mu, slope : array_like
        As :func:`acceleration_coefficients`, shape (n,) or broadcastable. [kg], [m²],
        [kg/m³], [–], [–], [–], [–]

    Returns
    -------
    callable
        ``accel(v)`` with v of shape (n,) or (n, k) true airspeeds [m/s] → a [m/s²] of the
        same shape.

    Notes
    -----
    a(V) = [T(V) − ½ rho S (C_D − mu C_L) V|V|]/m − g (mu cos g + sin g).

    References
    ----------
    .. [1] Raymer, Eq. 17.100.
    """
    m = _f(mass_kg)
    sin_g, cos_g = slope_sin_cos(slope)
    aero = 0.5 * _f(density_kg_m3) * _f(wing_area_m2) * (_f(cd) - _f(mu) * _f(cl)) / m
    rest = c.G0 * (_f(mu) * cos_g + sin_g)
    shape = np.broadcast_shapes(np.shape(m), np.shape(aero), np.shape(rest), np.shape(thrust_law.t0_n))
    m, aero, rest = (np.broadcast_to(x, shape) for x in (m, aero, rest))

    def accel(v):
        v = _f(v)
        mm, ae, re = (_trail(x, v) for x in (m, aero, rest))
        return thrust_law.thrust_n(v) / mm - ae * v * np.abs(v) - re

    return accel


def _general_integrals(accel_fn, va_start, va_end, headwind_mps, nodes, breakpoints):
    vi, vf, w = np.broadcast_arrays(_f(va_start), _f(va_end), _f(headwind_mps))
    vi, vf, w = (np.atleast_1d(x) for x in (vi, vf, w))
    lo, hi = np.minimum(vi, vf), np.maximum(vi, vf)
    extra = []
    if np.any((lo < 0.0) & (hi > 0.0)):  # V|V| has a kink at V = 0
        extra.append(np.zeros_like(vi))
    if breakpoints is not None:
        bp = _f(breakpoints)
        bp = bp.reshape(bp.shape + (1,)) if bp.ndim <= 1 else bp
        bp = np.broadcast_to(bp, vi.shape + bp.shape[-1:])
        extra += [bp[:, j] for j in range(bp.shape[1])]
    if extra:
        cuts = np.sort(np.stack([np.clip(e, lo, hi) for e in extra], axis=1), axis=1)
        edges = np.concatenate([lo[:, None], cuts, hi[:, None]], axis=1)  # ascending
    else:
        edges = np.stack([lo, hi], axis=1)
    x, wts = _gauss_legendre(nodes)
    half = 0.5 * np.diff(edges, axis=1)  # (n, pieces)
    mid = 0.5 * (edges[:, 1:] + edges[:, :-1])
    v_nodes = (mid[:, :, None] + half[:, :, None] * x).reshape(len(vi), -1)
    a_nodes = accel_fn(v_nodes)
    a_ends = accel_fn(np.stack([vi, vf], axis=1))
    sgn = np.sign(vf - vi)
    ok = ((sgn[:, None] * a_nodes > 0.0).all(axis=1) & (sgn[:, None] * a_ends > 0.0).all(axis=1)) | (vf == vi)
    hw = (half[:, :, None] * wts).reshape(v_nodes.shape)  # weight × half-length per node
    with np.errstate(divide="ignore", invalid="ignore"):
        inv = hw / a_nodes
        time_up = inv.sum(axis=1)
        dist_up = (v_nodes * inv).sum(axis=1) - w * time_up  # ∫ V/a − w ∫ 1/a
    dist = np.where(ok, sgn * dist_up, np.nan)
    time = np.where(ok, sgn * time_up, np.nan)
    zero = vf == vi
    if np.any(zero):
        dist[zero] = 0.0
        time[zero] = 0.0
    return dist, time


class CubicRoot(NamedTuple):
    """The real root of V³ + pV + q (p = c0/c2 > 0, q = −pm/c2) and the constants of the
    partial fractions (:func:`_propeller_power_closed`), per case."""

    r: np.ndarray
    p: np.ndarray
    d_inv: np.ndarray
    e: np.ndarray


def _cubic_root(pm, c2, c0):
    """:class:`CubicRoot` of a(V) = pm/V − c2 V² − c0 = 0 (pm, c2, c0 > 0); see
    :func:`_propeller_power_closed`. Compiled (:func:`_cubic_roots`)."""
    args = [_f(x) for x in (pm, c2, c0)]
    shape = np.broadcast_shapes(*(x.shape for x in args))
    out = np.empty((4,) + shape).reshape(4, -1)
    _cubic_roots(*_kernel_args(args, shape), *out)
    return CubicRoot(*(x.reshape(shape) for x in out))


@kernel
def _cubic_one(pm, c2, c0):
    """The root r of V³ + p V + q (p = c0/c2, q = −pm/c2) by Cardano's formula in the form
    r = u − p/(3u), then two Newton steps; returns (r, p, 1/(3r² + p), √(3r² + 4p))."""
    p = c0 / c2
    q = -pm / c2
    u = np.cbrt(-0.5 * q + np.sqrt(0.25 * q * q + p * p * p / 27.0))
    r = u - p / (3.0 * u)
    for _ in range(2):  # Newton on r³ + p r + q
        r2 = r * r
        r = r - (r * (r2 + p) + q) / (3.0 * r2 + p)
    r2 = r * r
    return r, p, 1.0 / (3.0 * r2 + p), np.sqrt(3.0 * r2 + 4.0 * p)


@kernel
def _cubic_roots(pm, c2, c0, r_out, p_out, d_inv_out, e_out):
    """:func:`_cubic_one` for each case, in place."""
    for j in range(pm.shape[0]):
        r_out[j], p_out[j], d_inv_out[j], e_out[j] = _cubic_one(pm[j], c2[j], c0[j])


def _propeller_power_closed(pm, c2, c0, v0, v1, w, root=None):
    """Closed-form distance and time for a(V) = pm/V − c2 V² − c0 from v0 to v1 (either
    order, both > 0), where pm, c2, c0 > 0.

    Returns (distance, time), ≥ 0; NaN where the acceleration does not keep the sign of
    v1 − v0 along the piece (a falls with V, so: where (v1 − v0) a(v1) ≤ 0), e.g. an
    accelerating piece ending at or above the speed where a vanishes.

    Notes
    -----
    1/a = V/Q(V) with Q = pm − c0 V − c2 V³ = −c2 (V³ + p V + q), p = c0/c2 > 0, q = −pm/c2 < 0:
    the cubic rises with V and has one real root r > 0 (a = 0 there) and a complex pair,
    V³ + pV + q = (V − r)(V² + rV + s), s = r² + p. Partial fractions over the two factors
    ([3] 2.103, 2.172) give, with D = 3r² + p, E = √(3r² + 4p):
    ∫ V dV/(V³ + pV + q) = [r L1 − ½ r L2 + (1.5 r² + p) Θ]/D,
    ∫ V² dV/(V³ + pV + q) = [r² L1 + ½ (2r² + p) L2 + ½ r p Θ]/D,
    L1 = ln((r − v1)/(r − v0)), L2 = ln((v1² + r v1 + s)/(v0² + r v0 + s)),
    Θ = (2/E)[atan((2V + r)/E)] between the ends; time = −∫V/(…)/c2, distance = time-weighted
    (V − w): −(∫V²/(…) − w ∫V/(…))/c2. The root by Cardano's formula in the form
    r = u − p/(3u), u = ∛(−q/2 + √(q²/4 + p³/27)) (no cancellation inside the cube root), then two
    Newton steps (exact to rounding also where p³/27 ≫ q²/4 and u − p/(3u) cancels);
    ``root`` (:func:`_cubic_root`) lets a caller integrate several pieces of one a(V).

    References
    ----------
    .. [3] Gradshteyn & Ryzhik, 2.103, 2.172. .. [6] Abramowitz & Stegun, 3.8.2 (cubic).
    """
    r, p, d_inv, e = _cubic_root(pm, c2, c0) if root is None else root  # mass-dependent only
    args = [_f(x) for x in (pm, c2, c0, v0, v1, w, r, p, d_inv, e)]
    shape = np.broadcast_shapes(*(x.shape for x in args))
    dist, time = np.empty(shape).reshape(-1), np.empty(shape).reshape(-1)
    _propeller_pieces(*_kernel_args(args, shape), dist, time)
    return dist.reshape(shape), time.reshape(shape)


@kernel
def _propeller_one(pm, c2, c0, v_0, v_1, w, r, p, d_inv, e):
    """One case of :func:`_propeller_power_closed` (its cubic's root and constants).
    Returns (distance, time)."""
    dv = v_1 - v_0
    if dv == 0.0:  # an empty piece (e.g. a segment below the kink): no logarithms
        return 0.0, 0.0
    r2 = r * r
    l1 = np.log1p(-dv / (r - v_0))
    l2 = np.log1p(dv * (v_1 + v_0 + r) / (v_0 * (v_0 + r) + r2 + p))
    x = (2.0 * v_1 + r) / e
    y = (2.0 * v_0 + r) / e
    theta = (2.0 / e) * np.arctan2(2.0 * dv / e, 1.0 + x * y)
    i1 = (r * (l1 - 0.5 * l2) + (1.5 * r2 + p) * theta) * d_inv
    i2 = (r2 * l1 + (r2 + 0.5 * p) * l2 + 0.5 * r * p * theta) * d_inv
    t = -i1 / c2
    d = -(i2 - w * i1) / c2
    if not (dv * (pm / v_1 - c2 * v_1 * v_1 - c0) > 0.0 and np.isfinite(d) and np.isfinite(t)):
        d = np.nan
        t = np.nan
    return d, t


@kernel
def _propeller_pieces(pm, c2, c0, v0, v1, w, r, p, d_inv, e, dist, time):
    """The pieces of :func:`_propeller_power_closed`, one case at a time, in place."""
    for j in range(dist.shape[0]):
        dist[j], time[j] = _propeller_one(pm[j], c2[j], c0[j], v0[j], v1[j], w[j], r[j], p[j], d_inv[j], e[j])


def _propeller_power_piece(pm, c2, c0, v0, v1, w, nodes):
    """Gauss–Legendre distance and time for a(V) = pm/V − c2 V² − c0 from v0 to v1 (either
    order, both > 0); NaN where a does not keep the sign of v1 − v0 at the nodes and ends.

    Node-major layout (nodes, cases) so that numpy's inner loops run over the cases. The
    half-length (v1 − v0)/2 carries the direction, so a decelerating piece (a < 0) gives a
    positive distance and time too.
    """
    x, wts = _gauss_legendre(nodes)
    half = 0.5 * (v1 - v0)
    v = 0.5 * (v1 + v0) + half * x[:, None]  # (nodes, n)
    a = pm / v - c2 * v * v - c0
    a_end = pm / v1 - c2 * v1 * v1 - c0
    a_start = pm / v0 - c2 * v0 * v0 - c0
    sgn = np.sign(v1 - v0)
    if np.all(c2 >= 0.0) and np.all(pm >= 0.0) and np.all(v1 >= v0):
        # da/dV = −pm/V² − 2 c2 V ≤ 0: a falls along the piece, so it is positive at every
        # node where it is positive at the end
        ok = (a_end > 0.0) | (v1 == v0)
    else:
        ok = ((sgn * a > 0.0).all(axis=0) & (sgn * a_end > 0.0) & (sgn * a_start > 0.0)) | (v1 == v0)
    with np.errstate(divide="ignore", invalid="ignore"):
        inv = wts[:, None] / a
        time_up = half * inv.sum(axis=0)
        dist_up = half * (v * inv).sum(axis=0) - w * time_up
    dist = np.where(ok, dist_up, np.nan)
    time = np.where(ok, time_up, np.nan)
    zero = v1 == v0
    if np.any(zero):
        dist[zero] = 0.0
        time[zero] = 0.0
    return dist, time


def nodes_for_ratio(accel_ratio, error=1e-9):
    """Gauss–Legendre nodes that make the error factor rho^(−2n) at most ``error``.

    Parameters
    ----------
    accel_ratio : array_like
        a(V_end)/a(V_start) on a piece (0 < ratio; ≥ 1 for rising acceleration). [–]
    error : float, optional
        Target value of rho^(−2n). [–]

    Returns
    -------
    numpy.ndarray of int
        Nodes per case, rounded up to one of 6, 8, 12, 16, 24, 32, 48, 64 (64 at most). [–]

    Notes
    -----
    For a(V) close to linear on the piece, a vanishes at x = 1 + 2 r/(1 − r) half-lengths from
    the centre (r the ratio), which bounds the Bernstein ellipse of the integrand:
    rho = x + sqrt(x² − 1); the error of the n-point rule is O(rho^(−2n)) [4]. For r → 0 the
    64-node cap leaves a larger error (documented in :func:`segment_distance_general_m`).

    References
    ----------
    .. [4] Trefethen (2008), Theorem 4.5.
    """
    r = np.clip(np.asarray(accel_ratio, dtype=float), 1e-6, 0.999)
    x = 1.0 + 2.0 * r / (1.0 - r)
    rho = x + np.sqrt(x * x - 1.0)
    n = np.ceil(np.log(1.0 / error) / (2.0 * np.log(rho)))
    buckets = np.array(_NODE_BUCKETS)
    return buckets[np.minimum(np.searchsorted(buckets, n), len(buckets) - 1)]


_NODE_BUCKETS = (6, 8, 12, 16, 24, 32, 48, 64)


def segment_distance_general_m(accel_fn, va_start, va_end, headwind_mps=0.0, *, nodes=DEFAULT_NODES,
                               breakpoints=None):
    """Ground distance between two airspeeds for any acceleration a(V), by Gauss–Legendre.

    Parameters
    ----------
    accel_fn : callable
        ``accel_fn(v)``: true airspeeds v of shape (n, k) [m/s] → acceleration (n, k)
        [m/s²] (e.g. :func:`acceleration_function`).
    va_start : array_like
        True airspeed at the start, shape (n,). [m/s]
    va_end : array_like
        True airspeed at the end (below the start for deceleration). [m/s]
    headwind_mps : array_like, optional
        Headwind; ground speed = V − w. [m/s]
    nodes : int, optional
        Gauss–Legendre nodes per piece. [–]
    breakpoints : array_like, optional
        Airspeeds where a(V) has a kink, shape (n,) or (n, k), e.g. a propeller's
        ``ThrustLaw.kink_airspeed_mps``; the segment is split there and at V = 0 (where
        V|V| has a kink). Points outside the segment are ignored. [m/s]

    Returns
    -------
    numpy.ndarray
        Ground distance, ≥ 0; NaN where the acceleration is not of the travel direction's
        sign at every node and at both ends. [m]

    Notes
    -----
    s = ∫ (V − w)/a(V) dV ≈ Σ_pieces h Σ_j w_j (V_j − w)/a(V_j), with nodes x_j and weights
    w_j of the n-point Gauss–Legendre rule mapped to each piece of half-length h.
    Error bound [4]: if the integrand is analytic inside the Bernstein ellipse of parameter
    rho > 1 around the piece and bounded there by M, the error is at most
    (64/15) h M rho^(−2n)/(rho² − 1). Here the nearest singularity is the zero of a(V) beyond
    the end speed (or V = 0 for eta P/V): with x its distance from the piece centre in
    half-lengths, rho = x + √(x² − 1). For n = 16 and an acceleration at the end of the piece
    at least 10 % of its value at the start (rho ≥ 2.0), the relative error is below 1e-8
    (checked in the tests against the closed form and solve_ivp); it grows as a(V_end) → 0.

    References
    ----------
    .. [4] Trefethen (2008), Theorem 4.5.
    .. [1] Raymer, §17.8.
    """
    return _general_integrals(accel_fn, va_start, va_end, headwind_mps, nodes, breakpoints)[0]


def segment_time_general_s(accel_fn, va_start, va_end, headwind_mps=0.0, *, nodes=DEFAULT_NODES,
                           breakpoints=None):
    """Time between two airspeeds for any acceleration a(V), by Gauss–Legendre.

    Parameters
    ----------
    accel_fn : callable
        As :func:`segment_distance_general_m`.
    va_start, va_end : array_like
        True airspeeds at the ends. [m/s]
    headwind_mps : array_like, optional
        Headwind (not used by the time). [m/s]
    nodes : int, optional
        Nodes per piece. [–]
    breakpoints : array_like, optional
        Kinks of a(V). [m/s]

    Returns
    -------
    numpy.ndarray
        Time, ≥ 0; NaN where the end speed cannot be reached. [s]

    Notes
    -----
    t = ∫ dV / a(V), same rule and error bound as :func:`segment_distance_general_m`.

    References
    ----------
    .. [4] Trefethen (2008).
    """
    return _general_integrals(accel_fn, va_start, va_end, headwind_mps, nodes, breakpoints)[1]


def segment_integrals_general(accel_fn, va_start, va_end, headwind_mps=0.0, *, nodes=DEFAULT_NODES,
                              breakpoints=None):
    """Distance and time of a segment in one Gauss–Legendre pass.

    Parameters
    ----------
    accel_fn, va_start, va_end, headwind_mps, nodes, breakpoints
        As :func:`segment_distance_general_m`.

    Returns
    -------
    distance_m, time_s : numpy.ndarray
        Ground distance [m] and time [s]; NaN where infeasible.

    Notes
    -----
    See :func:`segment_distance_general_m`.

    References
    ----------
    .. [4] Trefethen (2008).
    """
    return _general_integrals(accel_fn, va_start, va_end, headwind_mps, nodes, breakpoints)


def rotation_allowance_m(v_lof_mps, headwind_mps, rotation_time_s):
    """Distance rolled during a free-roll / rotation allowance at the lift-off speed.

    Parameters
    ----------
    v_lof_mps : array_like
        True airspeed held during the allowance. [m/s]
    headwind_mps : array_like
        Headwind. [m/s]
    rotation_time_s : array_like
        Allowance N (Anderson uses 3 s for large aircraft, 1 s for small). [s]

    Returns
    -------
    numpy.ndarray or float
        N (V_LOF − w). [m]

    Notes
    -----
    s_rot = N V_ground ([2] Eq. 6.90 second term).

    References
    ----------
    .. [2] Anderson (1999), §6.7, Eq. 6.90.
    """
    return _f(rotation_time_s) * (_f(v_lof_mps) - _f(headwind_mps))


def ground_run_detail(*, mass_kg, wing_area_m2, density_kg_m3, cd, cl, mu, thrust0_n, thrust1_n_per_mps,
                      thrust2_n_per_mps2, v_lof_mps, headwind_mps=0.0, slope=0.0, rotation_time_s=0.0):
    """Ground run from rest to lift-off with time, reason code and a rotation allowance.

    Parameters
    ----------
    mass_kg, wing_area_m2, density_kg_m3, cd, cl, mu : array_like
        As :func:`ground_run_m`. [kg], [m²], [kg/m³], [–], [–], [–]
    thrust0_n, thrust1_n_per_mps, thrust2_n_per_mps2 : array_like
        Total thrust T = T0 + T1 V + T2 V² on true airspeed. [N], [N/(m/s)], [N/(m/s)²]
    v_lof_mps : array_like
        Lift-off true airspeed. [m/s]
    headwind_mps : array_like, optional
        Headwind (negative: tailwind). [m/s]
    slope : array_like, optional
        Gradient, + uphill. [–]
    rotation_time_s : array_like, optional
        Free-roll allowance N at V_LOF added to distance and time (0: none). [s]

    Returns
    -------
    GroundRun
        distance_m [m], time_s [s], reason (``REASONS`` code; NaN distance and time where
        reason ≠ 0).

    Notes
    -----
    s = ∫_w^{V_LOF} (V − w)/a(V) dV + N (V_LOF − w), a(V) quadratic (reverse-flow
    coefficients below V = 0); zero when the headwind already equals V_LOF.

    References
    ----------
    .. [1] Raymer, §17.8. .. [2] Anderson (1999), Eq. 6.90.
    """
    kw = dict(mass_kg=mass_kg, wing_area_m2=wing_area_m2, density_kg_m3=density_kg_m3, cd=cd, cl=cl, mu=mu,
              thrust0_n=thrust0_n, thrust1_n_per_mps=thrust1_n_per_mps, thrust2_n_per_mps2=thrust2_n_per_mps2,
              slope=slope)
    a0, a1, a2 = acceleration_coefficients(**kw)
    w = _f(headwind_mps)
    v_end = np.maximum(_f(v_lof_mps), w)
    a2r = None
    if np.any(w < 0.0):
        a2r = 2.0 * _f(thrust2_n_per_mps2) / _f(mass_kg) - a2  # reverse_flow=True coefficient
    s, t = _split_at_zero(a0, a1, a2, a2r, w, v_end, w)
    valid = (_f(mass_kg) > 0) & (_f(density_kg_m3) > 0) & (_f(wing_area_m2) > 0)
    reason = np.where(np.isnan(s), REASON_NO_ACCELERATION, REASON_OK)
    if not np.all(valid):
        reason = np.where(valid, reason, REASON_INVALID)
        s = np.where(valid, s, np.nan)
        t = np.where(valid, t, np.nan)
    if np.any(_f(rotation_time_s) != 0.0):
        s = s + rotation_allowance_m(v_end, w, rotation_time_s)
        t = t + _f(rotation_time_s)
    return GroundRun(s, t, reason)


def ground_run_m(*, mass_kg, wing_area_m2, density_kg_m3, cd, cl, mu, thrust0_n, thrust1_n_per_mps,
                 thrust2_n_per_mps2, v_lof_mps, headwind_mps=0.0, slope=0.0):
    """Ground distance from brake release to the lift-off true airspeed (closed form).

    Parameters
    ----------
    mass_kg : array_like
        Aircraft mass. [kg]
    wing_area_m2 : array_like
        Reference wing area. [m²]
    density_kg_m3 : array_like
        Air density. [kg/m³]
    cd : array_like
        Drag coefficient during the roll (constant). [–]
    cl : array_like
        Lift coefficient during the roll (constant). [–]
    mu : array_like
        Rolling friction coefficient, on the normal force W cos g − L. [–]
    thrust0_n : array_like
        Total thrust T0 of T(V_a) = T0 + T1 V_a + T2 V_a². [N]
    thrust1_n_per_mps : array_like
        T1. [N/(m/s)]
    thrust2_n_per_mps2 : array_like
        T2. [N/(m/s)²]
    v_lof_mps : array_like
        Lift-off true airspeed. [m/s]
    headwind_mps : array_like, optional
        Headwind component (negative: tailwind); V_a = ground speed + headwind. [m/s]
    slope : array_like, optional
        Runway gradient, rise over run, + uphill. [–]

    Returns
    -------
    numpy.ndarray or float
        Ground distance from rest to V_LOF; NaN where the acceleration reaches zero before
        lift-off (see :func:`ground_run_detail` for the reason code). A scalar for scalar
        arguments. [m]

    Notes
    -----
    m dV/dt = T − D − mu (W cos g − L) − W sin g, D, L = ½ rho S C V_a|V_a|, g = 9.80665 m/s²;
    s = ∫ (V_a − w) dV_a / a(V_a) from w to V_LOF in closed form
    (:func:`segment_distance_quadratic_m`). With T1 = T2 = 0, w = 0 and no slope this is
    s = ln[(K_T + K_A V²)/K_T]/(2 g K_A) (Raymer Eq. 17.102, Anderson Eq. 6.90).

    References
    ----------
    .. [1] Raymer, §17.8, Eqs. 17.100–17.102.
    .. [2] Anderson (1999), §6.7, Eq. 6.90.
    """
    out = ground_run_detail(mass_kg=mass_kg, wing_area_m2=wing_area_m2, density_kg_m3=density_kg_m3, cd=cd,
                            cl=cl, mu=mu, thrust0_n=thrust0_n, thrust1_n_per_mps=thrust1_n_per_mps,
                            thrust2_n_per_mps2=thrust2_n_per_mps2, v_lof_mps=v_lof_mps,
                            headwind_mps=headwind_mps, slope=slope).distance_m
    args = (mass_kg, wing_area_m2, density_kg_m3, cd, cl, mu, thrust0_n, thrust1_n_per_mps, thrust2_n_per_mps2,
            v_lof_mps, headwind_mps, slope)
    return _scalar_out(out, *args)


class GroundRunTerms(NamedTuple):
    """Mass-independent parts of the ground-run acceleration of n cases.

    Attributes
    ----------
    law : physics.thrust.ThrustLaw
        Thrust of the operating engines, fields of shape (n,).
    drag_term_kg_m : numpy.ndarray
        ½ rho S (C_D − mu C_L). [kg/m]
    resistance_mps2 : numpy.ndarray
        g (mu cos g + sin g): friction and slope per unit mass. [m/s²]
    kink_mps : numpy.ndarray
        Propeller kink airspeed V_k (inf for polynomial thrust). [m/s]
    valid : numpy.ndarray of bool
        Density and area positive.
    """

    law: object
    drag_term_kg_m: np.ndarray
    resistance_mps2: np.ndarray
    kink_mps: np.ndarray
    valid: np.ndarray


def ground_run_terms(thrust_law, *, wing_area_m2, density_kg_m3, cd, cl, mu, slope=0.0):
    """The mass-independent parts of :func:`ground_run_for_thrust_law`, computed once.

    Parameters
    ----------
    thrust_law : physics.thrust.ThrustLaw
        Total thrust of the operating engines, n cases.
    wing_area_m2, density_kg_m3, cd, cl, mu : array_like
        As :func:`ground_run_m`. [m²], [kg/m³], [–], [–], [–]
    slope : array_like, optional
        Gradient, + uphill. [–]

    Returns
    -------
    GroundRunTerms
        Arrays of shape (n,).

    Notes
    -----
    a(V) = (T(V) − D_t V|V|)/m − R with D_t = ½ rho S (C_D − mu C_L) and
    R = g (mu cos g + sin g) (:func:`acceleration_coefficients`, divided through by the mass).

    References
    ----------
    .. [1] Raymer, §17.8, Eq. 17.100.
    """
    shape = np.broadcast_shapes(*(np.shape(x) for x in (wing_area_m2, density_kg_m3, cd, cl, mu, slope,
                                                        thrust_law.t0_n)))
    n1 = np.atleast_1d(np.empty(shape)).shape
    area, rho, cd, cl, mu, slope = (np.broadcast_to(np.atleast_1d(_f(x)), n1) for x in (
        wing_area_m2, density_kg_m3, cd, cl, mu, slope))
    law = type(thrust_law)(*(np.broadcast_to(np.atleast_1d(getattr(thrust_law, f)), n1) for f in (
        "t0_n", "t1_n_per_mps", "t2_n_per_mps2", "propeller_power_w", "is_propeller")))
    sin_g, cos_g = slope_sin_cos(slope)
    return GroundRunTerms(law, 0.5 * rho * area * (cd - mu * cl), c.G0 * (mu * cos_g + sin_g),
                          np.asarray(law.kink_airspeed_mps), (rho > 0) & (area > 0))


def ground_run_from_terms(terms, *, mass_kg, v_lof_mps, headwind_mps=0.0, nodes=None):
    """Ground run from rest to lift-off at trial masses, from :func:`ground_run_terms`.

    Parameters
    ----------
    terms : GroundRunTerms
        Mass-independent parts, n cases.
    mass_kg : array_like
        Mass, shape (n,) or broadcastable. [kg]
    v_lof_mps : array_like
        Lift-off true airspeed. [m/s]
    headwind_mps : array_like, optional
        Headwind (negative: tailwind). [m/s]
    nodes : int, optional
        As :func:`ground_run_for_thrust_law`. [–]

    Returns
    -------
    GroundRun
        distance_m [m], time_s [s], reason (NaN where reason ≠ 0), shape (n,).

    Notes
    -----
    a0 = T0/m − R, a1 = T1/m, a2 = (T2 ∓ D_t)/m (− for V ≥ 0, + for reverse flow), then as
    :func:`ground_run_for_thrust_law`.

    References
    ----------
    .. [1] Raymer, §17.8. .. [4] Trefethen (2008).
    """
    law = terms.law
    n1 = terms.valid.shape
    # a view where the shape is already n1 (a broadcast view is read-only: the kernel would copy it)
    m, vlof, w = (x if x.shape == n1 else np.broadcast_to(x, n1)
                  for x in (np.atleast_1d(_f(x)) for x in (mass_kg, v_lof_mps, headwind_mps)))
    t0, t1, t2, power, drag, resistance, kink, m, vlof, w = _kernel_args(
        [_f(x) for x in (law.t0_n, law.t1_n_per_mps, law.t2_n_per_mps2, law.propeller_power_w,
                         terms.drag_term_kg_m, terms.resistance_mps2, terms.kink_mps, m, vlof, w)], n1)
    is_prop, valid = (np.ascontiguousarray(np.broadcast_to(x, n1), dtype=np.bool_).reshape(-1)
                      for x in (law.is_propeller, terms.valid))
    dist, time = np.empty(m.shape), np.empty(m.shape)
    reason, rest = np.empty(m.shape, dtype=np.int64), np.empty(m.shape, dtype=np.intp)
    n_rest = _ground_run_pass(t0, t1, t2, power, is_prop, drag, resistance, kink, valid, m, vlof, w, nodes is None,
                              dist, time, reason, rest)
    if n_rest:
        # propeller cases above the kink without the closed form (or all of them when nodes
        # are given): Gauss–Legendre
        idx = rest[:n_rest]
        inv_mi = 1.0 / m.take(idx)
        pm = power.take(idx) * inv_mi
        c2 = drag.take(idx) * inv_mi
        c0 = resistance.take(idx)
        v0 = np.maximum(kink.take(idx), w.take(idx))
        v1 = vlof.take(idx)
        wi = w.take(idx)
        if nodes is None:  # per case, from the acceleration ratio over the piece
            a_start = pm / v0 - c2 * v0 * v0 - c0
            a_end = pm / v1 - c2 * v1 * v1 - c0
            per_case = nodes_for_ratio(a_end / a_start)
        else:
            per_case = np.full(idx.size, int(nodes))
        s2, t2p = np.empty(idx.size), np.empty(idx.size)
        # a few node counts, not a loop over cases (bincount: np.unique sorts or hashes,
        # many times slower on this small set of values)
        for k in np.flatnonzero(np.bincount(per_case)):
            j = np.flatnonzero(per_case == k)
            s2[j], t2p[j] = _propeller_power_piece(pm.take(j), c2.take(j), c0.take(j), v0.take(j), v1.take(j),
                                                   wi.take(j), int(k))
        dist[idx] += s2
        time[idx] += t2p
        reason[idx] = np.where(np.isnan(s2), REASON_NO_ACCELERATION, reason.take(idx))
    return GroundRun(dist.reshape(n1), time.reshape(n1), reason.reshape(n1))


@kernel
def _nan_min(x, y):
    """np.minimum of two floats (NaN if either is NaN)."""
    if x != x or y != y:
        return x + y
    return x if x < y else y


@kernel
def _nan_max(x, y):
    """np.maximum of two floats (NaN if either is NaN)."""
    if x != x or y != y:
        return x + y
    return x if x > y else y


@kernel
def _ground_run_pass(t0, t1, t2, power, is_prop, drag, resistance, kink, valid, m, vlof, w, closed_form, dist, time,
                     reason, rest):
    """:func:`ground_run_from_terms` in one pass per case, in place: a(V) from the terms, its
    form and constants (:func:`_form_one`), the closed form from rest to the propeller kink
    (or lift-off), split at V = 0 for a tailwind (reverse-flow drag below it), the reason,
    and above the kink the propeller piece in closed form where its cubic has one real root
    (``closed_form``). The propeller cases left for Gauss–Legendre are written to ``rest``;
    returns their number."""
    n_rest = 0
    for j in range(m.shape[0]):
        inv_m = 1.0 / m[j]
        a0 = t0[j] * inv_m - resistance[j]
        a1 = t1[j] * inv_m
        a2 = (t2[j] - drag[j]) * inv_m
        wj = w[j]
        vk = kink[j]
        v_first = _nan_max(_nan_min(vlof[j], vk), wj)  # polynomial cases: vk = inf → whole run
        form, k0, k1, k2 = _form_one(a0, a1, a2)
        if wj < 0.0:  # from rest at V = w < 0: reverse flow up to V = 0
            d, t = _segment_one(a0, a1, a2, wj, form, k0, k1, k2, 0.0, _nan_max(v_first, 0.0))
            a2r = (t2[j] + drag[j]) * inv_m
            rform, r0, r1, r2 = _form_one(a0, a1, a2r)
            dr, tr = _segment_one(a0, a1, a2r, wj, rform, r0, r1, r2, wj, _nan_min(v_first, 0.0))
            d += dr
            t += tr
        else:
            d, t = _segment_one(a0, a1, a2, wj, form, k0, k1, k2, wj, v_first)
        code = REASON_NO_ACCELERATION if d != d else REASON_OK
        if not (valid[j] and m[j] > 0.0):
            code = REASON_INVALID
            d = np.nan
            t = np.nan
        if is_prop[j] and vk < vlof[j] and wj < vlof[j] and code == REASON_OK:
            pm = power[j] * inv_m
            c2 = drag[j] * inv_m
            c0 = resistance[j]
            if closed_form and c0 > 0.0 and c2 > 0.0 and pm > 0.0:
                r, p, d_inv, e = _cubic_one(pm, c2, c0)
                dp, tp = _propeller_one(pm, c2, c0, _nan_max(vk, wj), vlof[j], wj, r, p, d_inv, e)
                d += dp
                t += tp
                if dp != dp:
                    code = REASON_NO_ACCELERATION
            else:
                rest[n_rest] = j
                n_rest += 1
        dist[j] = d
        time[j] = t
        reason[j] = code
    return n_rest


def ground_run_for_thrust_law(thrust_law, *, mass_kg, wing_area_m2, density_kg_m3, cd, cl, mu, v_lof_mps,
                              headwind_mps=0.0, slope=0.0, nodes=None):
    """Ground run from rest to lift-off for any mix of thrust models.

    Parameters
    ----------
    thrust_law : physics.thrust.ThrustLaw
        Total thrust of the operating engines, n cases.
    mass_kg, wing_area_m2, density_kg_m3, cd, cl, mu : array_like
        As :func:`ground_run_m`, shape (n,) or broadcastable. [kg], [m²], [kg/m³], [–], [–], [–]
    v_lof_mps : array_like
        Lift-off true airspeed. [m/s]
    headwind_mps : array_like, optional
        Headwind. [m/s]
    slope : array_like, optional
        Gradient, + uphill. [–]
    nodes : int, optional
        Gauss–Legendre nodes for the propeller power-limited piece. Default: that piece in
        closed form (:func:`_propeller_power_closed`) where friction + slope and drag are
        positive, else Gauss–Legendre with nodes chosen per case by :func:`nodes_for_ratio`
        from a(V_LOF)/a(V_k) so that rho^(−2n) ≤ 1e-9; given: Gauss–Legendre with that many
        nodes for every propeller case. [–]

    Returns
    -------
    GroundRun
        distance_m [m], time_s [s], reason (NaN where reason ≠ 0).

    Notes
    -----
    Polynomial thrust (quadratic, turbofan): closed form. Propeller: closed form from rest
    to min(V_k, V_LOF) with the constant static cap, then from V_k to V_LOF with
    T = eta P/V, where 1/a = V/(cubic in V), by partial fractions over the cubic's real root
    and complex pair (Gauss–Legendre where friction + slope or drag is not positive and the
    cubic may have three real roots); the integral is split at the kink V_k, where dT/dV
    jumps. Computed as
    :func:`ground_run_from_terms` of :func:`ground_run_terms` (a search over the mass
    computes the terms once).

    References
    ----------
    .. [1] Raymer, §17.8. .. [3] Gradshteyn & Ryzhik, 2.103, 2.172. .. [4] Trefethen (2008).
    """
    shape = np.broadcast_shapes(*(np.shape(x) for x in (mass_kg, wing_area_m2, density_kg_m3, cd, cl, mu,
                                                        v_lof_mps, headwind_mps, slope, thrust_law.t0_n)))
    b = [np.broadcast_to(_f(x), shape) for x in (wing_area_m2, density_kg_m3, cd, cl, mu, slope)]
    tl = type(thrust_law)(*(np.broadcast_to(np.asarray(getattr(thrust_law, f)), shape) for f in (
        "t0_n", "t1_n_per_mps", "t2_n_per_mps2", "propeller_power_w", "is_propeller")))
    terms = ground_run_terms(tl, wing_area_m2=b[0], density_kg_m3=b[1], cd=b[2], cl=b[3], mu=b[4], slope=b[5])
    out = ground_run_from_terms(terms, mass_kg=np.broadcast_to(_f(mass_kg), shape),
                                v_lof_mps=np.broadcast_to(_f(v_lof_mps), shape),
                                headwind_mps=np.broadcast_to(_f(headwind_mps), shape), nodes=nodes)
    return GroundRun(*(np.asarray(x).reshape(shape) for x in out))
