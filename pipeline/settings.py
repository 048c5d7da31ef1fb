"""Offline Prefect settings, applied before Prefect is imported.

`fieldlimits` runs with no server and no network: the first flow call starts Prefect's
temporary local API (SQLite under ``PREFECT_HOME``). These defaults turn analytics and
telemetry off, stop log shipping to the API, give the temporary server a generous start-up
wait and cap the task thread pool. They are *defaults*: a value already in the environment
wins, so a user can override any of them.

Import this module (``import pipeline.settings``) before ``import prefect``; ``pipeline``'s
package ``__init__`` does it, so any ``import pipeline.x`` is enough.
"""

from __future__ import annotations

import os

OFFLINE_DEFAULTS: dict[str, str] = {
    "PREFECT_SERVER_ANALYTICS_ENABLED": "false",
    "DO_NOT_TRACK": "1",
    "PREFECT_LOGGING_TO_API_ENABLED": "false",
    "PREFECT_SERVER_EPHEMERAL_STARTUP_TIMEOUT_SECONDS": "120",
    "PREFECT_TASKS_RUNNER_THREAD_POOL_MAX_WORKERS": "2",
}


def apply_offline_defaults(environ: dict | None = None) -> dict[str, str]:
    """Set each offline default unless the variable is already set; return what is in force."""
    env = os.environ if environ is None else environ
    for key, value in OFFLINE_DEFAULTS.items():
        env.setdefault(key, value)
    return {key: env[key] for key in OFFLINE_DEFAULTS}


apply_offline_defaults()
