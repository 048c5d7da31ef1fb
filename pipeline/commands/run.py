"""``fieldlimits run [DIR]``: compute and store one run."""

from __future__ import annotations

import os
import sys
import threading
import time

from fieldlimits.pipeline.commands._run_options import add_run_options, input_folder, run_params
from fieldlimits.pipeline.errors import BadInput

NAME = "run"
HELP = "compute takeoff-weight limits for an input folder (the demo network by default) and store the run"
DESCRIPTION = (
    "Validate the input tables in DIR (the bundled demo network when DIR is omitted), compute\n"
    "every runway direction x month x aircraft type x condition (dry, wet) on the design day\n"
    "(mean daily maximum temperature, calm wind) and the reliability levels, and store the run\n"
    "in one transaction in the DuckDB file. A run with --temperature-offset is a scenario: it is\n"
    "stored beside the baseline and never shown as the latest results (see `fieldlimits\n"
    "compare`). Every option is checked before any work starts. Progress goes to stderr from\n"
    "the first second; a summary with the wall time is printed at the end. Bad input exits\n"
    "with status 2 and leaves the database as it was; Ctrl-C stops within seconds, records\n"
    "the run as interrupted and leaves nothing behind (exit status 130)."
)

#: The command line ends the process right after the exit handlers (pipeline.cli._exit_now).
EXIT_AFTER_HANDLERS = True

#: After a stop, how long the engine may take to unwind once the run is recorded and its
#: work folder removed, before the process ends without waiting for running chunk tasks [s].
STOP_GRACE_S = 1.5


def add_arguments(parser) -> None:
    add_run_options(parser)
    parser.add_argument("--no-prefect", action="store_true",
                        help="run the same steps in this process without Prefect (quick checks)")
    parser.add_argument("--quiet", action="store_true", help="no progress lines")


def process_age_s() -> float | None:
    """Seconds since this process started (Linux ``/proc``; None elsewhere)."""
    try:
        text = open(f"/proc/{os.getpid()}/stat").read()
        ticks = int(text[text.rfind(")") + 2:].split()[19])
        return time.clock_gettime(time.CLOCK_BOOTTIME) - ticks / os.sysconf("SC_CLK_TCK")
    except (OSError, ValueError, IndexError, AttributeError):
        return None


_T0 = time.monotonic() - (process_age_s() or 0.0)  # the process's start on the monotonic clock


def wall_s() -> float:
    """Seconds since the command started: from the process's start (interpreter start-up
    included) on the command line, from the call when called from Python (:func:`run`)."""
    return time.monotonic() - _T0


class Say:
    """Progress lines on stderr, each with the seconds since the command started."""

    def __init__(self, quiet: bool, stream=None):
        self.quiet = quiet
        self.stream = stream or sys.stderr
        self.partial = False  # a terminal line being updated in place is open

    def __call__(self, message: str) -> None:
        if not self.quiet:
            self.stream.write(("\n" if self.partial else "") + f"[{wall_s():5.1f} s] {message}\n")
            self.partial = False
            self.stream.flush()


class Stopped(KeyboardInterrupt):
    """Ctrl-C or SIGTERM: the run stops; ``reason`` names the signal."""

    def __init__(self, reason: str):
        super().__init__(reason)
        self.reason = reason


class Stopper:
    """Turns the first Ctrl-C or SIGTERM into :class:`Stopped` and ends the command soon after.

    The main thread records the run as interrupted and removes its work folder
    (:func:`pipeline.steps.fail` and :func:`pipeline.steps.cleanup`); the command then prints
    one line, stops Prefect's temporary server and exits with status 130. Chunk tasks still
    computing in threads are not waited for: once the run is recorded, a watchdog ends the
    process :data:`STOP_GRACE_S` later if the engine is still waiting for them. A second
    Ctrl-C while stopping is ignored.
    """

    def __init__(self, say: Say):
        self.say = say
        self.reason: str | None = None
        self.server = None
        self._lock = threading.Lock()
        self._done = False

    def install(self) -> None:
        import signal

        self._previous = {}
        if threading.current_thread() is not threading.main_thread():
            return
        for signum in (signal.SIGINT, signal.SIGTERM):
            self._previous[signum] = signal.signal(signum, self._on_signal)

    def uninstall(self) -> None:
        """The handlers from before :meth:`install` (the command called from Python)."""
        import signal

        for signum, handler in self._previous.items():
            signal.signal(signum, handler)
        self._previous = {}

    def _on_signal(self, signum, frame) -> None:
        import signal

        if self.reason is not None:
            return  # already stopping
        self.reason = "Ctrl-C" if signum == signal.SIGINT else signal.Signals(signum).name
        threading.Thread(target=self._watchdog, name="fieldlimits-stop", daemon=True).start()
        raise Stopped(self.reason)

    def _watchdog(self) -> None:
        from fieldlimits.pipeline import steps

        deadline = time.monotonic() + 30.0
        while time.monotonic() < deadline:
            if steps.CURRENT.run_id is None or steps.CURRENT.cleaned.is_set():
                break
            time.sleep(0.05)
        time.sleep(STOP_GRACE_S)
        self.finish()

    def finish(self) -> None:
        """One line, the server stopped, exit 130 (without waiting for worker threads)."""
        from fieldlimits.pipeline import steps

        with self._lock:
            if self._done:
                return
            self._done = True
        if self.server is not None:
            self.server.stop(wait_s=2.0)
        from fieldlimits.pipeline import chunks

        chunks.terminate_pools()  # the worker processes would outlive os._exit below
        state = steps.CURRENT
        state.remove_work_dir()  # parts a still-running chunk task wrote after the cleanup
        if state.run_id is None:
            what = "before a run was registered; nothing was stored"
        elif state.recorded == "interrupted":
            what = f"run {state.run_id} recorded as interrupted; none of its results were stored"
        else:
            what = (f"run {state.run_id} not recorded yet; the next `fieldlimits run` records it "
                    f"as interrupted")
        try:
            sys.stdout.flush()
        except Exception:
            pass
        sys.stderr.write(f"fieldlimits: stopped ({self.reason}): {what}\n")
        sys.stderr.flush()
        os._exit(130)


