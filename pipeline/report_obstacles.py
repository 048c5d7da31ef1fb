"""Report charts of the takeoff flight path over the obstacles of obstacle-limited runways.

For each runway direction that is an airfield's best and whose design-day limit on a dry
runway an obstacle sets, :func:`load_flight_paths` rebuilds one case from the run's stored
inputs (the type and month with the largest shortfall below MTOW) and asks
:func:`pipeline.obstacle_path.flight_path_view` for its path; :func:`draw_flight_path`
draws ``flightpath-<airfield>-<runway>.png``: the gross and the net path (one engine
inoperative) against the ground distance from the end of TODA, each obstacle of the
departure area with the 35 ft the net path must clear it by, the governing one marked.
Queries in ``pipeline/sql/report_obstacle_limited.sql`` and ``report_path_<table>.sql``.
"""

from __future__ import annotations

import html
from pathlib import Path

import numpy as np
import pandas as pd

#: Colours (our own): gross path, net path, governing obstacle, other obstacles.
GROSS_COLOUR, NET_COLOUR = "#2b5f8a", "#c8782a"
GOVERNING_COLOUR, OBSTACLE_COLOUR = "#6b1f3a", "#7a7a7a"
_INPUTS = ("airfields", "runways", "climate_monthly", "obstacles")


def _si_tables(frames: dict[str, pd.DataFrame]) -> dict[str, pd.DataFrame]:
    """Stored user-unit frames to SI (columns an older run lacks take their defaults)."""
    from fieldlimits.schemas.load import si_frame, user_frame
    from fieldlimits.schemas.tables import TABLES

    out = {}
    for name, df in frames.items():
        spec = TABLES[name]
        df = df.copy()
        for c in spec.columns:
            if c.name not in df.columns:
                df[c.name] = c.default if c.default is not None else (None if c.dtype == "str" else np.nan)
        out[name] = si_frame(user_frame(df, spec), spec)
    return out


def load_flight_paths(db_path, run_id: int, mtow_kg: dict | None = None) -> list:
    """Flight-path views (:class:`pipeline.obstacle_path.FlightPathView`) of the run's
    obstacle-limited best runway directions, one per direction (the type and month whose limit
    is lowest as a share of MTOW); empty when there are none."""
    from fieldlimits.pipeline import store
    from fieldlimits.pipeline.obstacle_path import flight_path_view

    with store.reader(db_path) as con:
        limited = con.execute(store.sql("report_obstacle_limited"), {"run_id": run_id}).df()
        if limited.empty:
            return []
        ids = {"run_id": run_id, "airfield_ids": sorted(limited["airfield_id"].astype(str).unique())}
        frames = {t: con.execute(store.sql(f"report_path_{t}"), ids).df() for t in _INPUTS}
        frames["aircraft_types"] = con.execute(store.sql("report_path_aircraft_types"), {
            "run_id": run_id, "type_ids": sorted(limited["aircraft_type_id"].astype(str).unique())}).df()
    tables = _si_tables(frames)
    mtow = dict(zip(tables["aircraft_types"]["aircraft_type_id"], tables["aircraft_types"]["mtow_kg"]))
    limited["share"] = limited["tow_limit_kg"] / limited["aircraft_type_id"].map(mtow)
    views = []
    for (aid, rid), rows in limited.groupby(["airfield_id", "runway_id"], sort=True):
        pick = rows.sort_values(["share", "aircraft_type_id", "month"]).iloc[0]
        view = flight_path_view(tables, str(aid), str(rid), int(pick["month"]), str(pick["aircraft_type_id"]), "dry",
                                float(pick["temperature_offset_k"] or 0.0))
        if view is not None:
            views.append(view)
    return views


def _draw_path_axes(ax, view, x_max, obstacles=True, labels=True):
    """Gross and net path, the end of TODA and the obstacles on one axes."""
    from fieldlimits.physics.flightpath import OBSTACLE_CLEARANCE_M

    for xs, hs, colour, style, label in ((view.gross_x_m, view.gross_h_m, GROSS_COLOUR, "-", "gross path"),
                                        (view.net_x_m, view.net_h_m, NET_COLOUR, "--", "net path (25.115)")):
        x = np.where(np.isfinite(xs), xs, x_max)  # a segment that never ends runs off the chart
        ax.plot(x / 1000.0, hs, style, color=colour, linewidth=2.0, label=label)
    ax.axvline(0.0, color="#555555", linewidth=0.8, linestyle=":")
    ax.axhline(view.acceleration_height_m, color="#999999", linewidth=0.6, linestyle=":")
    ax.grid(True, linewidth=0.4, alpha=0.5)
    if not obstacles:
        return
    for _, o in view.obstacles.iterrows():
        d, h = o["distance_from_toda_end_m"] / 1000.0, o["height_m"]
        colour = GOVERNING_COLOUR if o["governing"] else OBSTACLE_COLOUR
        hollow = not o["in_area"] or o["status"] == "beyond the end of the takeoff path"
        ax.vlines(d, 0.0, h, color=colour, linewidth=2.5 if o["governing"] else 1.5, alpha=0.5 if hollow else 1.0)
        ax.plot([d], [h + OBSTACLE_CLEARANCE_M], marker="_", markersize=10, color=colour, label="_clearance")
        ax.plot([d], [h], marker="^", markersize=7, color=colour, markerfacecolor="white" if hollow else colour,
                linestyle="none", label="_obstacle")
        if labels:
            tag = str(o["obstacle_id"]) + ("" if o["in_area"] else " (outside the area)")
            ax.annotate(tag, (d, h), textcoords="offset points", xytext=(4, 4), fontsize=7.5, color=colour)


