"""The input tables: one definition per table and column.

This module is the single place where the user-supplied tables are described. The same
definitions drive validation (:mod:`schemas.validate`), loading and unit conversion
(:mod:`schemas.load`), the DuckDB DDL of the stored inputs (:mod:`schemas.ddl`) and the
input reference in the README (:mod:`schemas.reference`).

Conventions
-----------
* The unit is part of every column name (``tora_m``, ``qnh_hpa``, ``vmcg_kt``); a column
  without a unit suffix is dimensionless or a text field.
* ``min``/``max`` are the hard limits: a value outside them is an error. ``typical`` is
  advice for the reader (a value outside it is allowed).
* A blank cell in an optional column takes the column's ``default`` (``None``: stays blank,
  NaN after loading).
* ``si_name``/``si_scale``/``si_offset`` say how :func:`schemas.load.load_folder` converts a
  column to SI: ``si = value * si_scale + si_offset``. For ``aircraft_types`` the SI names are
  exactly the fields of ``physics.weightlimit.Aircraft`` (DEVELOPERS.md).
"""

from __future__ import annotations

from dataclasses import dataclass, field

try:  # the friction table owns the surface names once it exists
    from fieldlimits.physics.friction import SURFACES as _SURFACES
except Exception:  # pragma: no cover - physics/friction.py not written yet
    _SURFACES = ("paved", "gravel", "grass", "dirt")

from fieldlimits.schemas.typeclasses import CLASS_NAMES

try:
    from fieldlimits.physics.thrust import MODEL_CODES as _MODEL_CODES
except Exception:  # pragma: no cover - physics/thrust.py not written yet
    _MODEL_CODES = {"quadratic": 0, "turbofan": 1, "propeller": 2}

SURFACES: tuple[str, ...] = tuple(_SURFACES)
"""Allowed runway surfaces (``physics.friction.SURFACES``)."""

THRUST_MODELS: dict[str, int] = dict(_MODEL_CODES)
"""Thrust model name -> integer code (``physics.thrust.MODEL_CODES``)."""

KT_TO_MPS = 1852.0 / 3600.0  # international knot, exact by definition (1 NM = 1852 m)

# Identifiers: letters, digits, '-', '_' and '.', starting with a letter or digit, no spaces.
ID_PATTERN = r"^[A-Za-z0-9][A-Za-z0-9_.\-]*$"


@dataclass(frozen=True)
class Column:
    """One column of an input table.

    Attributes
    ----------
    name : str
        Column header, unit in the name.
    dtype : str
        ``'str'``, ``'float'`` or ``'int'``.
    unit : str
        Unit as printed in the reference (``''`` for dimensionless / text).
    required : bool
        A blank cell is an error when True.
    description : str
        What the column means.
    min, max : float or None
        Hard limits (inclusive).
    allowed : tuple of str or None
        Allowed text values.
    typical : str
        Typical range, for the reader.
    default : float, str or None
        Value used for a blank cell of an optional column.
    pattern : str or None
        Regular expression a text value must match.
    si_name, si_scale, si_offset
        Conversion to SI, ``si = value * si_scale + si_offset``.
    """

    name: str
    dtype: str
    unit: str
    required: bool
    description: str
    min: float | None = None
    max: float | None = None
    allowed: tuple[str, ...] | None = None
    typical: str = ""
    default: float | str | None = None
    pattern: str | None = None
    si_name: str | None = None
    si_scale: float = 1.0
    si_offset: float = 0.0

    @property
    def target(self) -> str:
        """Name of the column after SI conversion."""
        return self.si_name or self.name

    def range_text(self) -> str:
        """The allowed values or range as one short text."""
        if self.allowed is not None:
            return " / ".join(self.allowed)
        unit = f" {self.unit}" if self.unit and self.unit not in ("–", "-") else ""
        if self.min is not None and self.max is not None:
            return f"{_fmt(self.min)} … {_fmt(self.max)}{unit}"
        if self.min is not None:
            return f"≥ {_fmt(self.min)}{unit}"
        if self.max is not None:
            return f"≤ {_fmt(self.max)}{unit}"
        return ""


@dataclass(frozen=True)
class ForeignKey:
    """``columns`` of this table must exist as ``ref_columns`` of ``ref_table``."""

    columns: tuple[str, ...]
    ref_table: str
    ref_columns: tuple[str, ...]


@dataclass(frozen=True)
class TableSpec:
    """Definition of one input table."""

    name: str
    description: str
    columns: tuple[Column, ...]
    key: tuple[str, ...]
    foreign_keys: tuple[ForeignKey, ...] = ()
    required_file: bool = True
    rules: tuple[str, ...] = field(default=())

    def column(self, name: str) -> Column:
        for c in self.columns:
            if c.name == name:
                return c
        raise KeyError(name)

    @property
    def names(self) -> tuple[str, ...]:
        return tuple(c.name for c in self.columns)


