"""Load a validated input folder and convert it to SI units.

>>> from schemas.load import load_folder
>>> from demo_network import demo_path
>>> tables = load_folder(demo_path())
>>> tables.runways[["airfield_id", "runway_id", "tora_m", "slope"]].head(2)  # doctest: +SKIP

The SI frames use the column names of :mod:`schemas.tables` ``Column.target`` (for
``aircraft_types``: the fields of ``physics.weightlimit.Aircraft``); ``Tables.user`` holds
the same tables in the user's units, blanks filled with the documented defaults, as stored
with a run.
"""

from __future__ import annotations

from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path

import pandas as pd

from fieldlimits.schemas.tables import TABLES, THRUST_MODELS, TableSpec
from fieldlimits.schemas.typeclasses import defaulted_columns, fill_class_defaults
from fieldlimits.schemas.validate import STREAMED, BlockSink, InputError, Problem, check_folder

#: Field order of ``physics.weightlimit.Aircraft`` (DEVELOPERS.md); the SI aircraft frame
#: carries exactly these columns after ``aircraft_type_id`` and ``name``, then
#: ``max_passengers``.
AIRCRAFT_FIELDS: tuple[str, ...] = (
    "mtow_kg", "oew_kg", "max_payload_kg", "max_fuel_kg", "max_landing_mass_kg",
    "wing_area_m2", "wing_span_m", "wing_height_m",
    "cd0_clean", "cd0_gear", "cd0_takeoff_flaps", "oswald_efficiency",
    "cl_ground_roll", "cl_max_takeoff",
    "vr_over_vs", "vlof_over_vs", "v2_over_vs",
    "engine_count", "thrust_model", "static_thrust_per_engine_n",
    "thrust_linear_per_engine_n_per_mps", "thrust_quadratic_per_engine_n_per_mps2",
    "bypass_ratio", "flat_rate_oat_k", "shaft_power_per_engine_w", "propeller_efficiency",
    "engine_out_drag_cd", "vmcg_mps", "braking_cl", "braking_cd_increment",
    "idle_thrust_fraction", "tailwind_limit_mps", "crosswind_limit_mps",
    "cruise_tas_mps", "cruise_lift_to_drag", "cruise_tsfc_kg_per_n_s",
    "cruise_psfc_kg_per_w_s", "taxi_fuel_kg",
    "engine_failure_recognition_s", "stop_action_interval_s", "rotation_pitch_deg",
    "rotation_rate_deg_per_s", "lineup_allowance_m",
    "gear_retraction_s", "acceleration_height_m", "max_acceleration_height_m", "mct_share", "cl_max_clean",
    # the landing configuration: fields of physics.landing.LandingConfig
    "cl_max_landing", "cd0_landing_flaps", "landing_braking_cl", "landing_free_roll_s",
)


_SI_NAMES = tuple(TABLES)


@dataclass(eq=False)
class Tables(Mapping):
    """The validated input tables (also a read-only mapping: table name -> SI frame).

    Attributes
    ----------
    airfields, runways, climate_monthly, wind_rose, aircraft_types, routes, reference_points, obstacles : DataFrame
        SI units (``runways.slope`` rise over run, ``climate_monthly.*_k`` kelvin,
        ``qnh_pa`` pascal, ``aircraft_types`` fields of ``physics.weightlimit.Aircraft``
        with ``thrust_model`` as its integer code, ``routes.contingency_fraction``,
        ``alternate_distance_m``, ``final_reserve_s``). ``routes`` is empty (with its
        columns) when the folder has no routes table, ``reference_points`` likewise (SI:
        ``temperature_k``, ``headwind_mps`` as reported, ``slope``). Wind-rose frequencies
        are shares. ``obstacles`` (empty without the table) keeps every row, those outside
        the departure area too (``schemas.departure``; the run leaves them out). Blank
        ``aircraft_types`` coefficients hold their class defaults
        (:mod:`schemas.typeclasses`).
        ``cruise_tsfc_kg_per_n_s`` is NaN for propeller types, ``cruise_psfc_kg_per_w_s``
        NaN for jets.
    user : dict of str to DataFrame
        The same tables in the user's units (column names of the input files), blank
        optional cells filled with their defaults; what a run stores as its inputs.
    warnings : list of Problem
        Warnings found while validating (no errors: those raise).
    source : Path
        The folder read.
    files : dict of str to Path
        The file read for each table.
    class_defaults : dict of str to tuple of str
        Aircraft type id → the columns filled from its class defaults.
    streamed : tuple of str
        Tables handed block by block to ``load_folder(stream=…)`` instead of kept: their
        frames here (SI and ``user``) are None.
    """

    airfields: pd.DataFrame
    runways: pd.DataFrame
    climate_monthly: pd.DataFrame
    wind_rose: pd.DataFrame
    aircraft_types: pd.DataFrame
    routes: pd.DataFrame
    reference_points: pd.DataFrame
    obstacles: pd.DataFrame
    user: dict[str, pd.DataFrame] = field(default_factory=dict)
    warnings: list[Problem] = field(default_factory=list)
    source: Path | None = None
    files: dict[str, Path] = field(default_factory=dict)
    class_defaults: dict[str, tuple[str, ...]] = field(default_factory=dict)
    streamed: tuple[str, ...] = ()

    def table(self, name: str) -> pd.DataFrame:
        """SI frame of a table by name."""
        return getattr(self, name)

    # Mapping protocol: ``dict(tables)`` gives {table name: SI frame}
    def __getitem__(self, name: str) -> pd.DataFrame:
        if name not in _SI_NAMES:
            raise KeyError(name)
        return getattr(self, name)

    def __iter__(self):
        return iter(_SI_NAMES)

    def __len__(self) -> int:
        return len(_SI_NAMES)



