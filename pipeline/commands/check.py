"""``fieldlimits check DIR``: validate the input tables only."""

from __future__ import annotations

NAME = "check"
HELP = "validate an input folder and list every problem (nothing is computed or written)"
DESCRIPTION = (
    "Read every input table in DIR and list every problem found (file, row, column, value,\n"
    "what was expected); exit status 2 when there are errors. Nothing is computed or written.\n"
    "The wind rose is read in blocks, so memory stays bounded on a large network; a check\n"
    "that takes more than a couple of seconds shows its progress on stderr."
)

PROGRESS_AFTER_S = 2.0
"""A check running longer than this shows its progress on stderr."""


def add_arguments(parser) -> None:
    parser.add_argument("input_dir", metavar="DIR", help="input folder to check")


def run(args) -> int:
    from fieldlimits.pipeline import progress
    from fieldlimits.pipeline.inputs import check_inputs, errors_only
    from fieldlimits.schemas.tables import TABLES

    reporter = progress.CheckProgress(after_s=PROGRESS_AFTER_S)
    try:
        result = check_inputs(args.input_dir, progress=reporter)
    finally:
        reporter.close()
    problems = result.problems
    errors = errors_only(problems)
    for p in problems:
        print(p)
    if errors:
        print(f"{len(errors)} error(s) in {args.input_dir}: fix them and run check again")
        return 2
    sizes = ", ".join(f"{name} {result.rows.get(name, 0)} rows" for name in TABLES)
    warnings = len(problems) - len(errors)
    print(f"ok: {sizes}" + (f" ({warnings} warning(s) above)" if warnings else ""))
    return 0
