"""The planning report: PNG charts, one static HTML page and the payload-planning CSV.

``fieldlimits report`` reads one complete run from the store (read-only; by default the last
complete baseline run) and writes into a folder:

``index.html``
    the caution, the run's scenario (baseline or a temperature offset, with its conditions
    and reliability levels), run facts, summary tables and every chart;
``airfield-<slug>.png``
    per airfield: monthly takeoff-weight limit per aircraft type as % of MTOW (design day,
    dry solid, wet dashed; the axis spans at least 80 … 104 %), each type's MTOW dotted, and
    a strip under it crossing the months with no takeoff, one row per runway condition;
``route-<slug>.png``
    per route: monthly payload available per aircraft type and level (design day and each
    reliability level, dry runway), max payload dashed, and a strip crossing the months a
    level is not possible, one row per level;
``network-airfields.png``
    airfields × months, coloured by the takeoff-mass shortfall below MTOW of the worst
    aircraft type, as a share of its max payload (dry, design day); "no takeoff" has its own
    colour, never a value of the scale;
``network-routes.png``
    routes × months, coloured by the share of payload the origin's takeoff limit costs;
    "not possible" in its own colour;
``changes-routes.png``, ``changes-airfields.png``, ``changes.csv``
    when there is an earlier run to compare with (:mod:`pipeline.compare`): payload and
    takeoff-weight limit changes by month on a diverging scale, and every changed row;
``flightpath-<airfield>-<runway>.png``
    per best runway direction whose design-day limit (dry) an obstacle sets: the takeoff
    flight path with one engine inoperative, gross and net, over its obstacles
    (:mod:`pipeline.report_obstacles`);
``payload_planning.csv``
    one row per route × type × month (units in headers, the run and scenario as columns,
    the caution in a last column: :mod:`pipeline.export`).

Every chart carries the run, its scenario and the caution along its bottom edge. File names
are slugs of the ids, so a rerun overwrites the same files. Drawing uses matplotlib's Agg
canvas without pyplot (no display, no global figure state).
"""

from __future__ import annotations

import hashlib
import html
import os
import re
import time
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd
from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.colors import LinearSegmentedColormap
from matplotlib.figure import Figure

from fieldlimits.pipeline import export, routes, store
from fieldlimits.pipeline.errors import BadInput
from fieldlimits.schemas.caution import CAUTION

#: Line colours per aircraft type, in type order (our own palette).
TYPE_COLOURS = ("#2b5f8a", "#c8782a", "#4e8a4a", "#8a3f6d", "#3f8f8f", "#9a5a2e",
                "#6b6bb0", "#7a7a3a", "#b04a5a", "#4a4a4a")
#: Line style per result level (design day and reliability levels).
LEVEL_STYLES = {"design_day": "-", "p50": "--", "p85": "-.", "p95": ":"}
#: Marker of a design-day payload by the end that limits it (``route_payload.limiting_end``).
END_MARKERS = {"origin": "^", "destination": "v", "aircraft": "o"}
END_LABELS = {"origin": "origin limits (takeoff)", "destination": "destination limits (landing)",
              "aircraft": "aircraft limits (payload, fuel)"}
#: Sequential colour map for restrictions: pale sand (none) to deep wine (all).
RESTRICTION_CMAP = LinearSegmentedColormap.from_list(
    "fieldlimits_restriction", ["#f4f1e8", "#e9cf8f", "#d9934f", "#b5523b", "#6b1f3a"])
MONTHS = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec")
DPI = 100
PNG_METADATA = {"Software": None}  # keep PNG bytes free of version strings
PLANNING_CSV = "payload_planning.csv"


@dataclass
class ReportData:
    """What the report draws, read from one run (or built by hand in tests)."""

    airfield_results: pd.DataFrame
    route_payload: pd.DataFrame
    aircraft: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=["aircraft_type_id", "name", "mtow_kg", "max_payload_kg"]))
    airfields: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(
        columns=["airfield_id", "name", "elevation_m"]))
    run_id: int | None = None
    finished_at: object = None
    input_dir: str | None = None
    scenario: str = "baseline"
    scenario_details: str | None = None  # conditions and reliability levels, in words
    comparison: object = None  # a pipeline.compare.Comparison with an earlier run, or None
    comparison_note: str | None = None  # why there is no comparison
    flight_paths: list = field(default_factory=list)  # obstacle-limited runways (report_obstacles)


@dataclass
class ReportResult:
    """Files written by :func:`build_report` and how long it took."""

    out_dir: Path
    index: Path
    charts: list[Path]
    planning_csv: Path | None
    seconds: float
    run_id: int | None = None
    scenario: str = "baseline"


def slug(text: str) -> str:
    """File-name slug: lowercase letters, digits and single hyphens."""
    s = re.sub(r"[^a-z0-9]+", "-", str(text).lower()).strip("-")
    return s or "x"


def unique_slugs(ids) -> dict[str, str]:
    """A slug per id, made unique by a short hash suffix where two ids slug alike."""
    ids = list(dict.fromkeys(str(i) for i in ids))
    base = {i: slug(i) for i in ids}
    counts = pd.Series(list(base.values())).value_counts()
    out = {}
    for i in ids:
        s = base[i]
        if counts[s] > 1:
            s = f"{s}-{hashlib.sha1(i.encode()).hexdigest()[:6]}"
        out[i] = s
    return out


# --- reading the store ---------------------------------------------------------------------

def _exists(con, table: str) -> bool:
    return bool(con.execute(
        "SELECT count(*) FROM information_schema.tables WHERE table_name = $t",
        {"t": table}).fetchone()[0])


def _details(conditions, levels, reliability_conditions) -> str:
    """``conditions dry, wet; reliability levels 0.5, 0.85, 0.95 on dry``."""
    parts = []
    if conditions:
        parts.append("conditions " + str(conditions).replace(",", ", "))
    if levels is not None and not pd.isna(levels):
        parts.append("reliability levels " + (str(levels).replace(",", ", ") or "none")
                     + (f" on {str(reliability_conditions).replace(',', ', ')}"
                        if levels and reliability_conditions else ""))
    return "; ".join(parts)


