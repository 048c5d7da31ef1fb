"""DuckDB DDL for the stored input tables, generated from :mod:`schemas.tables`.

>>> print(create_table_sql("airfields", "input_airfields"))  # doctest: +SKIP

Columns are in the user's units (the names carry them); each column gets a
``COMMENT ON COLUMN`` with its unit and description. No primary keys (bulk inserts into
keyed tables are much slower in DuckDB); uniqueness is checked by :mod:`schemas.validate`.
"""

from __future__ import annotations

from collections.abc import Sequence

from fieldlimits.schemas.tables import TABLES, Column

_SQL_TYPES = {"str": "VARCHAR", "float": "DOUBLE", "int": "INTEGER"}


def sql_type(column: Column) -> str:
    """DuckDB type of a column."""
    return _SQL_TYPES[column.dtype]


def column_comment(column: Column) -> str:
    """Comment text: unit in brackets, then the description."""
    unit = column.unit if column.unit not in ("", "–") else "-"
    return f"[{unit}] {column.description}"


def _quote(text: str) -> str:
    return "'" + text.replace("'", "''") + "'"


def create_table_sql(table_name: str, sql_name: str | None = None, *,
                     leading_columns: Sequence[tuple[str, str, str]] = (),
                     if_not_exists: bool = True) -> str:
    """SQL that creates one input table in DuckDB, with column comments carrying units.

    Parameters
    ----------
    table_name : str
        Name in :data:`schemas.tables.TABLES` (``'runways'``).
    sql_name : str, optional
        Name of the table in the database (default: ``table_name``).
    leading_columns : sequence of (name, sql type, comment), optional
        Extra columns placed first, e.g. ``[("run_id", "VARCHAR NOT NULL", "run")]``.
    if_not_exists : bool, optional
        Emit ``CREATE TABLE IF NOT EXISTS`` (default) rather than ``CREATE TABLE``.

    Returns
    -------
    str
        Statements separated by ``;`` and newlines: ``CREATE TABLE`` then one
        ``COMMENT ON TABLE`` and one ``COMMENT ON COLUMN`` per column.
    """
    spec = TABLES[table_name]
    name = sql_name or table_name
    lines = [f"    {n} {t}" for n, t, _ in leading_columns]
    for c in spec.columns:
        null = " NOT NULL" if (c.required or c.default is not None) else ""
        lines.append(f"    {c.name} {sql_type(c)}{null}")
    head = "CREATE TABLE IF NOT EXISTS" if if_not_exists else "CREATE TABLE"
    out = [f"{head} {name} (\n" + ",\n".join(lines) + "\n);"]
    out.append(f"COMMENT ON TABLE {name} IS {_quote('Input table ' + table_name + ': ' + spec.description)};")
    for n, _, comment in leading_columns:
        out.append(f"COMMENT ON COLUMN {name}.{n} IS {_quote(comment)};")
    for c in spec.columns:
        out.append(f"COMMENT ON COLUMN {name}.{c.name} IS {_quote(column_comment(c))};")
    return "\n".join(out) + "\n"


def all_tables_sql(prefix: str = "input_", **kwargs) -> str:
    """DDL for every input table, named ``prefix + table``."""
    return "\n".join(create_table_sql(t, prefix + t, **kwargs) for t in TABLES)
