"""Progress on stderr: a run's chunks, and the reading of the tables by ``check``.

The flow and the local driver call :func:`report` after each chunk; what happens then is set
by :func:`set_reporter` (the CLI prints to stderr; by default nothing is printed).
:class:`CheckProgress` is the callback ``fieldlimits check`` gives
:func:`schemas.validate.check_folder`: silent for a check that ends within a couple of
seconds, then a line every few seconds.
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


def format_bytes(n: float) -> str:
    """``812 MB``, ``2.23 GB`` (decimal units)."""
    if n >= 1e9:
        return f"{n / 1e9:.2f} GB"
    if n >= 1e6:
        return f"{n / 1e6:.0f} MB"
    return f"{n / 1e3:.0f} kB"


def check_line(done: int, total: int, elapsed_s: float, file: str) -> str:
    """``checking wind_rose.csv: 812 MB of 2.23 GB (36 %), 14 s elapsed, about 25 s left``."""
    pct = 100 * done // max(total, 1)
    text = (f"checking {file}: {format_bytes(done)} of {format_bytes(total)} ({pct} %), "
            f"{format_seconds(elapsed_s)} elapsed")
    if 0 < done < total:
        text += f", about {format_seconds(elapsed_s / done * (total - done))} left"
    return text


class CheckProgress:
    """Progress of reading the input tables, for ``check_folder(progress=...)``.

    Nothing is printed until ``after_s`` seconds have passed (a small folder's check stays
    quiet); then one updating line on a terminal, else a line every ``every_s`` seconds.
    Call :meth:`close` at the end (it ends the terminal line).
    """

    def __init__(self, stream=None, after_s: float = 2.0, every_s: float = 5.0):
        self.stream = stream or sys.stderr
        self.tty = hasattr(self.stream, "isatty") and self.stream.isatty()
        self.after_s = after_s
        self.every_s = every_s
        self.t0 = time.monotonic()
        self._last_t = None
        self.printed = False

    def __call__(self, done: int, total: int, file: str) -> None:
        now = time.monotonic()
        elapsed = now - self.t0
        if elapsed < self.after_s:
            return
        text = check_line(done, total, elapsed, file)
        if self.tty:
            self.stream.write("\r" + text.ljust(78))
        elif self._last_t is None or now - self._last_t >= self.every_s or done >= total:
            self.stream.write(text + "\n")
        else:
            return
        self._last_t = now
        self.printed = True
        self.stream.flush()

    def close(self) -> None:
        if self.tty and self.printed:
            self.stream.write("\n")
            self.stream.flush()