def load_report_data(db_path, run_id: int | None = None, compare_with="auto") -> ReportData:
    """Read one complete run (the last complete baseline run by default) from the store.

    ``compare_with``: a run number, ``"auto"`` (a scenario run against the last baseline run
    before it, a baseline run against the baseline run before it, as ``fieldlimits compare``)
    or None (no comparison).
    """
    from fieldlimits.pipeline import compare

    with store.reader(db_path) as con:
        if not _exists(con, "runs"):
            raise BadInput(f"{db_path} holds no fieldlimits runs; run `fieldlimits run` first")
        run = con.execute(store.sql("report_run"), {"run_id": run_id}).fetchone()
        if run is None:
            if run_id is not None:
                raise BadInput(f"run {run_id} is not a complete run in {db_path}; see "
                               f"`fieldlimits runs`")
            others = con.execute(store.sql("complete_runs")).fetchall()
            if others:
                listed = ", ".join(f"{r[0]} ({r[1]})" for r in others[:5])
                raise BadInput(f"{db_path} has no complete baseline run (no temperature offset), "
                               f"which the report draws by default; complete scenario runs: "
                               f"{listed}; draw one with --run N")
            raise BadInput(f"there is no complete run yet in {db_path}; see `fieldlimits runs`")
        rid, finished_at, input_dir, scenario, conditions, levels, rel_conditions = run
        params = {"run_id": rid}
        airfield = con.execute(store.sql("report_airfield_results"), params).df()
        route = (con.execute(store.sql("report_route_payload"), params).df()
                 if _exists(con, "route_payload") else pd.DataFrame())
        aircraft = (con.execute(store.sql("report_aircraft_types"), params).df()
                    if _exists(con, "input_aircraft_types") else None)
        airfields = (con.execute(store.sql("report_airfields"), params).df()
                     if _exists(con, "input_airfields") else None)
    data = ReportData(airfield, route, run_id=int(rid), finished_at=finished_at,
                      input_dir=input_dir, scenario=str(scenario),
                      scenario_details=_details(conditions, levels, rel_conditions))
    if aircraft is not None:
        data.aircraft = aircraft
    if airfields is not None:
        data.airfields = airfields
    from fieldlimits.pipeline import report_obstacles

    data.flight_paths = report_obstacles.load_flight_paths(db_path, int(rid))
    if compare_with is not None:
        before = None if compare_with == "auto" else int(compare_with)
        try:
            data.comparison = compare.compare_runs(db_path, before, int(rid))
        except BadInput as exc:
            if compare_with != "auto":
                raise
            data.comparison_note = str(exc)
    return data


# --- selecting -------------------------------------------------------------------------------

def _select(data: ReportData, airfield_ids, route_ids) -> tuple[list[str], list[str]]:
    all_fields = sorted(data.airfield_results["airfield_id"].astype(str).unique())
    rp = data.route_payload
    all_routes = sorted(rp["route_id"].astype(str).unique()) if len(rp) else []
    if airfield_ids:
        unknown = sorted(set(airfield_ids) - set(all_fields))
        if unknown:
            raise BadInput(f"--airfield {', '.join(unknown)}: no results for that airfield in this "
                           f"run; known: {', '.join(all_fields[:20])}"
                           + (" ..." if len(all_fields) > 20 else ""))
    if route_ids:
        unknown = sorted(set(route_ids) - set(all_routes))
        if unknown:
            raise BadInput(f"--route {', '.join(unknown)}: no payloads for that route in this run; "
                           f"known: {', '.join(all_routes[:20]) or '(none)'}"
                           + (" ..." if len(all_routes) > 20 else ""))
    fields_sel = sorted(set(airfield_ids)) if airfield_ids else all_fields
    routes_sel = sorted(set(route_ids)) if route_ids else all_routes
    if airfield_ids and not route_ids and len(rp):
        touch = rp[rp["origin_id"].isin(fields_sel) | rp["destination_id"].isin(fields_sel)]
        routes_sel = sorted(touch["route_id"].astype(str).unique())
    if route_ids and not airfield_ids:
        fields_sel = sorted(rp.loc[rp["route_id"].isin(routes_sel), "origin_id"].astype(str)
                            .unique())
    return fields_sel, routes_sel


# --- drawing -------------------------------------------------------------------------------

def _figure(width_in: float, height_in: float) -> Figure:
    fig = Figure(figsize=(width_in, height_in), dpi=DPI)
    FigureCanvasAgg(fig)
    return fig


def _save(fig: Figure, path: Path) -> Path:
    fig.savefig(path, dpi=DPI, metadata=PNG_METADATA)
    return path


def _footer(fig: Figure, text: str | None) -> None:
    """The run, its scenario and the caution along the bottom edge: a chart pasted into a
    slide keeps them."""
    if text:
        fig.text(0.01, 0.008, text, fontsize=6.3, color="#555555", ha="left", va="bottom")


def footer_text(data: "ReportData") -> str:
    """``Run 5, scenario temperature +2 K. Planning estimates only: …``."""
    run = f"Run {data.run_id}, scenario {data.scenario}. " if data.run_id is not None else \
        f"Scenario {data.scenario}. "
    return run + CAUTION


def _type_colours(type_ids) -> dict[str, str]:
    return {t: TYPE_COLOURS[i % len(TYPE_COLOURS)] for i, t in enumerate(sorted(set(type_ids)))}


def _month_axis(ax, labels: bool = True) -> None:
    ax.set_xticks(range(1, 13))
    ax.set_xticklabels(MONTHS if labels else [])
    ax.set_xlim(0.5, 12.5)
    if labels:
        ax.set_xlabel("Month")
    ax.grid(True, color="#dddddd", linewidth=0.6)


def _monthly(frame: pd.DataFrame, value: str) -> np.ndarray:
    s = frame.groupby("month")[value].first().reindex(range(1, 13))
    return s.to_numpy(dtype=float)


def _names(frame: pd.DataFrame, key: str) -> dict[str, str]:
    if frame is None or frame.empty or "name" not in frame.columns:
        return {}
    return dict(zip(frame[key].astype(str), frame["name"].astype(str)))


def _style_legend(fig: Figure, entries, y: float = 0.035) -> None:
    """Legend of the line styles (black), in one row under the plot."""
    from matplotlib.lines import Line2D

    handles = [Line2D([], [], color="#333333", linestyle=ls, marker=mk, markersize=4,
                      linewidth=lw) for ls, mk, lw, _ in entries]
    fig.legend(handles, [e[3] for e in entries], loc="lower left", bbox_to_anchor=(0.07, y),
               ncol=len(entries), fontsize=8, frameon=False, handlelength=2.4,
               columnspacing=1.4)


def percent_axis_floor(values: np.ndarray) -> float:
    """Lower end of a "% of MTOW" axis: at most 80 %, and 10 % steps below the lowest value.

    The axis always spans at least 80 … 104 %, so a dip of 0.4 % of MTOW stays a small dip
    (under 2 % of the axis height) instead of filling the chart.
    """
    finite = values[np.isfinite(values)]
    low = float(finite.min()) if finite.size else 100.0
    return max(0.0, min(80.0, 10.0 * np.floor((low - 2.0) / 10.0)))


def _impossible_strip(fig: Figure, box, rows: list[tuple[str, list[tuple[np.ndarray, str]]]],
                      title: str):
    """Under a monthly chart: one row per level (or condition) with a cross, in the type's
    colour, for each month in which that level is not possible; "none" when nothing is."""
    ax = fig.add_axes(box)
    n = len(rows)
    offsets = {}
    for i, (label, marks) in enumerate(rows):
        y = n - 1 - i
        colours = sorted({c for _, c in marks})
        for j, c in enumerate(colours):
            offsets[c] = (j - (len(colours) - 1) / 2) * 0.12
        for months, c in marks:
            ax.plot(months + offsets[c], np.full(months.size, y), "x", color=c, markersize=6,
                    markeredgewidth=1.5, clip_on=False)
    ax.set_ylim(-0.6, n - 0.4)
    ax.set_yticks(range(n))
    ax.set_yticklabels([label for label, _ in reversed(rows)], fontsize=7.5)
    _month_axis(ax)
    ax.grid(False)
    ax.set_title(title, fontsize=7.5, loc="left", pad=2, color="#333333")
    if not any(marks for _, marks in rows):
        ax.text(6.5, (n - 1) / 2, "none", ha="center", va="center", fontsize=7.5, color="#777777")
    for side in ("top", "right"):
        ax.spines[side].set_visible(False)
    return ax


