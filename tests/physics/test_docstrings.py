"""Every public physics function of the core modules has a numpydoc docstring with units,
Notes (the equation) and References (house style, STYLE.md §4)."""

import importlib
import inspect
import re

import pytest

CORE = ["constants", "atmosphere", "wind", "friction", "aerodynamics", "thrust", "groundrun", "airborne",
        "fieldlength", "limits", "weightlimit", "select", "caseinput", "takeoffevents", "flightpath",
        "landing"]
# Small non-physics helpers (bookkeeping, no formula) are exempt from Notes/References.
EXEMPT = {"case_count"}


def _public_functions(mod):
    for name, obj in vars(mod).items():
        if name.startswith("_") or name in EXEMPT or not inspect.isfunction(obj):
            continue
        if obj.__module__ != mod.__name__:  # aliases and imports
            continue
        yield name, obj


@pytest.mark.parametrize("modname", CORE)
def test_numpydoc_sections_and_units(modname):
    mod = importlib.import_module(f"fieldlimits.physics.{modname}")
    assert mod.__doc__ and "References" in mod.__doc__ or modname in ("limits",)
    for name, fn in _public_functions(mod):
        doc = inspect.getdoc(fn) or ""
        for section in ("Parameters", "Returns", "Notes", "References"):
            if section == "Parameters" and not inspect.signature(fn).parameters:
                continue
            assert f"\n{section}\n" in doc, f"{modname}.{name}: no {section} section"
        for header, body in _blocks(doc, "Parameters") + _blocks(doc, "Returns"):
            if any(k in header for k in NOT_PHYSICAL):
                continue
            assert re.search(r"\[[^\]]+\]", body), f"{modname}.{name}: no [unit] for '{header}'"


NOT_PHYSICAL = ("callable", "ThrustLaw", "Aircraft", "Site", "Cases", "dict", "object", "list of", "nodes",
                "WeightLimit", "GroundRun", "TakeoffResult", "AccelerationCoefficients", "**", "bool",
                "FlightPath", "PathInputs")


def _blocks(doc, section):
    """(header, description) pairs of a numpydoc section."""
    if f"\n{section}\n" not in doc:
        return []
    text = doc.split(f"\n{section}\n", 1)[1].split("\n", 1)[1]  # drop the dashes
    text = re.split(r"\n\S[^\n]*\n-{3,}", text, maxsplit=1)[0]  # up to the next section
    out, header, body = [], None, []
    for line in text.splitlines():
        if line and not line.startswith(" "):
            if header is not None:
                out.append((header, " ".join(body)))
            header, body = line, []
        elif header is not None:
            body.append(line.strip())
    if header is not None:
        out.append((header, " ".join(body)))
    return out


def test_block_parser_catches_a_missing_unit():
    doc = "x\n\nParameters\n----------\na : float\n    Length. [m]\nb : float\n    No unit.\n\nReturns\n-------\nfloat\n    Out. [m]\n"
    blocks = dict(_blocks(doc, "Parameters"))
    assert "[m]" in blocks["a : float"] and "[" not in blocks["b : float"]
