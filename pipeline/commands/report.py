"""``fieldlimits report``: charts, an HTML page and the payload-planning CSV for one run."""

from __future__ import annotations

import argparse
import sys

from fieldlimits.schemas.caution import CAUTION

NAME = "report"
HELP = "draw charts and write an HTML report and the payload-planning CSV for a run"
DESCRIPTION = (
    "Read a complete run from the store (read-only; by default the last complete baseline "
    "run, i.e. without a temperature offset) and write into a folder: one chart per "
    "airfield (monthly takeoff-weight limit per type, MTOW marked), one per route (monthly "
    "payload per type and reliability level), two network views (airfields x months and "
    "routes x months coloured by payload restriction), the changes since an earlier run "
    "(charts and changes.csv, as `fieldlimits compare`), index.html linking them with "
    "summary tables and the run's scenario, and payload_planning.csv (one row per route x "
    "type x month)."
)


def add_arguments(parser: argparse.ArgumentParser) -> None:
    from fieldlimits.pipeline.store import DEFAULT_DB

    parser.add_argument("--db", default=DEFAULT_DB,
                        help=f"DuckDB file to read (default: ./{DEFAULT_DB})")
    parser.add_argument("--out", default="fieldlimits-report",
                        help="folder to write the report into (default: ./fieldlimits-report)")
    parser.add_argument("--run", type=int, default=None, metavar="RUN_ID",
                        help="run to draw (default: the last complete baseline run)")
    parser.add_argument("--compare-with", default="auto", metavar="RUN_ID",
                        help="earlier run to show the changes against, or 'none' (default: a "
                             "scenario run against the last baseline run before it, a baseline "
                             "run against the baseline run before it)")
    parser.add_argument("--airfield", action="append", default=[], metavar="AIRFIELD_ID",
                        help="draw only this airfield (repeat for more); routes touching it follow")
    parser.add_argument("--route", action="append", default=[], metavar="ROUTE_ID",
                        help="draw only this route (repeat for more); its origins follow")
    parser.add_argument("--quiet", action="store_true", help="print nothing but errors")


def run(args: argparse.Namespace) -> int:
    from fieldlimits.pipeline import report

    from fieldlimits.pipeline.errors import BadInput

    compare_with = args.compare_with.strip().lower()
    if compare_with == "none":
        compare_with = None
    elif compare_with != "auto":
        try:
            compare_with = int(compare_with)
        except ValueError:
            raise BadInput(f"--compare-with takes a run number, 'auto' or 'none'; got "
                           f"{args.compare_with!r}") from None
    live = not args.quiet and sys.stderr.isatty()

    def progress(message: str) -> None:
        if live:  # one overwritten line on a terminal; nothing in logs
            print(f"\r  drawing {message}   ", end="", file=sys.stderr, flush=True)

    result = report.write_report(args.db, args.out, run_id=args.run,
                                 airfield_ids=args.airfield, route_ids=args.route,
                                 progress=progress, compare_with=compare_with)
    if live:
        print("", file=sys.stderr)
    if not args.quiet:
        print(f"report: {result.index} (run {result.run_id}, {result.scenario})")
        print(f"charts: {len(result.charts)} PNG files in {result.out_dir}")
        if result.planning_csv is not None:
            print(f"payload planning CSV: {result.planning_csv}")
        print(f"time: {result.seconds:.1f} s")
        print(CAUTION)
    return 0
