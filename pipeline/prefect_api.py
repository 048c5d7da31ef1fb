"""Prefect's temporary API server, started by ``fieldlimits run`` in its first second.

Without ``PREFECT_API_URL`` Prefect starts a temporary local API inside the first flow call
and the command sits silent until it answers (measured on the demo: 4–8 s of a 18–27 s run,
after about 2 s of importing Prefect; DEVELOPERS.md). The flow needs the API only from its
first call on: validating the inputs, importing Prefect and the flow's modules do not. So
``fieldlimits run`` starts the same server (Prefect's own application in ephemeral mode,
served by uvicorn exactly as Prefect's ``SubprocessASGIServer`` does) as its very first step,
before it imports Prefect, and the start-up overlaps all of that; the flow then runs against
it through ``PREFECT_API_URL`` (:meth:`TemporaryServer.settings`).

It also makes stops clean. The server process

* runs in a session of its own, so a Ctrl-C at the terminal reaches only fieldlimits, which
  records the run as interrupted and then stops the server (:meth:`TemporaryServer.stop`);
* gets the parent-death signal (Linux ``prctl(PR_SET_PDEATHSIG, SIGTERM)``): when the
  fieldlimits process dies, even by ``kill -9``, the kernel stops the server too, so no
  orphaned server process is left. It is set in the child before uvicorn starts and is tied
  to the thread that started it, so :meth:`TemporaryServer.start` must be called from the
  main thread (it returns at once; :meth:`wait_ready` waits).
"""

from __future__ import annotations

import atexit
import importlib.util
import os
import signal
import socket
import subprocess
import sys
import tempfile
import time
import urllib.error
import urllib.request
from pathlib import Path

PR_SET_PDEATHSIG = 1  # linux/prctl.h


def _die_with_parent() -> None:  # runs in the child between fork and exec
    try:
        import ctypes

        libc = ctypes.CDLL(None, use_errno=True)
        libc.prctl(PR_SET_PDEATHSIG, signal.SIGTERM, 0, 0, 0)
    except Exception:  # not Linux: the session and stop() still apply
        pass


def _free_port() -> int:
    with socket.socket(socket.AF_INET, socket.SOCK_STREAM) as s:
        s.bind(("127.0.0.1", 0))
        return int(s.getsockname()[1])


def _prefect_parent() -> str:
    spec = importlib.util.find_spec("prefect")
    if spec is None or not spec.submodule_search_locations:
        raise RuntimeError("Prefect is not installed")
    return str(Path(list(spec.submodule_search_locations)[0]).parent)


class TemporaryServer:
    """One temporary Prefect API server process for this command."""

    def __init__(self, process: subprocess.Popen, port: int, started: float):
        self.process = process
        self.errors = None  # the server's stderr (a temporary file)
        self.port = port
        self.started = started
        self.ready_after_s: float | None = None

    @property
    def api_url(self) -> str:
        return f"http://127.0.0.1:{self.port}/api"

    @classmethod
    def start(cls) -> "TemporaryServer":
        """Start the server process (returns at once; call from the main thread)."""
        port = _free_port()
        env = {**os.environ, "PREFECT_UI_ENABLED": "0", "PREFECT__SERVER_EPHEMERAL": "1",
               "PREFECT__SERVER_FINAL": "1"}
        env.pop("PREFECT_API_URL", None)
        errors = tempfile.TemporaryFile()  # a file, not a pipe: a chatty server never blocks
        process = subprocess.Popen(
            [sys.executable, "-m", "uvicorn", "--app-dir", _prefect_parent(), "--factory",
             "prefect.server.api.server:create_app", "--host", "127.0.0.1", "--port", str(port),
             "--log-level", "error", "--lifespan", "on"],
            env=env, stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL,
            stderr=errors, start_new_session=True, preexec_fn=_die_with_parent)
        server = cls(process, port, time.monotonic())
        server.errors = errors
        atexit.register(server.stop)  # registered before Prefect's own: runs after them
        return server

    def ready(self) -> bool:
        """Whether the API answers its health check now."""
        try:
            with urllib.request.urlopen(f"{self.api_url}/health", timeout=1.0) as r:
                return r.status == 200
        except (urllib.error.URLError, OSError, ValueError):
            return False

    def wait_ready(self, timeout_s: float, tick=None) -> None:
        """Wait until the API answers; ``tick(waited_s)`` about once a second meanwhile.

        Raises RuntimeError with the server's own error output when it exits or does not
        answer within ``timeout_s``.
        """
        last_tick = 0.0
        while not self.ready():
            waited = time.monotonic() - self.started
            if self.process is None or self.process.poll() is not None:
                status = self.process.returncode if self.process is not None else "stopped"
                raise RuntimeError(f"Prefect's temporary server stopped at start-up "
                                   f"(exit status {status}): {self._stderr()}")
            if waited > timeout_s:
                said = self._stderr()
                self.stop()
                raise RuntimeError(f"Prefect's temporary server did not answer within "
                                   f"{timeout_s:.0f} s (PREFECT_SERVER_EPHEMERAL_STARTUP_TIMEOUT_SECONDS)"
                                   f": {said}")
            if tick is not None and waited - last_tick >= 1.0:
                last_tick = waited
                tick(waited)
            time.sleep(0.1)
        if self.ready_after_s is None:
            self.ready_after_s = time.monotonic() - self.started

    def _stderr(self) -> str:
        """The last line the server wrote to its error output."""
        try:
            self.errors.seek(0)
            text = self.errors.read().decode(errors="replace").strip()
        except Exception:
            return "(no output)"
        return text.splitlines()[-1] if text else "(no output)"

    def settings(self):
        """Prefect settings context that points the flow at this server."""
        from prefect.settings import PREFECT_API_URL, temporary_settings

        return temporary_settings(updates={PREFECT_API_URL: self.api_url})

    def stop(self, wait_s: float = 5.0) -> None:
        """Stop the server (SIGTERM, then SIGKILL after ``wait_s``); safe to call twice."""
        process, self.process = self.process, None
        if process is None or process.poll() is not None:
            return
        try:
            process.terminate()
            process.wait(timeout=wait_s)
        except subprocess.TimeoutExpired:
            process.kill()
            process.wait()
        except OSError:
            pass
