"""The fit report of ``fieldlimits calibrate``: an HTML page, two CSV files and a chart per type.

Written into the ``calibration/`` folder of the calibrated input folder:

``index.html``
    the caution, the settings, and per type: the coefficients before and after with their
    prior and posterior spreads and whether the points pin each one down, the points with
    the published value, the model's value before and after and the residual, and the chart;
``coefficients.csv``, ``points.csv``
    the same tables for every type (the caution in a last column of every row, units in the headers);
``field-length-<type>.png``
    per type with field-length points: model against published field length, before and
    after the fit, the 1:1 line and ± two point uncertainties.

Drawing uses matplotlib's Agg canvas without pyplot, like :mod:`pipeline.report`.
"""

from __future__ import annotations

import html
import os
from pathlib import Path

import numpy as np
import pandas as pd

from fieldlimits.pipeline import export
from fieldlimits.pipeline.report import DPI, PNG_METADATA, _figure, unique_slugs
from fieldlimits.schemas.caution import CAUTION

BEFORE_COLOUR = "#9a9a9a"
AFTER_COLOUR = "#2b5f8a"


def points_table(tf) -> pd.DataFrame:
    """One row per reference point of a type: conditions, published, model, residual."""
    from fieldlimits.physics import limits

    fit, p = tf.fit, tf.points
    unit = np.where(p["kind"] == "field_length", "m", "kg")
    with np.errstate(invalid="ignore", divide="ignore"):
        before = fit.model_start / fit.published - 1.0
    factor = [str(limits.name(int(f))) if np.isfinite(v) else "no value" for f, v in zip(fit.factor, fit.model_value)]
    return pd.DataFrame({
        "aircraft_type_id": tf.aircraft_type_id, "point_id": p["point_id"], "kind": p["kind"],
        "mass_kg": p["mass_kg"], "pressure_altitude_m": p["pressure_altitude_m"], "oat_c": p["oat_c"],
        "headwind_kt": p["headwind_kt"], "slope_pct": p["slope_pct"], "surface": p["surface"],
        "condition": p["condition"], "unit": unit, "published": fit.published,
        "model_before": np.round(fit.model_start, 1), "model_after": np.round(fit.model_value, 1),
        "residual_before_pct": np.round(100 * before, 2), "residual_after_pct": np.round(100 * fit.residual, 2),
        "set_by": factor, "source": p["source"],
    })


def coefficients_table(tf) -> pd.DataFrame:
    """The type's fitted coefficients (see :func:`pipeline.calibration.coefficient_table`)."""
    c = tf.coefficients.copy()
    c.insert(0, "aircraft_type_id", tf.aircraft_type_id)
    c["posterior_share"] = c["posterior_share"].round(3)
    c["determined"] = np.where(c["determined"], "yes", "no: stays near its start")
    c["at_limit"] = np.where(c["at_limit"], "yes", "")
    return c


def summary(tf, point_share_sd: float) -> dict:
    """Headline figures of one type's fit."""
    from fieldlimits.physics.calibration import determined_combinations

    fit = tf.fit
    with np.errstate(invalid="ignore", divide="ignore"):
        before = fit.model_start / fit.published - 1.0
    after = fit.residual
    ok_b, ok_a = np.isfinite(before), np.isfinite(after)
    undetermined = [n for n, d in zip(fit.names, fit.determined) if not d]
    return {
        "points": int(len(fit.published)),
        "no_value_after": int((~ok_a).sum()),
        "rms_before_pct": float(100 * np.sqrt(np.mean(before[ok_b] ** 2))) if ok_b.any() else float("nan"),
        "rms_after_pct": float(100 * np.sqrt(np.mean(after[ok_a] ** 2))) if ok_a.any() else float("nan"),
        "max_after_pct": float(100 * np.max(np.abs(after[ok_a]))) if ok_a.any() else float("nan"),
        "coefficients": len(fit.names),
        "determined": int(np.sum(fit.determined)),
        "combinations": determined_combinations(fit),
        "not_pinned_down": undetermined,
        "point_share_sd_pct": 100 * point_share_sd,
        "optimiser": fit.message,
        "seconds": tf.seconds,
    }


def draw_field_lengths(tf, path: Path, point_share_sd: float) -> Path | None:
    """Model against published field length of one type, before and after the fit."""
    fit, kind = tf.fit, tf.points["kind"].to_numpy()
    fl = kind == "field_length"
    if not fl.any():
        return None
    pub, before, after = fit.published[fl], fit.model_start[fl], fit.model_value[fl]
    values = np.concatenate([pub, before[np.isfinite(before)], after[np.isfinite(after)]])
    lo, hi = 0.9 * values.min(), 1.1 * values.max()
    fig = _figure(5.6, 5.0)
    ax = fig.add_axes((0.15, 0.12, 0.8, 0.76))
    line = np.array([lo, hi])
    ax.plot(line, line, color="#333333", linewidth=0.9, label="model = published")
    band = 2.0 * point_share_sd
    for k in (1 + band, 1 - band):
        ax.plot(line, k * line, color="#333333", linewidth=0.6, linestyle=":")
    ax.scatter(pub, before, s=28, facecolors="none", edgecolors=BEFORE_COLOUR, label="before the fit")
    ax.scatter(pub, after, s=24, color=AFTER_COLOUR, label="after the fit")
    ax.set_xlim(lo, hi)
    ax.set_ylim(lo, hi)
    ax.set_xlabel("published takeoff field length [m]")
    ax.set_ylabel("model takeoff field length [m]")
    ax.grid(True, color="#dddddd", linewidth=0.6)
    ax.legend(loc="upper left", fontsize=8, frameon=False)
    fig.suptitle(f"{tf.aircraft_type_id}: model against published field length", fontsize=10)
    ax.set_title(f"dotted: ± {100 * band:g} % (two point uncertainties)", fontsize=8)
    fig.savefig(path, dpi=DPI, metadata=PNG_METADATA)
    return path


