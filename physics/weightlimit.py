"""Takeoff-weight limit: the largest mass between OEW and MTOW that meets every requirement.

How it works
------------
A *requirement* is a function ``margin(cases, mass_kg, memo) -> array``: a dimensionless
margin per case at the trial masses, ≥ 0 where the requirement is met (the distance
requirements use :func:`distance_margin`, available/required − 1, e.g. TODA/(1.15 TOD) − 1,
and −1 where the aircraft cannot do it at all; NaN from any requirement counts as
impossible). Each carries the name of its
limiting factor (``physics.limits``) and optionally a ``report`` function giving result fields
(``WeightLimit`` names) at the final mass. ``REQUIREMENTS`` is the list used by default
(``rules="transport"``: the all-engines pair plus ``ENGINE_FAILURE_REQUIREMENTS`` — one
engine inoperative takeoff distance and run and the accelerate-stop distance at the best V1
(:mod:`physics.enginefailure`) and the takeoff climb gradient (:mod:`physics.climb`));
``rules="all_engines"`` checks the all-engines pair only. Add a requirement by appending a
:class:`Requirement` — the solver does not change.

``cases`` (:class:`Cases`) holds the broadcast inputs and everything that does not depend on
the mass (density, thrust law, drag coefficients); ``cases.cached(key, fn)`` stores more such
items once per solve. ``memo`` is a dict that lives for one trial mass, so requirements that
share a computation (the all-engines takeoff feeds both the distance and the run) do it once:
see :func:`all_engines` (memo key ``"all_engines"``). Reports are merged in list order, so a
later requirement's report may override a field set by an earlier one (e.g. a
one-engine-inoperative takeoff distance replacing the all-engines figure with the greater of
the two). ``ALL_ENGINES_REQUIREMENTS`` keeps the all-engines pair on its own.

The solver (:func:`solve_takeoff_weight`) is a vectorised bracket search on the mass between
OEW and MTOW, to ``tol_kg`` (ITP: interpolation, truncation and projection, never more than a
few evaluations beyond bisection, :func:`physics.masssearch.bracket_search`): feasible at MTOW → ``structural``; infeasible at OEW → ``no_takeoff``
(NaN mass); otherwise the returned mass is the feasible end of a bracket narrower than
``tol_kg`` whose other end fails, and the limiting factor is the requirement most violated at
that other end. It assumes every margin falls as the mass rises (true of field lengths and
climb gradients). Quadratic and turbofan cases use the closed-form ground run; propeller cases
the Gauss–Legendre integration; both in one call. Wet cases given the dry friction of the
same runway are also solved dry and keep the lower limit (wet never better than dry).

References
----------
.. [1] 14 CFR Part 25, §25.113 (takeoff distance and run), §25.109, §25.121 (later
   requirements); EASA CS-25 identical in these provisions.
.. [2] D. P. Raymer, *Aircraft Design: A Conceptual Approach*, AIAA, §17.8.
.. [3] W. H. Press et al., *Numerical Recipes*, 3rd ed., §9.1 (bisection).
.. [4] I. F. D. Oliveira, R. H. C. Takahashi, *ACM Trans. Math. Software* 47(1), 2020 (ITP).
"""

from __future__ import annotations

import dataclasses
import math
from dataclasses import dataclass, field, fields
from typing import Callable, Optional

import numpy as np

from fieldlimits.physics import aerodynamics as aero
from fieldlimits.physics import atmosphere
from fieldlimits.physics import caseinput
from fieldlimits.physics import climb
from fieldlimits.physics import constants as const
from fieldlimits.physics import enginefailure
from fieldlimits.physics import fieldlength
from fieldlimits.physics import flightpath
from fieldlimits.physics import groundrun
from fieldlimits.physics import limits
from fieldlimits.physics import masssearch
from fieldlimits.physics import takeoffevents
from fieldlimits.physics import thrust
from fieldlimits.physics.select import choose

# ---------------------------------------------------------------------------------------------
# The case contract (DEVELOPERS.md): frozen dataclasses of numpy arrays, broadcastable to n.


@dataclass(frozen=True)
class Aircraft:
    """Aircraft-type parameters per case, SI (see DEVELOPERS.md for each field's unit)."""

    mtow_kg: np.ndarray
    oew_kg: np.ndarray
    max_payload_kg: np.ndarray
    max_fuel_kg: np.ndarray
    max_landing_mass_kg: np.ndarray
    wing_area_m2: np.ndarray
    wing_span_m: np.ndarray
    wing_height_m: np.ndarray
    cd0_clean: np.ndarray
    cd0_gear: np.ndarray
    cd0_takeoff_flaps: np.ndarray
    oswald_efficiency: np.ndarray
    cl_ground_roll: np.ndarray
    cl_max_takeoff: np.ndarray
    vr_over_vs: np.ndarray
    vlof_over_vs: np.ndarray
    v2_over_vs: np.ndarray
    engine_count: np.ndarray
    thrust_model: np.ndarray
    static_thrust_per_engine_n: np.ndarray
    thrust_linear_per_engine_n_per_mps: np.ndarray
    thrust_quadratic_per_engine_n_per_mps2: np.ndarray
    bypass_ratio: np.ndarray
    flat_rate_oat_k: np.ndarray
    shaft_power_per_engine_w: np.ndarray
    propeller_efficiency: np.ndarray
    engine_out_drag_cd: np.ndarray
    vmcg_mps: np.ndarray
    braking_cl: np.ndarray
    braking_cd_increment: np.ndarray
    idle_thrust_fraction: np.ndarray
    tailwind_limit_mps: np.ndarray
    crosswind_limit_mps: np.ndarray
    cruise_tas_mps: np.ndarray
    cruise_lift_to_drag: np.ndarray
    cruise_tsfc_kg_per_n_s: np.ndarray
    cruise_psfc_kg_per_w_s: np.ndarray
    taxi_fuel_kg: np.ndarray
    # the takeoff event sequence (physics.takeoffevents); these defaults give the idealised
    # sequence (failure recognised at V1, every stop action at V1, VLOF from its ratio)
    engine_failure_recognition_s: np.ndarray = 0.0
    stop_action_interval_s: np.ndarray = 0.0
    rotation_pitch_deg: np.ndarray = 0.0
    rotation_rate_deg_per_s: np.ndarray = 3.0
    lineup_allowance_m: np.ndarray = 0.0
    # the takeoff flight path over obstacles (physics.flightpath; used only with obstacles)
    gear_retraction_s: np.ndarray = 6.0
    acceleration_height_m: np.ndarray = 400.0 * const.FT_M
    max_acceleration_height_m: np.ndarray = 1000.0 * const.FT_M
    mct_share: np.ndarray = 0.9
    cl_max_clean: np.ndarray = 1.5


@dataclass(frozen=True)
class Site:
    """Runway, day and wind per case, SI (see DEVELOPERS.md).

    ``mu_roll_dry`` and ``mu_brake_dry`` (optional, NaN when not given) are the *dry*
    friction of the same runway, for wet cases (``screen_height_m`` below 35 ft): with them the
    wet limit is never above the dry limit of the same runway and day (14 CFR 25.109(b),
    25.113(b): the wet distances are the greater of the dry and the wet ones).
    """

    tora_m: np.ndarray
    toda_m: np.ndarray
    asda_m: np.ndarray
    slope: np.ndarray
    mu_roll: np.ndarray
    mu_brake: np.ndarray
    pressure_pa: np.ndarray
    temperature_k: np.ndarray
    headwind_mps: np.ndarray
    screen_height_m: np.ndarray
    mu_roll_dry: np.ndarray = math.nan
    mu_brake_dry: np.ndarray = math.nan


