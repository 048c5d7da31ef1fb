"""``fieldlimits export WHAT -o FILE``: a table, view or query to CSV."""

from __future__ import annotations

from fieldlimits.pipeline.commands import add_db_argument

NAME = "export"
HELP = "export a table, view or query to CSV (plain CSV, caution in a last column, formula-safe cells)"
DESCRIPTION = (
    "Write a table or view of the store (e.g. latest_results_airfield) or a SELECT query to a\n"
    "CSV file that pandas, DuckDB and spreadsheets open with their default settings: the\n"
    "header on line 1, the caution in a last column 'caution' on every row (it stays with any\n"
    "rows copied out of the file), the run's scenario in a column 'scenario' for rows of a\n"
    "table or view with run_id, an empty cell for a missing value, numbers rounded by the unit\n"
    "in the column name, durations in seconds. Text cells starting with =, +, - or @ get a\n"
    "leading single quote so a spreadsheet does not run them as formulas."
)


def add_arguments(parser) -> None:
    parser.add_argument("what", metavar="TABLE_OR_QUERY",
                        help="table or view name, or a SELECT query in quotes")
    parser.add_argument("-o", "--output", required=True, metavar="FILE", help="CSV file to write")
    add_db_argument(parser)
    parser.add_argument("--run", type=int, default=None, metavar="RUN_ID",
                        help="only rows of this run (for a table or view with run_id)")


def run(args) -> int:
    from fieldlimits.pipeline.export import export_csv

    rows = export_csv(args.db, args.what, args.output, run_id=args.run)
    print(f"wrote {rows} rows to {args.output}")
    return 0