def draw_airfield(results: pd.DataFrame, airfield_id: str, path: Path, colours,
                  mtow_kg: dict, name: str | None = None, footer: str | None = None) -> Path:
    """:func:`airfield_figure` saved as a PNG at ``path``."""
    return _save(airfield_figure(results, airfield_id, colours, mtow_kg, name, footer), path)


def airfield_figure(results: pd.DataFrame, airfield_id: str, colours, mtow_kg: dict,
                    name: str | None = None, footer: str | None = None) -> Figure:
    """Monthly takeoff-weight limit per aircraft type at one airfield, MTOW marked.

    ``results`` holds this airfield's design-day rows (``results_airfield`` columns). Types
    of very different size share one axis, so the limit is drawn as a percentage of each
    type's MTOW (MTOW = the 100 % line; the legend gives each MTOW in tonnes); the axis spans
    at least 80 … 104 % (:func:`percent_axis_floor`). Without MTOW figures the limit is drawn
    in tonnes from zero. Months with no takeoff are crossed in a strip under the chart, one
    row per runway condition.
    """
    have_mtow = any(np.isfinite(mtow_kg.get(t, np.nan))
                    for t in results["aircraft_type_id"].unique())
    fig = _figure(9.0, 5.0)
    ax = fig.add_axes((0.1, 0.40, 0.62, 0.52))
    months = np.arange(1, 13)
    handles, finite = [], []
    no_takeoff = {"dry": [], "wet": []}
    for t, by in results.groupby("aircraft_type_id", sort=True):
        c = colours[t]
        m = mtow_kg.get(t, np.nan)
        scale = (100.0 / m) if have_mtow and np.isfinite(m) else 1e-3
        line = None
        for cond, style in (("dry", "-"), ("wet", "--")):
            part = by[by["condition"] == cond]
            if part.empty:
                continue
            y = _monthly(part, "tow_limit_kg") * scale
            present = _monthly(part.assign(_one=1.0), "_one") == 1.0
            if np.isfinite(y).any():
                (h,) = ax.plot(months, y, style, color=c, marker="o" if cond == "dry" else None,
                               markersize=4, linewidth=1.8 if cond == "dry" else 1.2)
                line = line or h
                finite.append(y[np.isfinite(y)])
            gone = present & ~np.isfinite(y)
            if gone.any():
                no_takeoff[cond].append((months[gone], c))
        label = f"{t}\nMTOW {m / 1000.0:.1f} t" if np.isfinite(m) else t
        if line is None:  # no takeoff in any month: the legend entry shows the cross
            (line,) = ax.plot([], [], "x", color=c, markeredgewidth=1.6)
            label += ", no takeoff"
        handles.append((line, label))
    values = np.concatenate(finite) if finite else np.array([100.0])
    if have_mtow:
        ax.axhline(100.0, color="#333333", linestyle=":", linewidth=1.2)
        ax.set_ylim(percent_axis_floor(values), 104.0)
        ax.set_ylabel("Takeoff-weight limit\n[% of MTOW]")
    else:
        ax.set_ylim(0, values.max() * 1.06)
        ax.set_ylabel("Takeoff-weight limit [t]")
    _month_axis(ax, labels=False)
    ax.set_title(f"{name or airfield_id} ({airfield_id}): takeoff-weight limit, design day",
                 fontsize=11)
    conditions = [c for c in ("dry", "wet") if (results["condition"] == c).any()] or ["dry"]
    _impossible_strip(fig, (0.1, 0.2, 0.62, 0.12),
                      [(f"{c} runway", no_takeoff[c]) for c in conditions],
                      "No takeoff possible (design day), by runway condition")
    _style_legend(fig, (("-", "o", 1.8, "dry runway"), ("--", None, 1.2, "wet runway"),
                       (":", None, 1.2, "MTOW (100 %)"), ("", "x", 0, "no takeoff")))
    ax.legend([h for h, _ in handles], [lb for _, lb in handles], loc="upper left",
              bbox_to_anchor=(1.02, 1.0), fontsize=8, frameon=False)
    _footer(fig, footer)
    return fig


def level_name(level: str) -> str:
    """``design day`` or ``85 % of days`` for ``p85``."""
    return "design day" if level == "design_day" else f"{level[1:]} % of days"


def draw_route(payload: pd.DataFrame, route_id: str, path: Path, colours,
               footer: str | None = None) -> Path:
    """:func:`route_figure` saved as a PNG at ``path``."""
    return _save(route_figure(payload, route_id, colours, footer), path)