@dataclass(frozen=True)
class WeightLimit:
    """Takeoff-weight limit per case and the figures at that mass.

    Attributes
    ----------
    tow_limit_kg : numpy.ndarray
        Takeoff-weight limit; NaN for ``no_takeoff``. [kg]
    limiting_factor : numpy.ndarray of int
        ``physics.limits`` code.
    takeoff_distance_m : numpy.ndarray
        Regulatory takeoff distance at the limit mass: the greater of 1.15 × the all-engines
        distance and the one-engine-inoperative distance at the chosen V1 (all-engines only
        with ``rules="all_engines"``). [m]
    takeoff_run_m : numpy.ndarray
        Regulatory takeoff run at the limit mass (as the distance, clearway rule). [m]
    accelerate_stop_m : numpy.ndarray
        Accelerate-stop distance at the chosen V1 (NaN with ``rules="all_engines"``). [m]
    v1_mps, vr_mps, v2_mps, v_lof_mps : numpy.ndarray
        Speeds at the limit mass, equivalent airspeed (≈ CAS at takeoff Mach numbers); V1 the
        one chosen for the runway (VR for single-engine types; NaN with
        ``rules="all_engines"``). [m/s]
    climb_gradient : numpy.ndarray
        Takeoff climb gradient at V2 (second segment; all engines for single-engine types;
        NaN with ``rules="all_engines"``). [–]
    obstacle_clearance_m, acceleration_height_m : numpy.ndarray
        With obstacles: the net path's height over the governing obstacle less the obstacle
        and 35 ft, and the acceleration height used (NaN without obstacles). [m]
    governing_obstacle : numpy.ndarray
        Index of the governing obstacle in the case's row of ``obstacles`` (NaN none). [–]
    """

    tow_limit_kg: np.ndarray
    limiting_factor: np.ndarray
    takeoff_distance_m: np.ndarray
    takeoff_run_m: np.ndarray
    accelerate_stop_m: np.ndarray
    v1_mps: np.ndarray
    vr_mps: np.ndarray
    v2_mps: np.ndarray
    v_lof_mps: np.ndarray
    climb_gradient: np.ndarray
    obstacle_clearance_m: np.ndarray
    acceleration_height_m: np.ndarray
    governing_obstacle: np.ndarray


_RESULT_FIELDS = tuple(f.name for f in fields(WeightLimit) if f.name not in ("tow_limit_kg", "limiting_factor"))


# ---------------------------------------------------------------------------------------------
# Mass-independent preparation


def _broadcast(obj, n):
    vals = {f.name: np.broadcast_to(np.asarray(getattr(obj, f.name), dtype=float), (n,)) for f in fields(obj)}
    return type(obj)(**vals)


def case_count(aircraft, site):
    """Number of cases n that all fields of ``aircraft`` and ``site`` broadcast to."""
    shapes = [np.shape(getattr(o, f.name)) for o in (aircraft, site) for f in fields(o)]
    shape = np.broadcast_shapes(*shapes)
    if len(shape) > 1:
        raise ValueError(f"case arrays must be one-dimensional (or scalars); got shape {shape}")
    return int(shape[0]) if shape else 1


@dataclass
class Cases:
    """Inputs broadcast to n cases plus the mass-independent quantities of the model.

    Attributes
    ----------
    aircraft : Aircraft
        Fields broadcast to shape (n,).
    site : Site
        Fields broadcast to shape (n,).
    density_kg_m3 : numpy.ndarray
        Air density from station pressure and OAT. [kg/m³]
    thrust_all_engines : physics.thrust.ThrustLaw
        Takeoff thrust, all engines, for the day.
    induced_factor : numpy.ndarray
        K = 1/(pi e AR). [–]
    cd0_takeoff : numpy.ndarray
        C_D0 clean + gear + takeoff flaps. [–]
    cd_ground_roll : numpy.ndarray
        Ground-roll drag coefficient with ground effect. [–]
    clearway_m : numpy.ndarray
        TODA − TORA. [m]
    vmcg_floor : bool
        True when the engine-failure requirements are checked: the speeds of the all-engines
        takeoff then follow the same V_MCG floor as theirs
        (:func:`physics.enginefailure.scheduled_speeds_mps`).
    """

    aircraft: Aircraft
    site: Site
    density_kg_m3: np.ndarray
    thrust_all_engines: thrust.ThrustLaw
    induced_factor: np.ndarray
    cd0_takeoff: np.ndarray
    cd_ground_roll: np.ndarray
    clearway_m: np.ndarray
    vmcg_floor: bool = False
    _cache: dict = field(default_factory=dict, repr=False)
    _computed: set = field(default_factory=set, repr=False)  # cache keys :meth:`cached` computed
    _read: set = field(default_factory=set, repr=False)  # cache keys :meth:`cached` was asked for

    @property
    def n(self):
        """Number of cases."""
        return self.density_kg_m3.shape[0]

    def take(self, index, keys=None):
        """The prepared cases at ``index`` (integer array), with the mass-independent items
        of the cache gathered (the per-case V1 warm start of the engine-failure search too).

        ``keys``: gather, of the items :meth:`cached` computed, only these (a search over
        some of the requirements leaves out what only the others use; an item left out is
        computed again if asked for). Items put in the cache otherwise are always gathered.
        """
        out = Cases(_lazy_take(self.aircraft, index), _lazy_take(self.site, index), self.density_kg_m3[index],
                    self.thrust_all_engines.take(index), self.induced_factor[index], self.cd0_takeoff[index],
                    self.cd_ground_roll[index], self.clearway_m[index], self.vmcg_floor)
        state = self._cache.get("engine_failure_state")
        if state and state.get("v1") is not None and np.shape(state["v1"]) == (self.n,):
            out._cache["engine_failure_state"] = {k: np.asarray(v)[index] for k, v in state.items()}
        for key, val in self._cache.items():  # the mass-independent items, by gathering
            if key == "engine_failure_state" or (keys is not None and key in self._computed and key not in keys):
                continue
            sub = _take_cached(val, index, self.n)
            if sub is not None:
                out._cache[key] = sub
                if key in self._computed:
                    out._computed.add(key)
        return out

    def one_engine_thrust_law(self):
        """Takeoff thrust of one engine for the day (:func:`physics.thrust.thrust_law`, one
        engine operating), kept with the cases :func:`prepare_cases` made and computed for a
        subset. The law of N engines is this one scaled by N to the bit (``thrust_law``
        multiplies the one-engine terms by the engines operating last)."""
        law = self.__dict__.get("_one_engine_law")
        if law is None:
            law = self.__dict__["_one_engine_law"] = thrust.thrust_law_for_aircraft(
                self.aircraft, self.site.pressure_pa, self.site.temperature_k, engines_operating=1.0)
        return law

    def cached(self, key, fn):
        """Mass-independent item ``key``, computed by ``fn(self)`` on first use."""
        self._read.add(key)
        if key not in self._cache:
            self._cache[key] = fn(self)
            self._computed.add(key)
        return self._cache[key]


def _take_cached(val, index, n):
    """A cached per-case item at ``index`` (None: not a per-case item, compute it afresh)."""
    if isinstance(val, np.ndarray):
        if val.ndim == 1 and val.shape[0] == n:
            return val[index]
        return val if val.ndim == 0 else None
    if isinstance(val, tuple):
        parts = [_take_cached(x, index, n) for x in val]
        if any(p is None for p in parts):
            return None
        return type(val)(*parts) if hasattr(val, "_fields") else tuple(parts)
    take = getattr(val, "take_cases", None) or (getattr(val, "take", None) if isinstance(val, thrust.ThrustLaw) else None)
    return take(index) if take is not None else None


_LAZY_CLASSES: dict = {}


def _lazy_getattr(self, name):
    # a field not yet taken: index the parent's array once (object.__setattr__: the
    # dataclasses are frozen)
    if name.startswith("_"):
        raise AttributeError(name)
    d = object.__getattribute__(self, "__dict__")
    if "_lazy_parent" not in d or name not in d["_lazy_names"]:
        raise AttributeError(name)
    val = getattr(d["_lazy_parent"], name)[d["_lazy_index"]]
    object.__setattr__(self, name, val)
    return val


class _LazyField:
    """A field of a lazily taken :class:`Aircraft`/:class:`Site` that has a class default."""

    def __init__(self, name):
        self.name = name

    def __get__(self, obj, objtype=None):
        return self if obj is None else _lazy_getattr(obj, self.name)


