"""Thrust models: total installed thrust against true airspeed, pressure and temperature.

Three models, chosen per aircraft type by ``thrust_model`` (codes in ``MODEL_CODES``):

``quadratic`` (0)
    T(V) = n [T0 delta f_flat + T1 V + T2 V²] per engine, with T0 the sea-level ISA static
    thrust, delta = p/p0 and f_flat the flat-rating factor below. Only the static term is
    scaled with the atmosphere (the user's T1, T2 describe the shape of the curve and are
    kept as given): this is the classic "thrust quadratic in speed" of takeoff analyses
    (Anderson 1999 §6.7; Raymer §17.8).
``turbofan`` (1)
    Bartel & Young (2008) high-bypass two-shaft turbofan: T/T0 = A(delta) − B(delta, BPR) M
    + C(delta, BPR) M², times f_flat. At fixed temperature M = V/a, so the thrust is exactly
    quadratic in V and the closed-form ground run applies.
``propeller`` (2)
    T(V) = min(T_static, eta_p P / V): the static thrust caps the thrust at low speed and the
    available power sets it above the speed V_k = eta_p P / T_static (a kink). Shaft power
    lapses as P = P0 sigma^0.7 f_flat (sigma = rho/rho0, common practice) and the static
    thrust with the actuator-disc law T_static ∝ (rho P²)^(1/3) (momentum theory), i.e.
    T_static = T_static,0 (sigma (P/P0)²)^(1/3).

Flat rating (all models)
    ``flat_rate_oat_k`` is read as a sea-level-equivalent corner-point temperature: an
    absolute outside air temperature, the same at every airfield elevation. While OAT ≤ the
    flat-rate temperature the thrust (power) ratio depends on pressure only (it is "held");
    above it, it falls linearly with the temperature excess, following Mattingly's
    theta-break at M = 0 with throttle ratio TR = T_flat/288.15:

        f_flat = 1 − 3 (theta − TR)/1.5 = 1 − 2 (OAT − T_flat)/288.15   (OAT > T_flat)

    i.e. about −0.69 % per kelvin (Mattingly gives α = δ0 [1 − 0.49 √M − 3 (θ0 − TR)/(1.5 + M)];
    the Mach-dependent terms — total temperature theta0 = theta (1 + 0.2 M²) and the 1.5 + M
    denominator — are left out of the temperature factor so that the thrust stays exactly
    quadratic in V at a fixed day; the speed lapse itself comes from each model). The
    factor is exact at M = 0 and less severe at speed: flat-rated to ISA+15, at 40 °C,
    Mattingly's hot-to-held thrust ratio is 0.930 static and 0.902 at M 0.2 [computed],
    against 0.930 here. f_flat is clipped at 0.

Engine state
    ``engines_operating`` engines give thrust (``engine_count − 1`` for one engine
    inoperative); ``throttle`` multiplies every operating engine's thrust (1 = takeoff
    rating; pass the type's ``idle_thrust_fraction`` for idle).

References
----------
.. [1] J. Bartel, T. M. Young, "Simplified thrust and fuel consumption models for modern
   two-shaft turbofan engines", *Journal of Aircraft* 45(4), 2008.
.. [2] J. D. Mattingly, *Aircraft Engine Design*, 2nd ed., AIAA, 2002 (installed thrust
   lapse of the high-bypass turbofan with throttle ratio).
.. [3] J. D. Anderson, *Aircraft Performance and Design*, McGraw-Hill, 1999, §3.3–3.4
   (propeller thrust eta_p P/V), §6.7 (thrust against speed on the ground roll).
.. [4] B. W. McCormick, *Aerodynamics, Aeronautics, and Flight Mechanics*, Wiley, 1979, §6
   (momentum theory of the propeller: static thrust T³ = 2 rho A P²) (from memory).
.. [5] D. P. Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, §17.8.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from fieldlimits.physics import atmosphere
from fieldlimits.physics import constants as c
from fieldlimits.physics.compiled import kernel

MODEL_CODES = {"quadratic": 0, "turbofan": 1, "propeller": 2}
MODEL_NAMES = tuple(MODEL_CODES)
QUADRATIC = MODEL_CODES["quadratic"]
TURBOFAN = MODEL_CODES["turbofan"]
PROPELLER = MODEL_CODES["propeller"]

#: Exponent of the shaft-power lapse with density ratio (common practice). [–]
PROPELLER_POWER_LAPSE_EXPONENT = 0.7
#: Slope of the flat-rating factor above the corner point, Mattingly theta-break at M = 0:
#: d f / d(theta) = −3/1.5. [–]
FLAT_RATING_SLOPE = 2.0


def flat_rating_factor(temperature_k, flat_rate_oat_k):
    """Thrust (or power) factor for temperatures above the flat-rate temperature.

    Parameters
    ----------
    temperature_k : array_like
        Outside air temperature. [K]
    flat_rate_oat_k : array_like
        Flat-rate (corner-point) temperature of the engine. [K]

    Returns
    -------
    numpy.ndarray or float
        f_flat = 1 for OAT ≤ T_flat, else max(0, 1 − 2 (OAT − T_flat)/288.15). [–]

    Notes
    -----
    Mattingly's high-bypass lapse, alpha = delta0 [1 − 0.49 √M − 3 (theta0 − TR)/(1.5 + M)]
    for theta0 > TR, taken at M = 0 with TR = T_flat/T0: f = 1 − 2 (theta − TR).
    Check (references file §6): T_flat = ISA+15 (303.15 K), OAT 40 °C → 0.9305.

    References
    ----------
    .. [2] Mattingly, *Aircraft Engine Design*, 2nd ed. (2002), installed thrust lapse.
    """
    excess = np.maximum(np.asarray(temperature_k, dtype=float) - np.asarray(flat_rate_oat_k, dtype=float), 0.0)
    return np.maximum(1.0 - FLAT_RATING_SLOPE * excess / c.T0_K, 0.0)


def bartel_young_coefficients(pressure_ratio, bypass_ratio):
    """Coefficients of the Bartel & Young thrust ratio T/T0 = A − B M + C M².

    Parameters
    ----------
    pressure_ratio : array_like
        delta = p/p0. [–]
    bypass_ratio : array_like
        Engine bypass ratio BPR. [–]

    Returns
    -------
    a, b, cc : numpy.ndarray or float
        A, B, C of T/T0 = A − B M + C M² at takeoff thrust. [–]

    Notes
    -----
    A = −0.4327 δ² + 1.3855 δ + 0.0472; Z = 0.9106 δ³ − 1.7736 δ² + 1.8697 δ;
    X = 0.1377 δ³ − 0.4374 δ² + 1.3003 δ; G0 = 0.0606 BPR + 0.6337;
    B = 0.377 (1 + BPR)/sqrt((1 + 0.82 BPR) G0) · Z; C = (0.23 + 0.19 √BPR) · X.

    References
    ----------
    .. [1] Bartel & Young (2008), takeoff thrust lapse model.
    """
    d = np.asarray(pressure_ratio, dtype=float)
    bpr = np.asarray(bypass_ratio, dtype=float)
    a = (-0.4327 * d + 1.3855) * d + 0.0472
    z = ((0.9106 * d - 1.7736) * d + 1.8697) * d
    x = ((0.1377 * d - 0.4374) * d + 1.3003) * d
    g0 = 0.0606 * bpr + 0.6337
    b = 0.377 * (1.0 + bpr) / np.sqrt((1.0 + 0.82 * bpr) * g0) * z
    cc = (0.23 + 0.19 * np.sqrt(bpr)) * x
    return a, b, cc


def bartel_young_thrust_ratio(mach, pressure_ratio, bypass_ratio):
    """Takeoff thrust as a fraction of sea-level static thrust, Bartel & Young (2008).

    Parameters
    ----------
    mach : array_like
        Flight Mach number. [–]
    pressure_ratio : array_like
        delta = p/p0. [–]
    bypass_ratio : array_like
        Bypass ratio. [–]

    Returns
    -------
    numpy.ndarray or float
        T/T0. [–]

    Notes
    -----
    T/T0 = A − B M + C M² (see :func:`bartel_young_coefficients`).

    References
    ----------
    .. [1] Bartel & Young (2008).
    """
    a, b, cc = bartel_young_coefficients(pressure_ratio, bypass_ratio)
    m = np.asarray(mach, dtype=float)
    return a - b * m + cc * m * m


def _trail(x, like):
    """Give x trailing unit axes so that it broadcasts against an array with more axes."""
    x = np.asarray(x)
    extra = np.ndim(like) - x.ndim
    return x.reshape(x.shape + (1,) * extra) if extra > 0 else x


@kernel
def _thrust_one(t0, t1, t2, power, is_prop, v):
    """:meth:`ThrustLaw.thrust_n` of one case at one true airspeed, for compiled kernels:
    t0 + (t1 + t2 V) V, and min(t0, P/|V|) for a propeller (NaN where either is NaN). [N]"""
    if is_prop:
        cap = power / abs(v)
        if t0 != t0 or cap != cap:
            return t0 + cap
        return t0 if t0 < cap else cap
    return t0 + (t1 + t2 * v) * v


@dataclass(frozen=True)
class ThrustLaw:
    """Total thrust against true airspeed for one day (atmosphere) and engine state.

    For ``quadratic`` and ``turbofan`` cases T(V) = t0 + t1 V + t2 V² exactly. For
    ``propeller`` cases T(V) = min(t0, propeller_power_w / |V|) with t0 the static cap (t1 = t2
    = 0). Arrays share one shape (the cases).

    Attributes
    ----------
    t0_n : numpy.ndarray
        Static term (propeller: static thrust cap). [N]
    t1_n_per_mps : numpy.ndarray
        Linear term (0 for propeller). [N/(m/s)]
    t2_n_per_mps2 : numpy.ndarray
        Quadratic term (0 for propeller). [N/(m/s)²]
    propeller_power_w : numpy.ndarray
        eta_p × available shaft power, all operating engines (0 unless propeller). [W]
    is_propeller : numpy.ndarray of bool
        Propeller cases.
    """

    t0_n: np.ndarray
    t1_n_per_mps: np.ndarray
    t2_n_per_mps2: np.ndarray
    propeller_power_w: np.ndarray
    is_propeller: np.ndarray

    def thrust_n(self, airspeed_mps):
        """Total thrust at true airspeeds.

        Parameters
        ----------
        airspeed_mps : array_like
            True airspeed, shape (n,) or (n, k) for n cases. [m/s]

        Returns
        -------
        numpy.ndarray
            Total thrust. [N]

        Notes
        -----
        T = t0 + t1 V + t2 V² (polynomial models); T = min(t0, P_eta/|V|) (propeller).

        References
        ----------
        .. [1] Bartel & Young (2008); [3] Anderson (1999) §3.3.
        """
        v = np.asarray(airspeed_mps, dtype=float)
        t0, t1, t2 = (_trail(x, v) for x in (self.t0_n, self.t1_n_per_mps, self.t2_n_per_mps2))
        poly = t0 + (t1 + t2 * v) * v
        if not np.any(self.is_propeller):
            return poly
        is_prop = np.asarray(self.is_propeller)
        if v.ndim == 1 and is_prop.shape == v.shape:  # the propeller cases only
            i = np.flatnonzero(is_prop)
            with np.errstate(divide="ignore"):
                poly[i] = np.minimum(np.asarray(t0).take(i), np.asarray(self.propeller_power_w).take(i)
                                     / np.abs(v.take(i)))
            return poly
        with np.errstate(divide="ignore"):
            prop = np.minimum(t0, _trail(self.propeller_power_w, v) / np.abs(v))
        return np.where(_trail(is_prop, v), prop, poly)

    @property
    def kink_airspeed_mps(self):
        """Airspeed where a propeller's power limit takes over from the static cap. [m/s]

        inf for the polynomial models. V_k = P_eta / T_static.
        """
        with np.errstate(divide="ignore", invalid="ignore"):
            vk = self.propeller_power_w / self.t0_n
        return np.where(self.is_propeller, vk, np.inf)

    def coefficients(self):
        """(T0, T1, T2) of T = T0 + T1 V + T2 V²; NaN for propeller cases. [N, N/(m/s), N/(m/s)²]"""
        nan = np.where(self.is_propeller, np.nan, 1.0)
        return self.t0_n * nan, self.t1_n_per_mps * nan, self.t2_n_per_mps2 * nan

    def take(self, index):
        """The law for a subset of cases (``index``: integer or boolean array)."""
        return ThrustLaw(self.t0_n[index], self.t1_n_per_mps[index], self.t2_n_per_mps2[index],
                         self.propeller_power_w[index], self.is_propeller[index])

    def scaled(self, factor):
        """The law with every engine's thrust multiplied by ``factor`` (throttle). [–]"""
        f = np.asarray(factor, dtype=float)
        return ThrustLaw(self.t0_n * f, self.t1_n_per_mps * f, self.t2_n_per_mps2 * f,
                         self.propeller_power_w * f, self.is_propeller)