def route_figure(payload: pd.DataFrame, route_id: str, colours,
                 footer: str | None = None) -> Figure:
    """Monthly payload per aircraft type and level on one route (dry runway).

    ``payload`` holds this route's dry-runway rows (``route_payload`` columns). Months in
    which a level is not possible are crossed in a strip under the chart, one row per level
    (design day, 50 %, 85 %, 95 % of days), so each cross says which level it belongs to.
    The design-day marker says which end limits the payload that month: ▲ the origin's
    takeoff limit, ▼ the destination's landing limit, ● the aircraft (structural payload,
    fuel); the title says when the destination has no landing check.
    """
    rp = payload.assign(level=[routes.level_label(b, r)
                               for b, r in zip(payload["basis"], payload["reliability"])])
    levels = sorted(rp["level"].unique(), key=lambda s: (s != "design_day", s))
    fig = _figure(9.0, 5.0 + 0.12 * max(len(levels) - 2, 0))
    strip_h = 0.055 + 0.03 * len(levels)
    ax = fig.add_axes((0.1, 0.28 + strip_h, 0.62, 0.64 - strip_h))
    months = np.arange(1, 13)
    handles = []
    impossible = {lvl: [] for lvl in levels}
    for t, by in rp.groupby("aircraft_type_id", sort=True):
        c = colours[t]
        first = None
        for lvl, part in by.groupby("level", sort=False):
            y = _monthly(part, "payload_kg") / 1000.0
            ends = (part.groupby("month")["limiting_end"].first().reindex(range(1, 13)).to_numpy(object)
                    if lvl == "design_day" and "limiting_end" in part else None)
            (h,) = ax.plot(months, y, LEVEL_STYLES.get(lvl, "--"), color=c,
                           linewidth=2.0 if lvl == "design_day" else 1.2,
                           marker="o" if lvl == "design_day" and ends is None else None, markersize=4)
            if ends is not None:  # the end that limits the payload, month by month
                for end, mk in END_MARKERS.items():
                    at = (ends == end) & np.isfinite(y)
                    ax.plot(months[at], y[at], linestyle="none", marker=mk, color=c, markersize=5)
            first = first or h
            present = _monthly(part.assign(_one=1.0), "_one") == 1.0
            none = present & ~np.isfinite(y)
            if none.any():
                impossible[lvl].append((months[none], c))
        max_payload = pd.to_numeric(by["max_payload_kg"], errors="coerce").max()
        if np.isfinite(max_payload):
            ax.axhline(max_payload / 1000.0, color=c, linestyle=(0, (6, 3)), linewidth=0.9)
        label = (f"{t}\nmax payload {max_payload / 1000.0:.1f} t" if np.isfinite(max_payload)
                 else t)
        handles.append((first, label))
    _month_axis(ax, labels=False)
    ax.set_ylabel("Payload available [t]")
    ax.set_ylim(0, ax.get_ylim()[1] * 1.04)
    if len(rp):
        first_row = rp.iloc[0]
        title = (f"{route_id}: {first_row['origin_id']} to {first_row['destination_id']}, "
                 f"{first_row['air_distance_km']:,.0f} km flown, dry runway")
        if "destination_limiting_factor" in rp and (rp["destination_limiting_factor"] == "not_checked").all():
            title += "\ndestination not checked for landing (no LDA given)"
    else:
        title = route_id
    ax.set_title(title, fontsize=11)
    _impossible_strip(fig, (0.1, 0.2, 0.62, strip_h),
                      [(level_name(lvl), impossible[lvl]) for lvl in levels],
                      "Not possible, by level")
    entries = [(LEVEL_STYLES.get(lvl, "--"), "o" if lvl == "design_day" and "limiting_end" not in rp else None,
                2.0 if lvl == "design_day" else 1.2,
                "design day" if lvl == "design_day" else f"on {lvl[1:]} % of days")
               for lvl in levels]
    entries += [((0, (6, 3)), None, 0.9, "max payload")]
    if "limiting_end" in rp:
        _style_legend(fig, [("none", mk, 1.0, END_LABELS[end]) for end, mk in END_MARKERS.items()], y=0.075)
    _style_legend(fig, entries)
    ax.legend([h for h, _ in handles], [lb for _, lb in handles], loc="upper left",
              bbox_to_anchor=(1.02, 1.0), fontsize=8, frameon=False)
    _footer(fig, footer)
    return fig


#: In the restriction matrices a cell holds a share 0 … 1, ``IMPOSSIBLE`` (no takeoff, or the
#: route not possible: drawn in its own colour, never on the scale) or NaN (not flown).
IMPOSSIBLE = np.inf


def airfield_restriction_matrix(data: ReportData, airfield_ids) -> pd.DataFrame:
    """Airfields × months: worst type's (MTOW − takeoff limit) / max payload, 0 … 1.

    Dry runway, design day. When there are routes, only the aircraft types that fly a route
    from the airfield count (an airfield no route departs from stays empty, NaN); otherwise
    every type counts. A shortfall of the whole max payload or more is 1; a month with no
    takeoff for the worst type is :data:`IMPOSSIBLE`. Without aircraft masses the share is of
    the largest limit instead.
    """
    res = data.airfield_results
    res = res[(res["basis"] == "design_day") & (res["condition"] == "dry")
              & res["airfield_id"].isin(airfield_ids)]
    rp = data.route_payload
    if len(rp):
        served = rp[["origin_id", "aircraft_type_id"]].drop_duplicates().rename(
            columns={"origin_id": "airfield_id"})
        res = res.merge(served, on=["airfield_id", "aircraft_type_id"], how="inner")
    ac = data.aircraft.copy()
    ac["aircraft_type_id"] = ac["aircraft_type_id"].astype(str)
    df = res.merge(ac[["aircraft_type_id", "mtow_kg", "max_payload_kg"]], on="aircraft_type_id",
                   how="left")
    mtow = pd.to_numeric(df["mtow_kg"], errors="coerce")
    mp = pd.to_numeric(df["max_payload_kg"], errors="coerce")
    tow = pd.to_numeric(df["tow_limit_kg"], errors="coerce")
    mtow = mtow.fillna(df.groupby("aircraft_type_id")["tow_limit_kg"].transform("max"))
    denom = mp.where(mp > 0, mtow)
    share = ((mtow - tow) / denom).clip(0.0, 1.0)
    df["share"] = share.where(tow.notna(), IMPOSSIBLE)
    m = df.pivot_table(index="airfield_id", columns="month", values="share", aggfunc="max")
    return m.reindex(index=list(airfield_ids), columns=range(1, 13))


def route_restriction_matrix(data: ReportData, route_ids) -> pd.DataFrame:
    """Route/type × months: share of payload the origin's takeoff limit costs (dry, design
    day), 0 … 1; :data:`IMPOSSIBLE` where the route is not possible."""
    rp = data.route_payload
    rp = rp[(rp["basis"] == "design_day") & (rp["condition"] == "dry")
            & rp["route_id"].isin(route_ids)].copy()
    at = pd.to_numeric(rp["payload_at_mtow_kg"], errors="coerce")
    lost = pd.to_numeric(rp["payload_restriction_kg"], errors="coerce")
    share = (lost / at.where(at > 0)).clip(0.0, 1.0)
    rp["share"] = share.where(rp["possible"].astype(bool), IMPOSSIBLE)
    rp["row"] = rp["route_id"].astype(str) + " (" + rp["aircraft_type_id"].astype(str) + ")"
    m = rp.pivot_table(index="row", columns="month", values="share", aggfunc="max")
    return m.reindex(columns=range(1, 13)).sort_index()


IMPOSSIBLE_COLOUR = "#17202a"
EMPTY_COLOUR = "#9a9a9a"  # the hatch lines of an empty cell (white behind)
EMPTY_HATCH = "////"


def _matrix_axes(fig: Figure, rows: int, labels, width: float, height: float, label_in: float,
                 plot_in: float):
    from matplotlib.patches import Rectangle

    bottom, top = 1.05 / height, 1.0 - 0.95 / height
    ax = fig.add_axes((label_in / width, bottom, plot_in / width, top - bottom))
    # empty cells (nothing to show) are hatched: no colour of any scale means "empty"
    ax.add_patch(Rectangle((-0.5, -0.5), 12, max(rows, 1), facecolor="white",
                           edgecolor=EMPTY_COLOUR, hatch=EMPTY_HATCH, linewidth=0, zorder=-1))
    ax.set_xticks(range(12))
    ax.set_xticklabels(MONTHS)
    ax.set_yticks(range(rows))
    ax.set_yticklabels(labels, fontsize=8)
    ax.set_xlabel("Month")
    return ax, bottom, top