def _import_flow() -> None:
    try:
        import fieldlimits.pipeline.flow  # noqa: F401
    except Exception:  # the main thread imports it again and reports the error
        pass


def _ticker(say: Say):
    """On a terminal, one line updated every second while the server starts; else nothing."""
    if say.quiet or not say.stream.isatty():
        return None

    def tick(waited_s: float) -> None:
        say.stream.write(f"\r[{wall_s():5.1f} s] waiting for Prefect's temporary server to answer "
                         f"({waited_s:.0f} s since it started)")
        say.partial = True
        say.stream.flush()
    return tick


def _scenario_note(summary, db) -> str | None:
    if summary.scenario == "baseline":
        return None
    return (f"run {summary.run_id} is a scenario run ({summary.scenario}): the latest_* views "
            f"and `fieldlimits report` keep showing the baseline; see this run with `fieldlimits "
            f"report --run {summary.run_id}` and what changed with `fieldlimits compare`")


def run(args) -> int:
    import logging

    from fieldlimits.pipeline import progress, steps

    global _T0
    if not getattr(args, "command_line", False):  # called from Python: the call is the start
        _T0 = time.monotonic()
    params = run_params(args)  # every option checked before any work (exit 2)
    input_dir = input_folder(args)
    if args.cluster:
        try:
            import distributed  # noqa: F401
        except ImportError:
            raise BadInput("--cluster needs the dask extra: pip install 'fieldlimits[dask]'") from None
    say = Say(args.quiet)
    stopper = Stopper(say)
    stopper.install()
    handler = logging.StreamHandler(sys.stderr)
    handler.emit = lambda record: say(record.getMessage())  # type: ignore[method-assign]
    steps.log.addHandler(handler)
    steps.log.setLevel(logging.INFO)
    steps.log.propagate = False
    # the CLI reports errors itself in one line: Prefect's console handler is quiet (its own
    # log shows with FIELDLIMITS_DEBUG=1), its loggers are not, so the flow run's log still
    # reaches a server's UI (set before Prefect is imported; put back for callers in Python)
    quiet = {"PREFECT_LOGGING_HANDLERS_CONSOLE_LEVEL":
             "WARNING" if os.environ.get("FIELDLIMITS_DEBUG") else "CRITICAL"}
    added = [k for k in quiet if k not in os.environ]
    os.environ.update({k: quiet[k] for k in added})
    server = importer = None
    try:
        if not args.no_prefect and not os.environ.get("PREFECT_API_URL"):
            from fieldlimits.pipeline.prefect_api import TemporaryServer

            server = stopper.server = TemporaryServer.start()  # overlaps everything up to the flow
            say("starting Prefect's temporary server in the background")
        if not args.no_prefect:  # importing Prefect and the flow (about 2 s) overlaps too
            importer = threading.Thread(target=_import_flow, name="fieldlimits-import", daemon=True)
            importer.start()
        say(f"checking the inputs: {steps.network_name(input_dir)} ({input_dir}); scenario "
            f"{params.describe()}")
        prepared = steps.prepare_run(input_dir, args.db, params, args.work_dir)
        say(f"inputs ok: {prepared.n_airfields} airfields, "
            f"{prepared.plan.n_cases + prepared.reused_cases} cases in {prepared.plan.n_chunks} "
            f"chunks" + (f", {prepared.reused_cases} reused from run {prepared.reuse.from_run_id}"
                         if prepared.reused_cases else ""))
        if not args.quiet:
            progress.set_reporter(progress.StderrProgress())
        if args.no_prefect:
            summary = steps.run_local(input_dir, args.db, params, workers=args.workers or 2,
                                      work_root=args.work_dir, cluster=args.cluster)
        else:
            if server is not None and not server.ready():
                say("waiting for Prefect's temporary server to answer")
                server.wait_ready(float(os.environ.get(
                    "PREFECT_SERVER_EPHEMERAL_STARTUP_TIMEOUT_SECONDS", "120")), tick=_ticker(say))
            importer.join()
            if server is not None:
                say(f"Prefect's temporary server answered ({server.api_url}); flow run "
                    f"\"{steps.network_name(input_dir)} · {params.scenario}\"")
            from fieldlimits.pipeline.flow import run_with_prefect

            summary = run_with_prefect(input_dir, args.db, params, cluster=args.cluster,
                                       workers=args.workers, work_root=args.work_dir,
                                       server=server)
    except KeyboardInterrupt as exc:
        if stopper.reason is None:  # a KeyboardInterrupt not raised by our handler
            stopper.reason = getattr(exc, "reason", None) or "Ctrl-C"
        stopper.finish()  # does not return
        raise
    except BaseException:
        if server is not None:
            server.stop(wait_s=1.0)  # an error is reported at once, not after the server's exit
        raise
    finally:
        steps.log.removeHandler(handler)
        stopper.uninstall()
        for k in added:
            os.environ.pop(k, None)
    if server is not None:
        server.stop()
    summary.wall_seconds = wall_s()
    print(summary.text())
    print(f"stored in {os.path.abspath(args.db)}; query with: fieldlimits sql \"SELECT * FROM "
          f"latest_results_airfield LIMIT 20\"")
    note = _scenario_note(summary, args.db)
    if note:
        print(note)
    return 0
