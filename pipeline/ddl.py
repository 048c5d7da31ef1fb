"""Write or check the generated DDL files ``pipeline/sql/create_<table>.sql``.

The output tables are defined once in :mod:`schemas.results`; this module renders those
definitions into the SQL files the store executes::

    python -m fieldlimits.pipeline.ddl --write   # regenerate after editing schemas/results.py
    python -m fieldlimits.pipeline.ddl           # exit 1 if a file is out of date (also a test)
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from fieldlimits.schemas import results

SQL_DIR = Path(__file__).with_name("sql")


def generated_files() -> dict[Path, str]:
    """Path → expected text for every generated DDL file."""
    return {SQL_DIR / f"create_{name}.sql": results.create_table_sql(name) for name in results.TABLES}


def stale_files() -> list[Path]:
    """Generated DDL files whose text differs from :mod:`schemas.results`."""
    return [p for p, text in generated_files().items() if not p.exists() or p.read_text() != text]


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--write", action="store_true", help="rewrite the files")
    args = parser.parse_args(argv)
    if args.write:
        for path, text in generated_files().items():
            path.write_text(text)
            print(f"wrote {path}")
        return 0
    stale = stale_files()
    for path in stale:
        print(f"out of date: {path} (run python -m fieldlimits.pipeline.ddl --write)")
    return 1 if stale else 0


if __name__ == "__main__":
    sys.exit(main())