def _fmt(x: float) -> str:
    if float(x).is_integer():
        return f"{int(x)}"
    return f"{x:g}"


def _c(name, dtype, unit, required, description, **kw) -> Column:
    return Column(name, dtype, unit, required, description, **kw)


_ID = dict(pattern=ID_PATTERN)

# an aerodynamic or configuration coefficient of aircraft_types: optional, a blank cell takes
# the class default of the type (schemas.typeclasses)
_CLASS = False

AIRFIELDS = TableSpec(
    name="airfields",
    description="One row per airfield.",
    columns=(
        _c("airfield_id", "str", "", True, "Identifier of the airfield, unique (e.g. `saltmere`).", **_ID),
        _c("name", "str", "", True, "Name shown in reports."),
        _c("latitude_deg", "float", "deg", True, "Latitude, WGS84, north positive.",
           min=-90, max=90),
        _c("longitude_deg", "float", "deg", True, "Longitude, WGS84, east positive.",
           min=-180, max=180),
        _c("elevation_m", "float", "m", True,
           "Airfield elevation above mean sea level (metres, not feet).",
           min=-500, max=5000, typical="0 … 2 500"),
    ),
    key=("airfield_id",),
    rules=(
        "An elevation above 4 500 m gives a warning (feet?).",
        "An elevation at which the hottest month's `mean_daily_max_c`, brought to sea level "
        "at 6.5 K/km, would exceed 50 °C (hotter than any low-lying climate) gives a warning "
        "when the elevation read as feet fits: likely feet (`schemas/plausibility.py`).",
    ),
)

RUNWAYS = TableSpec(
    name="runways",
    description=(
        "One row per takeoff direction (a strip used both ways is two rows). Declared "
        "distances are those of that direction."
    ),
    columns=(
        _c("airfield_id", "str", "", True, "Airfield the runway belongs to.", **_ID),
        _c("runway_id", "str", "", True,
           "Runway designator of this direction (e.g. `09`, `27L`), unique within the airfield.",
           **_ID),
        _c("heading_true_deg", "float", "deg", True,
           "True heading of the takeoff direction (not the magnetic designator).",
           min=0, max=360),
        _c("tora_m", "float", "m", True, "Takeoff run available.", min=200, max=6000,
           typical="800 … 4 000"),
        _c("toda_m", "float", "m", True,
           "Takeoff distance available (TORA + clearway); at least TORA.",
           min=200, max=6000, typical="TORA … 1.5 × TORA"),
        _c("asda_m", "float", "m", True,
           "Accelerate-stop distance available (TORA + stopway); at least TORA.",
           min=200, max=6000, typical="TORA … TORA + 300"),
        _c("lda_m", "float", "m", False,
           "Landing distance available for landings in this direction (towards "
           "`heading_true_deg`). Blank: no landing check at this runway direction (route "
           "payloads to the airfield use only the directions that have one; an airfield "
           "with none is `not_checked`, never taken as long).",
           min=200, max=6000, typical="TORA − displaced threshold"),
        _c("slope_pct", "float", "%", True,
           "Effective slope in the takeoff direction, + uphill.",
           min=-5, max=5, typical="−1 … 1 (paved), up to ±3 on strips",
           si_name="slope", si_scale=0.01),
        _c("surface", "str", "", True, "Runway surface.", allowed=SURFACES),
    ),
    key=("airfield_id", "runway_id"),
    foreign_keys=(ForeignKey(("airfield_id",), "airfields", ("airfield_id",)),),
    rules=(
        "`toda_m` ≥ `tora_m` and `asda_m` ≥ `tora_m`.",
        "A designator of the form `NN[LCR]` whose number × 10° is more than 35° from "
        "`heading_true_deg` gives a warning (heading probably swapped or magnetic).",
        "Likely feet, each a warning (`schemas/plausibility.py`): a `toda_m` or `asda_m` "
        "2.9 … 3.7 × `tora_m` (the feet factor 3.28, not a clearway or stopway); one direction "
        "of a strip (designators 18 apart) with 2.9 … 3.7 × the TORA of the other; a runway "
        "over 4 000 m at an airfield from which only types up to 8 618 kg MTOW fly routes.",
    ),
)

