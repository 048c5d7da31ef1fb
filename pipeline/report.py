"""The planning report: PNG charts, one static HTML page and the payload-planning CSV.

``fieldlimits report`` reads one complete run from the store (read-only) and writes into a
folder:

``index.html``
    the caution, run facts, summary tables and every chart;
``airfield-<slug>.png``
    per airfield: monthly takeoff-weight limit per aircraft type (design day, dry solid,
    wet dashed), each type's MTOW dotted;
``route-<slug>.png``
    per route: monthly payload available per aircraft type and level (design day and each
    reliability level, dry runway), max payload dashed, months not possible crossed;
``network-airfields.png``
    airfields × months, coloured by the takeoff-mass shortfall below MTOW of the worst
    aircraft type, as a share of its max payload (dry, design day);
``network-routes.png``
    routes × months, coloured by the share of payload the origin's takeoff limit costs;
``payload_planning.csv``
    one row per route × type × month (units in headers, caution in the first line).

File names are slugs of the ids, so a rerun overwrites the same files. Drawing uses
matplotlib's Agg canvas without pyplot (no display, no global figure state).
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

from pipeline import export, routes, store
from pipeline.errors import BadInput
from schemas.caution import CAUTION

#: Line colours per aircraft type, in type order (our own palette).
TYPE_COLOURS = ("#2b5f8a", "#c8782a", "#4e8a4a", "#8a3f6d", "#3f8f8f", "#9a5a2e",
                "#6b6bb0", "#7a7a3a", "#b04a5a", "#4a4a4a")
#: Line style per result level (design day and reliability levels).
LEVEL_STYLES = {"design_day": "-", "p50": "--", "p85": "-.", "p95": ":"}
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


@dataclass
class ReportResult:
    """Files written by :func:`build_report` and how long it took."""

    out_dir: Path
    index: Path
    charts: list[Path]
    planning_csv: Path | None
    seconds: float


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


def load_report_data(db_path, run_id: int | None = None) -> ReportData:
    """Read one complete run (the last one by default) from the store, read-only."""
    with store.reader(db_path) as con:
        if not _exists(con, "runs"):
            raise BadInput(f"{db_path} holds no fieldlimits runs; run `fieldlimits run` first")
        run = con.execute(store.sql("report_run"), {"run_id": run_id}).fetchone()
        if run is None:
            which = f"run {run_id} is not a complete run" if run_id is not None else \
                "there is no complete run yet"
            raise BadInput(f"{which} in {db_path}; see `fieldlimits sql \"SELECT * FROM runs\"`")
        rid, finished_at, input_dir = run
        params = {"run_id": rid}
        airfield = con.execute(store.sql("report_airfield_results"), params).df()
        route = (con.execute(store.sql("report_route_payload"), params).df()
                 if _exists(con, "route_payload") else pd.DataFrame())
        aircraft = (con.execute(store.sql("report_aircraft_types"), params).df()
                    if _exists(con, "input_aircraft_types") else None)
        airfields = (con.execute(store.sql("report_airfields"), params).df()
                     if _exists(con, "input_airfields") else None)
    data = ReportData(airfield, route, run_id=int(rid), finished_at=finished_at,
                      input_dir=input_dir)
    if aircraft is not None:
        data.aircraft = aircraft
    if airfields is not None:
        data.airfields = airfields
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


def _type_colours(type_ids) -> dict[str, str]:
    return {t: TYPE_COLOURS[i % len(TYPE_COLOURS)] for i, t in enumerate(sorted(set(type_ids)))}


def _month_axis(ax) -> None:
    ax.set_xticks(range(1, 13))
    ax.set_xticklabels(MONTHS)
    ax.set_xlim(0.5, 12.5)
    ax.set_xlabel("Month")
    ax.grid(True, color="#dddddd", linewidth=0.6)


def _monthly(frame: pd.DataFrame, value: str) -> np.ndarray:
    s = frame.groupby("month")[value].first().reindex(range(1, 13))
    return s.to_numpy(dtype=float)


def _names(frame: pd.DataFrame, key: str) -> dict[str, str]:
    if frame is None or frame.empty or "name" not in frame.columns:
        return {}
    return dict(zip(frame[key].astype(str), frame["name"].astype(str)))


def _style_legend(fig: Figure, entries) -> None:
    """Legend of the line styles (black), in one row under the plot."""
    from matplotlib.lines import Line2D

    handles = [Line2D([], [], color="#333333", linestyle=ls, marker=mk, markersize=4,
                      linewidth=lw) for ls, mk, lw, _ in entries]
    fig.legend(handles, [e[3] for e in entries], loc="lower left", bbox_to_anchor=(0.07, 0.0),
               ncol=len(entries), fontsize=8, frameon=False, handlelength=2.4,
               columnspacing=1.4)


def draw_airfield(results: pd.DataFrame, airfield_id: str, path: Path, colours,
                  mtow_kg: dict, name: str | None = None) -> Path:
    """Monthly takeoff-weight limit per aircraft type at one airfield, MTOW marked.

    ``results`` holds this airfield's design-day rows (``results_airfield`` columns). Types
    of very different size share one axis, so the limit is drawn as a percentage of each
    type's MTOW (MTOW = the 100 % line; the legend gives each MTOW in tonnes). Without
    MTOW figures the limit is drawn in tonnes.
    """
    have_mtow = any(np.isfinite(mtow_kg.get(t, np.nan))
                    for t in results["aircraft_type_id"].unique())
    fig = _figure(9.0, 4.6)
    ax = fig.add_axes((0.08, 0.2, 0.64, 0.71))
    months = np.arange(1, 13)
    handles, no_takeoff, finite = [], [], []
    for t, by in results.groupby("aircraft_type_id", sort=True):
        c = colours[t]
        m = mtow_kg.get(t, np.nan)
        scale = (100.0 / m) if have_mtow and np.isfinite(m) else 1e-3
        line = None
        for cond, style in (("dry", "-"), ("wet", "--")):
            y = _monthly(by[by["condition"] == cond], "tow_limit_kg") * scale
            if np.isfinite(y).any():
                (h,) = ax.plot(months, y, style, color=c, marker="o" if cond == "dry" else None,
                               markersize=4, linewidth=1.8 if cond == "dry" else 1.2)
                line = line or h
                finite.append(y[np.isfinite(y)])
            if cond == "dry" and (~np.isfinite(y)).any():
                no_takeoff.append((months[~np.isfinite(y)], c))
        label = f"{t}\nMTOW {m / 1000.0:.1f} t" if np.isfinite(m) else t
        if line is None:  # no takeoff in any month: the legend entry shows the cross
            (line,) = ax.plot([], [], "x", color=c, markeredgewidth=1.6)
            label += ", no takeoff"
        handles.append((line, label))
    values = np.concatenate(finite) if finite else np.array([100.0])
    if have_mtow:
        ax.axhline(100.0, color="#333333", linestyle=":", linewidth=1.2)
        low = max(0.0, min(values.min(), 100.0) - 5.0)
        ax.set_ylim(low, 104.0)
        ax.set_ylabel("Takeoff-weight limit [% of MTOW]")
    else:
        ax.set_ylim(0, values.max() * 1.06)
        ax.set_ylabel("Takeoff-weight limit [t]")
    bottom = ax.get_ylim()[0]
    for mon, c in no_takeoff:
        ax.plot(mon, np.full(mon.size, bottom), "x", color=c, markersize=8, clip_on=False,
                markeredgewidth=1.6)
    _month_axis(ax)
    ax.set_title(f"{name or airfield_id} ({airfield_id}): takeoff-weight limit, design day",
                 fontsize=11)
    _style_legend(fig, (("-", "o", 1.8, "dry runway"), ("--", None, 1.2, "wet runway"),
                       (":", None, 1.2, "MTOW (100 %)"), ("", "x", 0, "no takeoff")))
    ax.legend([h for h, _ in handles], [lb for _, lb in handles], loc="upper left",
              bbox_to_anchor=(1.02, 1.0), fontsize=8, frameon=False)
    return _save(fig, path)


def draw_route(payload: pd.DataFrame, route_id: str, path: Path, colours) -> Path:
    """Monthly payload per aircraft type and level on one route (dry runway).

    ``payload`` holds this route's dry-runway rows (``route_payload`` columns).
    """
    rp = payload.assign(level=[routes.level_label(b, r)
                               for b, r in zip(payload["basis"], payload["reliability"])])
    fig = _figure(9.0, 4.6)
    ax = fig.add_axes((0.08, 0.2, 0.64, 0.71))
    months = np.arange(1, 13)
    levels = sorted(rp["level"].unique(), key=lambda s: (s != "design_day", s))
    handles = []
    for t, by in rp.groupby("aircraft_type_id", sort=True):
        c = colours[t]
        first = None
        for lvl, part in by.groupby("level", sort=False):
            y = _monthly(part, "payload_kg") / 1000.0
            (h,) = ax.plot(months, y, LEVEL_STYLES.get(lvl, "--"), color=c,
                           linewidth=2.0 if lvl == "design_day" else 1.2,
                           marker="o" if lvl == "design_day" else None, markersize=4)
            first = first or h
            none = ~np.isfinite(y)
            if none.any():  # not possible at this level: a cross on the axis
                ax.plot(months[none], np.zeros(none.sum()), "x", color=c, clip_on=False,
                        markersize=8 if lvl == "design_day" else 5, markeredgewidth=1.5)
        max_payload = pd.to_numeric(by["max_payload_kg"], errors="coerce").max()
        if np.isfinite(max_payload):
            ax.axhline(max_payload / 1000.0, color=c, linestyle=(0, (6, 3)), linewidth=0.9)
        label = (f"{t}\nmax payload {max_payload / 1000.0:.1f} t" if np.isfinite(max_payload)
                 else t)
        handles.append((first, label))
    _month_axis(ax)
    ax.set_ylabel("Payload available [t]")
    ax.set_ylim(0, ax.get_ylim()[1] * 1.04)
    if len(rp):
        first_row = rp.iloc[0]
        title = (f"{route_id}: {first_row['origin_id']} to {first_row['destination_id']}, "
                 f"{first_row['air_distance_km']:,.0f} km flown, dry runway")
    else:
        title = route_id
    ax.set_title(title, fontsize=11)
    entries = [(LEVEL_STYLES.get(lvl, "--"), "o" if lvl == "design_day" else None,
                2.0 if lvl == "design_day" else 1.2,
                "design day" if lvl == "design_day" else f"on {lvl[1:]} % of days")
               for lvl in levels]
    entries += [((0, (6, 3)), None, 0.9, "max payload"),
                ("", "x", 0, "not possible")]
    _style_legend(fig, entries)
    ax.legend([h for h, _ in handles], [lb for _, lb in handles], loc="upper left",
              bbox_to_anchor=(1.02, 1.0), fontsize=8, frameon=False)
    return _save(fig, path)


def airfield_restriction_matrix(data: ReportData, airfield_ids) -> pd.DataFrame:
    """Airfields × months: worst type's (MTOW − takeoff limit) / max payload, 0 … 1.

    Dry runway, design day. When there are routes, only the aircraft types that fly a route
    from the airfield count (an airfield no route departs from stays empty); otherwise
    every type counts. A month with no takeoff counts as 1 (all payload lost). Without
    aircraft masses the share is of the largest limit instead.
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
    df["share"] = share.where(tow.notna(), 1.0)
    m = df.pivot_table(index="airfield_id", columns="month", values="share", aggfunc="max")
    return m.reindex(index=list(airfield_ids), columns=range(1, 13))


