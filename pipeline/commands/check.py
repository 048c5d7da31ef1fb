"""``fieldlimits check DIR``: validate the input tables only."""

from __future__ import annotations

NAME = "check"
HELP = "validate an input folder and list every problem (nothing is computed or written)"


def add_arguments(parser) -> None:
    parser.add_argument("input_dir", metavar="DIR", help="input folder to check")


def run(args) -> int:
    from pipeline.inputs import check_folder, errors_only, load_inputs

    problems = check_folder(args.input_dir)
    errors = errors_only(problems)
    for p in problems:
        print(p)
    if errors:
        print(f"{len(errors)} error(s) in {args.input_dir}: fix them and run check again")
        return 2
    inputs = load_inputs(args.input_dir)
    sizes = ", ".join(f"{name} {len(frame)} rows" for name, frame in inputs.tables.items())
    warnings = len(problems) - len(errors)
    print(f"ok: {sizes}" + (f" ({warnings} warning(s) above)" if warnings else ""))
    return 0