def _matrix_legend(fig: Figure, x: float, y: float, entries) -> None:
    from matplotlib.patches import Patch

    if not entries:
        return
    handles = [Patch(facecolor="white", edgecolor=EMPTY_COLOUR, hatch=EMPTY_HATCH, label=t)
               if c == EMPTY_COLOUR else Patch(facecolor=c, edgecolor="#888888", label=t)
               for c, t in entries]
    fig.legend(handles=handles, loc="lower left", bbox_to_anchor=(x, y), fontsize=7.5,
               frameon=False, ncol=len(handles), handlelength=1.4, columnspacing=1.2)


def draw_matrix(matrix: pd.DataFrame, path: Path, title: str, subtitle: str,
                colour_label: str, empty_note: str | None = None,
                impossible_label: str = "no takeoff possible", footer: str | None = None) -> Path:
    """Heat map rows × months: a share 0 … 1 on the colour scale (written in each cell as a
    percentage, "≥100" at the top), :data:`IMPOSSIBLE` in its own colour with a cross, NaN
    grey; the colours other than the scale are named in a legend under the chart."""
    rows = max(len(matrix), 1)
    labels = [str(i) for i in matrix.index]
    label_in = 0.35 + 0.062 * max((len(x) for x in labels), default=8)  # 8 pt characters
    plot_in, bar_in = 6.6, 1.1
    width = label_in + plot_in + bar_in
    height = min(max(3.0, 2.2 + 0.26 * rows), 40.0)
    fig = _figure(width, height)
    ax, bottom, top = _matrix_axes(fig, len(matrix), labels, width, height, label_in, plot_in)
    values = matrix.to_numpy(dtype=float) if len(matrix) else np.full((1, 12), np.nan)
    impossible = np.isinf(values)
    on_scale = np.where(impossible, np.nan, values)
    image = ax.imshow(np.ma.masked_invalid(on_scale), cmap=RESTRICTION_CMAP, vmin=0.0, vmax=1.0,
                      aspect="auto", interpolation="nearest")
    if impossible.any():
        from matplotlib.colors import ListedColormap

        ax.imshow(np.ma.masked_where(~impossible, np.ones_like(values)),
                  cmap=ListedColormap([IMPOSSIBLE_COLOUR]), vmin=0, vmax=1, aspect="auto",
                  interpolation="nearest")
    fig.text(0.5, 1.0 - 0.25 / height, title, ha="center", va="center", fontsize=11.5)
    fig.text(0.5, 1.0 - 0.55 / height, subtitle, ha="center", va="center", fontsize=8.5,
             color="#444444")
    if rows <= 80:
        for (i, j), v in np.ndenumerate(values):
            if np.isinf(v):
                ax.text(j, i, "×", ha="center", va="center", fontsize=8, color="white")
            elif np.isfinite(v) and v > 0.005:
                text = "≥100" if v >= 1.0 else f"{v * 100:.0f}"
                ax.text(j, i, text, ha="center", va="center", fontsize=6.5,
                        color="white" if v > 0.55 else "#222222")
    legend = [(IMPOSSIBLE_COLOUR, f"× {impossible_label}")] * bool(impossible.any())
    if empty_note and np.isnan(values).all(axis=1).any():
        legend.append((EMPTY_COLOUR, empty_note))
    _matrix_legend(fig, label_in / width - 0.01, 0.2 / height, legend)
    cax = fig.add_axes(((label_in + plot_in + 0.25) / width, bottom, 0.18 / width, top - bottom))
    bar = fig.colorbar(image, cax=cax)
    bar.set_label(colour_label)
    bar.set_ticks([0, 0.25, 0.5, 0.75, 1.0])
    bar.set_ticklabels(["0", "25", "50", "75", "≥100"])
    _footer(fig, footer)
    return _save(fig, path)


#: Diverging colours for changes between runs: losses warm, gains cool, no change white.
CHANGE_CMAP = LinearSegmentedColormap.from_list(
    "fieldlimits_change", ["#7a1f2b", "#d9734f", "#f6e3c8", "#ffffff", "#cfe3ea", "#5b9bb4",
                           "#1f4e6b"])
NOW_POSSIBLE_COLOUR = "#2f6d3a"


def change_matrix(comparison, kind: str, limit_rows: int = 60) -> tuple[pd.DataFrame, int]:
    """Rows × months of the change between the runs (dry runway, design day).

    ``kind`` ``route``: payload change [kg] per route (type); ``airfield``: the largest drop
    of the takeoff-weight limit [kg] among the types, per airfield. A month that became
    impossible is ``-inf``, one that became possible ``+inf``; months that did not move are
    0, rows and months not in the comparison NaN. Only rows with a change are kept, the
    largest losses first, at most ``limit_rows``; the second value is how many rows changed.
    """
    frame = comparison.routes if kind == "route" else comparison.airfields
    if frame is None or frame.empty:
        return pd.DataFrame(columns=range(1, 13)), 0
    f = frame[(frame["basis"] == "design_day") & (frame["condition"] == "dry")].copy()
    f = f[f["change"].isin(["lower", "higher", "no longer possible", "now possible"])]
    if f.empty:
        return pd.DataFrame(columns=range(1, 13)), 0
    value = pd.to_numeric(f["change_kg"], errors="coerce").astype(float)
    value = value.where(f["change"] != "no longer possible", -np.inf)
    value = value.where(f["change"] != "now possible", np.inf)
    f["value"] = value
    if kind == "route":
        f["row"] = f["route_id"].astype(str) + " (" + f["aircraft_type_id"].astype(str) + ")"
        m = f.pivot_table(index="row", columns="month", values="value", aggfunc="min")
    else:
        m = f.pivot_table(index="airfield_id", columns="month", values="value", aggfunc="min")
    m = m.reindex(columns=range(1, 13)).fillna(0.0)
    order = m.replace(-np.inf, -1e12).replace(np.inf, 1e12).min(axis=1).sort_values(kind="mergesort")
    m = m.loc[order.index]
    return m.head(limit_rows), len(m)


def _nice_limit(x: float) -> float:
    """A round colour-scale end at or above ``x`` (1, 1.5, 2, 2.5, 3, 4, 5, 6 or 8 × 10^n)."""
    if not np.isfinite(x) or x <= 0:
        return 1.0
    exp = 10.0 ** np.floor(np.log10(x))
    for step in (1, 1.5, 2, 2.5, 3, 4, 5, 6, 8, 10):
        if step * exp >= x:
            return step * exp
    return 10 * exp