OBSTACLES = TableSpec(
    name="obstacles",
    description=(
        "Optional. Obstacles past the end of TODA of a runway direction (terrain, masts, "
        "buildings, trees, ships on a fixed track): one row per obstacle. The net takeoff "
        "flight path with one engine inoperative must clear each by 35 ft; a case whose "
        "path cannot is limited by `obstacle_clearance`. Only obstacles inside the departure "
        "area count: half-width 90 m + 0.125 × the distance from the end of TODA, at most "
        "900 m, along the extended centreline (EASA Air OPS CAT.POL.A.210, from memory; "
        "`schemas/departure.py`); one outside it gets a warning and is left out."
    ),
    columns=(
        _c("airfield_id", "str", "", True, "Airfield of the runway.", **_ID),
        _c("runway_id", "str", "", True,
           "Takeoff direction (designator, as in runways) whose departure path the obstacle "
           "lies under.", **_ID),
        _c("obstacle_id", "str", "", True,
           "Identifier of the obstacle, unique within the runway direction (shown as the "
           "governing obstacle in the results).", **_ID),
        _c("distance_from_toda_end_m", "float", "m", True,
           "Ground distance from the END OF TODA (not the start of the takeoff run) along the "
           "departure path; more than 0 (the obstacle lies past the end of TODA).",
           max=100000, typical="100 … 15 000"),
        _c("height_m", "float", "m", True,
           "Height of the obstacle's top above the runway end (the elevation of the end of "
           "TODA), not above mean sea level; negative below it.",
           min=-500, max=3000, typical="0 … 300"),
        _c("lateral_offset_m", "float", "m", False,
           "Distance from the extended runway centreline, either side (sign ignored); "
           "blank = 0 (on the centreline).",
           min=-20000, max=20000, default=0.0, typical="0 … 600"),
    ),
    key=("airfield_id", "runway_id", "obstacle_id"),
    foreign_keys=(ForeignKey(("airfield_id",), "airfields", ("airfield_id",)),
                  ForeignKey(("airfield_id", "runway_id"), "runways", ("airfield_id", "runway_id"))),
    required_file=False,
    rules=(
        "`distance_from_toda_end_m` > 0: the obstacle lies past the end of TODA (error).",
        "(`airfield_id`, `runway_id`) is a runway direction of the runways table (error).",
        "An obstacle outside the departure area (|`lateral_offset_m`| above 90 m + 0.125 × "
        "`distance_from_toda_end_m`, at most 900 m) gets a warning and is left out of the run.",
        "An obstacle higher than 446.5 m (1 500 ft less the 35 ft margin) above the runway end "
        "gets a warning: the takeoff flight path ends at 1 500 ft, and such an obstacle is "
        "either out of its reach or cannot be cleared.",
    ),
)

CLIMATE_MONTHLY = TableSpec(
    name="climate_monthly",
    description="Monthly climatology: one row per airfield and month (all 12 months).",
    columns=(
        _c("airfield_id", "str", "", True, "Airfield.", **_ID),
        _c("month", "int", "", True, "Calendar month.", min=1, max=12),
        _c("mean_daily_max_c", "float", "°C", True,
           "Mean of the daily maximum temperature in that month.",
           min=-60, max=60, typical="−30 … 45",
           si_name="mean_daily_max_k", si_offset=273.15),
        _c("sd_daily_max_c", "float", "°C", True,
           "Standard deviation of the daily maximum temperature (day to day).",
           min=0, max=20, typical="1.5 … 6", si_name="sd_daily_max_k"),
        _c("qnh_hpa", "float", "hPa", True,
           "Mean sea-level pressure (QNH) in that month.",
           min=870, max=1090, typical="1000 … 1025", si_name="qnh_pa", si_scale=100.0),
        _c("wet_day_share", "float", "–", True,
           "Share of days with a wet runway (0 … 1).", min=0, max=1, typical="0 … 0.6"),
        _c("p50_daily_max_c", "float", "°C", False,
           "Optional: median of the daily maximum temperature (blank: from mean and SD).",
           min=-60, max=60, si_name="p50_daily_max_k", si_offset=273.15),
        _c("p85_daily_max_c", "float", "°C", False,
           "Optional: 85th percentile of the daily maximum temperature.",
           min=-60, max=60, si_name="p85_daily_max_k", si_offset=273.15),
        _c("p95_daily_max_c", "float", "°C", False,
           "Optional: 95th percentile of the daily maximum temperature.",
           min=-60, max=60, si_name="p95_daily_max_k", si_offset=273.15),
    ),
    key=("airfield_id", "month"),
    foreign_keys=(ForeignKey(("airfield_id",), "airfields", ("airfield_id",)),),
    rules=(
        "Every airfield has all twelve months.",
        "Given percentiles rise: p50 ≤ p85 ≤ p95.",
        "An airfield whose monthly values look like degrees Fahrenheit (any month above "
        "60, or every month at least 30 with an annual mean above 40) is flagged.",
    ),
)