def thrust_law(*, thrust_model, static_thrust_per_engine_n, pressure_pa, temperature_k,
               engines_operating, flat_rate_oat_k, thrust_linear_per_engine_n_per_mps=0.0,
               thrust_quadratic_per_engine_n_per_mps2=0.0, bypass_ratio=0.0,
               shaft_power_per_engine_w=0.0, propeller_efficiency=0.0, throttle=1.0):
    """Total-thrust law for any mix of thrust models (vectorised over cases).

    Parameters
    ----------
    thrust_model : array_like of int
        Model code per case, ``MODEL_CODES``. [–]
    static_thrust_per_engine_n : array_like
        Sea-level ISA static thrust per engine (propeller: static thrust cap). [N]
    pressure_pa : array_like
        Station pressure. [Pa]
    temperature_k : array_like
        Outside air temperature. [K]
    engines_operating : array_like
        Number of engines giving thrust (``engine_count``, or ``engine_count − 1``). [–]
    flat_rate_oat_k : array_like
        Flat-rate (corner-point) temperature. [K]
    thrust_linear_per_engine_n_per_mps : array_like, optional
        Quadratic model T1 per engine. [N/(m/s)]
    thrust_quadratic_per_engine_n_per_mps2 : array_like, optional
        Quadratic model T2 per engine. [N/(m/s)²]
    bypass_ratio : array_like, optional
        Turbofan bypass ratio. [–]
    shaft_power_per_engine_w : array_like, optional
        Propeller: sea-level ISA shaft power per engine. [W]
    propeller_efficiency : array_like, optional
        Propeller efficiency eta_p at takeoff speeds. [–]
    throttle : array_like, optional
        Fraction of the takeoff rating of each operating engine (idle: the type's
        ``idle_thrust_fraction``). [–]

    Returns
    -------
    ThrustLaw
        Total thrust against true airspeed.

    Notes
    -----
    quadratic: T = N τ [T0 δ f + T1 V + T2 V²];
    turbofan:  T = N τ T0 f [A − B V/a + C V²/a²] (Bartel & Young; a speed of sound);
    propeller: T = N τ min(T_s (σ r²)^(1/3), eta_p P0 r / |V|), r = σ^0.7 f;
    with N engines operating, τ throttle, δ = p/p0, σ = rho/rho0, f the flat-rating factor.

    References
    ----------
    .. [1] Bartel & Young (2008). .. [2] Mattingly (2002). .. [3] Anderson (1999) §3.3, §6.7.
    .. [4] McCormick (1979), momentum theory (from memory).
    """
    arrays = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (
        thrust_model, static_thrust_per_engine_n, pressure_pa, temperature_k, engines_operating,
        flat_rate_oat_k, thrust_linear_per_engine_n_per_mps, thrust_quadratic_per_engine_n_per_mps2,
        bypass_ratio, shaft_power_per_engine_w, propeller_efficiency, throttle)))
    model, t_static, p, temp, n_op, t_flat, t1, t2, bpr, power, eta, tau = arrays
    scale = n_op * tau
    delta = p / c.P0_PA
    f_flat = flat_rating_factor(temp, t_flat)
    is_turbofan = model == TURBOFAN
    is_prop = model == PROPELLER
    # each model's terms on its own cases only (gathered and scattered: a mixed fleet makes
    # the model masks random, where np.where is slow), on the cases flattened
    shape = model.shape
    if model.ndim != 1:
        t_static, p, temp, t1, t2, bpr, power, eta, scale, delta, f_flat, is_turbofan, is_prop = (
            np.ravel(x) for x in (t_static, p, temp, t1, t2, bpr, power, eta, scale, delta, f_flat, is_turbofan,
                                  is_prop))
    t0 = t_static * delta * f_flat  # quadratic
    t1_out, t2_out = t1.copy(), t2.copy()
    p_eta = np.zeros_like(t0)
    i = np.flatnonzero(is_turbofan)
    if i.size:
        # turbofan: Bartel & Young in Mach at this temperature, M = V / a
        a_bY, b_bY, c_bY = bartel_young_coefficients(delta.take(i), bpr.take(i))
        sound = atmosphere.speed_of_sound_mps(temp.take(i))
        tf0 = t_static.take(i) * f_flat.take(i)
        t0[i], t1_out[i], t2_out[i] = tf0 * a_bY, -tf0 * b_bY / sound, tf0 * c_bY / sound**2
    i = np.flatnonzero(is_prop)
    if i.size:
        # propeller: power lapse and actuator-disc static cap
        sigma = (p.take(i) / (c.R_AIR * temp.take(i))) / c.RHO0_KG_M3
        power_ratio = sigma**PROPELLER_POWER_LAPSE_EXPONENT * f_flat.take(i)
        t0[i] = t_static.take(i) * np.cbrt(sigma * power_ratio**2)
        t1_out[i] = t2_out[i] = 0.0
        p_eta[i] = eta.take(i) * power.take(i) * power_ratio
    t0 *= scale
    t1_out *= scale
    t2_out *= scale
    p_eta *= scale
    return ThrustLaw(*(x.reshape(shape) for x in (t0, t1_out, t2_out, p_eta, is_prop)))


