"""Orchestration, storage, export and the command line of fieldlimits (no formulas here).

Importing any ``pipeline`` module first applies the offline Prefect defaults
(:mod:`pipeline.settings`), so Prefect never reaches the network.
"""

from fieldlimits.pipeline import settings as _settings  # noqa: F401  (side effect: offline defaults)
