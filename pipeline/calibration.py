"""``fieldlimits calibrate``: fit aircraft-type coefficients to published reference points.

The steps, each a plain function:

1. :func:`calibrate` validates and loads the input folder (:func:`schemas.load.load_folder`,
   which checks ``reference_points`` like every other table and fills blank coefficients
   from the class defaults), checks each point against its type (:func:`point_problems`:
   mass within OEW … MTOW, tailwind within the type's limit) and fits each type with points
   (:func:`physics.calibration.fit_coefficients`; the fitting maths lives there).
2. :func:`write_calibration` writes a new input folder: every table file copied unchanged
   except ``aircraft_types``, whose calibrated rows carry the fitted coefficients and, made
   explicit, every class default the fit used (with ``type_class``); and a ``calibration/``
   folder with the fit report (:mod:`pipeline.calibration_report`). The folder is built
   beside its destination and renamed into place: nothing half-written is ever left.

Which coefficients are fitted (``fit``): ``blank`` (default) those of :data:`FIT_COLUMNS` the
table left blank (they came from class defaults, the least certain figures), ``all`` every
one of :data:`FIT_COLUMNS`, or an explicit list. Each starts from, and is pulled towards, the
value the table gives or the class default, with the class spread as its prior standard
deviation (:func:`schemas.typeclasses.prior_sd`); ``engine_out_drag_cd`` only for
multi-engine types.
"""

from __future__ import annotations

import dataclasses
import os
import shutil
import time
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from fieldlimits.pipeline.errors import BadInput
from fieldlimits.schemas import typeclasses
from fieldlimits.schemas.tables import AIRCRAFT_TYPES

#: Coefficients a calibration may fit, in report order (all dimensionless: user unit = SI).
FIT_COLUMNS = ("cl_max_takeoff", "cl_ground_roll", "cd0_clean", "cd0_gear", "cd0_takeoff_flaps",
               "oswald_efficiency", "vr_over_vs", "v2_over_vs", "engine_out_drag_cd", "braking_cl",
               "braking_cd_increment", "idle_thrust_fraction")
#: Of those, the ones that only act with an engine out.
MULTI_ENGINE_ONLY = ("engine_out_drag_cd",)
#: Subfolder of the output folder holding the report.
REPORT_DIR = "calibration"
#: Significant digits of the coefficients written to the calibrated table.
DIGITS = 5


@dataclass
class TypeFit:
    """The calibration of one aircraft type."""

    aircraft_type_id: str
    name: str
    type_class: str
    points: pd.DataFrame            # the type's reference points, user units
    fit: object                     # physics.calibration.Fit
    coefficients: pd.DataFrame      # one row per fitted coefficient (see coefficient_table)
    written: dict                   # column -> value written to the calibrated table
    seconds: float


@dataclass
class Calibration:
    """Everything :func:`calibrate` found, for :func:`write_calibration` and the report."""

    input_dir: Path
    tables: object                  # schemas.load.Tables
    fits: list[TypeFit] = field(default_factory=list)
    without_points: list[str] = field(default_factory=list)
    fit_choice: str = "blank"
    point_share_sd: float = 0.01


def fit_columns(choice, defaulted: tuple[str, ...], engine_count: float) -> tuple[str, ...]:
    """The coefficients to fit for one type (``choice``: ``blank``, ``all`` or names)."""
    if choice == "blank":
        cols = [c for c in FIT_COLUMNS if c in defaulted]
    elif choice == "all":
        cols = list(FIT_COLUMNS)
    else:
        cols = [c for c in FIT_COLUMNS if c in set(choice)]
    if engine_count < 2:
        cols = [c for c in cols if c not in MULTI_ENGINE_ONLY]
    return tuple(cols)


def parse_fit_choice(text: str):
    """``blank``, ``all`` or a comma-separated list of :data:`FIT_COLUMNS` (BadInput else)."""
    text = (text or "blank").strip()
    if text in ("blank", "all"):
        return text
    names = [n.strip() for n in text.split(",") if n.strip()]
    unknown = [n for n in names if n not in FIT_COLUMNS]
    if unknown or not names:
        raise BadInput(f"--fit {text!r}: expected blank, all or a comma-separated list of "
                       f"{', '.join(FIT_COLUMNS)}" + (f" (unknown: {', '.join(unknown)})" if unknown else ""))
    return tuple(names)


