"""Progress of a run's chunks: done / total, elapsed and time left.

The flow and the local driver call :func:`report` after each chunk; what happens then is set
by :func:`set_reporter` (the CLI prints to stderr; by default nothing is printed).
"""

from __future__ import annotations

import sys
import time
from typing import Callable

Reporter = Callable[[int, int, float], None]
_reporter: Reporter | None = None


def set_reporter(reporter: Reporter | None) -> None:
    """Install the function called as ``reporter(done, total, elapsed_s)``."""
    global _reporter
    _reporter = reporter


def report(done: int, total: int, elapsed_s: float) -> None:
    if _reporter is not None:
        _reporter(done, total, elapsed_s)


def format_seconds(seconds: float) -> str:
    seconds = max(0, int(round(seconds)))
    if seconds < 60:
        return f"{seconds} s"
    minutes, sec = divmod(seconds, 60)
    if minutes < 60:
        return f"{minutes} min {sec:02d} s"
    hours, minutes = divmod(minutes, 60)
    return f"{hours} h {minutes:02d} min"


def line(done: int, total: int, elapsed_s: float) -> str:
    """``chunks 12/140 (9 %), 14 s elapsed, about 2 min 10 s left``."""
    pct = 100 * done // max(total, 1)
    text = f"chunks {done}/{total} ({pct} %), {format_seconds(elapsed_s)} elapsed"
    if 0 < done < total:
        text += f", about {format_seconds(elapsed_s / done * (total - done))} left"
    return text


class StderrProgress:
    """Prints progress to a stream: one updating line on a terminal, else every ~10 %."""

    def __init__(self, stream=None, min_interval_s: float = 2.0):
        self.stream = stream or sys.stderr
        self.tty = hasattr(self.stream, "isatty") and self.stream.isatty()
        self.min_interval_s = min_interval_s
        self._last_t = 0.0
        self._last_decile = -1

    def __call__(self, done: int, total: int, elapsed_s: float) -> None:
        if self.tty:
            end = "\n" if done >= total else ""
            self.stream.write("\r" + line(done, total, elapsed_s).ljust(70) + end)
            self.stream.flush()
            return
        decile = 10 * done // max(total, 1)
        now = time.monotonic()
        if done >= total or (decile > self._last_decile and now - self._last_t >= self.min_interval_s):
            self._last_decile, self._last_t = decile, now
            self.stream.write(line(done, total, elapsed_s) + "\n")
            self.stream.flush()