def flight_path_figure(view, footer: str | None = None):
    """The chart of one :class:`~pipeline.obstacle_path.FlightPathView` (a matplotlib Figure):
    the whole path above, the obstacles' stretch below."""
    from fieldlimits.physics.constants import FT_M
    from fieldlimits.physics.flightpath import OBSTACLE_CLEARANCE_M, PATH_END_HEIGHT_M
    from fieldlimits.pipeline.report import MONTHS, _figure, _footer

    fig = _figure(10.0, 7.2)
    ob = view.obstacles
    inside = ob[ob["in_area"]]
    ends = [x for x in view.net_x_m if np.isfinite(x)]
    x_all = max(ends + list(ob["distance_from_toda_end_m"]) + [1000.0]) * 1.05
    x0 = min(view.start_m / 1000.0, 0.0) - 0.2
    overview = fig.add_axes((0.08, 0.63, 0.64, 0.24))
    _draw_path_axes(overview, view, x_all, labels=False)
    overview.set_xlim(x0, x_all / 1000.0)
    overview.set_ylim(min(0.0, float(np.nanmin(ob["height_m"]))) - 5.0,
                      max(PATH_END_HEIGHT_M, float(np.nanmax(ob["height_m"]))) * 1.08)
    overview.set_ylabel("[m]")
    overview.text(0.01, 0.95, "whole path, to 1 500 ft", transform=overview.transAxes, fontsize=8, va="top")
    # the obstacles' stretch: to 25 % past the farthest obstacle in the area (at least 2 km)
    far = float(inside["distance_from_toda_end_m"].max()) if len(inside) else 2000.0
    x_zoom = max(far * 1.25, 2000.0)
    ax = fig.add_axes((0.08, 0.12, 0.64, 0.42))
    _draw_path_axes(ax, view, x_all)
    net_there = float(np.interp(x_zoom, np.where(np.isfinite(view.net_x_m), view.net_x_m, x_all), view.net_h_m))
    top = max(float(np.nanmax(inside["height_m"])) + 2 * OBSTACLE_CLEARANCE_M if len(inside) else 0.0, net_there)
    ax.set_xlim(x0, x_zoom / 1000.0)
    ax.set_ylim(min(0.0, float(np.nanmin(ob["height_m"]))) - 5.0, top * 1.15 + 5.0)
    ax.text(0.0, 0.98, " end of TODA", transform=ax.get_xaxis_transform(), fontsize=8, va="top", color="#555555")
    ax.set_xlabel("ground distance from the end of TODA [km]")
    ax.set_ylabel("height above the runway end [m]")
    ft = ax.secondary_yaxis("right", functions=(lambda m: m / FT_M, lambda f: f * FT_M))
    ft.set_ylabel("[ft]")
    limit = (f"limit {view.tow_limit_kg:,.0f} kg ({view.limiting_factor})" if np.isfinite(view.tow_limit_kg)
             else "no takeoff possible (path at OEW)")
    fig.suptitle(f"{view.airfield_id} runway {view.runway_id}: takeoff flight path, one engine inoperative\n"
                 f"{view.aircraft_type_id}, {MONTHS[view.month - 1]}, dry runway, design day; {limit}; "
                 f"acceleration height {view.acceleration_height_m / FT_M:,.0f} ft", fontsize=10, y=0.97)
    ax.legend(loc="upper left", bbox_to_anchor=(1.1, 1.0), fontsize=8, frameon=False)
    fig.text(0.805, 0.42, "▲ obstacle top\n— 35 ft above it: the net\n   path must pass above\n"
             "dark: governing obstacle\nhollow: left out, or beyond\n   the end of the path\n"
             "dotted: acceleration height", fontsize=7.5, va="top", color="#333333")
    _footer(fig, footer)
    return fig


def draw_flight_path(view, path: Path, footer: str | None = None) -> Path:
    """Write the chart of one view to ``path`` (PNG)."""
    from fieldlimits.pipeline.report import _save

    return _save(flight_path_figure(view, footer), Path(path))


def draw_flight_paths(views, airfield_ids, out_dir, footer: str | None = None) -> list[tuple[str, str]]:
    """Charts of the views of the selected airfields; (title, file name) per chart."""
    from fieldlimits.pipeline.report import unique_slugs

    keep = [v for v in views if v.airfield_id in set(airfield_ids)]
    slugs = unique_slugs(f"{v.airfield_id}-{v.runway_id}" for v in keep)
    links = []
    for v in keep:
        name = f"flightpath-{slugs[f'{v.airfield_id}-{v.runway_id}']}.png"
        draw_flight_path(v, Path(out_dir) / name, footer)
        links.append((f"{v.airfield_id} runway {v.runway_id}: {v.aircraft_type_id}, month {v.month}", name))
    return links


def page_html(links) -> list[str]:
    """The report page's section for the flight-path charts (nothing without charts)."""
    if not links:
        return []
    e = html.escape
    parts = ['<h2 id="obstacles">Obstacle-limited runways</h2>',
             "<p>Takeoff flight path with one engine inoperative over the obstacles past the end of "
             "TODA, for each best runway direction whose design-day limit (dry) an obstacle sets: the "
             "type and month with the largest shortfall below MTOW. The net path (gross less "
             "0.8 / 0.9 / 1.0 % for two / three / four engines) must clear each obstacle by 35 ft.</p>"]
    for title, name in links:
        parts.append(f"<h3>{e(title)}</h3><img src=\"{e(name)}\" alt=\"takeoff flight path, {e(title)}\">")
    return parts