def _lazy_take(obj, index):
    """``obj`` (an :class:`Aircraft` or :class:`Site` of arrays) at ``index``, each field
    indexed on first use: a search reads only the fields its requirements need."""
    d = obj.__dict__
    if "_lazy_parent" in d:  # compose with the parent's index: one gather per field
        parent, index = d["_lazy_parent"], np.asarray(d["_lazy_index"])[index]
    else:
        parent = obj
    cls = _LAZY_CLASSES.get(type(parent))
    if cls is None:
        # fields with a default are class attributes, found before __getattr__ is asked: a
        # descriptor of the subclass hides them until the field is taken
        hide = {f.name: _LazyField(f.name) for f in fields(parent) if f.default is not dataclasses.MISSING}
        cls = type(type(parent).__name__, (type(parent),), {"__getattr__": _lazy_getattr, "__slots__": (), **hide})
        _LAZY_CLASSES[type(parent)] = cls
    new = object.__new__(cls)
    object.__setattr__(new, "_lazy_parent", parent)
    object.__setattr__(new, "_lazy_index", index)
    object.__setattr__(new, "_lazy_names", frozenset(f.name for f in fields(parent)))
    return new


def prepare_cases(aircraft, site, *, vmcg_floor=False):
    """Broadcast the inputs and compute the mass-independent parts of the model.

    Parameters
    ----------
    aircraft : Aircraft
        Per-case aircraft parameters (SI).
    site : Site
        Per-case runway, day and wind (SI).
    vmcg_floor : bool, optional
        Raise the all-engines speeds to the V_MCG floor (set when engine-failure requirements
        are checked).

    Returns
    -------
    Cases
        Prepared cases.

    Notes
    -----
    rho = p/(R T); K = 1/(pi e b²/S); C_D,ground = C_D0 + phi(h/b) K C_L,g²; thrust law of all
    engines at takeoff rating for (p, T).

    References
    ----------
    .. [2] Raymer, §17.8. See ``physics.aerodynamics`` and ``physics.thrust``.
    """
    n = case_count(aircraft, site)
    a = _broadcast(aircraft, n)
    s = _broadcast(site, n)
    rho = atmosphere.density_kg_m3(s.pressure_pa, s.temperature_k)
    k = aero.induced_drag_factor(a.oswald_efficiency, aero.aspect_ratio(a.wing_span_m, a.wing_area_m2))
    cd0 = a.cd0_clean + a.cd0_gear + a.cd0_takeoff_flaps
    phi = aero.ground_effect_factor(a.wing_height_m, a.wing_span_m)
    cd_ground = aero.drag_coefficient(cd0, k, a.cl_ground_roll, phi)
    one = thrust.thrust_law_for_aircraft(a, s.pressure_pa, s.temperature_k, engines_operating=1.0)
    out = Cases(a, s, rho, one.scaled(a.engine_count), k, cd0, cd_ground, s.toda_m - s.tora_m, bool(vmcg_floor))
    out.__dict__["_one_engine_law"] = one  # the other engine states' laws are it scaled
    return out


# ---------------------------------------------------------------------------------------------
# Requirements


@dataclass(frozen=True)
class Requirement:
    """One takeoff requirement the limit mass must meet.

    Attributes
    ----------
    factor : str
        Limiting-factor name in ``physics.limits.FACTORS`` reported when this binds.
    margin : callable
        ``margin(cases, mass_kg, memo) -> ndarray``: dimensionless margin, ≥ 0 met, NaN
        impossible; must fall as the mass rises.
    report : callable, optional
        ``report(cases, mass_kg, memo) -> dict`` of ``WeightLimit`` field name → array at the
        final mass.
    """

    factor: str
    margin: Callable
    report: Optional[Callable] = None


def all_engines(cases, mass_kg, memo):
    """All-engines takeoff at the trial masses, computed once per trial mass (memoised).

    Parameters
    ----------
    cases : Cases
        Prepared cases.
    mass_kg : numpy.ndarray
        Trial mass per case. [kg]
    memo : dict
        Per-trial-mass store.

    Returns
    -------
    physics.fieldlength.TakeoffResult
        Speeds (TAS) and unfactored distances.

    Notes
    -----
    See :func:`physics.fieldlength.all_engines_takeoff`. With ``cases.vmcg_floor`` the speed
    ratios are multiplied by max(1, V_MCG/VR) as in the engine-failure cases.

    References
    ----------
    .. [1] 14 CFR 25.113.
    """
    if "all_engines" not in memo:
        a, s = cases.aircraft, cases.site
        ratios = a.vr_over_vs, a.vlof_over_vs, a.v2_over_vs
        if cases.vmcg_floor:
            sp = enginefailure.scheduled_speeds_mps(a, mass_kg=mass_kg, density_kg_m3=cases.density_kg_m3)
            raise_by = sp.vr_mps / (sp.vs_mps * a.vr_over_vs)
            ratios = tuple(x * raise_by for x in ratios)
        memo["all_engines"] = fieldlength.all_engines_takeoff(
            thrust_law=cases.thrust_all_engines, mass_kg=mass_kg, wing_area_m2=a.wing_area_m2,
            density_kg_m3=cases.density_kg_m3, cd_ground=cases.cd_ground_roll, cl_ground=a.cl_ground_roll,
            mu=s.mu_roll, cl_max=a.cl_max_takeoff, vr_over_vs=ratios[0], vlof_over_vs=ratios[1], v2_over_vs=ratios[2],
            cd0_airborne=cases.cd0_takeoff, induced_factor=cases.induced_factor,
            headwind_mps=s.headwind_mps, slope=s.slope, screen_height_m=s.screen_height_m,
            clearway_m=cases.clearway_m, ground_terms=cases.cached("ground_terms_all_engines", _ground_terms),
            rotation_duration_s=cases.cached("rotation_s", _rotation_s))
    return memo["all_engines"]


def _rotation_s(cases):
    a = cases.aircraft
    return np.broadcast_to(takeoffevents.rotation_time_s(a.rotation_pitch_deg, a.rotation_rate_deg_per_s), (cases.n,))


def _ground_terms(cases):
    a, s = cases.aircraft, cases.site
    return groundrun.ground_run_terms(cases.thrust_all_engines, wing_area_m2=a.wing_area_m2,
                                      density_kg_m3=cases.density_kg_m3, cd=cases.cd_ground_roll,
                                      cl=a.cl_ground_roll, mu=s.mu_roll, slope=s.slope)


def distance_margin(available_m, required_m):
    """Margin of a distance requirement: available/required − 1, −1 where impossible.

    Parameters
    ----------
    available_m : array_like
        Declared distance available (TODA, TORA, ASDA). [m]
    required_m : array_like
        Distance required; NaN where the aircraft cannot do it at all. [m]

    Returns
    -------
    numpy.ndarray
        ≥ 0 where met; −1 where the distance is NaN (the limit of available/required − 1 as the
        distance grows without bound, so the margin stays continuous for the solver). [–]

    Notes
    -----
    margin = A/d − 1: zero where d = A, the same feasibility as 1 − d/A, equal to it to first
    order near zero, and bounded below by −1.

    References
    ----------
    .. [1] 14 CFR 25.109, 25.113 (distance required ≤ distance available).
    """
    with np.errstate(divide="ignore", invalid="ignore"):
        m = np.asarray(available_m, dtype=float) / np.asarray(required_m, dtype=float) - 1.0
    return np.where(np.isnan(m), -1.0, m)


def _takeoff_distance_margin(cases, mass_kg, memo):
    tod = fieldlength.ALL_ENGINES_FACTOR * all_engines(cases, mass_kg, memo).takeoff_distance_m
    return distance_margin(cases.site.toda_m, tod)


def _takeoff_run_margin(cases, mass_kg, memo):
    tor = fieldlength.ALL_ENGINES_FACTOR * all_engines(cases, mass_kg, memo).takeoff_run_m
    return distance_margin(cases.site.tora_m, tor)