def _bounds(col: str, row: pd.Series, fitted: tuple[str, ...]) -> tuple[float, float]:
    """Hard limits of a fitted coefficient: the column's allowed range, narrowed so that the
    cross-column rules of ``aircraft_types`` hold for every value the fit may try
    (vr ≤ vlof ≤ v2 with vlof fixed; cl_ground_roll < cl_max_takeoff, split at
    max(cl_ground_roll, cl_max_takeoff / 2) when both are fitted)."""
    spec = AIRCRAFT_TYPES.column(col)
    lo, hi = float(spec.min), float(spec.max)
    clg, clmax = float(row["cl_ground_roll"]), float(row["cl_max_takeoff"])
    split = max(clg, 0.5 * clmax) if {"cl_ground_roll", "cl_max_takeoff"} <= set(fitted) else None
    if col == "vr_over_vs":
        hi = min(hi, float(row["vlof_over_vs"]))
    elif col == "v2_over_vs":
        lo = max(lo, float(row["vlof_over_vs"]))
    elif col == "cl_ground_roll":
        hi = min(hi, split if split is not None else clmax - 1e-6)
    elif col == "cl_max_takeoff":
        lo = max(lo, (split if split is not None else clg) + 1e-6)
    return lo, hi


def _aircraft(si_row: pd.Series):
    from fieldlimits.physics.weightlimit import Aircraft

    # every field the table has (a field without a column keeps its dataclass default)
    return Aircraft(**{f.name: float(si_row[f.name]) for f in dataclasses.fields(Aircraft) if f.name in si_row.index})


def reference_points_of(points_si: pd.DataFrame):
    """``physics.calibration.ReferencePoints`` of reference-point rows (SI frame)."""
    from fieldlimits.physics import calibration

    kind = points_si["kind"].to_numpy(dtype=object)
    published = np.where(kind == "field_length", points_si["field_length_m"].to_numpy(dtype=float),
                         points_si["mass_kg"].to_numpy(dtype=float))
    return calibration.reference_points(
        kind=kind, mass_kg=points_si["mass_kg"].to_numpy(dtype=float),
        pressure_altitude_m=points_si["pressure_altitude_m"].to_numpy(dtype=float),
        temperature_k=points_si["temperature_k"].to_numpy(dtype=float),
        reported_headwind_mps=points_si["headwind_mps"].to_numpy(dtype=float),
        slope=points_si["slope"].to_numpy(dtype=float), surface=points_si["surface"].to_numpy(dtype=object),
        condition=points_si["condition"].to_numpy(dtype=object), published=published)


def point_problems(tables) -> list:
    """Problems of reference points against their types (mass range, tailwind limit)."""
    from fieldlimits.schemas.validate import Problem

    pts = tables.user["reference_points"]
    if pts is None or not len(pts):
        return []
    file = tables.files["reference_points"].name if "reference_points" in tables.files else "reference_points.csv"
    types = tables.user["aircraft_types"].set_index("aircraft_type_id")
    out = []
    for i, row in pts.iterrows():
        t = types.loc[row["aircraft_type_id"]]
        mass, oew, mtow = float(row["mass_kg"]), float(t["oew_kg"]), float(t["mtow_kg"])
        if not oew <= mass <= mtow:
            out.append(Problem("error", file, int(i) + 1, "mass_kg", f"{mass:g}",
                               f"{oew:g} … {mtow:g} (oew_kg … mtow_kg of {row['aircraft_type_id']})",
                               "mass outside the type's empty mass and MTOW: check the type and "
                               "the unit (kg, not lb or tonnes)"))
        wind = float(row["headwind_kt"])
        if wind < 0 and -wind > float(t["tailwind_limit_kt"]) + 1e-9:
            out.append(Problem("error", file, int(i) + 1, "headwind_kt", f"{wind:g}",
                               f"a tailwind of at most {float(t['tailwind_limit_kt']):g} kt "
                               f"(tailwind_limit_kt of {row['aircraft_type_id']})",
                               "tailwind above the type's limit: no takeoff is scheduled there"))
    return out


