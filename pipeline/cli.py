"""The ``fieldlimits`` command line.

Subcommands are discovered from the modules of :mod:`pipeline.commands`: each module
defines ``NAME``, ``HELP``, ``add_arguments(parser)`` and ``run(args) -> int``. Adding a
command means adding a module there; this file does not change.

Errors reach the user as one line ``fieldlimits: error: …`` and an exit status: 2 for bad
input or arguments, 1 for anything else (``FIELDLIMITS_DEBUG=1`` shows the traceback). A
reader that closes the pipe early (``| head``) ends the command quietly (status 141).
"""

from __future__ import annotations

import argparse
import importlib
import os
import pkgutil
import sys
import traceback

import fieldlimits.pipeline.settings  # noqa: F401  (offline Prefect defaults first)

from fieldlimits.pipeline.errors import FieldlimitsError
from fieldlimits.schemas.caution import CAUTION

ORDER = ("run", "check", "calibrate", "runs", "prune", "compare", "sql", "export", "report", "explain", "serve",
         "generate")
DESCRIPTION = (
    "Takeoff-weight limits and route payloads for every runway direction, month and "
    "aircraft type of an airline network, stored run by run in DuckDB."
)


def _version() -> str:
    from importlib import metadata

    try:
        return metadata.version("fieldlimits")
    except metadata.PackageNotFoundError:
        return "unknown"


class _BrokenCommand:
    """Stands in for a command module that failed to import."""

    def __init__(self, name: str, error: BaseException):
        self.NAME = name
        self.HELP = f"(unavailable: {type(error).__name__}: {error})"
        self._error = error

    def add_arguments(self, parser):
        parser.add_argument("rest", nargs=argparse.REMAINDER)

    def run(self, args) -> int:
        raise FieldlimitsError(f"the command {self.NAME!r} cannot load: {self._error}")


def discover_commands(only: str | None = None) -> list:
    """Command modules of :mod:`pipeline.commands`, in :data:`ORDER` then by name; with
    ``only``, just that one (the others' imports, scipy among them, are not paid for)."""
    import fieldlimits.pipeline.commands as package

    found = []
    for info in pkgutil.iter_modules(package.__path__):
        if info.name.startswith("_") or (only is not None and info.name != only):
            continue
        try:
            module = importlib.import_module(f"fieldlimits.pipeline.commands.{info.name}")
        except Exception as exc:  # one broken command must not break the others
            found.append(_BrokenCommand(info.name, exc))
            continue
        if all(hasattr(module, a) for a in ("NAME", "HELP", "add_arguments", "run")):
            found.append(module)
    rank = {name: i for i, name in enumerate(ORDER)}
    return sorted(found, key=lambda m: (rank.get(m.NAME, len(ORDER)), m.NAME))


def _command_named(argv: list[str] | None) -> str | None:
    """The command the arguments name (their first word), when a module of that name exists."""
    import fieldlimits.pipeline.commands as package

    words = sys.argv[1:] if argv is None else argv
    first = words[0] if words and not words[0].startswith("-") else None
    names = {info.name for info in pkgutil.iter_modules(package.__path__)
             if not info.name.startswith("_")}
    return first if first in names else None


def build_parser(argv: list[str] | None = None, all_commands: bool = True) -> argparse.ArgumentParser:
    """The parser; with ``all_commands=False`` only the command ``argv`` names is loaded (so
    a command's first line of progress is not held up by the imports of all the others)."""
    parser = argparse.ArgumentParser(
        prog="fieldlimits", description=f"{DESCRIPTION}\n\n{CAUTION}", epilog=CAUTION,
        formatter_class=argparse.RawDescriptionHelpFormatter)
    parser.add_argument("--version", action="version", version=f"fieldlimits {_version()}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    only = None if all_commands else _command_named(argv)
    for module in discover_commands(only):
        doc = getattr(module, "DESCRIPTION", None) or module.HELP
        p = sub.add_parser(module.NAME, help=module.HELP, description=f"{doc}\n\n{CAUTION}",
                           epilog=CAUTION, formatter_class=argparse.RawDescriptionHelpFormatter)
        module.add_arguments(p)
        p.set_defaults(_command=module)
    return parser


def _stop_writing() -> None:
    """The reader of stdout has gone (``fieldlimits sql … | head``): send the rest of the
    output, and Python's flush at exit, to /dev/null instead of printing a traceback."""
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, sys.stdout.fileno())
        os.close(devnull)
    except (OSError, ValueError):
        pass


def _exit_now(status: int) -> None:
    """End the process once Python's exit handlers have run (Prefect's log and event
    flushing, logging's shutdown), without the interpreter's teardown: after a run, freeing
    every module and array takes 1-2 s that the user would wait for after the summary, which
    states the wall time. Only from the command line (``main()`` without ``argv``)."""
    import atexit

    try:
        atexit._run_exitfuncs()
        sys.stdout.flush()
        sys.stderr.flush()
    except BrokenPipeError:
        _stop_writing()
        status = 141
    finally:
        os._exit(status)


def main(argv: list[str] | None = None) -> int:
    parser = build_parser(argv, all_commands=False)
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:  # argparse: --help (0) or a usage error (2)
        return int(exc.code or 0)
    args.command_line = argv is None  # the process is this command (not a call from Python)
    command = getattr(args, "_command", None)
    if command is None:
        parser.print_help()
        return 2
    try:
        status = int(command.run(args) or 0)
        sys.stdout.flush()  # a closed pipe shows here, not in an ignored error at exit
        if argv is None and getattr(command, "EXIT_AFTER_HANDLERS", False):
            _exit_now(status)
        return status
    except BrokenPipeError:
        _stop_writing()
        return 141  # 128 + SIGPIPE, as a shell reports a command whose reader went away
    except FieldlimitsError as exc:
        print(f"fieldlimits: error: {exc}", file=sys.stderr)
        return exc.exit_code
    except KeyboardInterrupt:
        print("fieldlimits: interrupted", file=sys.stderr)
        return 130
    except Exception as exc:  # anything unforeseen: one line, details on request
        if os.environ.get("FIELDLIMITS_DEBUG"):
            traceback.print_exc()
        message = str(exc).strip().splitlines()[0] if str(exc).strip() else ""
        print(f"fieldlimits: error: {type(exc).__name__}: {message} "
              "(set FIELDLIMITS_DEBUG=1 for details)", file=sys.stderr)
        return 1


if __name__ == "__main__":
    sys.exit(main())
