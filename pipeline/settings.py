"""Offline Prefect settings, applied before Prefect is imported.

`fieldlimits` runs with no server and no network: ``fieldlimits run`` starts Prefect's
temporary local API itself (:mod:`pipeline.prefect_api`; SQLite under ``PREFECT_HOME``). These
defaults turn analytics and telemetry off, give the temporary server a generous start-up wait
and cap the task thread pool. They are *defaults*: a value already in the environment wins, so
a user can override any of them.

Logs: with the temporary server nobody sees the run's logs in a UI (the server stops with the
run) and shipping them only costs SQLite writes, so ``PREFECT_LOGGING_TO_API_ENABLED`` defaults
to false. When the user points at a server of their own (``PREFECT_API_URL`` set), the run's
logs go to it and show in its UI, as Prefect users expect.

Import this module (``import pipeline.settings``) before ``import prefect``; ``pipeline``'s
package ``__init__`` does it, so any ``import pipeline.x`` is enough.
"""

from __future__ import annotations

import os

OFFLINE_DEFAULTS: dict[str, str] = {
    "PREFECT_SERVER_ANALYTICS_ENABLED": "false",
    "DO_NOT_TRACK": "1",
    "PREFECT_SERVER_EPHEMERAL_STARTUP_TIMEOUT_SECONDS": "120",
    "PREFECT_TASKS_RUNNER_THREAD_POOL_MAX_WORKERS": "2",
}
#: Only without a server of the user's own (no ``PREFECT_API_URL``).
TEMPORARY_SERVER_DEFAULTS: dict[str, str] = {
    "PREFECT_LOGGING_TO_API_ENABLED": "false",
}


def apply_offline_defaults(environ: dict | None = None) -> dict[str, str]:
    """Set each offline default unless the variable is already set; return what is in force."""
    env = os.environ if environ is None else environ
    defaults = dict(OFFLINE_DEFAULTS)
    if not env.get("PREFECT_API_URL"):
        defaults.update(TEMPORARY_SERVER_DEFAULTS)
    for key, value in defaults.items():
        env.setdefault(key, value)
    return {key: env[key] for key in (*OFFLINE_DEFAULTS, *TEMPORARY_SERVER_DEFAULTS) if key in env}


apply_offline_defaults()