def _round(value: float) -> float:
    return float(f"{value:.{DIGITS}g}")


def coefficient_table(type_class: str, fitted: tuple[str, ...], defaulted: tuple[str, ...], fit) -> pd.DataFrame:
    """One row per fitted coefficient: where it started, where it ended, how well pinned."""
    rows = []
    for j, col in enumerate(fitted):
        share = float(fit.posterior_sd[j] / fit.prior_sd[j])
        rows.append({
            "coefficient": col,
            "started_from": (f"class default of {type_class}" if col in defaulted else "the table"),
            "before": float(fit.start[j]), "after": _round(float(fit.value[j])),
            "prior_sd": float(fit.prior_sd[j]), "posterior_sd": float(fit.posterior_sd[j]),
            "posterior_share": share, "determined": bool(fit.determined[j]),
            "at_limit": bool(fit.at_bound[j]),
        })
    return pd.DataFrame(rows, columns=["coefficient", "started_from", "before", "after", "prior_sd", "posterior_sd",
                                       "posterior_share", "determined", "at_limit"])


def calibrate(input_dir, *, fit="blank", type_ids=None, point_share_sd=None, progress=None) -> Calibration:
    """Validate a folder and fit every type that has reference points.

    Parameters
    ----------
    input_dir : str or Path
        Input folder with a ``reference_points`` table.
    fit : str or tuple of str
        ``blank``, ``all`` or coefficient names (see the module docstring).
    type_ids : list of str, optional
        Calibrate only these types.
    point_share_sd : float, optional
        Relative uncertainty of a published value (default
        ``physics.calibration.POINT_SHARE_SD``, 1 %).
    progress : callable, optional
        ``progress(message)`` after each type.
    """
    from fieldlimits.physics import calibration as phys
    from fieldlimits.pipeline.inputs import problem_text
    from fieldlimits.schemas.load import load_folder
    from fieldlimits.schemas.validate import InputError

    folder = Path(input_dir)
    if not folder.is_dir():
        raise BadInput(f"input folder {folder} does not exist")
    try:
        tables = load_folder(folder)
    except InputError as exc:
        raise BadInput(problem_text(exc.problems)) from None
    problems = point_problems(tables)
    if problems:
        raise BadInput(problem_text(problems))
    share_sd = phys.POINT_SHARE_SD if point_share_sd is None else float(point_share_sd)
    if not 0.0 < share_sd < 1.0:
        raise BadInput(f"--point-uncertainty must be above 0 and below 100 %, not {100 * share_sd:g} %")
    points_user, points_si = tables.user["reference_points"], tables.reference_points
    if not len(points_si):
        raise BadInput(f"{folder} has no reference_points table (or it is empty): add "
                       "reference_points.csv with the published field lengths of your types "
                       "(see the input reference in the README)")
    types_user = tables.user["aircraft_types"]
    known = list(types_user["aircraft_type_id"].astype(str))
    if type_ids:
        unknown = sorted(set(type_ids) - set(known))
        if unknown:
            raise BadInput(f"--type {', '.join(unknown)}: not in aircraft_types; known: {', '.join(known)}")
    result = Calibration(folder, tables, fit_choice=fit if isinstance(fit, str) else ",".join(fit),
                         point_share_sd=share_sd)
    say = progress or (lambda message: None)
    for pos, type_id in enumerate(known):
        if type_ids and type_id not in type_ids:
            continue
        mine = np.flatnonzero(points_si["aircraft_type_id"].astype(str).to_numpy() == type_id)
        if mine.size == 0:
            result.without_points.append(type_id)
            continue
        start = time.perf_counter()
        user_row = types_user.iloc[pos]
        si_row = tables.aircraft_types.iloc[pos]
        type_class = str(user_row["type_class"])
        defaulted = tables.class_defaults.get(type_id, ())
        fitted = fit_columns(fit, defaulted, float(user_row["engine_count"]))
        coefficients = []
        for col in fitted:
            value = float(user_row[col])
            lo, hi = _bounds(col, user_row, fitted)
            sd = typeclasses.prior_sd(type_class, col, value)
            coefficients.append(phys.Coefficient(col, value, sd, lo, hi))
        points = reference_points_of(points_si.iloc[mine])
        found = phys.fit_coefficients(_aircraft(si_row), points, coefficients, point_share_sd=share_sd)
        written = {col: float(user_row[col]) for col in defaulted}
        written.update({col: _round(float(v)) for col, v in zip(found.names, found.value)})
        result.fits.append(TypeFit(
            type_id, str(user_row["name"]), type_class, points_user.iloc[mine].reset_index(drop=True), found,
            coefficient_table(type_class, fitted, defaulted, found), written, time.perf_counter() - start))
        say(f"{type_id}: {mine.size} points, {len(fitted)} coefficients")
    return result