WIND_ROSE = TableSpec(
    name="wind_rose",
    description=(
        "Monthly wind rose: joint frequency of wind direction sector (wind FROM, true) and "
        "speed class, plus one calm row (blank direction, speed 0 … calm threshold)."
    ),
    columns=(
        _c("airfield_id", "str", "", True, "Airfield.", **_ID),
        _c("month", "int", "", True, "Calendar month.", min=1, max=12),
        _c("direction_deg", "float", "deg", False,
           "Centre of the direction sector the wind blows FROM, true; blank for the calm row.",
           min=0, max=360),
        _c("sector_width_deg", "float", "deg", False,
           "Width of the direction sector (e.g. 22.5 for 16 sectors, 30, 10); "
           "blank for the calm row.",
           min=1, max=180, typical="10 / 22.5 / 30"),
        _c("speed_low_mps", "float", "m/s", True, "Lower bound of the speed class.",
           min=0, max=100),
        _c("speed_high_mps", "float", "m/s", True,
           "Upper bound of the speed class (calm row: the calm threshold).",
           min=0, max=100),
        _c("frequency", "float", "–", True,
           "Share of the month's observations in this sector and class. Per airfield and "
           "month the shares sum to 1 (± 0.01); percentages summing to 100 (± 1) are "
           "detected and converted.",
           min=0, max=100),
    ),
    key=("airfield_id", "month", "direction_deg", "speed_low_mps"),
    foreign_keys=(ForeignKey(("airfield_id",), "airfields", ("airfield_id",)),),
    rules=(
        "Every airfield has all twelve months.",
        "Per airfield and month: frequencies sum to 1 ± 0.01 (or 100 ± 1 %).",
        "Per airfield and month: one sector width; each speed class covers the full circle "
        "exactly once (360 / width sectors, centres a whole number of widths apart); "
        "`speed_high_mps` > `speed_low_mps`; speed classes do not overlap; at most one calm row.",
    ),
)

