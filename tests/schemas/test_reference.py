"""The README's input reference is the one generated from the table definitions."""

from __future__ import annotations

from pathlib import Path

from fieldlimits.schemas.reference import END, START, markdown, read_block, replace_block
from fieldlimits.schemas.tables import TABLES

README = Path(__file__).resolve().parents[2] / "README.md"


def test_readme_reference_matches_definitions():
    block = read_block(README.read_text(encoding="utf-8"))
    assert block == markdown(), (
        "README input reference is out of date: run `python -m fieldlimits.schemas.reference --write "
        "README.md`")


def test_reference_lists_every_column_with_its_unit():
    text = markdown()
    for spec in TABLES.values():
        assert f"### `{spec.name}`" in text
        for c in spec.columns:
            assert f"| `{c.name}` | {c.dtype} | {c.unit} |" in text


def test_replace_block_keeps_the_rest():
    doc = f"intro\n{START}\nold\n{END}\nafter\n"
    out = replace_block(doc, "new\n")
    assert out == f"intro\n{START}\nnew\n{END}\nafter\n"


def test_every_column_has_unit_suffix_or_is_dimensionless():
    suffix = {"m": "_m", "deg": "_deg", "kg": "_kg", "°C": "_c", "hPa": "_hpa", "kN": "_kn",
              "kt": "_kt", "kW": "_kw", "km": "_km", "min": "_min", "%": "_pct", "m/s": "_mps",
              "m²": "_m2"}
    for spec in TABLES.values():
        for c in spec.columns:
            if c.unit in suffix:
                assert c.name.endswith(suffix[c.unit]), c.name
