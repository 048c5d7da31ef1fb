"""Subcommands of ``fieldlimits``: one module per command.

Each module defines::

    NAME = "sql"                       # the subcommand
    HELP = "one line for the command list"
    DESCRIPTION = "longer text for --help"   # optional
    def add_arguments(parser): ...     # argparse options
    def run(args) -> int: ...          # exit status; raise pipeline.errors.BadInput (exit 2)
                                       # or FieldlimitsError (exit 1) with a plain message

:func:`pipeline.cli.discover_commands` finds them; the caution is added to every --help.
:func:`add_db_argument` gives the shared ``--db`` option.
"""

from __future__ import annotations

DB_HELP = "DuckDB file (default: ./fieldlimits.duckdb)"


def add_db_argument(parser) -> None:
    """The shared ``--db PATH`` option."""
    parser.add_argument("--db", default="fieldlimits.duckdb", metavar="PATH", help=DB_HELP)