class TableStream:
    """Receives a large table block by block from ``load_folder(stream=…)``.

    ``start(name)`` opens each reading of the table (a reading that starts over voids what
    came before it); ``block(name, user, si)`` gets each checked block of whole
    airfield-months in file order, as :func:`user_frame` and :func:`si_frame` make it. The
    blocks are given before the folder is known to be valid: keep them aside until
    ``load_folder`` returns.
    """

    def start(self, name: str) -> None:  # pragma: no cover - interface
        raise NotImplementedError

    def block(self, name: str, user: pd.DataFrame, si: pd.DataFrame) -> None:  # pragma: no cover
        raise NotImplementedError


class _Converting(BlockSink):
    """Checked blocks (as read) → user-unit and SI blocks for a :class:`TableStream`."""

    def __init__(self, stream: TableStream):
        self.stream = stream

    def start(self, name: str) -> None:
        self.stream.start(name)

    def block(self, name: str, frame: pd.DataFrame) -> None:
        spec = TABLES[name]
        user = user_frame(frame, spec)
        self.stream.block(name, user, si_frame(user, spec))


def load_folder(path, stream: TableStream | None = None) -> Tables:
    """Validate an input folder and return its tables in SI units.

    Parameters
    ----------
    path : str or Path
        Folder with the input tables (see :func:`schemas.validate.validate_folder`).
    stream : TableStream or None
        Given, the large tables (:data:`schemas.validate.STREAMED`: the wind rose) go to it
        block by block as they are checked and are not held: ``Tables`` has None for them
        and names them in ``streamed``. Memory then stays bounded by the block size.

    Returns
    -------
    Tables
        Validated frames, SI and user units.

    Raises
    ------
    InputError
        When any error is found; ``exc.problems`` lists every problem (and warning).
    """
    check = check_folder(path, sink=_Converting(stream) if stream is not None else None)
    if not check.ok:
        raise InputError(check.problems)
    user = {}
    si = {}
    streamed = tuple(n for n in STREAMED if stream is not None and n in check.rows)
    for name, spec in TABLES.items():
        if name in streamed:
            user[name] = si[name] = None
            continue
        frame = check.frames.get(name)
        if frame is None:
            frame = _empty(spec)
        if name == "aircraft_types":  # blank coefficients: the class defaults
            frame, defaulted = fill_class_defaults(frame)
            class_defaults = defaulted_columns(frame, defaulted)
        user[name] = user_frame(frame, spec)
        si[name] = si_frame(user[name], spec)
    return Tables(**si, user=user,
                  warnings=[p for p in check.problems if p.severity == "warning"],
                  source=Path(path), files=dict(check.files), class_defaults=class_defaults,
                  streamed=streamed)


def _empty(spec: TableSpec) -> pd.DataFrame:
    return pd.DataFrame({c.name: pd.Series([], dtype=object if c.dtype == "str" else float)
                         for c in spec.columns})


def user_frame(frame: pd.DataFrame, spec: TableSpec) -> pd.DataFrame:
    """Typed frame in user units: ints as int64, text as object, a fresh 0-based index."""
    out = {}
    for c in spec.columns:
        s = frame[c.name]
        if c.dtype == "int":
            s = s.astype("int64") if c.required else s.astype(float)
        elif c.dtype == "float":
            s = s.astype(float)
        else:
            s = s.astype(object)
        out[c.name] = s.to_numpy()
    return pd.DataFrame(out, copy=False)


def si_frame(user: pd.DataFrame, spec: TableSpec) -> pd.DataFrame:
    """Convert a user-unit frame to SI with the conversions of the table definition."""
    # columns without a conversion share the user frame's data (copy-on-write: a change to
    # either frame copies the column then), so a large wind rose is held once
    df = user[[c.name for c in spec.columns]].rename(
        columns={c.name: c.target for c in spec.columns})
    for c in spec.columns:
        if c.dtype == "float" and (c.si_scale != 1.0 or c.si_offset != 0.0):
            df[c.target] = user[c.name].to_numpy(dtype=float) * c.si_scale + c.si_offset
    if spec.name == "aircraft_types":
        df["thrust_model"] = df["thrust_model"].map(THRUST_MODELS).astype("int64")
        df["engine_count"] = df["engine_count"].astype(float)
        df = df[["aircraft_type_id", "name", *AIRCRAFT_FIELDS, "max_passengers"]]
    return df


def aircraft_si_columns() -> tuple[str, ...]:
    """Columns of ``Tables.aircraft_types``, in order."""
    return ("aircraft_type_id", "name", *AIRCRAFT_FIELDS, "max_passengers")


__all__ = ["Tables", "TableStream", "load_folder", "InputError", "AIRCRAFT_FIELDS", "user_frame",
           "si_frame", "aircraft_si_columns"]