def draw_change_matrix(matrix: pd.DataFrame, path: Path, title: str, subtitle: str,
                       colour_label: str, footer: str | None = None) -> Path:
    """Heat map of changes rows × months: kilograms on a diverging scale symmetric about
    zero (losses warm, gains cool, written in each cell), "became impossible" and "became
    possible" in their own colours, never on the scale."""
    rows = max(len(matrix), 1)
    labels = [str(i) for i in matrix.index]
    label_in = 0.35 + 0.062 * max((len(x) for x in labels), default=8)
    plot_in, bar_in = 7.2, 1.6
    width = label_in + plot_in + bar_in
    height = min(max(3.0, 2.2 + 0.26 * rows), 40.0)
    fig = _figure(width, height)
    ax, bottom, top = _matrix_axes(fig, len(matrix), labels, width, height, label_in, plot_in)
    values = matrix.to_numpy(dtype=float) if len(matrix) else np.full((1, 12), np.nan)
    finite = values[np.isfinite(values)]
    end = _nice_limit(float(np.abs(finite).max()) if finite.size else 1.0)
    image = ax.imshow(np.ma.masked_invalid(np.where(np.isinf(values), np.nan, values)),
                      cmap=CHANGE_CMAP, vmin=-end, vmax=end, aspect="auto",
                      interpolation="nearest")
    from matplotlib.colors import ListedColormap

    for sign, colour in ((-1, IMPOSSIBLE_COLOUR), (1, NOW_POSSIBLE_COLOUR)):
        mask = np.isinf(values) & (np.sign(values) == sign)
        if mask.any():
            ax.imshow(np.ma.masked_where(~mask, np.ones_like(values)),
                      cmap=ListedColormap([colour]), vmin=0, vmax=1, aspect="auto",
                      interpolation="nearest")
    fig.text(0.5, 1.0 - 0.25 / height, title, ha="center", va="center", fontsize=11.5)
    fig.text(0.5, 1.0 - 0.55 / height, subtitle, ha="center", va="center", fontsize=8.5,
             color="#444444")
    if rows <= 80:
        for (i, j), v in np.ndenumerate(values):
            if np.isinf(v):
                ax.text(j, i, "×" if v < 0 else "✓", ha="center", va="center", fontsize=8,
                        color="white")
            elif np.isfinite(v) and abs(v) >= 0.5:
                ax.text(j, i, f"{v:+,.0f}".replace(",", " "), ha="center", va="center",
                        fontsize=6, color="white" if abs(v) > 0.6 * end else "#222222")
    legend = ([(IMPOSSIBLE_COLOUR, "× no longer possible")] * bool((values == -np.inf).any())
              + [(NOW_POSSIBLE_COLOUR, "✓ now possible")] * bool((values == np.inf).any())
              + [("#ffffff", "no change (less than the threshold)")])
    if np.isnan(values).any():
        legend.append((EMPTY_COLOUR, "not in both runs"))
    _matrix_legend(fig, label_in / width - 0.01, 0.2 / height, legend)
    cax = fig.add_axes(((label_in + plot_in + 0.25) / width, bottom, 0.18 / width, top - bottom))
    bar = fig.colorbar(image, cax=cax)
    bar.set_label(colour_label)
    _footer(fig, footer)
    return _save(fig, path)


# --- the page ----------------------------------------------------------------------------

def route_summary(data: ReportData, route_ids) -> pd.DataFrame:
    """Per route × type (dry): distance, max payload, lowest design-day payload and month,
    and for each level (design day, 50 %, 85 %, 95 % of days) the months it is not possible."""
    rp = data.route_payload
    rp = rp[(rp["condition"] == "dry") & rp["route_id"].isin(route_ids)]
    rp = rp.assign(level=[routes.level_label(b, r) for b, r in zip(rp["basis"], rp["reliability"])])
    levels = sorted(rp["level"].unique(), key=lambda s: (s != "design_day", s))
    rows = []
    for (r, t), g in rp.groupby(["route_id", "aircraft_type_id"], sort=True):
        dd = g[g["basis"] == "design_day"].sort_values("month")
        rel = g[g["basis"] != "design_day"]
        low_rel = rel["reliability"].max() if len(rel) else None
        worst = rel[rel["reliability"] == low_rel] if low_rel is not None else rel.iloc[0:0]
        pay = pd.to_numeric(dd["payload_kg"], errors="coerce")
        low = pay.idxmin() if pay.notna().any() else None
        row = {
            "route": r, "type": t,
            "from → to": f"{g['origin_id'].iloc[0]} → {g['destination_id'].iloc[0]}",
            "distance flown [km]": round(float(g["air_distance_km"].iloc[0])),
            "max payload [kg]": round(float(g["max_payload_kg"].iloc[0])),
            "lowest design-day payload [kg]": None if low is None else round(float(pay[low])),
            "in month": None if low is None else MONTHS[int(dd.loc[low, "month"]) - 1],
            "binding then": None if low is None else dd.loc[low, "payload_limiting_factor"],
            "months restricted by takeoff limit (design day)":
                int((pd.to_numeric(dd["payload_restriction_kg"], errors="coerce") > 0.5).sum()),
        }
        if "limiting_end" in dd:
            row["months limited at the destination (design day)"] = int((dd["limiting_end"] == "destination").sum())
            row["destination landing check"] = (
                "not checked (no LDA)" if (dd["destination_limiting_factor"] == "not_checked").all() else "checked")
        for lvl in levels:
            part = g[g["level"] == lvl]
            row[f"months not possible ({level_name(lvl)})"] = int((~part["possible"].astype(bool)).sum())
        key = (f"lowest payload on {round(low_rel * 100)} % of days [kg]" if low_rel is not None
               else "lowest reliability payload [kg]")
        worst_pay = pd.to_numeric(worst["payload_kg"], errors="coerce")
        row[key] = None if worst.empty or worst_pay.isna().all() else round(float(worst_pay.min()))
        rows.append(row)
    return pd.DataFrame(rows)


def airfield_summary(data: ReportData, airfield_ids) -> pd.DataFrame:
    """Per airfield × type (dry, design day): months below MTOW, lowest limit, main factor."""
    res = data.airfield_results
    res = res[(res["basis"] == "design_day") & (res["condition"] == "dry")
              & res["airfield_id"].isin(airfield_ids)]
    names = _names(data.airfields, "airfield_id")
    rows = []
    for (a, t), g in res.groupby(["airfield_id", "aircraft_type_id"], sort=True):
        tow = pd.to_numeric(g["tow_limit_kg"], errors="coerce")
        restricted = g[g["limiting_factor"] != "structural"]
        rows.append({
            "airfield": f"{names.get(a, a)} ({a})" if a in names else a, "type": t,
            "months below MTOW": int(len(restricted)),
            "months no takeoff (design day)": int(tow.isna().sum()),
            "lowest limit [kg]": None if tow.isna().all() else round(float(tow.min())),
            "in month": None if tow.isna().all() else MONTHS[int(g.loc[tow.idxmin(), "month"]) - 1],
            "main limiting factor": (restricted["limiting_factor"].mode().iloc[0]
                                     if len(restricted) else "structural"),
        })
    return pd.DataFrame(rows)


def change_summary(comparison) -> pd.DataFrame:
    """Per kind: rows compared, and how many moved in each way (for the page)."""
    rows = []
    for kind, what, compared in (("route", "route-months (payload)", comparison.compared_route_rows),
                                 ("airfield", "airfield-months (takeoff-weight limit)",
                                  comparison.compared_airfield_rows)):
        counts = comparison.counts(kind)
        rows.append({"rows": what, "compared": compared,
                     **{c: counts.get(c, 0) for c in ("lower", "higher", "no longer possible",
                                                      "now possible", "added", "removed")}})
    return pd.DataFrame(rows)