def route_restriction_matrix(data: ReportData, route_ids) -> pd.DataFrame:
    """Route/type × months: share of payload the origin's takeoff limit costs (dry, design day)."""
    rp = data.route_payload
    rp = rp[(rp["basis"] == "design_day") & (rp["condition"] == "dry")
            & rp["route_id"].isin(route_ids)].copy()
    at = pd.to_numeric(rp["payload_at_mtow_kg"], errors="coerce")
    lost = pd.to_numeric(rp["payload_restriction_kg"], errors="coerce")
    share = (lost / at.where(at > 0)).clip(0.0, 1.0)
    rp["share"] = share.where(rp["possible"].astype(bool), 1.0)
    rp["row"] = rp["route_id"].astype(str) + " (" + rp["aircraft_type_id"].astype(str) + ")"
    m = rp.pivot_table(index="row", columns="month", values="share", aggfunc="max")
    return m.reindex(columns=range(1, 13)).sort_index()


def draw_matrix(matrix: pd.DataFrame, path: Path, title: str, subtitle: str,
                colour_label: str, empty_note: str | None = None) -> Path:
    """Heat map rows × months (share 0 … 1, written in each cell as a percentage)."""
    rows = max(len(matrix), 1)
    labels = [str(i) for i in matrix.index]
    label_in = 0.35 + 0.062 * max((len(x) for x in labels), default=8)  # 8 pt characters
    plot_in, bar_in = 6.6, 1.1
    width = label_in + plot_in + bar_in
    height = min(1.9 + 0.26 * rows, 40.0)
    bottom, top = 0.75 / height, 1.0 - 0.95 / height
    fig = _figure(width, height)
    ax = fig.add_axes((label_in / width, bottom, plot_in / width, top - bottom))
    values = matrix.to_numpy(dtype=float) if len(matrix) else np.full((1, 12), np.nan)
    image = ax.imshow(np.ma.masked_invalid(values), cmap=RESTRICTION_CMAP, vmin=0.0, vmax=1.0,
                      aspect="auto", interpolation="nearest")
    ax.set_facecolor("#e4e4e4")
    ax.set_xticks(range(12))
    ax.set_xticklabels(MONTHS)
    ax.set_yticks(range(len(matrix)))
    ax.set_yticklabels(labels, fontsize=8)
    ax.set_xlabel("Month")
    fig.text(0.5, 1.0 - 0.25 / height, title, ha="center", va="center", fontsize=11.5)
    fig.text(0.5, 1.0 - 0.55 / height, subtitle, ha="center", va="center", fontsize=8.5,
             color="#444444")
    if rows <= 80:
        for (i, j), v in np.ndenumerate(values):
            if np.isfinite(v) and v > 0.005:
                ax.text(j, i, f"{v * 100:.0f}", ha="center", va="center", fontsize=6.5,
                        color="white" if v > 0.55 else "#222222")
    if empty_note and np.isnan(values).all(axis=1).any():
        fig.text(label_in / width, 0.15 / height, empty_note, fontsize=7.5, color="#555555")
    cax = fig.add_axes(((label_in + plot_in + 0.25) / width, bottom, 0.18 / width, top - bottom))
    bar = fig.colorbar(image, cax=cax)
    bar.set_label(colour_label)
    bar.set_ticks([0, 0.25, 0.5, 0.75, 1.0])
    bar.set_ticklabels(["0", "25", "50", "75", "100"])
    return _save(fig, path)


