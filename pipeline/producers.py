"""Row producers: the one place where more result rows are added to each chunk.

After a chunk's design-day rows are computed, :func:`pipeline.chunks.compute_chunk` calls
every producer returned by :func:`active_producers` with a
:class:`pipeline.chunks.ChunkContext` (the chunk's cases, the ``Aircraft`` and ``Site``
arrays, the design-day rows, the run parameters and ``context.table(name)`` for any input
table restricted to the chunk's airfields). A chunk always holds complete airfields.

A producer returns one of

* ``None`` — nothing to add;
* a DataFrame of extra ``results_direction`` rows (columns of
  :data:`schemas.results.RESULT_COLUMNS`; missing columns become NULL);
* a :class:`ProducerRows` with ``direction`` rows and/or ``airfield`` rows. Airfield rows
  go straight into ``results_airfield``; for every ``basis`` a producer supplies at airfield
  level, the writer does *not* derive airfield rows by picking the best direction.

How to add one
--------------
* Reliability levels (issue 6): write ``pipeline/reliability.py`` with a function
  ``reliability_rows(context) -> ProducerRows | DataFrame | None``; it is picked up
  automatically (no edit here needed). Rows use ``basis = 'reliability'`` and the level in
  ``reliability``. The run's levels are in ``context.params["reliability_levels"]``.
* Anything else: append the function to :data:`ROW_PRODUCERS`.
"""

from __future__ import annotations

import importlib
from dataclasses import dataclass
from typing import Callable

import pandas as pd


@dataclass
class ProducerRows:
    """Rows a producer adds: per direction and/or per airfield."""

    direction: pd.DataFrame | None = None
    airfield: pd.DataFrame | None = None


RowProducer = Callable[[object], "ProducerRows | pd.DataFrame | None"]

ROW_PRODUCERS: list[RowProducer] = []
"""Producers always called, in order (append here)."""

OPTIONAL_PRODUCERS: tuple[tuple[str, str], ...] = (
    ("fieldlimits.pipeline.reliability", "reliability_rows"),
)
"""(module, function) pairs used when the module exists."""


def active_producers() -> list[RowProducer]:
    """:data:`ROW_PRODUCERS` plus every optional producer whose module is installed."""
    found = list(ROW_PRODUCERS)
    for module_name, func_name in OPTIONAL_PRODUCERS:
        try:
            module = importlib.import_module(module_name)
        except ModuleNotFoundError as exc:
            if exc.name == module_name:
                continue
            raise
        func = getattr(module, func_name, None)
        if func is not None and func not in found:
            found.append(func)
    return found


def normalise(out) -> ProducerRows:
    """Accept ``None``, a DataFrame (direction rows) or :class:`ProducerRows`."""
    if out is None:
        return ProducerRows()
    if isinstance(out, pd.DataFrame):
        return ProducerRows(direction=out)
    if isinstance(out, ProducerRows):
        return out
    raise TypeError(f"a row producer returned {type(out).__name__}; expected DataFrame, ProducerRows or None")