def _speeds_eas(cases, tas):
    # EAS = TAS sqrt(rho/rho0) (physics.atmosphere.equivalent_airspeed_mps), the factor once per solve
    return tas * cases.cached("eas_factor", lambda cs: atmosphere.equivalent_airspeed_mps(1.0, cs.density_kg_m3))


def _takeoff_distance_report(cases, mass_kg, memo):
    r = all_engines(cases, mass_kg, memo)
    return {
        "takeoff_distance_m": fieldlength.ALL_ENGINES_FACTOR * r.takeoff_distance_m,
        "vr_mps": _speeds_eas(cases, r.vr_mps),
        "v_lof_mps": _speeds_eas(cases, r.v_lof_mps),
        "v2_mps": _speeds_eas(cases, r.v2_mps),
    }


def _takeoff_run_report(cases, mass_kg, memo):
    return {"takeoff_run_m": fieldlength.ALL_ENGINES_FACTOR * all_engines(cases, mass_kg, memo).takeoff_run_m}


#: The all-engines requirements of 14 CFR 25.113 (115 % distances against TODA and TORA).
ALL_ENGINES_REQUIREMENTS = (
    Requirement("takeoff_distance", _takeoff_distance_margin, _takeoff_distance_report),
    Requirement("takeoff_run", _takeoff_run_margin, _takeoff_run_report),
)

def _engine_out_distance_report(cases, mass_kg, memo):
    r = enginefailure.weight_limit_engine_failure(cases, mass_kg, memo)
    aeo = fieldlength.ALL_ENGINES_FACTOR * all_engines(cases, mass_kg, memo).takeoff_distance_m
    sp = r.speeds
    return {
        "takeoff_distance_m": np.fmax(aeo, r.takeoff_distance_m),
        "vr_mps": _speeds_eas(cases, sp.vr_mps),
        "v_lof_mps": _speeds_eas(cases, sp.vlof_mps),
        "v2_mps": _speeds_eas(cases, sp.v2_mps),
    }


def _engine_out_run_report(cases, mass_kg, memo):
    r = enginefailure.weight_limit_engine_failure(cases, mass_kg, memo)
    aeo = fieldlength.ALL_ENGINES_FACTOR * all_engines(cases, mass_kg, memo).takeoff_run_m
    return {"takeoff_run_m": np.fmax(aeo, r.takeoff_run_m)}


def _accelerate_stop_report(cases, mass_kg, memo):
    r = enginefailure.weight_limit_engine_failure(cases, mass_kg, memo)
    return {"accelerate_stop_m": r.accelerate_stop_m, "v1_mps": _speeds_eas(cases, r.v1_mps)}


def _climb_report(cases, mass_kg, memo):
    return {"climb_gradient": climb.weight_limit_climb_gradient(cases, mass_kg, memo)}


#: The engine-failure and climb requirements of a transport-category takeoff (one engine
#: inoperative: takeoff distance and run at the best V1, 14 CFR 25.113(a)(1), (c)(1);
#: accelerate-stop, 25.109; second-segment climb, 25.121(b); single-engine types: stop from
#: VR and the all-engines climb, see physics.enginefailure and physics.climb).
ENGINE_FAILURE_REQUIREMENTS = (
    Requirement("takeoff_distance", enginefailure.engine_out_takeoff_distance_margin, _engine_out_distance_report),
    Requirement("takeoff_run", enginefailure.engine_out_takeoff_run_margin, _engine_out_run_report),
    Requirement("accelerate_stop", enginefailure.accelerate_stop_margin, _accelerate_stop_report),
    Requirement("climb_gradient", climb.climb_gradient_margin, _climb_report),
)

#: All requirements of a transport-category takeoff: all-engines 115 % distances and the
#: engine-failure and climb requirements.
TRANSPORT_REQUIREMENTS = ALL_ENGINES_REQUIREMENTS + ENGINE_FAILURE_REQUIREMENTS

#: Requirement sets by the ``rules`` argument of :func:`solve_takeoff_weight`.
RULES = {"transport": TRANSPORT_REQUIREMENTS, "all_engines": ALL_ENGINES_REQUIREMENTS}

#: The requirements checked by default (``rules="transport"``), in reporting order. Append
#: to add one.
REQUIREMENTS = list(TRANSPORT_REQUIREMENTS)

#: The net takeoff flight path clears every obstacle by 35 ft (added by
#: :func:`solve_takeoff_weight` for the cases given obstacles).
OBSTACLE_REQUIREMENT = Requirement("obstacle_clearance", flightpath.obstacle_clearance_margin,
                                   flightpath.obstacle_report)

_ENGINE_FAILURE_MARGINS = {r.margin for r in ENGINE_FAILURE_REQUIREMENTS} | {OBSTACLE_REQUIREMENT.margin}
#: The margins that need the V1 search (searched in the last stage of :func:`_solve_staged`).
_V1_MARGINS = {enginefailure.engine_out_takeoff_distance_margin, enginefailure.engine_out_takeoff_run_margin,
               enginefailure.accelerate_stop_margin, OBSTACLE_REQUIREMENT.margin}


# ---------------------------------------------------------------------------------------------
# Solver


def requirement_margins(cases, mass_kg, requirements=None):
    """Margins of every requirement at trial masses.

    Parameters
    ----------
    cases : Cases
        Prepared cases.
    mass_kg : array_like
        Trial mass per case. [kg]
    requirements : list of Requirement, optional
        Default ``REQUIREMENTS``.

    Returns
    -------
    margins : numpy.ndarray
        Shape (n_requirements, n); NaN (impossible) replaced by −inf. [–]
    memo : dict
        The per-mass store (for reports).

    Notes
    -----
    A case meets all requirements where min over requirements ≥ 0.

    References
    ----------
    .. [1] 14 CFR 25.113.
    """
    reqs = REQUIREMENTS if requirements is None else requirements
    memo = {}
    mass = np.broadcast_to(np.asarray(mass_kg, dtype=float), (cases.n,))
    rows = [np.asarray(r.margin(cases, mass, memo), dtype=float) for r in reqs]
    margins = np.stack([np.where(np.isnan(x), -np.inf, x) for x in rows])
    return margins, memo