_AC = "aircraft_types"
AIRCRAFT_TYPES = TableSpec(
    name=_AC,
    description=(
        "One row per aircraft type: every parameter the takeoff, climb and route-fuel models "
        "need. All figures are the user's planning figures for the type. The aerodynamic "
        "and configuration coefficients (required \"no (blank = class default)\") may be "
        "left blank: they then take the typical value of the type's class (`type_class`; "
        "the values and their sources are in `schemas/typeclasses.py`), and `fieldlimits "
        "calibrate` can fit them to published field lengths. A value given always wins."
    ),
    columns=(
        _c("aircraft_type_id", "str", "", True, "Identifier of the type, unique.", **_ID),
        _c("name", "str", "", True, "Name shown in reports."),
        _c("mtow_kg", "float", "kg", True, "Maximum (structural) takeoff mass.",
           min=300, max=700000, typical="1 000 … 400 000"),
        _c("oew_kg", "float", "kg", True, "Operating empty mass (crew, fluids, equipment).",
           min=200, max=400000, typical="55 … 65 % of MTOW"),
        _c("max_payload_kg", "float", "kg", True,
           "Maximum structural payload (MZFW − OEW).", min=1, max=200000,
           typical="15 … 30 % of MTOW"),
        _c("max_fuel_kg", "float", "kg", True, "Usable fuel capacity.", min=10, max=300000,
           typical="10 … 45 % of MTOW"),
        _c("max_landing_mass_kg", "float", "kg", True, "Maximum structural landing mass.",
           min=300, max=700000, typical="75 … 100 % of MTOW"),
        _c("wing_area_m2", "float", "m²", True, "Reference wing area.", min=5, max=1000,
           typical="15 … 450"),
        _c("wing_span_m", "float", "m", True, "Wing span.", min=5, max=90, typical="10 … 65"),
        _c("wing_height_m", "float", "m", _CLASS,
           "Height of the wing above the runway during the ground roll (ground effect).",
           min=0.3, max=10, typical="1 … 5"),
        _c("cd0_clean", "float", "–", _CLASS, "Zero-lift drag coefficient, clean.",
           min=0.01, max=0.1, typical="0.015 … 0.03"),
        _c("cd0_gear", "float", "–", _CLASS, "Zero-lift drag increment of the extended gear.",
           min=0, max=0.05, typical="0.01 … 0.02"),
        _c("cd0_takeoff_flaps", "float", "–", _CLASS,
           "Zero-lift drag increment of takeoff flaps.", min=0, max=0.08,
           typical="0.005 … 0.02"),
        _c("oswald_efficiency", "float", "–", _CLASS, "Span (Oswald) efficiency e.",
           min=0.5, max=1.0, typical="0.7 … 0.85"),
        _c("cl_ground_roll", "float", "–", _CLASS,
           "Lift coefficient during the ground roll (takeoff flaps, three wheels down).",
           min=0, max=1.5, typical="0.1 … 0.8"),
        _c("cl_max_takeoff", "float", "–", _CLASS,
           "Maximum lift coefficient with takeoff flaps (sets the stall speed).",
           min=1.0, max=3.5, typical="1.6 … 2.6"),
        _c("vr_over_vs", "float", "–", _CLASS, "Rotation speed / stall speed.",
           min=1.0, max=1.5, typical="1.05 … 1.15"),
        _c("vlof_over_vs", "float", "–", _CLASS, "Lift-off speed / stall speed.",
           min=1.0, max=1.6, typical="1.1 … 1.2"),
        _c("v2_over_vs", "float", "–", _CLASS,
           "Speed at the screen height (V2) / stall speed.", min=1.05, max=1.6,
           typical="1.13 … 1.3"),
        _c("engine_count", "int", "–", True, "Number of engines.", min=1, max=4),
        _c("thrust_model", "str", "", True,
           "Thrust model: `quadratic` (T0 + T1 V + T2 V² per engine), `turbofan` "
           "(lapse with Mach and pressure from the bypass ratio), `propeller` "
           "(shaft power × efficiency / V, capped by static thrust).",
           allowed=tuple(THRUST_MODELS)),
        _c("static_thrust_per_engine_kn", "float", "kN", True,
           "Sea-level ISA static thrust per engine (propeller: static thrust cap).",
           min=0.5, max=600, typical="2 … 450",
           si_name="static_thrust_per_engine_n", si_scale=1000.0),
        _c("thrust_linear_per_engine_n_per_mps", "float", "N/(m/s)", False,
           "Quadratic model: T1 per engine (usually negative); blank = 0.",
           min=-5000, max=5000, default=0.0),
        _c("thrust_quadratic_per_engine_n_per_mps2", "float", "N/(m/s)²", False,
           "Quadratic model: T2 per engine; blank = 0.", min=-50, max=50, default=0.0),
        _c("bypass_ratio", "float", "–", False,
           "Turbofan model: bypass ratio (required for `turbofan`); blank = 0.",
           min=0, max=15, default=0.0, typical="4 … 12"),
        _c("flat_rate_oat_c", "float", "°C", True,
           "Sea-level outside air temperature up to which thrust / power is held "
           "(ISA 15 °C = not flat rated).",
           min=-20, max=60, typical="15 … 35",
           si_name="flat_rate_oat_k", si_offset=273.15),
        _c("shaft_power_per_engine_kw", "float", "kW", False,
           "Propeller model: takeoff shaft power per engine (required for `propeller`); "
           "blank = 0.",
           min=0, max=10000, default=0.0, typical="100 … 4 000",
           si_name="shaft_power_per_engine_w", si_scale=1000.0),
        _c("propeller_efficiency", "float", "–", False,
           "Propeller model: propulsive efficiency at takeoff speeds (required for "
           "`propeller`); blank = 0.", min=0, max=0.95, default=0.0, typical="0.6 … 0.85"),
        _c("engine_out_drag_cd", "float", "–", _CLASS,
           "Drag coefficient increment of a failed engine (windmilling or feathered "
           "propeller and trim); 0 for single-engine types.",
           min=0, max=0.05, typical="0.002 … 0.01"),
        _c("vmcg_kt", "float", "kt", _CLASS,
           "Minimum control speed on the ground (CAS); 0 for single-engine types.",
           min=0, max=160, typical="60 … 125", si_name="vmcg_mps", si_scale=KT_TO_MPS),
        _c("braking_cl", "float", "–", _CLASS,
           "Lift coefficient during braking (lift dumpers deployed).",
           min=-0.5, max=1.5, typical="0 … 0.4"),
        _c("braking_cd_increment", "float", "–", _CLASS,
           "Drag coefficient added during braking (lift dumpers, spoilers).",
           min=0, max=0.1, typical="0 … 0.04"),
        _c("idle_thrust_fraction", "float", "–", _CLASS,
           "Idle thrust as a share of static thrust (during the stop).",
           min=0, max=0.2, typical="0.03 … 0.08"),
        _c("tailwind_limit_kt", "float", "kt", True, "Maximum tailwind component for takeoff.",
           min=0, max=20, typical="10 … 15",
           si_name="tailwind_limit_mps", si_scale=KT_TO_MPS),
        _c("crosswind_limit_kt", "float", "kt", True,
           "Maximum crosswind component for takeoff.", min=5, max=50, typical="15 … 38",
           si_name="crosswind_limit_mps", si_scale=KT_TO_MPS),
        _c("cruise_tas_kt", "float", "kt", True, "Cruise true airspeed.", min=60, max=550,
           typical="110 … 500", si_name="cruise_tas_mps", si_scale=KT_TO_MPS),
        _c("cruise_lift_to_drag", "float", "–", True, "Cruise lift-to-drag ratio.",
           min=5, max=25, typical="9 … 20"),
        _c("cruise_tsfc_g_per_kn_s", "float", "g/(kN s)", False,
           "Jets: cruise thrust-specific fuel consumption (blank for propeller types).",
           min=5, max=40, typical="14 … 22",
           si_name="cruise_tsfc_kg_per_n_s", si_scale=1e-6),
        _c("cruise_psfc_kg_per_kwh", "float", "kg/kWh", False,
           "Propeller types: cruise power-specific fuel consumption (blank for jets).",
           min=0.15, max=0.6, typical="0.22 … 0.35",
           si_name="cruise_psfc_kg_per_w_s", si_scale=1.0 / 3.6e6),
        _c("taxi_fuel_kg", "float", "kg", True, "Taxi-out fuel.", min=0, max=5000,
           typical="2 … 1 000"),
        _c("max_passengers", "int", "–", True, "Seats (for passenger payload).",
           min=0, max=900),
        # the takeoff event sequence (14 CFR 25.107, 25.109, 25.111; delays: common
        # flight-test practice); 0 everywhere gives the idealised sequence of earlier versions
        _c("engine_failure_recognition_s", "float", "s", False,
           "Time from the engine failure (V_EF) to the crew's first action (V1), accelerating "
           "on the remaining engines; 0 = failure recognised at V1.",
           min=0, max=5, default=1.0, typical="1"),
        _c("stop_action_interval_s", "float", "s", False,
           "Time between the stop actions after V1 (brakes, then thrust to idle, then lift "
           "dumpers); thrust spools down to idle over the interval after the idle command; "
           "0 = all at V1.",
           min=0, max=5, default=1.0, typical="1"),
        _c("rotation_pitch_deg", "float", "deg", False,
           "Pitch attitude gained from the ground roll to lift-off; with the rotation rate it "
           "sets the rotation time, and VLOF is at least VR plus the speed gained in it; "
           "0 = VLOF from the speed ratio alone.",
           min=0, max=20, default=8.0, typical="7 … 10"),
        _c("rotation_rate_deg_per_s", "float", "deg/s", False,
           "Pitch rate of the rotation.", min=0.5, max=10, default=3.0, typical="2 … 4"),
        _c("lineup_allowance_m", "float", "m", False,
           "Runway used to line up, subtracted from TORA, TODA and ASDA.",
           min=0, max=500, default=0.0, typical="0 … 60"),
        # the takeoff flight path over obstacles (physics.flightpath; used where a runway
        # direction has obstacles)
        _c("gear_retraction_s", "float", "s", False,
           "Time from the screen height to gear up (first segment of the takeoff path; common "
           "practice, from memory).", min=0, max=30, default=6.0, typical="5 … 10"),
        _c("acceleration_height_ft", "float", "ft", False,
           "Height of the level acceleration one engine out (at least 400 ft, 14 CFR 25.111(c)(2)).",
           min=400, max=1500, default=400.0, typical="400 … 1 000",
           si_name="acceleration_height_m", si_scale=0.3048),
        _c("max_acceleration_height_ft", "float", "ft", False,
           "Highest acceleration height the type may use to clear obstacles (takeoff-thrust time "
           "limit; from memory).", min=400, max=3000, default=1000.0, typical="800 … 1 500",
           si_name="max_acceleration_height_m", si_scale=0.3048),
        _c("mct_share", "float", "–", False,
           "Maximum continuous thrust (or power) as a share of takeoff thrust (final segment; from "
           "memory).", min=0.5, max=1.0, default=0.9, typical="0.85 … 0.95"),
        _c("cl_max_clean", "float", "–", False,
           "Maximum lift coefficient, clean (final takeoff speed 1.25 VS clean, 14 CFR 25.121(c); "
           "Raymer §12, from memory).", min=0.8, max=2.5, default=1.5, typical="1.2 … 1.6"),
        _c("cl_max_landing", "float", "–", _CLASS,
           "Maximum lift coefficient with landing flaps (sets the landing stall speed V_SR0 "
           "and VREF = 1.23 V_SR0).", min=1.0, max=4.0, typical="1.8 … 3.0"),
        _c("cd0_landing_flaps", "float", "–", _CLASS,
           "Zero-lift drag increment of landing flaps (landing roll and landing climb).",
           min=0, max=0.15, typical="0.05 … 0.08"),
        _c("landing_braking_cl", "float", "–", _CLASS,
           "Lift coefficient in the landing braking roll (landing flaps, lift dumpers "
           "deployed where fitted).", min=-0.5, max=1.5, typical="0 … 0.5"),
        _c("landing_free_roll_s", "float", "s", _CLASS,
           "Time from touchdown to full braking (the free roll).", min=0, max=5,
           typical="1 … 3"),
        _c("type_class", "str", "", False,
           "Class whose typical coefficients fill the blank cells. Blank: jets with 1 … 19 "
           "seats `business_jet`, other jets `transport_jet`; propeller types above 5 700 kg "
           "MTOW `regional_turboprop`, lighter ones `light_twin` (two or more engines) or "
           "`light_single`.",
           allowed=CLASS_NAMES),
    ),
    key=("aircraft_type_id",),
    rules=(
        "Blank coefficient cells take their class defaults first; the checks below see "
        "the values used (a message on such a cell says it holds the class default).",
        "`oew_kg` < `mtow_kg`; `oew_kg` + `max_payload_kg` ≤ `mtow_kg`; "
        "`oew_kg` < `max_landing_mass_kg` ≤ `mtow_kg` (errors).",
        "`oew_kg` + `max_payload_kg` ≤ `max_landing_mass_kg` and `oew_kg` + `max_fuel_kg` ≤ "
        "`mtow_kg` (warnings).",
        "`vr_over_vs` ≤ `vlof_over_vs` ≤ `v2_over_vs`; `cl_ground_roll` < `cl_max_takeoff`.",
        "`turbofan` needs `bypass_ratio` > 0; `propeller` needs `shaft_power_per_engine_kw` "
        "> 0, `propeller_efficiency` > 0 and `cruise_psfc_kg_per_kwh`; jets "
        "(`turbofan`, `quadratic`) need `cruise_tsfc_g_per_kn_s`.",
        "Multi-engine types need `vmcg_kt` > 0.",
    ),
)

