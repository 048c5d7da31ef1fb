"""``fieldlimits prune``: remove old runs, keeping every row the remaining runs read."""

from __future__ import annotations

import sys
from datetime import datetime

from fieldlimits.pipeline.commands import add_db_argument
from fieldlimits.pipeline.errors import BadInput

NAME = "prune"
HELP = "remove old runs (--keep N newest complete runs, --before DATE); remaining runs stay whole"
DESCRIPTION = (
    "Remove old runs from the store in one transaction. --keep N removes every run numbered\n"
    "below the N-th newest complete run; --before DATE removes runs started before DATE (UTC,\n"
    "YYYY-MM-DD or YYYY-MM-DDTHH:MM); with both, a run must match both. Always kept: runs still\n"
    "running and the run a running run reuses, the last complete run of each climate scenario,\n"
    "and the newest run. A remaining run that reuses results of a removed run keeps them: those\n"
    "rows stay in the file, so every remaining run still reads in full. A run's input tables\n"
    "and route payloads go with it. DuckDB reuses the freed space for later runs; the file\n"
    "shrinks only when the free space is at its end: --compact-to NEW also writes a compact\n"
    "copy of the store to NEW, to put in its place while no run is active. --dry-run lists what\n"
    "would go, read-only."
)


def add_arguments(parser) -> None:
    add_db_argument(parser)
    parser.add_argument("--keep", type=int, default=None, metavar="N",
                        help="keep the N newest complete runs and every run after them")
    parser.add_argument("--before", default=None, metavar="DATE",
                        help="remove runs started before DATE (UTC; YYYY-MM-DD or YYYY-MM-DDTHH:MM)")
    parser.add_argument("--dry-run", action="store_true",
                        help="only list the runs that would be removed; change nothing")
    parser.add_argument("--compact-to", default=None, metavar="NEW",
                        help="then write a compact copy of the store to NEW (a new file)")


def _date(text: str) -> datetime:
    try:
        value = datetime.fromisoformat(text.strip())
    except ValueError:
        raise BadInput(f"--before must be a date or date and time in UTC, e.g. 2025-01-31 or "
                       f"2025-01-31T06:00; got {text!r}") from None
    if value.tzinfo is not None:
        from datetime import timezone

        value = value.astimezone(timezone.utc).replace(tzinfo=None)
    return value


def _ids(ids) -> str:
    return ", ".join(str(i) for i in ids) if ids else "none"


def _mib(n: int) -> str:
    return f"{n / 2**20:.1f} MiB"


def run(args) -> int:
    from fieldlimits.pipeline import prune

    out = sys.stdout
    before = _date(args.before) if args.before is not None else None
    if args.compact_to and args.keep is None and before is None:
        if args.dry_run:
            raise BadInput("--dry-run with --compact-to alone has nothing to show")
        size = prune.compact_copy(args.db, args.compact_to)
        out.write(f"compact copy {args.compact_to}: {_mib(size)}\n")
        return 0
    if args.dry_run:
        plan = prune.read_plan(args.db, args.keep, before)
        out.write(f"would remove {len(plan.remove)} run(s): {_ids(plan.remove)}\n")
    else:
        result = prune.prune(args.db, args.keep, before)
        plan = result.plan
        out.write(f"removed {len(plan.remove)} run(s): {_ids(plan.remove)}\n")
        if plan.remove:
            rows = ", ".join(f"{name} {n}" for name, n in result.deleted.items() if n)
            out.write(f"rows deleted: {rows or 'none'}\n")
            out.write(f"file {_mib(result.bytes_before)} before, {_mib(result.bytes_after)} after "
                      f"(freed space is reused by later runs)\n")
    for run_id, why in sorted(plan.kept.items()):
        out.write(f"kept run {run_id}: {why}\n")
    if args.compact_to and not args.dry_run:
        size = prune.compact_copy(args.db, args.compact_to)
        out.write(f"compact copy {args.compact_to}: {_mib(size)} (put it in place of {args.db} "
                  f"while no run is active)\n")
    return 0
