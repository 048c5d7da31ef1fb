"""``fieldlimits runs``: the recent runs, and whether a run still marked running is alive."""

from __future__ import annotations

import json
import sys
import textwrap

from fieldlimits.pipeline.commands import add_db_argument

NAME = "runs"
HELP = "list the recent runs: status, times, scenario, cases, rows; tells a live run from a dead one"
DESCRIPTION = (
    "List the most recent runs of the store, newest first: run id, status, start and finish\n"
    "(UTC), duration, climate scenario and conditions, cases and rows. A run still marked\n"
    "'running' is checked without writing anything: on this machine by its process id and the\n"
    "process start time, from another machine by its heartbeat file beside the database\n"
    "(<db>.heartbeat/), which a running run rewrites every 5 s. 'dead' means the process has\n"
    "ended without recording how the run finished (killed, crashed, machine restarted);\n"
    "'presumed dead' means a run of another machine whose heartbeat is more than 60 s old.\n"
    "The next `fieldlimits run` on the same database records such runs as interrupted."
)

_TIME = "%Y-%m-%d %H:%M:%S"


def add_arguments(parser) -> None:
    add_db_argument(parser)
    parser.add_argument("--limit", type=int, default=20, metavar="N",
                        help="show the N most recent runs (default 20; 0 for all)")
    parser.add_argument("--format", choices=("table", "csv", "json"), default="table",
                        help="output format (default table)")


def _scenario(parameters: str | None, offset) -> str:
    """Temperature offset, conditions and reliability levels in a few characters."""
    try:
        p = json.loads(parameters) if parameters else {}
    except ValueError:
        p = {}
    # the scenario's name as everywhere else (pipeline.steps.scenario_label, run_scenarios)
    parts = ["?" if _missing(offset) else
             "baseline" if float(offset) == 0 else f"temperature {float(offset):+g} K"]
    if p.get("conditions"):
        parts.append(",".join(p["conditions"]))
    if "reliability_levels" in p:
        levels = p["reliability_levels"]
        parts.append("rel " + (",".join(f"{x:g}" for x in levels) if levels else "none"))
    return " ".join(parts)


def _missing(value) -> bool:
    import pandas as pd

    return value is None or bool(pd.isna(value))


def _stamp(value) -> str:
    return "-" if _missing(value) else value.strftime(_TIME)


def _number(value, digits: int = 0) -> str:
    if _missing(value):
        return "-"
    return f"{float(value):.{digits}f}" if digits else str(int(value))


def _status(row) -> str:
    return f"running ({row.state})" if row.status == "running" else row.status


def _table(frame) -> list[str]:
    head = ("run", "status", "started (UTC)", "finished (UTC)", "seconds", "scenario", "cases",
            "reused", "rows")
    body = [(str(int(r.run_id)), _status(r), _stamp(r.started_at), _stamp(r.finished_at),
             _number(r.duration_s, 1), _scenario(r.parameters, r.temperature_offset_k),
             _number(r.cases), _number(r.reused_cases), _number(r.rows_direction))
            for r in frame.itertuples(index=False)]
    left = {1, 2, 3, 5}
    widths = [max(len(x) for x in col) for col in zip(head, *body)]
    return ["  ".join(c.ljust(w) if i in left else c.rjust(w) for i, (c, w) in enumerate(zip(row, widths)))
            .rstrip() for row in (head, *body)]


def _notes(frame, db) -> list[str]:
    from fieldlimits.pipeline import store

    lines = []
    for r in frame.itertuples(index=False):
        if r.status == "running":
            lines.append(f"run {int(r.run_id)} {r.state}: {r.state_reason}")
        elif r.status in ("failed", "interrupted") and isinstance(r.error, str):
            error = r.error if len(r.error) <= 160 else r.error[:157] + "..."
            lines.append(f"run {int(r.run_id)} {r.status}: {error}")
    if (frame["status"] == "running").any():
        legend = (
            f"live: still working. dead: its process has ended without recording how the run "
            f"finished (killed, crashed, or the machine restarted), checked by process id and "
            f"process start time on the machine that started it. presumed dead: started on another "
            f"machine and its heartbeat file in {store.heartbeat_dir(db)} (rewritten every "
            f"{store.HEARTBEAT_EVERY_S:.0f} s while the run works) is more than "
            f"{store.HEARTBEAT_STALE_S:.0f} s old. unknown: another machine and no heartbeat file. "
            f"Seconds of a running run: so far (live) or until its last heartbeat (dead). The next "
            f"`fieldlimits run` on this database records dead and presumed dead runs as "
            f"interrupted; their partial results were never loaded, so no stored result is affected.")
        lines += ["", *textwrap.wrap(legend, 100)]
    return lines


def _busy(db, error) -> int:
    """The database is held by a writer: show what the heartbeat files say."""
    from fieldlimits.pipeline import store

    print(f"{error}; runs known from their heartbeat files:")
    found = store.heartbeat_runs(db)
    for beat, state in found:
        print(f"  run {beat.get('run_id')} running ({state.state}): {state.reason}")
    if not found:
        print("  none")
    return 0


def run(args) -> int:
    from fieldlimits.pipeline import store
    from fieldlimits.pipeline.errors import BadInput, StoreBusy
    from fieldlimits.pipeline import export

    if args.limit < 0:
        raise BadInput(f"--limit must be 0 (all) or a positive number of runs; got {args.limit}")
    try:
        frame = store.list_runs(args.db, args.limit or None)
    except StoreBusy as exc:
        if args.format != "table":
            raise
        return _busy(args.db, exc)
    out = sys.stdout
    if args.format == "csv":  # the export format: caution in a last column (pipeline.export)
        export.to_csv(export.file_frame(frame), out)
    elif args.format == "json":
        out.write(export.to_json(export.with_caution(export.tidy_frame(frame))) + "\n")
    elif not len(frame):
        out.write(f"no runs stored in {args.db} yet\n")
    else:
        out.write("\n".join(_table(frame) + [""] + _notes(frame, args.db)).rstrip() + "\n")
    return 0