_CSS = """
body { font-family: sans-serif; margin: 2em; color: #222; max-width: 1100px; }
.caution { border: 2px solid #b5523b; background: #fbf1ea; padding: 0.8em 1em; font-weight: bold; }
table { border-collapse: collapse; font-size: 0.85em; margin: 0.5em 0 1.5em; }
th, td { border: 1px solid #cccccc; padding: 0.25em 0.5em; text-align: right; }
th { background: #eef2f5; } td:first-child, td:nth-child(2) { text-align: left; }
img { max-width: 100%; border: 1px solid #dddddd; margin: 0.3em 0 1.2em; }
"""


def _table(frame: pd.DataFrame) -> str:
    if frame.empty:
        return "<p>(none)</p>"
    return frame.to_html(index=False, escape=True, na_rep="–", border=0, float_format=lambda v: f"{v:.6g}")


def _page(result, sections) -> str:
    e = html.escape
    choice = {"blank": "the coefficients the table left blank (class defaults)",
              "all": "every calibrated coefficient"}.get(result.fit_choice, result.fit_choice)
    parts = [
        "<!DOCTYPE html>", '<html lang="en"><head><meta charset="utf-8">',
        "<title>fieldlimits calibration</title>", f"<style>{_CSS}</style></head><body>",
        "<h1>fieldlimits: calibration to reference points</h1>",
        f'<p class="caution">{e(CAUTION)}</p>',
        f"<p>inputs {e(str(result.input_dir))}; fitted: {e(choice)}; a published value is taken as "
        f"uncertain by {100 * result.point_share_sd:g} % (one standard deviation); each coefficient is "
        "pulled towards its starting value with its class spread as the prior standard deviation.</p>",
        "<p>A coefficient is <em>determined</em> when the points bring its spread below half the "
        "prior's; one that is not stays near where it started and the points say little about it. "
        "<em>Combinations</em> counts the directions in coefficient space the points pin down. "
        "Field lengths are those of a runway without clearway or stopway; <em>set by</em> names "
        "the requirement that sets each one after the fit.</p>",
        '<p>Tables: <a href="coefficients.csv">coefficients.csv</a>, <a href="points.csv">points.csv</a>.</p>',
    ]
    if result.without_points:
        parts.append(f"<p>Types without reference points (unchanged): {e(', '.join(result.without_points))}.</p>")
    for tf, s, chart, coeffs, pts in sections:
        parts.append(f'<h2 id="{e(tf.aircraft_type_id)}">{e(tf.aircraft_type_id)}: {e(tf.name)}</h2>')
        facts = (f"class {tf.type_class}; {s['points']} points; residuals RMS {s['rms_before_pct']:.2f} % "
                 f"before, {s['rms_after_pct']:.2f} % after (largest {s['max_after_pct']:.2f} %); "
                 f"{s['determined']} of {s['coefficients']} coefficients determined, "
                 f"{s['combinations']} combination(s); {s['seconds']:.1f} s; optimiser: {s['optimiser']}")
        parts.append(f"<p>{e(facts)}</p>")
        if s["no_value_after"]:
            parts.append(f"<p>{s['no_value_after']} point(s) have no model value (no runway accepts the "
                         "mass, or the climb limit lies outside 0.2 … 2 × MTOW): check them.</p>")
        if s["not_pinned_down"]:
            parts.append(f"<p>Not pinned down by these points: {e(', '.join(s['not_pinned_down']))}.</p>")
        parts.append(_table(coeffs.drop(columns="aircraft_type_id")))
        parts.append(_table(pts.drop(columns=["aircraft_type_id", "source"])))
        if chart is not None:
            parts.append(f'<img src="{e(chart.name)}" alt="model against published field length, '
                         f'{e(tf.aircraft_type_id)}">')
    parts.append(f'<p class="caution">{e(CAUTION)}</p></body></html>')
    return "\n".join(parts) + "\n"


def write_report(result, folder) -> Path:
    """Write the page, the two CSV files and the charts into ``folder``; return the page."""
    out = Path(folder)
    out.mkdir(parents=True, exist_ok=True)
    slugs = unique_slugs([tf.aircraft_type_id for tf in result.fits])
    sections = []
    for tf in result.fits:
        chart = draw_field_lengths(tf, out / f"field-length-{slugs[tf.aircraft_type_id]}.png",
                                   result.point_share_sd)
        sections.append((tf, summary(tf, result.point_share_sd), chart, coefficients_table(tf),
                         points_table(tf)))
    export.write_csv([s[3] for s in sections] or [pd.DataFrame()], out / "coefficients.csv")
    export.write_csv([s[4] for s in sections] or [pd.DataFrame()], out / "points.csv")
    index = out / "index.html"
    tmp = index.with_name(f".index.html.{os.getpid()}.tmp")
    tmp.write_text(_page(result, sections), encoding="utf-8")
    os.replace(tmp, index)
    return index


__all__ = ["points_table", "coefficients_table", "summary", "draw_field_lengths", "write_report"]