def solve_takeoff_weight(aircraft, site, *, tol_kg=1.0, requirements=None, rules="transport", figures=True,
                         obstacles=None):
    """Largest takeoff mass between OEW and MTOW meeting every requirement, per case.

    Parameters
    ----------
    aircraft : Aircraft
        Per-case aircraft parameters (SI), broadcastable to n.
    site : Site
        Per-case runway, day and (factored) wind (SI), broadcastable to n. Wet cases
        (screen below 35 ft) with ``mu_roll_dry``/``mu_brake_dry`` given are also solved
        on the dry runway and the lower limit kept.
    tol_kg : float, optional
        Width of the final bracket: the returned mass meets every requirement and the mass
        ``tol_kg`` above it fails one. [kg]
    requirements : list of Requirement, optional
        Explicit requirement list (overrides ``rules``).
    rules : str, optional
        ``"transport"`` (default: all-engines 115 % distances, one-engine-inoperative
        distances and accelerate-stop at the best V1, second-segment climb) or
        ``"all_engines"`` (the all-engines pair only). [–]
    obstacles : physics.flightpath.Obstacles, optional
        Obstacles past the end of TODA of each case's runway direction, shape (n, K), NaN
        padded. Cases with obstacles also meet ``OBSTACLE_REQUIREMENT`` (net takeoff flight
        path clears each by 35 ft); cases without are solved exactly as without the argument. [m]
    figures : bool, optional
        False: only the limit mass is wanted (e.g. grid nodes to interpolate). The search is
        the same, so the mass is too; the distances, speeds and gradients are left NaN and,
        with engine-failure requirements, the limiting factor is named from the search's
        last margins above the limit (V1 not re-converged: where the go and stop margins
        tie it may name either), saving the two closing evaluations. [–]

    Returns
    -------
    WeightLimit
        Arrays of shape (n,).

    Raises
    ------
    ValueError
        For an unknown ``rules`` name.

    Notes
    -----
    Bracket search on [OEW, MTOW] for every case at once (:func:`physics.masssearch.bracket_search`): MTOW is
    evaluated first (feasible → ``structural``), then ITP steps interpolating in ln m, with
    OEW evaluated only where the first trial fails (infeasible → ``no_takeoff``). Invariant:
    the lower end meets every requirement, the upper end fails one; at most ``masssearch.ITP_N0``
    evaluations more than bisection's ceil(log2((MTOW − OEW)/tol)).
    Wet never better than dry: limit_wet = min(limit with the wet friction and 15 ft screen,
    limit on the same runway dry with a 35 ft screen), figures of the lower.
    A case outside the input contract (:func:`physics.caseinput.refusal_codes`: a NaN or
    infinite value, OEW > MTOW, TODA < TORA, a reported tailwind above the type's limit, …)
    gets NaN everywhere and the reason as its factor (``invalid_input``, ``tailwind_limit``);
    it never stops the others. An empty batch gives empty arrays.

    References
    ----------
    .. [3] Numerical Recipes §9.1. .. [1] 14 CFR 25.109(b), 25.113.
    """
    transport = requirements is None and rules == "transport"
    if requirements is None:
        if rules not in RULES:
            raise ValueError(f"unknown rules {rules!r}; expected one of {sorted(RULES)}")
        requirements = REQUIREMENTS if rules == "transport" else RULES[rules]
    reqs = list(requirements)
    n = case_count(aircraft, site)
    refused = caseinput.refusal_codes(aircraft, site, n)
    keep = np.flatnonzero(refused < 0)
    with_obstacles = None
    if obstacles is not None and transport:
        with_obstacles = np.broadcast_to(obstacles.present, (n,))[keep]
        if not with_obstacles.any():
            with_obstacles = None
    if keep.size == n and with_obstacles is None:
        return _solve_accepted(aircraft, site, tol_kg, reqs, figures)
    # cases outside the input contract: NaN and their reason; the others solved as a batch
    out = {f.name: np.full(n, np.nan) for f in fields(WeightLimit)}
    out["limiting_factor"] = refused
    _solve_into(out, aircraft, site, keep, n, tol_kg, reqs, figures)
    if with_obstacles is not None:
        # The obstacle margin falls as the mass rises: where the net path clears every
        # obstacle at the limit found without them they do not bind, and that limit stands
        # (to the bit); the others are searched for the obstacle limit below it.
        obs = keep[with_obstacles]
        obs = obs[np.isfinite(out["tow_limit_kg"][obs])]
        if obs.size:
            cases = _obstacle_cases(aircraft, site, obs, n, obstacles)
            cases._cache["engine_failure_final"] = True
            mass = out["tow_limit_kg"][obs]
            margin, memo = requirement_margins(cases, mass, [OBSTACLE_REQUIREMENT])
            for key, val in flightpath.obstacle_report(cases, mass, memo).items():
                out[key][obs] = val
            fails = np.flatnonzero(~(margin[0] >= 0.0))
            if fails.size:
                _solve_obstacle_limit(out, cases.take(fails), obs[fails], mass[fails], margin[:, fails], tol_kg,
                                      reqs, figures)
    return WeightLimit(**out)


def _solve_into(out, aircraft, site, index, n, tol_kg, reqs, figures, obstacles=None):
    """Solve the cases at ``index`` and write their results into ``out`` (field → array)."""
    if index.size:
        solved = _solve_accepted(_gather(aircraft, index, n), _gather(site, index, n), tol_kg, reqs, figures,
                                 obstacles)
        for f in fields(WeightLimit):
            out[f.name][index] = getattr(solved, f.name)


def _obstacle_cases(aircraft, site, index, n, obstacles):
    """Prepared cases at ``index`` (with the line-up taken off) and their obstacles."""
    a = _gather(aircraft, index, n)
    s = takeoffevents.site_after_lineup(_gather(site, index, n), a.lineup_allowance_m)
    cases = prepare_cases(a, s, vmcg_floor=True)
    cases._cache["obstacles"] = obstacles.take_cases(index)
    return cases


def _solve_obstacle_limit(out, cases, index, hi_kg, margin_hi, tol_kg, reqs, figures):
    """Obstacle limits of the cases whose net path fails at their limit without obstacles.

    ``cases`` (prepared, line-up taken off, obstacles cached: those of the check at that
    limit, so the V1 found there starts the search) are the cases at ``index`` of ``out``;
    ``hi_kg`` their limit without obstacles and ``margin_hi`` (shape (1, n)) the obstacle
    margin there. Below that limit every other requirement is met (each margin falls as the
    mass rises), so only the obstacle requirement is searched, between OEW and that limit;
    the factor is ``obstacle_clearance`` (``no_takeoff`` where OEW fails) and the figures
    are taken at the limit with a converged V1 as in :func:`_solve`. Wet cases with a dry
    friction keep the lower of the wet and the dry limit (:func:`_solve_accepted`): where the
    dry path clears every obstacle at the wet limit the dry limit is no lower and the wet one
    stands; elsewhere the dry limit is searched below it.
    """
    result = _obstacle_search(cases, hi_kg, margin_hi, tol_kg, reqs, figures)
    s = cases.site
    n = cases.n
    dry_roll = np.broadcast_to(np.asarray(s.mu_roll_dry, dtype=float), (n,))
    dry_brake = np.broadcast_to(np.asarray(s.mu_brake_dry, dtype=float), (n,))
    wet = np.asarray(s.screen_height_m, dtype=float) < const.SCREEN_HEIGHT_35FT_M - 1e-6
    idx = np.flatnonzero(wet & np.isfinite(dry_roll) & np.isfinite(dry_brake) & np.isfinite(result["tow_limit_kg"]))
    if idx.size:
        sub = cases.take(idx)
        a = _gather(sub.aircraft, np.arange(idx.size), idx.size)
        dry_site = _gather(sub.site, np.arange(idx.size), idx.size)
        dry_site = dataclasses.replace(dry_site, mu_roll=dry_roll[idx], mu_brake=dry_brake[idx],
                                       screen_height_m=np.full(idx.size, const.SCREEN_HEIGHT_35FT_M),
                                       mu_roll_dry=np.full(idx.size, np.nan), mu_brake_dry=np.full(idx.size, np.nan))
        dry_cases = prepare_cases(a, dry_site, vmcg_floor=True)
        dry_cases._cache["obstacles"] = cases._cache["obstacles"].take_cases(idx)
        dry_cases._cache["engine_failure_final"] = True
        w_lim = result["tow_limit_kg"][idx]
        m_dry, _ = requirement_margins(dry_cases, w_lim, [OBSTACLE_REQUIREMENT])
        fail = np.flatnonzero(~(m_dry[0] >= 0.0))
        if fail.size:
            dry = _obstacle_search(dry_cases.take(fail), w_lim[fail], m_dry[:, fail], tol_kg, reqs, figures)
            lower = np.isnan(dry["tow_limit_kg"]) | (dry["tow_limit_kg"] < w_lim[fail])
            for key, val in dry.items():
                result[key][idx[fail[lower]]] = val[lower]
    for key, val in result.items():
        out[key][index] = val


#: Slope of the obstacle margin in the terms of the search, d(−ln(1 + margin))/d ln m, where it
#: binds: median 7.6 (5.2–9.6 for nine cases in ten) on the 2 000-airfield synthetic network
#: with a third of the runway directions carrying obstacles. [–]
OBSTACLE_MARGIN_SLOPE = 7.5


def _obstacle_search_margin(margin):
    """The obstacle margin as its search sees it: −ln(1 + margin) scaled by
    masssearch.DISTANCE_MASS_EXPONENT / OBSTACLE_MARGIN_SLOPE (same sign, so the same limit; −inf, an
    impossible case, stays). The search estimates the value at OEW, before evaluating it,
    with the distance margins' slope; scaled to it, the first step lands near the root
    (4.3 evaluations per case instead of 5.35 on that network)."""
    m = np.asarray(margin, dtype=float)
    with np.errstate(invalid="ignore", divide="ignore"):
        scaled = np.expm1(masssearch.DISTANCE_MASS_EXPONENT / OBSTACLE_MARGIN_SLOPE * np.log1p(m))
    return np.where(m > -1.0, scaled, m)