def calibrated_types_frame(result: Calibration) -> pd.DataFrame:
    """The input's ``aircraft_types`` file as read, with the calibrated rows' cells replaced.

    Text cells for a CSV source (everything else kept as written), typed for Parquet.
    """
    path = result.tables.files["aircraft_types"]
    if path.suffix == ".parquet":
        frame = pd.read_parquet(path)
        text = False
    else:
        frame = pd.read_csv(path, dtype=str, keep_default_na=False, encoding="utf-8-sig")
        frame.columns = [str(c).strip() for c in frame.columns]
        text = True
    ids = frame["aircraft_type_id"].astype(str).str.strip()
    for tf in result.fits:
        cols = {**tf.written, "type_class": tf.type_class}
        for col in cols:
            if col not in frame.columns:
                frame[col] = "" if text else (None if col == "type_class" else np.nan)
        at = ids == tf.aircraft_type_id
        for col, value in cols.items():
            if text:
                frame.loc[at, col] = value if isinstance(value, str) else f"{value:.{DIGITS + 1}g}"
            else:
                frame.loc[at, col] = value
    return frame


def _destination_problem(result: Calibration, out: Path, overwrite: bool) -> str | None:
    src = result.input_dir.resolve()
    if out.resolve() == src:
        return (f"--out {out} is the input folder; write the calibrated tables to a new folder "
                "(the input stays as it is)")
    if out.exists() and not out.is_dir():
        return f"--out {out} is a file, not a folder"
    if out.exists() and any(out.iterdir()) and not overwrite:
        return f"--out {out} exists and is not empty; choose a new folder or add --overwrite"
    return None


def write_calibration(result: Calibration, out_dir, *, overwrite: bool = False) -> Path:
    """Write the calibrated input folder and its report; return the report's index page.

    Built in a hidden folder beside ``out_dir`` and renamed into place (an existing
    ``out_dir`` with ``overwrite`` is replaced only once the new one is complete).
    """
    from fieldlimits.pipeline import calibration_report

    out = Path(out_dir)
    trouble = _destination_problem(result, out, overwrite)
    if trouble:
        raise BadInput(trouble)
    out.parent.mkdir(parents=True, exist_ok=True)
    tmp = out.with_name(f".{out.name}.tmp-{os.getpid()}")
    if tmp.exists():
        shutil.rmtree(tmp)
    tmp.mkdir()
    try:
        for name, path in result.tables.files.items():
            if name != "aircraft_types":
                shutil.copy2(path, tmp / path.name)
        types_path = result.tables.files["aircraft_types"]
        frame = calibrated_types_frame(result)
        if types_path.suffix == ".parquet":
            frame.to_parquet(tmp / types_path.name, index=False)
        else:
            frame.to_csv(tmp / types_path.name, index=False, lineterminator="\n")
        index = calibration_report.write_report(result, tmp / REPORT_DIR)
        old = None
        if out.exists():
            old = out.with_name(f".{out.name}.old-{os.getpid()}")
            os.replace(out, old)
        os.replace(tmp, out)
        if old is not None:
            shutil.rmtree(old, ignore_errors=True)
    except BaseException:
        shutil.rmtree(tmp, ignore_errors=True)
        raise
    return out / REPORT_DIR / index.name


__all__ = ["FIT_COLUMNS", "MULTI_ENGINE_ONLY", "REPORT_DIR", "TypeFit", "Calibration", "fit_columns",
           "parse_fit_choice", "point_problems", "calibrate", "calibrated_types_frame", "write_calibration",
           "reference_points_of", "coefficient_table"]
