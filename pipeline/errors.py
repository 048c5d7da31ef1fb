"""Errors the command line turns into one plain message and an exit status."""

from __future__ import annotations


class FieldlimitsError(Exception):
    """A failure with a message meant for the user (exit status 1)."""

    exit_code = 1


class BadInput(FieldlimitsError):
    """The user's input or arguments are wrong; the message says what to fix (exit status 2)."""

    exit_code = 2


class StoreBusy(FieldlimitsError):
    """The DuckDB file is held by a writer (a run is loading its results)."""

    exit_code = 1
