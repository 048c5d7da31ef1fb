"""The input reference (Markdown), generated from :mod:`schemas.tables`.

``python -m fieldlimits.schemas.reference`` prints it; ``python -m fieldlimits.schemas.reference --write README.md``
replaces only the block between ``<!-- input-reference:start -->`` and
``<!-- input-reference:end -->`` in that file.
"""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from fieldlimits.schemas.tables import FILE_SUFFIXES, TABLES, TableSpec
from fieldlimits.schemas.typeclasses import DEFAULTED_COLUMNS

START = "<!-- input-reference:start -->"
END = "<!-- input-reference:end -->"


def _cell(text: str) -> str:
    return str(text).replace("|", "\\|").replace("\n", " ")


def table_markdown(spec: TableSpec) -> str:
    """Markdown section for one table."""
    opt = "" if spec.required_file else " (optional)"
    out = [f"### `{spec.name}`{opt}", "", spec.description, "",
           f"File: `{spec.name}.csv` (UTF-8, comma-separated) or `{spec.name}.parquet`. "
           f"Key: {', '.join(f'`{k}`' for k in spec.key)} (unique).", ""]
    if spec.foreign_keys:
        refs = "; ".join(f"`{fk.columns[0]}` → `{fk.ref_table}.{fk.ref_columns[0]}`" if len(fk.columns) == 1
                         else "(" + ", ".join(f"`{c}`" for c in fk.columns) + f") → `{fk.ref_table}`"
                         for fk in spec.foreign_keys)
        out += [f"References: {refs}.", ""]
    out += ["| column | type | unit | required | allowed | typical | description |",
            "|---|---|---|---|---|---|---|"]
    for c in spec.columns:
        req = "yes" if c.required else (f"no (blank = {c.default:g})"
                                        if isinstance(c.default, float) else "no")
        if spec.name == "aircraft_types" and c.name in DEFAULTED_COLUMNS:
            req = "no (blank = class default)"
        out.append("| " + " | ".join(_cell(x) for x in (
            f"`{c.name}`", c.dtype, c.unit or "", req, c.range_text(), c.typical,
            c.description)) + " |")
    if spec.rules:
        out += ["", "Checks across columns and rows:", ""]
        out += [f"- {r}" for r in spec.rules]
    return "\n".join(out)


def _and(items: list[str]) -> str:
    """``a``, ``a and b``, ``a, b and c``."""
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " and " + items[-1]


def markdown() -> str:
    """The whole input reference (without the start/end markers)."""
    parts = [
        "Put one file per table in a folder (`"
        + "`, `".join(TABLES) + "`; "
        + _and([f"`{t.name}`" for t in TABLES.values() if not t.required_file])
        + " are optional), as "
        + " or ".join(f"`{s}`" for s in FILE_SUFFIXES) + ". Units are in the column names. "
        "Identifiers start with a letter or digit, then letters, digits, `-`, `_` or `.` "
        "(no spaces); they are kept as written, so `NA`, `null` or `None` is an identifier "
        "like any other (in a number column these spellings, like an empty cell, mean "
        "blank). Row "
        "numbers in error messages count data rows: row 1 is the first row below the header "
        "(sheet line 2). A blank optional cell takes the default shown; an unknown column is "
        "ignored with a warning.",
    ]
    parts += [table_markdown(spec) for spec in TABLES.values()]
    return "\n\n".join(parts) + "\n"


def replace_block(text: str, block: str) -> str:
    """Replace what lies between the markers in ``text`` with ``block``."""
    i, j = text.find(START), text.find(END)
    if i < 0 or j < 0 or j < i:
        raise ValueError(f"markers {START} … {END} not found in the file")
    return text[: i + len(START)] + "\n" + block + text[j:]


def read_block(text: str) -> str:
    """The text between the markers (without them)."""
    i, j = text.find(START), text.find(END)
    if i < 0 or j < 0 or j < i:
        raise ValueError(f"markers {START} … {END} not found")
    return text[i + len(START):j].lstrip("\n")


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(
        prog="python -m fieldlimits.schemas.reference",
        description="Print the input-table reference, or write it into a Markdown file "
                    "between the input-reference markers.")
    parser.add_argument("--write", metavar="FILE", type=Path,
                        help="replace the block between the markers in FILE")
    args = parser.parse_args(argv)
    if args.write is None:
        sys.stdout.write(markdown())
        return 0
    text = args.write.read_text(encoding="utf-8")
    args.write.write_text(replace_block(text, markdown()), encoding="utf-8")
    print(f"input reference written to {args.write}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