def thrust_law_for_aircraft(aircraft, pressure_pa, temperature_k, *, engines_operating=None, throttle=1.0):
    """Total-thrust law for an ``Aircraft``-like object (fields as ``physics.weightlimit.Aircraft``).

    Parameters
    ----------
    aircraft : object
        Has the thrust fields of :class:`physics.weightlimit.Aircraft`.
    pressure_pa : array_like
        Station pressure. [Pa]
    temperature_k : array_like
        Outside air temperature. [K]
    engines_operating : array_like, optional
        Engines giving thrust; default ``aircraft.engine_count``. [–]
    throttle : array_like, optional
        Fraction of takeoff rating. [–]

    Returns
    -------
    ThrustLaw
        Total thrust against true airspeed.

    Notes
    -----
    Wires the fields into :func:`thrust_law`.

    References
    ----------
    See :func:`thrust_law`.
    """
    a = aircraft
    return thrust_law(
        thrust_model=a.thrust_model, static_thrust_per_engine_n=a.static_thrust_per_engine_n,
        pressure_pa=pressure_pa, temperature_k=temperature_k,
        engines_operating=a.engine_count if engines_operating is None else engines_operating,
        flat_rate_oat_k=a.flat_rate_oat_k,
        thrust_linear_per_engine_n_per_mps=a.thrust_linear_per_engine_n_per_mps,
        thrust_quadratic_per_engine_n_per_mps2=a.thrust_quadratic_per_engine_n_per_mps2,
        bypass_ratio=a.bypass_ratio, shaft_power_per_engine_w=a.shaft_power_per_engine_w,
        propeller_efficiency=a.propeller_efficiency, throttle=throttle)


