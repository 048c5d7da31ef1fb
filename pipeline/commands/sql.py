"""``fieldlimits sql "SELECT …"``: query the store read-only."""

from __future__ import annotations

import sys

from pipeline.commands import add_db_argument
from pipeline.errors import BadInput

NAME = "sql"
HELP = "run a read-only SQL query on the store; print a table, CSV or JSON"
DESCRIPTION = (
    "Run one SQL query on a read-only connection to the DuckDB file: the query cannot change\n"
    "the data and cannot read or write other files. Useful views: latest_results_airfield,\n"
    "latest_results_direction, latest_run, scenario_results_airfield, latest_route_payload."
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
    import pandas as pd

    from pipeline import store
    from pipeline.export import neutralise_frame
    from schemas.caution import CAUTION

    with store.reader(args.db) as con:
        try:
            relation = con.sql(args.query)
        except duckdb.Error as exc:
            raise BadInput(f"the query failed: {str(exc).splitlines()[0]}") from None
        if relation is None:
            return 0
        try:
            frame = relation.df()
        except duckdb.Error as exc:
            raise BadInput(f"the query failed: {str(exc).splitlines()[0]}") from None
    out = sys.stdout
    if args.format == "csv":
        out.write(f"# {CAUTION}\n")
        neutralise_frame(frame).to_csv(out, index=False, lineterminator="\n")
    elif args.format == "json":
        out.write(frame.to_json(orient="records", date_format="iso", indent=1) + "\n")
    else:
        with pd.option_context("display.max_columns", None, "display.width", 200):
            shown = frame if len(frame) <= args.max_rows else frame.head(args.max_rows)
            out.write(shown.to_string(index=False) + "\n")
            if len(frame) > args.max_rows:
                out.write(f"({len(frame)} rows, first {args.max_rows} shown; --max-rows to see more)\n")
    return 0