_CSS = """
body { font-family: sans-serif; margin: 2em; color: #222; max-width: 1200px; }
.caution { border: 2px solid #b5523b; background: #fbf1ea; padding: 0.8em 1em; font-weight: bold; }
.scenario { border-left: 6px solid #2b5f8a; background: #eef3f8; padding: 0.6em 1em; }
.scenario.other { border-left-color: #c8782a; background: #fbf3e6; }
table { border-collapse: collapse; font-size: 0.85em; margin: 0.5em 0 1.5em; }
th, td { border: 1px solid #cccccc; padding: 0.25em 0.5em; vertical-align: bottom; }
td { white-space: nowrap; }
.num { text-align: right; } .text { text-align: left; }
th { background: #eef2f5; }
img { max-width: 100%; border: 1px solid #dddddd; margin: 0.3em 0 1.2em; }
nav a { margin-right: 0.8em; }
.wide { overflow-x: auto; }
"""


def _table_html(frame: pd.DataFrame) -> str:
    """An HTML table: cells never wrap (ids stay on one line; a wide table scrolls), text
    left and numbers right, tidy numbers, missing values as :data:`pipeline.export.MISSING`."""
    if frame.empty:
        return "<p>(none)</p>"
    e = html.escape
    shown = export.tidy_frame(frame)
    numeric = [pd.api.types.is_numeric_dtype(shown[c]) and not pd.api.types.is_bool_dtype(shown[c])
               for c in shown.columns]
    head = "".join(f'<th class="{"num" if n else "text"}">{e(str(c))}</th>'
                   for c, n in zip(shown.columns, numeric))
    rows = []
    for values in shown.itertuples(index=False):
        cells = "".join(
            f'<td class="{"num" if n else "text"}">'
            f'{e(export.MISSING if v is None or (not isinstance(v, str) and pd.isna(v)) else str(v))}</td>'
            for v, n in zip(values, numeric))
        rows.append(f"<tr>{cells}</tr>")
    return (f'<div class="wide"><table><thead><tr>{head}</tr></thead><tbody>'
            + "".join(rows) + "</tbody></table></div>")


def _scenario_html(data: ReportData) -> str:
    e = html.escape
    details = f"; {e(data.scenario_details)}" if data.scenario_details else ""
    if data.scenario == "baseline":
        return (f'<p class="scenario">Scenario: <b>baseline</b> (the climate as given, no '
                f'temperature offset){details}.</p>')
    return (f'<p class="scenario other">Scenario: <b>{e(data.scenario)}</b> added to every '
            f'monthly temperature{details}. These are not the results for the climate as given; '
            f'the baseline is the default of <code>fieldlimits report</code>.</p>')


def _page(data: ReportData, result_links, tables) -> str:
    e = html.escape
    facts = []
    if data.run_id is not None:
        facts.append(f"run {data.run_id}")
    if data.finished_at is not None:
        facts.append(f"finished {e(str(data.finished_at)[:19])} UTC")
    if data.input_dir:
        facts.append(f"inputs {e(str(data.input_dir))}")
    heading = f"fieldlimits: takeoff-weight limits and route payloads, {e(data.scenario)}"
    nav = ('<nav><a href="#network">Network</a><a href="#routes">Routes</a>'
           '<a href="#airfields">Airfields</a>'
           + ('<a href="#changes">Changes</a>' if result_links.get("changes") is not None else "")
           + (f'<a href="{e(PLANNING_CSV)}">Payload-planning CSV</a>' if tables["csv"] else "")
           + "</nav>")
    parts = [
        "<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
        f"<title>fieldlimits report: run {data.run_id}, {e(data.scenario)}</title>",
        f"<style>{_CSS}</style></head><body>",
        f"<h1>{heading}</h1>",
        f'<p class="caution">{e(CAUTION)}</p>',
        _scenario_html(data),
        f"<p>{'; '.join(facts)}</p>" if facts else "",
        nav,
        '<h2 id="network">Network</h2>',
    ]
    for title, name in result_links["network"]:
        parts.append(f"<h3>{e(title)}</h3><img src=\"{e(name)}\" alt=\"{e(title)}\">")
    parts.extend(_changes_html(data, result_links.get("changes"), tables))
    parts.append('<h2 id="routes">Routes</h2>')
    parts.append("<p>Payload on a dry runway; reserve policy and distances in the CSV. A route "
                 "level is not possible when even zero payload cannot be flown.</p>")
    parts.append(_table_html(tables["routes"]))
    for rid, name in result_links["routes"]:
        parts.append(f'<h3 id="route-{e(name)}">{e(rid)}</h3><img src="{e(name)}" '
                     f'alt="payload by month, route {e(rid)}">')
    parts.append('<h2 id="airfields">Airfields</h2>')
    parts.append("<p>Design day (mean daily maximum temperature, calm), dry runway.</p>")
    parts.append(_table_html(tables["airfields"]))
    for aid, name in result_links["airfields"]:
        parts.append(f'<h3 id="airfield-{e(name)}">{e(aid)}</h3><img src="{e(name)}" '
                     f'alt="takeoff-weight limit by month, airfield {e(aid)}">')
    from fieldlimits.pipeline import report_obstacles

    parts.extend(report_obstacles.page_html(result_links.get("obstacles")))
    parts.append(f'<p class="caution">{e(CAUTION)}</p></body></html>')
    return "\n".join(p for p in parts if p) + "\n"


def _changes_html(data: ReportData, links, tables) -> list[str]:
    e = html.escape
    c = data.comparison
    if c is None:
        if data.comparison_note is None:
            return []
        return ['<h2 id="changes">Changes</h2>',
                "<p>No earlier run to compare with: the first baseline run of this database, or "
                "no baseline run before this one. <code>fieldlimits report --compare-with RUN"
                "</code> compares with any complete run.</p>"]
    parts = [f'<h2 id="changes">Changes since {e(c.before.label())}</h2>',
             f"<p>{e(c.after.label()[0].upper() + c.after.label()[1:])} against "
             f"{e(c.before.label())}: rows whose "
             f"payload or takeoff-weight limit moved by {c.min_change_kg:g} kg or more, became "
             f"possible or impossible, or are in one run only. Every row, with the limiting "
             f"factor before and after, is in <a href=\"{e(CHANGES_CSV)}\">{e(CHANGES_CSV)}</a>"
             f" (also <code>fieldlimits compare {c.before.run_id} {c.after.run_id}</code>).</p>",
             _table_html(tables["changes"])]
    for title, name, more in links or []:
        parts.append(f"<h3>{e(title)}</h3><img src=\"{e(name)}\" alt=\"{e(title)}\">")
        if more:
            parts.append(f"<p>{e(more)}</p>")
    return parts


def write_planning_csv(route_payload: pd.DataFrame, path: Path, run_id: int | None = None,
                       scenario: str | None = None) -> int:
    """Payload-planning CSV (one row per route × type × month) in the export format, with
    the run and its scenario as columns."""
    frame = routes.payload_planning_frame(route_payload)
    if scenario is not None:
        frame.insert(0, "scenario", scenario)
    if run_id is not None:
        frame.insert(0, "run_id", int(run_id))
    return export.write_csv([frame], path)


