"""``fieldlimits compare [BEFORE [AFTER]]``: what changed between two runs, and why."""

from __future__ import annotations

import sys

from fieldlimits.pipeline.commands import add_db_argument

NAME = "compare"
HELP = "what changed between two runs: route payloads and takeoff-weight limits that moved, and why"
DESCRIPTION = (
    "Put two complete runs side by side (read-only): every route-month whose payload moved and\n"
    "every airfield-month (best runway direction, per type, condition and level) whose\n"
    "takeoff-weight limit moved by at least --min-change-kg, by how much, and why: the limiting\n"
    "factor before and after (for routes also the origin's). Rows that became possible or\n"
    "impossible, and airfields or routes in one run only, are listed too.\n\n"
    "Without run numbers: the last complete run against the last complete baseline run before\n"
    "it (a scenario such as --temperature-offset 2 against the climate as given; a baseline\n"
    "run against the baseline before it, e.g. before a fleet or network change). With one\n"
    "number: that run against the baseline before it. The terminal shows the counts and the\n"
    "largest moves; -o FILE or --format csv gives every row (caution in a last column).\n"
    "`fieldlimits report` draws the same comparison as a chart."
)


def add_arguments(parser) -> None:
    parser.add_argument("runs", nargs="*", type=int, metavar="RUN",
                        help="BEFORE AFTER run numbers (default: see above); one number is AFTER")
    add_db_argument(parser)
    parser.add_argument("--min-change-kg", type=float, default=None, metavar="KG",
                        help="smallest move listed [kg] (default 10: a tenth of a passenger)")
    parser.add_argument("--format", choices=("table", "csv", "json"), default="table",
                        help="output on the terminal (default table: counts and largest moves)")
    parser.add_argument("-o", "--output", default=None, metavar="FILE",
                        help="also write every changed row to this CSV file")
    parser.add_argument("--top", type=int, default=15, metavar="N",
                        help="largest moves shown per kind in table format (default 15)")


def run(args) -> int:
    from pathlib import Path

    from fieldlimits.pipeline import compare, export
    from fieldlimits.pipeline.errors import BadInput

    if len(args.runs) > 2:
        raise BadInput(f"compare takes at most two run numbers (BEFORE AFTER); got {len(args.runs)}")
    if args.top < 1:
        raise BadInput(f"--top must be at least 1; got {args.top}")
    if args.output and not Path(args.output).resolve().parent.exists():
        raise BadInput(f"the folder for {args.output} does not exist")
    before, after = (None, None)
    if len(args.runs) == 2:
        before, after = args.runs
    elif len(args.runs) == 1:
        after = args.runs[0]
    min_change = compare.DEFAULT_MIN_CHANGE_KG if args.min_change_kg is None else args.min_change_kg
    result = compare.compare_runs(args.db, before, after, min_change)
    changes = result.changes()
    if args.output:
        rows = export.write_csv([changes], args.output)
    out = sys.stdout
    if args.format == "csv":
        export.to_csv(export.file_frame(changes), out)
    elif args.format == "json":
        out.write(export.to_json(export.with_caution(export.tidy_frame(changes))) + "\n")
    else:
        out.write(result.text(args.top) + "\n")
        if args.output:
            out.write(f"\nwrote {rows} rows to {args.output}\n")
        from fieldlimits.schemas.caution import CAUTION

        out.write(f"\n{CAUTION}\n")
    return 0