# --- the page ----------------------------------------------------------------------------

def route_summary(data: ReportData, route_ids) -> pd.DataFrame:
    """Per route × type (dry): distance, max payload, lowest design-day payload and month, ..."""
    rp = data.route_payload
    rp = rp[(rp["condition"] == "dry") & rp["route_id"].isin(route_ids)]
    rows = []
    for (r, t), g in rp.groupby(["route_id", "aircraft_type_id"], sort=True):
        dd = g[g["basis"] == "design_day"].sort_values("month")
        rel = g[g["basis"] != "design_day"]
        low_rel = rel["reliability"].max() if len(rel) else None
        worst = rel[rel["reliability"] == low_rel] if low_rel is not None else rel.iloc[0:0]
        pay = pd.to_numeric(dd["payload_kg"], errors="coerce")
        low = pay.idxmin() if pay.notna().any() else None
        rows.append({
            "route": r, "type": t,
            "from → to": f"{g['origin_id'].iloc[0]} → {g['destination_id'].iloc[0]}",
            "distance flown [km]": round(float(g["air_distance_km"].iloc[0])),
            "max payload [kg]": round(float(g["max_payload_kg"].iloc[0])),
            "lowest design-day payload [kg]": None if low is None else round(float(pay[low])),
            "in month": None if low is None else MONTHS[int(dd.loc[low, "month"]) - 1],
            "binding then": None if low is None else dd.loc[low, "payload_limiting_factor"],
            "months restricted by takeoff limit":
                int((pd.to_numeric(dd["payload_restriction_kg"], errors="coerce") > 0.5).sum()),
            "months not possible": int((~dd["possible"].astype(bool)).sum()),
            (f"lowest p{round(low_rel * 100)} payload [kg]" if low_rel is not None
             else "lowest reliability payload [kg]"):
                (None if worst.empty or pd.to_numeric(worst["payload_kg"], errors="coerce").isna().all()
                 else round(float(pd.to_numeric(worst["payload_kg"], errors="coerce").min()))),
        })
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
            "months no takeoff": int(tow.isna().sum()),
            "lowest limit [kg]": None if tow.isna().all() else round(float(tow.min())),
            "in month": None if tow.isna().all() else MONTHS[int(g.loc[tow.idxmin(), "month"]) - 1],
            "main limiting factor": (restricted["limiting_factor"].mode().iloc[0]
                                     if len(restricted) else "structural"),
        })
    return pd.DataFrame(rows)