ROUTE_DEFAULTS = {
    # common practice: great-circle distance times a few per cent for routing and airways
    "route_factor": 1.05,
    # common practice: contingency fuel 5 % of trip fuel (ICAO Annex 6 / EASA rules allow 5 %)
    "contingency_pct": 5.0,
    # common practice: a planning alternate 200 NM (370 km) away
    "alternate_distance_km": 370.0,
    # ICAO Annex 6 Part I, 4.3.6.3: final reserve 30 min holding for turbine aeroplanes
    # (45 min for piston types: give it per route)
    "final_reserve_min": 30.0,
    # common practice: a standard mass per passenger including baggage
    "passenger_mass_kg": 100.0,
}
"""Defaults for blank reserve-policy cells of the routes table."""

ROUTES = TableSpec(
    name="routes",
    description=(
        "Optional. One row per route and aircraft type (a route flown by two types is two "
        "rows with the same `route_id`). Blank policy cells take the defaults shown."
    ),
    columns=(
        _c("route_id", "str", "", True, "Identifier of the route.", **_ID),
        _c("origin_id", "str", "", True, "Departure airfield.", **_ID),
        _c("destination_id", "str", "", True, "Arrival airfield.", **_ID),
        _c("aircraft_type_id", "str", "", True, "Aircraft type flown.", **_ID),
        _c("route_factor", "float", "–", False,
           "Flown distance / great-circle distance.", min=1.0, max=1.5,
           default=ROUTE_DEFAULTS["route_factor"], typical="1.02 … 1.10"),
        _c("contingency_pct", "float", "%", False, "Contingency fuel, % of trip fuel.",
           min=0, max=20, default=ROUTE_DEFAULTS["contingency_pct"], typical="3 … 5",
           si_name="contingency_fraction", si_scale=0.01),
        _c("alternate_distance_km", "float", "km", False,
           "Distance from the destination to the alternate.", min=0, max=2000,
           default=ROUTE_DEFAULTS["alternate_distance_km"], typical="100 … 500",
           si_name="alternate_distance_m", si_scale=1000.0),
        _c("final_reserve_min", "float", "min", False,
           "Final reserve fuel as minutes of holding.", min=0, max=120,
           default=ROUTE_DEFAULTS["final_reserve_min"], typical="30 (turbine) / 45 (piston)",
           si_name="final_reserve_s", si_scale=60.0),
        _c("passenger_mass_kg", "float", "kg", False,
           "Standard mass per passenger including baggage.", min=30, max=200,
           default=ROUTE_DEFAULTS["passenger_mass_kg"], typical="85 … 105"),
    ),
    key=("route_id", "aircraft_type_id"),
    foreign_keys=(
        ForeignKey(("origin_id",), "airfields", ("airfield_id",)),
        ForeignKey(("destination_id",), "airfields", ("airfield_id",)),
        ForeignKey(("aircraft_type_id",), "aircraft_types", ("aircraft_type_id",)),
    ),
    required_file=False,
    rules=(
        "`origin_id` ≠ `destination_id`; rows sharing a `route_id` share origin and destination.",
    ),
)

