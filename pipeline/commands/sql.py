"""``fieldlimits sql "SELECT …"``: query the store read-only."""

from __future__ import annotations

import sys

from fieldlimits.pipeline.commands import add_db_argument
from fieldlimits.pipeline.errors import BadInput

NAME = "sql"
HELP = "run a read-only SQL query on the store; print a table, CSV or JSON"
DESCRIPTION = (
    "Run one SQL query on a read-only connection to the DuckDB file: the query cannot change\n"
    "the data and cannot read or write other files. Useful views: latest_results_airfield,\n"
    "latest_results_direction, latest_route_payload and latest_run (the last complete\n"
    "baseline run, no temperature offset), run_scenarios (each run's scenario),\n"
    "latest_scenario_runs, scenario_results_airfield and scenario_route_payload (the last\n"
    "complete run of each scenario). Numbers are rounded by the unit in the column name,\n"
    "durations are in seconds; CSV and JSON carry the caution in a last column 'caution', and\n"
    "a missing value is an empty cell (CSV), null (JSON) or '-' (table)."
)


def add_arguments(parser) -> None:
    parser.add_argument("query", help="the SQL query (quote it)")
    add_db_argument(parser)
    parser.add_argument("--format", choices=("table", "csv", "json"), default="table",
                        help="output format (default table)")
    parser.add_argument("--max-rows", type=int, default=200, metavar="N",
                        help="rows shown in table format (default 200; CSV/JSON print all)")


def run(args) -> int:
    import duckdb

    from fieldlimits.pipeline import export, store

    if args.max_rows < 1:
        raise BadInput(f"--max-rows must be at least 1; got {args.max_rows}")
    with store.reader(args.db) as con:
        try:
            relation = con.sql(args.query)
            if relation is None:
                return 0
            frame = relation.df()
        except duckdb.Error as exc:
            raise BadInput(f"the query failed: {export.query_error(exc)}") from None
    out = sys.stdout
    if args.format == "csv":
        export.to_csv(export.file_frame(frame), out)
    elif args.format == "json":
        out.write(export.to_json(export.with_caution(export.tidy_frame(frame))) + "\n")
    else:
        out.write(export.text_table(frame, args.max_rows) + "\n")
        if len(frame) > args.max_rows:
            out.write(f"({len(frame)} rows, first {args.max_rows} shown; --max-rows to see more)\n")
    return 0