def total_thrust_n(airspeed_mps, **model):
    """Total thrust at true airspeeds for any mix of thrust models.

    Parameters
    ----------
    airspeed_mps : array_like
        True airspeed, shape (n,) or (n, k). [m/s]
    **model
        Keyword arguments of :func:`thrust_law` (model, engine and day per case).

    Returns
    -------
    numpy.ndarray
        Total thrust of the operating engines. [N]

    Notes
    -----
    T = thrust_law(**model).thrust_n(V).

    References
    ----------
    See :func:`thrust_law`.
    """
    return thrust_law(**model).thrust_n(airspeed_mps)


def thrust_coefficients(**model):
    """Exact (T0, T1, T2) of T = T0 + T1 V + T2 V² (NaN for propeller cases).

    Parameters
    ----------
    **model
        Keyword arguments of :func:`thrust_law`.

    Returns
    -------
    t0_n, t1_n_per_mps, t2_n_per_mps2 : numpy.ndarray
        Total-thrust polynomial in true airspeed. [N], [N/(m/s)], [N/(m/s)²]

    Notes
    -----
    Exact for ``quadratic`` and for ``turbofan`` (Bartel & Young is quadratic in M, and
    M = V/a at a fixed temperature); a propeller's min(T_s, eta P/V) is not a polynomial.

    References
    ----------
    .. [1] Bartel & Young (2008).
    """
    return thrust_law(**model).coefficients()