_CSS = """
body { font-family: sans-serif; margin: 2em; color: #222; max-width: 1100px; }
.caution { border: 2px solid #b5523b; background: #fbf1ea; padding: 0.8em 1em; font-weight: bold; }
table { border-collapse: collapse; font-size: 0.85em; margin: 0.5em 0 1.5em; }
th, td { border: 1px solid #cccccc; padding: 0.25em 0.5em; text-align: right; }
th { background: #eef2f5; } td:first-child, td:nth-child(2) { text-align: left; }
img { max-width: 100%; border: 1px solid #dddddd; margin: 0.3em 0 1.2em; }
nav a { margin-right: 0.8em; }
"""


def _table_html(frame: pd.DataFrame) -> str:
    if frame.empty:
        return "<p>(none)</p>"
    return frame.to_html(index=False, escape=True, na_rep="–", border=0)


def _page(data: ReportData, result_links, tables) -> str:
    e = html.escape
    facts = []
    if data.run_id is not None:
        facts.append(f"run {data.run_id}")
    if data.finished_at is not None:
        facts.append(f"finished {e(str(data.finished_at)[:19])} UTC")
    if data.input_dir:
        facts.append(f"inputs {e(str(data.input_dir))}")
    parts = [
        "<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
        "<title>fieldlimits report</title>", f"<style>{_CSS}</style></head><body>",
        "<h1>fieldlimits: takeoff-weight limits and route payloads</h1>",
        f'<p class="caution">{e(CAUTION)}</p>',
        f"<p>{'; '.join(facts)}</p>" if facts else "",
        '<nav><a href="#network">Network</a><a href="#routes">Routes</a>'
        '<a href="#airfields">Airfields</a>'
        + (f'<a href="{e(PLANNING_CSV)}">Payload-planning CSV</a>' if tables["csv"] else "")
        + "</nav>",
        '<h2 id="network">Network</h2>',
    ]
    for title, name in result_links["network"]:
        parts.append(f"<h3>{e(title)}</h3><img src=\"{e(name)}\" alt=\"{e(title)}\">")
    parts.append('<h2 id="routes">Routes</h2>')
    parts.append("<p>Payload on a dry runway; reserve policy and distances in the CSV.</p>")
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
    parts.append(f'<p class="caution">{e(CAUTION)}</p></body></html>')
    return "\n".join(p for p in parts if p) + "\n"