CHANGES_CSV = "changes.csv"


def _draw_changes(data: ReportData, out: Path, footer: str, airfield_ids=None,
                  route_ids=None) -> list[tuple[str, str, str | None]]:
    """The comparison's charts: payload change by route and month, and the largest drop of
    the takeoff-weight limit by airfield and month (dry runway, design day); only the
    selected airfields and routes (all by default)."""
    c = data.comparison
    if airfield_ids is not None or route_ids is not None:
        import copy

        c = copy.copy(c)
        if route_ids is not None and len(c.routes):
            c.routes = c.routes[c.routes["route_id"].astype(str).isin(set(route_ids))]
        if airfield_ids is not None and len(c.airfields):
            c.airfields = c.airfields[c.airfields["airfield_id"].astype(str).isin(set(airfield_ids))]
    links = []
    for kind, name, title, what, label in (
            ("route", "changes-routes.png", "Payload change by route and month",
             "payload", "payload change [kg]"),
            ("airfield", "changes-airfields.png", "Takeoff-weight limit change by airfield and month",
             "largest change of the takeoff-weight limit among the aircraft types",
             "limit change [kg]")):
        matrix, n = change_matrix(c, kind)
        if not n:
            continue
        subtitle = (f"{c.after.label()} minus {c.before.label()}: {what} [kg]; dry runway, "
                    f"design day; largest losses first")
        p = draw_change_matrix(matrix, out / name, title, subtitle, label, footer)
        more = (f"{n - len(matrix)} more rows with a change are in {CHANGES_CSV}."
                if n > len(matrix) else None)
        links.append((title, p.name, more))
    return links


def build_report(data: ReportData, out_dir, airfield_ids=None, route_ids=None,
                 progress=None) -> ReportResult:
    """Draw every chart, write the page and the planning CSV into ``out_dir``."""
    start = time.perf_counter()
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    if data.airfield_results.empty:
        raise BadInput("the run has no airfield results to draw")
    for frame in (data.airfield_results, data.route_payload):
        for col in ("airfield_id", "route_id", "origin_id", "destination_id", "aircraft_type_id"):
            if col in frame.columns:
                frame[col] = frame[col].astype(str)
    fields_sel, routes_sel = _select(data, list(airfield_ids or []), list(route_ids or []))
    type_ids = set(data.airfield_results["aircraft_type_id"])
    if len(data.route_payload):
        type_ids |= set(data.route_payload["aircraft_type_id"])
    colours = _type_colours(type_ids)
    say = progress or (lambda msg: None)
    footer = footer_text(data)
    charts: list[Path] = []
    links = {"network": [], "routes": [], "airfields": []}

    flown = len(data.route_payload) > 0
    title = "Payload restriction by airfield and month"
    subtitle = ("Takeoff-mass shortfall below MTOW of the worst aircraft type flown from the "
                "airfield, % of its max payload; dry runway, design day"
                if flown else
                "Takeoff-mass shortfall below MTOW of the worst aircraft type, % of its max "
                "payload; dry runway, design day")
    p = draw_matrix(airfield_restriction_matrix(data, fields_sel), out / "network-airfields.png",
                    title, subtitle, "shortfall [% of max payload]",
                    "no route departs from the airfield" if flown else None,
                    "no takeoff possible", footer)
    charts.append(p)
    links["network"].append((title, p.name))
    if routes_sel:
        title = "Payload restriction by route and month"
        subtitle = ("Payload lost to the origin takeoff-weight limit, % of the payload at MTOW; "
                    "dry runway, design day")
        p = draw_matrix(route_restriction_matrix(data, routes_sel), out / "network-routes.png",
                        title, subtitle, "payload lost [%]", None, "route not possible", footer)
        charts.append(p)
        links["network"].append((title, p.name))
    if data.comparison is not None:
        links["changes"] = _draw_changes(data, out, footer, fields_sel, routes_sel)
        charts.extend(out / name for _, name, _ in links["changes"])
        write_csv_path = out / CHANGES_CSV
        export.write_csv([data.comparison.changes()], write_csv_path)
    rp = data.route_payload
    by_route = dict(tuple(rp[rp["condition"] == "dry"].groupby("route_id"))) if len(rp) else {}
    route_slugs = unique_slugs(routes_sel)
    for i, rid in enumerate(routes_sel, 1):
        p = draw_route(by_route[rid], rid, out / f"route-{route_slugs[rid]}.png", colours, footer)
        charts.append(p)
        links["routes"].append((rid, p.name))
        say(f"route {i}/{len(routes_sel)}")
    res = data.airfield_results
    by_field = dict(tuple(res[res["basis"] == "design_day"].groupby("airfield_id")))
    mtow = dict(zip(data.aircraft["aircraft_type_id"].astype(str),
                    pd.to_numeric(data.aircraft["mtow_kg"], errors="coerce")))
    names = _names(data.airfields, "airfield_id")
    field_slugs = unique_slugs(fields_sel)
    for i, aid in enumerate(fields_sel, 1):
        p = draw_airfield(by_field.get(aid, res.iloc[0:0]), aid,
                          out / f"airfield-{field_slugs[aid]}.png", colours, mtow, names.get(aid),
                          footer)
        charts.append(p)
        links["airfields"].append((aid, p.name))
        say(f"airfield {i}/{len(fields_sel)}")
    from fieldlimits.pipeline import report_obstacles

    links["obstacles"] = report_obstacles.draw_flight_paths(data.flight_paths, fields_sel, out, footer)
    charts.extend(out / name for _, name in links["obstacles"])

    csv_path = None
    if len(data.route_payload):
        sel = data.route_payload[data.route_payload["route_id"].isin(routes_sel)]
        csv_path = out / PLANNING_CSV
        write_planning_csv(sel, csv_path, data.run_id, data.scenario)
    tables = {"routes": route_summary(data, routes_sel) if routes_sel else pd.DataFrame(),
              "airfields": airfield_summary(data, fields_sel), "csv": csv_path is not None,
              "changes": change_summary(data.comparison) if data.comparison is not None
              else pd.DataFrame()}
    index = out / "index.html"
    tmp = index.with_name(f".index.html.{os.getpid()}.tmp")
    tmp.write_text(_page(data, links, tables), encoding="utf-8")
    os.replace(tmp, index)
    return ReportResult(out, index, charts, csv_path, time.perf_counter() - start, data.run_id,
                        data.scenario)


def write_report(db_path, out_dir, run_id: int | None = None, airfield_ids=None, route_ids=None,
                 progress=None, compare_with="auto") -> ReportResult:
    """Read a run from the store and build its report (see :func:`build_report` and
    :func:`load_report_data` for ``compare_with``)."""
    data = load_report_data(db_path, run_id, compare_with)
    return build_report(data, out_dir, airfield_ids, route_ids, progress)