REFERENCE_POINT_KINDS = ("field_length", "climb_limited_mass")
"""Kinds of reference point (``physics.calibration.KINDS``)."""

REFERENCE_POINTS = TableSpec(
    name="reference_points",
    description=(
        "Optional, for `fieldlimits calibrate`: published figures of a type read from the "
        "manufacturer's airport-planning charts, one row per point. `field_length`: the "
        "takeoff field length needed at `mass_kg` on a runway without clearway or stopway. "
        "`climb_limited_mass`: the largest mass meeting the takeoff climb gradient at the "
        "pressure altitude and temperature (give it in `mass_kg`). A run does not use the "
        "points; `check` and `run` check the table when it is there and a run stores it with "
        "its inputs."
    ),
    columns=(
        _c("aircraft_type_id", "str", "", True, "Aircraft type the point belongs to.", **_ID),
        _c("point_id", "str", "", True,
           "Identifier of the point, unique within the type (e.g. `tofl-sl-isa-mtow`).", **_ID),
        _c("kind", "str", "", True, "What the point gives.", allowed=REFERENCE_POINT_KINDS),
        _c("mass_kg", "float", "kg", True,
           "`field_length`: the takeoff mass; `climb_limited_mass`: the published "
           "climb-limited mass.", min=300, max=700000, typical="OEW … MTOW"),
        _c("field_length_m", "float", "m", False,
           "`field_length`: the published takeoff field length (metres, not feet); blank "
           "for `climb_limited_mass`.", min=100, max=8000, typical="600 … 4 000"),
        _c("pressure_altitude_m", "float", "m", True,
           "Pressure altitude of the point (the airfield elevation on a standard-pressure "
           "day; metres, not feet).", min=-500, max=5000, typical="0 … 3 000"),
        _c("oat_c", "float", "°C", True, "Outside air temperature.", min=-60, max=60,
           typical="ISA … ISA + 30", si_name="temperature_k", si_offset=273.15),
        _c("headwind_kt", "float", "kt", False,
           "Reported wind component along the runway, + headwind, − tailwind; factored as in "
           "a run (50 % of a headwind, 150 % of a tailwind); blank = 0.",
           min=-20, max=50, default=0.0, typical="0", si_name="headwind_mps",
           si_scale=KT_TO_MPS),
        _c("slope_pct", "float", "%", False, "Runway slope, + uphill; blank = 0.", min=-5, max=5,
           default=0.0, typical="0", si_name="slope", si_scale=0.01),
        _c("surface", "str", "", False, "Runway surface; blank = paved.", allowed=SURFACES,
           default="paved"),
        _c("condition", "str", "", False,
           "Runway condition: `dry` (35 ft screen) or `wet` (15 ft screen, never shorter "
           "than dry); blank = dry.", allowed=("dry", "wet"), default="dry"),
        _c("source", "str", "", False,
           "Where the figure comes from (chart and page), shown in the fit report."),
    ),
    key=("aircraft_type_id", "point_id"),
    foreign_keys=(ForeignKey(("aircraft_type_id",), "aircraft_types", ("aircraft_type_id",)),),
    required_file=False,
    rules=(
        "`field_length` rows need `field_length_m`; `climb_limited_mass` rows leave it blank.",
        "`fieldlimits calibrate` also refuses a mass outside the type's `oew_kg` … "
        "`mtow_kg` and a tailwind above its `tailwind_limit_kt`.",
    ),
)

TABLES: dict[str, TableSpec] = {
    t.name: t
    for t in (AIRFIELDS, RUNWAYS, CLIMATE_MONTHLY, WIND_ROSE, AIRCRAFT_TYPES, ROUTES,
              REFERENCE_POINTS, OBSTACLES)
}
"""Table name -> definition, in the order a user fills them in."""

FILE_SUFFIXES = (".csv", ".parquet")
"""Accepted file types: ``<table>.csv`` or ``<table>.parquet``."""