def write_planning_csv(route_payload: pd.DataFrame, path: Path) -> int:
    """Payload-planning CSV (one row per route × type × month) via the store's CSV writer."""
    frame = routes.payload_planning_frame(route_payload)
    return export.write_csv([frame], path)


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
                    "Grey: no route departs from the airfield." if flown else None)
    charts.append(p)
    links["network"].append((f"{title}: {subtitle}", p.name))
    if routes_sel:
        title = "Payload restriction by route and month"
        subtitle = ("Payload lost to the origin takeoff-weight limit, % of the payload at MTOW; "
                    "dry runway, design day; 100 = not possible")
        p = draw_matrix(route_restriction_matrix(data, routes_sel), out / "network-routes.png",
                        title, subtitle, "payload lost [%]")
        charts.append(p)
        links["network"].append((f"{title}: {subtitle}", p.name))
    rp = data.route_payload
    by_route = dict(tuple(rp[rp["condition"] == "dry"].groupby("route_id"))) if len(rp) else {}
    route_slugs = unique_slugs(routes_sel)
    for i, rid in enumerate(routes_sel, 1):
        p = draw_route(by_route[rid], rid, out / f"route-{route_slugs[rid]}.png", colours)
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
                          out / f"airfield-{field_slugs[aid]}.png", colours, mtow, names.get(aid))
        charts.append(p)
        links["airfields"].append((aid, p.name))
        say(f"airfield {i}/{len(fields_sel)}")

    csv_path = None
    if len(data.route_payload):
        sel = data.route_payload[data.route_payload["route_id"].isin(routes_sel)]
        csv_path = out / PLANNING_CSV
        write_planning_csv(sel, csv_path)
    tables = {"routes": route_summary(data, routes_sel) if routes_sel else pd.DataFrame(),
              "airfields": airfield_summary(data, fields_sel), "csv": csv_path is not None}
    index = out / "index.html"
    tmp = index.with_name(f".index.html.{os.getpid()}.tmp")
    tmp.write_text(_page(data, links, tables), encoding="utf-8")
    os.replace(tmp, index)
    return ReportResult(out, index, charts, csv_path, time.perf_counter() - start)


def write_report(db_path, out_dir, run_id: int | None = None, airfield_ids=None, route_ids=None,
                 progress=None) -> ReportResult:
    """Read a run from the store and build its report (see :func:`build_report`)."""
    data = load_report_data(db_path, run_id)
    return build_report(data, out_dir, airfield_ids, route_ids, progress)