def _obstacle_search(cases, hi_kg, margin_hi, tol_kg, reqs, figures):
    """The obstacle limit between OEW and ``hi_kg`` (fails the obstacle requirement) and
    the figures there: a dict of :class:`WeightLimit` fields (see
    :func:`_solve_obstacle_limit`)."""
    n = cases.n
    cases._cache.pop("engine_failure_final", None)
    only = [OBSTACLE_REQUIREMENT]

    def margins_fn(cs, mass):
        margin, memo = requirement_margins(cs, mass, only)
        return _obstacle_search_margin(margin), memo

    lo, _, _, none, _, v1_state = masssearch.bracket_search(
        cases, margins_fn, np.asarray(cases.aircraft.oew_kg, dtype=float), np.asarray(hi_kg, dtype=float),
        _obstacle_search_margin(margin_hi), tol_kg)
    out = {f.name: np.full(n, np.nan) for f in fields(WeightLimit)}
    out["tow_limit_kg"] = np.where(none, np.nan, lo)
    out["limiting_factor"] = np.where(none, limits.code("no_takeoff"), limits.code("obstacle_clearance"))
    final = np.flatnonzero(~none)
    if figures and final.size:
        # the figures at the limit, every requirement's report, with V1 converged from the
        # search's last one (as the solver's closing evaluation)
        sub = cases.take(final)
        sub._cache["engine_failure_final"] = True
        if v1_state is not None:
            sub._cache["engine_failure_state"] = {k: np.array(v[final], dtype=float) for k, v in v1_state.items()}
        mass = lo[final]
        every = list(reqs) + only
        _, memo = requirement_margins(sub, mass, every)
        for r in every:
            if r.report is not None:
                for key, val in r.report(sub, mass, memo).items():
                    out[key][final] = np.asarray(val, dtype=float)
    return out


def _input_columns(aircraft, site, obstacles, n):
    """Every aircraft and site field (but the dry-friction pair) and the obstacles of n cases
    as float columns of length n, in a fixed order."""
    cols = [np.broadcast_to(np.asarray(getattr(aircraft, f.name), dtype=float), (n,)) for f in fields(aircraft)]
    cols += [np.broadcast_to(np.asarray(getattr(site, f.name), dtype=float), (n,)) for f in fields(site)
             if f.name not in ("mu_roll_dry", "mu_brake_dry")]
    if obstacles is not None:
        for x in (obstacles.distance_m, obstacles.height_m):
            x = np.asarray(x, dtype=float).reshape(n, -1)
            cols += [x[:, k] for k in range(x.shape[1])]
    return cols


def _row_hashes(cols):
    """A 64-bit hash of each row of the columns (their bits, in order)."""
    h = np.zeros(cols[0].shape[0], dtype=np.uint64)
    for c in cols:
        h *= np.uint64(0x9E3779B97F4A7C15)  # wraps modulo 2^64
        h ^= np.ascontiguousarray(c).view(np.uint64)
    return h


def _dry_twins(aircraft, site, obstacles, n, dry_aircraft, dry_site, dry_obstacles):
    """For each wet case (the m cases of ``dry_aircraft``/``dry_site``, their dry inputs), a
    case among the n of the call whose inputs are the same to the bit (every field, the
    obstacles), or −1."""
    m = np.shape(dry_site.mu_roll)[0]
    every = _input_columns(aircraft, site, obstacles, n)
    wet = _input_columns(dry_aircraft, dry_site, dry_obstacles, m)
    h_every, h_wet = _row_hashes(every), _row_hashes(wet)
    order = np.argsort(h_every, kind="stable")
    at = np.minimum(np.searchsorted(h_every, h_wet, sorter=order), n - 1)
    twin = order.take(at)
    same = h_every.take(twin) == h_wet
    for a, b in zip(every, wet):  # the candidates, field by field, to the bit (NaN matches NaN)
        same &= np.ascontiguousarray(a).view(np.uint64).take(twin) == np.ascontiguousarray(b).view(np.uint64)
    return np.where(same, twin, -1)


def _gather(obj, index, n):
    """``obj`` (an :class:`Aircraft` or :class:`Site`) with every field at ``index`` of n."""
    return type(obj)(**{f.name: np.broadcast_to(np.asarray(getattr(obj, f.name), dtype=float), (n,))[index]
                        for f in fields(obj)})


def _solve_accepted(aircraft, site, tol_kg, reqs, figures, obstacles=None):
    """:func:`solve_takeoff_weight` for cases inside the input contract."""
    site = takeoffevents.site_after_lineup(site, aircraft.lineup_allowance_m)  # the runway used to line up
    result = _solve(aircraft, site, tol_kg, reqs, figures, obstacles)
    dry_roll = np.asarray(site.mu_roll_dry if site.mu_roll_dry is not None else np.nan, dtype=float)
    dry_brake = np.asarray(site.mu_brake_dry if site.mu_brake_dry is not None else np.nan, dtype=float)
    n = result.tow_limit_kg.shape[0]
    wet = (np.broadcast_to(np.asarray(site.screen_height_m, dtype=float), (n,)) < const.SCREEN_HEIGHT_35FT_M - 1e-6)
    wet &= np.isfinite(np.broadcast_to(dry_roll, (n,))) & np.isfinite(np.broadcast_to(dry_brake, (n,)))
    idx = np.nonzero(wet)[0]
    if idx.size == 0:
        return result
    take = lambda obj, extra=None: type(obj)(**{  # noqa: E731
        f.name: np.broadcast_to(np.asarray(getattr(obj, f.name), dtype=float), (n,))[idx]
        for f in fields(obj) if f.name not in ("mu_roll_dry", "mu_brake_dry")}, **(extra or {}))
    dry_site = take(site, None)
    dry_site = Site(**{**{f.name: getattr(dry_site, f.name) for f in fields(Site)},
                       "mu_roll": np.broadcast_to(dry_roll, (n,))[idx],
                       "mu_brake": np.broadcast_to(dry_brake, (n,))[idx],
                       "screen_height_m": np.full(idx.size, const.SCREEN_HEIGHT_35FT_M),
                       "mu_roll_dry": math.nan, "mu_brake_dry": math.nan})
    dry_aircraft = take(aircraft)
    dry_obstacles = None if obstacles is None else obstacles.take_cases(idx)
    # a wet case whose dry inputs are those of a case of this call (the dry condition of the
    # same runway, day and type, as a planning run has) takes that case's result: the
    # results do not depend on the batch, so solving it again gives the same to the bit
    twin = _dry_twins(aircraft, site, obstacles, n, dry_aircraft, dry_site, dry_obstacles)
    alone = np.flatnonzero(twin < 0)
    dry = {f.name: np.empty(idx.size) for f in fields(WeightLimit)}
    dry["limiting_factor"] = np.empty(idx.size, dtype=np.int64)
    paired = np.flatnonzero(twin >= 0)
    for f in fields(WeightLimit):
        dry[f.name][paired] = np.asarray(getattr(result, f.name)).take(twin.take(paired))
    if alone.size == idx.size:  # no twin: the wet cases' dry inputs as they are
        solved = _solve(dry_aircraft, dry_site, tol_kg, reqs, figures, dry_obstacles)
    elif alone.size:
        solved = _solve(_gather(dry_aircraft, alone, idx.size), _gather(dry_site, alone, idx.size), tol_kg, reqs,
                        figures, None if dry_obstacles is None else dry_obstacles.take_cases(alone))
    if alone.size:
        for f in fields(WeightLimit):
            dry[f.name][alone] = getattr(solved, f.name)
    dry = WeightLimit(**dry)
    w_lim = result.tow_limit_kg[idx]
    lower = ~np.isnan(w_lim) & (np.isnan(dry.tow_limit_kg) | (dry.tow_limit_kg < w_lim))
    out = {}
    for f in fields(WeightLimit):
        val = np.array(getattr(result, f.name), copy=True)
        sub = val[idx]
        val[idx] = np.where(lower, getattr(dry, f.name), sub)
        out[f.name] = val
    return WeightLimit(**out)


def _solve(aircraft, site, tol_kg, reqs, figures=True, obstacles=None):
    engine_failure = any(r.margin in _ENGINE_FAILURE_MARGINS for r in reqs)
    cases = prepare_cases(aircraft, site, vmcg_floor=engine_failure)
    if obstacles is not None:
        cases._cache["obstacles"] = obstacles
    if any(r.margin in _V1_MARGINS for r in reqs):
        return _solve_staged(cases, tol_kg, reqs, figures)
    a = cases.aircraft

    def margins_fn(cs, mass):
        return requirement_margins(cs, mass, reqs)

    # MTOW first: the cases that meet every requirement there are structural and need no
    # further evaluation.
    m_hi, memo_hi = requirement_margins(cases, a.mtow_kg, reqs)
    structural = m_hi.min(axis=0) >= 0.0
    factor = np.where(structural, limits.code("structural"), limits.code("no_takeoff"))
    limit = choose(structural, a.mtow_kg, np.nan)
    none = np.zeros(cases.n, dtype=bool)
    out = {k: np.full(cases.n, np.nan) for k in _RESULT_FIELDS}
    reporting = [r for r in reqs if r.report is not None]

    def capture(cs, mass, memo, local, index):
        # figures at each case's last feasible trial mass = its limit
        for r in reporting:
            for key, val in r.report(cs, mass, memo).items():
                out[key][index] = np.asarray(val, dtype=float)[local]

    rest = np.nonzero(~structural)[0]
    codes = np.array([limits.code(r.factor) for r in reqs])
    if rest.size:
        sub = cases.take(rest)
        lo, hi, m_top, none_rest, _, v1_state = masssearch.bracket_search(
            sub, margins_fn, a.oew_kg[rest], a.mtow_kg[rest], m_hi.take(rest, axis=1), tol_kg,
            capture=None if engine_failure or not figures else _shifted(capture, rest))
        none[rest] = none_rest
        ok = ~none_rest
        active = rest[ok]
        if engine_failure and active.size and figures:
            # The factor: the requirement most violated just above the limit, with V1
            # converged (the search's last V1, within a kilogram, and further Newton steps):
            # at a balanced V1 the go and stop margins tie and only a converged V1 names the
            # binding one reproducibly.
            sub = cases.take(active)
            sub._cache["engine_failure_final"] = True
            if v1_state is not None:
                v1_state = {k: v[ok] for k, v in v1_state.items()}
                sub._cache["engine_failure_state"] = {k: v.copy() for k, v in v1_state.items()}
                st = cases._cache.get("engine_failure_state")
                if st is not None:
                    st["v1"][active], st["mass"][active] = v1_state["v1"], v1_state["mass"]
            else:
                sub._cache.pop("engine_failure_state", None)
            m_top, _ = requirement_margins(sub, hi[ok], reqs)
        else:
            m_top = m_top.take(np.flatnonzero(ok), axis=1)
        # the requirement most violated just above the limit (the margins at the bracket's
        # upper end)
        factor[active] = codes[masssearch.least_met(-m_top)[0]]
        limit[active] = lo[ok]

    # Figures at the limit mass: without engine-failure requirements they were taken during
    # the search (structural cases: from the MTOW evaluation); with them every case with a
    # limit is evaluated again with a fully converged V1. no_takeoff cases are blank.
    if figures and engine_failure:
        final = np.nonzero(~none)[0]
        if final.size:
            sub = cases.take(final)
            sub._cache["engine_failure_final"] = True
            mass = limit[final]
            _, memo = requirement_margins(sub, mass, reqs)
            capture(sub, mass, memo, np.arange(final.size), final)
    elif figures and structural.any():
        idx = np.nonzero(structural)[0]
        capture(cases, a.mtow_kg, memo_hi, idx, idx)
    for key in out:
        out[key][none] = np.nan
    return WeightLimit(tow_limit_kg=limit, limiting_factor=factor.astype(np.int64), **out)


#: Least engine-failure margin (a lower bound: V1 from the search's Newton steps) at the limit
#: of the other requirements above which the engine-failure requirements are taken as met one
#: ``tol_kg`` higher too, so that the factor is the other requirement's without evaluating
#: them there. A kilogram changes a distance margin by about 2 kg/m (2.5e-4 at 8 t), so 1 %
#: leaves a wide allowance. [–]
STAGE_CLEAR_MARGIN = 1e-2


def _solve_staged(cases, tol_kg, reqs, figures):
    """:func:`_solve` with engine-failure requirements: the others first, on their own.

    Each margin falls as the mass rises, so the limit is the least of the requirements' own
    limits. Stage 1 searches the requirements that need no V1 (the all-engines distances and
    the climb gradient: a fraction of the cost) between OEW and MTOW; stage 2 evaluates the
    V1 requirements (one engine inoperative distance and run, accelerate-stop, obstacles)
    once, at that limit; where they are met
    it stands, elsewhere stage 3 searches them alone below it (every other requirement is
    met there). The factor is the requirement most violated at the bracket's upper end, as
    in the single search; the figures are taken at the limit with a converged V1. Where the
    V1 stage searched, the factor comes from the search's margins at the upper end and, to
    part go and stop at a balanced V1, from the distances of the figures' evaluation
    (:func:`_searched_factor`; without the figures: the search's margins alone).
    """
    a = cases.aircraft
    n = cases.n
    costly_row = np.array([r.margin in _V1_MARGINS for r in reqs])
    costly = [r for r, c in zip(reqs, costly_row) if c]
    cheap = [r for r, c in zip(reqs, costly_row) if not c]
    codes = np.array([limits.code(r.factor) for r in reqs])
    mtow, oew = np.asarray(a.mtow_kg, dtype=float), np.asarray(a.oew_kg, dtype=float)
    none = np.zeros(n, dtype=bool)
    limit_at = mtow.copy()  # a mass every requirement searched so far meets
    above = np.full(n, np.inf)  # the upper end of its bracket (inf: met at MTOW)
    m_above = np.full((len(reqs), n), np.inf)  # margins at ``above`` (+inf: not binding there)

    # 1. the requirements without an engine failure
    if cheap:
        m_c, _ = requirement_margins(cases, mtow, cheap)
        rest = np.flatnonzero(m_c.min(axis=0) < 0.0)
        if rest.size:
            lo, hi, m_top, none_rest, _, _ = masssearch.bracket_search(
                cases.take(rest), lambda cs, mass: requirement_margins(cs, mass, cheap), oew[rest], mtow[rest],
                m_c.take(rest, axis=1), tol_kg)
            limit_at[rest], above[rest], none[rest] = lo, hi, none_rest
            m_above[np.ix_(np.flatnonzero(~costly_row), rest)] = m_top

    # 2. the engine-failure requirements at that limit: every case where those without a
    # limit at OEW are few (evaluating them costs less than gathering the others), else the
    # cases with a limit
    idx = np.flatnonzero(~none)
    if idx.size >= masssearch.COMPACT_SHARE * n:
        idx, ef = np.arange(n), cases
    else:
        ef = cases.take(idx)
    ef._read.clear()
    m_chk, _ = requirement_margins(ef, limit_at[idx], costly)
    costly_keys = set(ef._read)  # what the V1 requirements use of the cache
    least = m_chk.min(axis=0)
    least[none.take(idx)] = np.inf  # (no_takeoff: not searched)
    state = ef._cache.get("engine_failure_state")
    if not state or state.get("v1") is None:
        state = {"v1": np.full(idx.size, np.nan), "mass": np.full(idx.size, np.nan)}
    state = {k: np.array(v, dtype=float, copy=True) for k, v in state.items()}

    # 3. where they fail: searched alone below it
    fail = np.flatnonzero(least < 0.0)
    searched = np.zeros(n, dtype=bool)
    if fail.size:
        gi = idx[fail]
        lo, hi, m_top, none_f, _, v1_state = masssearch.bracket_search(
            ef.take(fail, keys=costly_keys), lambda cs, mass: requirement_margins(cs, mass, costly), oew[gi],
            limit_at[gi], m_chk.take(fail, axis=1), tol_kg)
        none[gi], limit_at[gi], above[gi] = none_f, lo, hi
        m_above[:, gi] = np.inf
        m_above[np.ix_(np.flatnonzero(costly_row), gi)] = m_top
        searched[gi] = True
        if v1_state is not None:
            got = np.isfinite(v1_state["v1"])
            for key, val in v1_state.items():
                if key not in state:
                    state[key] = np.full(idx.size, np.nan)
                state[key][fail[got]] = val[got]
    ef._cache["engine_failure_state"] = state
    pos = np.full(n, -1)
    pos[idx] = np.arange(idx.size)

    def final_cases(where):
        # the cases at ``where`` (indices of all n) with the V1 of their last evaluation
        sub = ef.take(pos[where])
        if figures:
            sub._cache["engine_failure_final"] = True
        return sub

    structural = ~none & ~np.isfinite(above)
    factor = np.where(structural, limits.code("structural"), limits.code("no_takeoff"))
    limit = np.where(none, np.nan, limit_at)
    # the factor: the requirement most violated at the upper end. Where the other requirements
    # bind and the engine-failure margins are clear of zero at the limit they cannot bind a
    # kilogram higher; elsewhere, where the V1 stage did not search, the engine-failure
    # margins there are evaluated (with V1 converged when the figures are wanted: at a
    # balanced V1 the go and stop margins tie and only a converged V1 names the binding one
    # reproducibly); where it searched, its margins there name it (with the figures,
    # _searched_factor parts a balanced go and stop by the distances at the limit).
    clear = np.zeros(n, dtype=bool)
    clear[idx] = least > STAGE_CLEAR_MARGIN
    again = np.flatnonzero(~none & ~structural & ~clear & ~searched)
    if again.size:
        m_again, _ = requirement_margins(final_cases(again), above[again], costly)
        m_above[np.ix_(np.flatnonzero(costly_row), again)] = m_again
    limited = np.flatnonzero(~none & ~structural)
    factor[limited] = codes[masssearch.least_met(-m_above.take(limited, axis=1))[0]]

    out = {k: np.full(n, np.nan) for k in _RESULT_FIELDS}
    if figures:
        final = np.flatnonzero(~none)
        if final.size:
            if final.size > masssearch.COMPACT_SHARE * idx.size:
                # evaluate every case of the V1 stage (those without a limit at OEW, their
                # figures left out) rather than gather the set-up for most of them
                sub, rows = ef, pos[final]
                sub._cache["engine_failure_final"] = True
                mass = limit_at[idx]
            else:
                sub, rows = final_cases(final), np.arange(final.size)
                mass = limit[final]
            _, memo = requirement_margins(sub, mass, reqs)
            for r in reqs:
                if r.report is not None:
                    for key, val in r.report(sub, mass, memo).items():
                        out[key][final] = np.broadcast_to(np.asarray(val, dtype=float), mass.shape).take(rows)
            at = np.flatnonzero(searched[final])
            if at.size:
                r, st, rows_at = memo["engine_failure"], sub.site, rows.take(at)
                factor[final[at]] = codes[_searched_factor(
                    reqs, m_above.take(final[at], axis=1),
                    tuple(np.broadcast_to(x, mass.shape).take(rows_at) for x in (
                        r.takeoff_distance_m, r.takeoff_run_m, r.accelerate_stop_m)),
                    tuple(np.broadcast_to(x, mass.shape).take(rows_at) for x in (st.toda_m, st.tora_m, st.asda_m)))]
    return WeightLimit(tow_limit_kg=limit, limiting_factor=factor.astype(np.int64), **out)


#: Go and stop excess distances (available − required, V1 converged) within this share of
#: ASDA of each other are taken as balanced by V1 (:func:`_searched_factor`); a V1 converged
#: to 1e-9 m/s leaves them within about 1e-10 of it. [–]
BALANCED_EXCESS_SHARE = 1e-6


def _searched_factor(reqs, m_above, required_m, available_m):
    """Factor of the cases the engine-failure search limited, without evaluating above the limit.

    Parameters
    ----------
    reqs : list of Requirement
        The requirements, in the order of the margins' rows.
    m_above : numpy.ndarray
        Every requirement's margin at the upper end of the bracket, V1 from the search's
        Newton steps (+inf for the requirements not searched), shape (n_requirements, n). [–]
    required_m : tuple of numpy.ndarray
        One-engine-inoperative takeoff distance and run, accelerate-stop distance at the
        limit with V1 converged (the figures' evaluation). [m]
    available_m : tuple of numpy.ndarray
        TODA, TORA, ASDA. [m]

    Returns
    -------
    numpy.ndarray
        Index of the requirement most violated at the upper end with V1 converged.

    Notes
    -----
    The requirement most violated at the upper end is the factor. The search's margins
    there have V1 within about 1e-4 m/s of the best, which is exact where V1 is held at
    V_MCG or VR and changes a margin by about 1e-6 elsewhere. That decides, except between
    the two requirements V1 balances: the go requirement that binds the continued takeoff
    and accelerate-stop. Their excess distances e = available − required are equal at a
    balanced V1, at every mass, so both cross zero together and at the upper end their
    margins are E/d_go and E/ASD (+ :data:`physics.enginefailure.STOP_TIE_BIAS`), the
    same E < 0; d_go − ASD = (go available) − ASDA does not change with the mass, so the
    distances at the limit give the order exactly, and E (from the search's two margins,
    about 3 % off) only weighs the tie bias where the distances are within micrometres
    (TODA = ASDA: the go requirement, as a converged evaluation names it). A case counts as
    balanced where its go and stop excesses at the limit are within
    :data:`BALANCED_EXCESS_SHARE` of ASDA.
    """
    rows = {r.margin: k for k, r in enumerate(reqs)}
    k_tod = rows.get(enginefailure.engine_out_takeoff_distance_margin)
    k_tor = rows.get(enginefailure.engine_out_takeoff_run_margin)
    k_asd = rows.get(enginefailure.accelerate_stop_margin)
    pred = np.array(m_above, dtype=float, copy=True)
    if k_tod is not None and k_tor is not None and k_asd is not None:
        tod, tor, asd = required_m
        toda, tora, asda = (np.broadcast_to(np.asarray(x, dtype=float), asd.shape) for x in available_m)
        with np.errstate(invalid="ignore", divide="ignore"):
            e_tod, e_tor = toda - tod, tora - tor
            e_go = np.fmin(e_tod, e_tor)
            d_go = np.where(e_tod <= e_tor, tod, tor)
            balanced = np.abs(e_go - (asda - asd)) <= BALANCED_EXCESS_SHARE * asda
            k_go = np.where(e_tod <= e_tor, k_tod, k_tor)
            m_go = np.take_along_axis(m_above, k_go[None, :], axis=0)[0]
            big_e = 0.5 * (m_go * d_go + (m_above[k_asd] - enginefailure.STOP_TIE_BIAS) * asd)
            b = np.flatnonzero(balanced & (big_e < 0.0))
            if b.size:
                eb = big_e[b]
                for k, e, d in ((k_tod, e_tod, tod), (k_tor, e_tor, tor)):
                    tie = b[e[b] == e_go[b]]  # the binding go requirement (both where equal)
                    pred[k, tie] = big_e[tie] / d[tie]
                pred[k_asd, b] = eb / asd[b] + enginefailure.STOP_TIE_BIAS
    return masssearch.least_met(-pred)[0]


def _shifted(capture, index):
    """``capture`` for a search over the cases ``index`` of the full arrays."""
    return lambda cs, mass, memo, local, sub_index: capture(cs, mass, memo, local, index[sub_index])
