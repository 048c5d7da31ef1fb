"""``fieldlimits run [DIR]``: compute and store one run."""

from __future__ import annotations

import os
import sys

from pipeline.commands import add_db_argument
from pipeline.errors import BadInput

NAME = "run"
HELP = "compute takeoff-weight limits for an input folder (the demo network by default) and store the run"
DESCRIPTION = (
    "Validate the input tables in DIR (the bundled demo network when DIR is omitted), compute\n"
    "every runway direction x month x aircraft type x condition (dry, wet) on the design day\n"
    "(mean daily maximum temperature, calm wind), and store the run in one transaction in the\n"
    "DuckDB file. Progress goes to stderr; a summary is printed at the end. Bad input exits\n"
    "with status 2 and leaves the database as it was."
)


def _floats(text: str) -> tuple[float, ...]:
    if text.strip().lower() in ("", "none"):
        return ()
    try:
        values = tuple(float(x) for x in text.split(",") if x.strip())
    except ValueError:
        raise BadInput(f"expected comma-separated numbers, got {text!r}") from None
    return values


WARM_UP_MIN_BYTES = 5 * 2**20
"""Inputs at least this big take seconds to validate: start Prefect's server meanwhile."""


def _folder_bytes(folder) -> int:
    try:
        return sum(p.stat().st_size for p in os.scandir(folder) if p.is_file())
    except OSError:
        return 0


def _start_prefect_server(input_dir):
    """Start Prefect's temporary API server in a thread while the inputs are validated.

    The flow would start it anyway on its first call; starting it now overlaps the ~15-25 s
    start-up with validation. Only when no ``PREFECT_API_URL`` is set. The thread is joined
    before the flow runs, so the flow finds the server up (or starts it itself if this failed);
    bad input is reported without waiting for it.
    """
    import threading

    if os.environ.get("PREFECT_API_URL") or _folder_bytes(input_dir) < WARM_UP_MIN_BYTES:
        return None
    os.environ.setdefault("PREFECT_LOGGING_LEVEL",
                          "WARNING" if os.environ.get("FIELDLIMITS_DEBUG") else "CRITICAL")

    def start():
        try:
            from prefect.server.api.server import SubprocessASGIServer

            SubprocessASGIServer().start()
        except Exception:  # the flow starts it (and reports any problem) itself
            pass

    thread = threading.Thread(target=start, name="prefect-server-start", daemon=True)
    thread.start()
    return thread


def add_arguments(parser) -> None:
    parser.add_argument("input_dir", nargs="?", metavar="DIR",
                        help="folder with airfields, runways, climate_monthly, wind_rose, "
                             "aircraft_types (and optional routes) as CSV or Parquet")
    add_db_argument(parser)
    parser.add_argument("--temperature-offset", type=float, default=0.0, metavar="K",
                        help="climate scenario: add K kelvin to every monthly temperature (default 0)")
    parser.add_argument("--conditions", default="dry,wet",
                        help="runway conditions to compute, comma separated (default dry,wet)")
    parser.add_argument("--reliability", default="0.5,0.85,0.95", metavar="P,P,...",
                        help="reliability levels (shares of days) for the reliability rows "
                             "(default 0.5,0.85,0.95; 'none' for design-day rows only)")
    parser.add_argument("--reliability-conditions", default=None, metavar="CONDITIONS",
                        help="runway conditions that get reliability rows, comma separated "
                             "(default dry; dry,wet doubles the cost of the reliability step)")
    parser.add_argument("--chunk-size", type=int, default=None, metavar="N",
                        help="cases per chunk task (default 32000; whole airfields per chunk)")
    parser.add_argument("--workers", type=int, default=None, metavar="N",
                        help="parallel chunk tasks (default PREFECT_TASKS_RUNNER_THREAD_POOL_MAX_WORKERS, 2)")
    parser.add_argument("--cluster", default=None, metavar="ADDRESS",
                        help="run the chunk tasks on a Dask cluster (tcp://host:8786, or 'local' "
                             "for a temporary local cluster); needs the dask extra")
    parser.add_argument("--work-dir", default=None, metavar="PATH",
                        help="folder for the run's temporary case and part files "
                             "(default: next to the database; must be shared with Dask workers)")
    parser.add_argument("--no-prefect", action="store_true",
                        help="run the same steps in this process without Prefect (quick checks)")
    parser.add_argument("--no-reuse", action="store_true",
                        help="recompute everything (by default an airfield x type whose inputs and "
                             "the code are unchanged since the last complete run with the same "
                             "parameters is copied from it)")
    parser.add_argument("--quiet", action="store_true", help="no progress lines")
    # the dispatch rule for landing at route destinations (pipeline.landing)
    parser.add_argument("--landing-jet-share", type=float, default=0.6, metavar="S",
                        help="share of the landing distance available a jet's dry landing "
                             "distance may use (default 0.6: 14 CFR 121.195(b))")
    parser.add_argument("--landing-turboprop-share", type=float, default=0.6, metavar="S",
                        help="the same for propeller types (default 0.6; 0.7 where the operator "
                             "uses the turboprop rule, 14 CFR 121.195(c))")
    parser.add_argument("--landing-wet-increase", type=float, default=0.15, metavar="F",
                        help="increase of the required landing distance on a wet runway "
                             "(default 0.15 = +15 %%, 14 CFR 121.195(d))")


def run(args) -> int:
    from pipeline import progress
    from pipeline.steps import DEFAULT_CHUNK_SIZE, RunParams

    if args.input_dir is None:
        from demo_network import demo_path

        input_dir = demo_path()
    else:
        input_dir = args.input_dir
    chunk_size = args.chunk_size or DEFAULT_CHUNK_SIZE
    if chunk_size < 1:
        raise BadInput("--chunk-size must be at least 1")
    conditions = tuple(c.strip() for c in args.conditions.split(",") if c.strip())
    if args.reliability_conditions is None:  # default: the dry runway, when the run has it
        reliability_conditions = tuple(c for c in ("dry",) if c in conditions)
    else:
        reliability_conditions = tuple(c.strip() for c in args.reliability_conditions.split(",") if c.strip())
    params = RunParams(
        temperature_offset_k=args.temperature_offset,
        chunk_size=chunk_size,
        conditions=conditions,
        reliability_levels=_floats(args.reliability),
        reliability_conditions=reliability_conditions,
        reuse=not args.no_reuse,
        landing_jet_share=args.landing_jet_share,
        landing_turboprop_share=args.landing_turboprop_share,
        landing_wet_increase=args.landing_wet_increase,
    )
    if not args.quiet:
        progress.set_reporter(progress.StderrProgress())
    from pipeline.steps import prepare_run

    warm_up = None if args.no_prefect else _start_prefect_server(input_dir)
    # bad input: exit 2 before the flow, reported at once: the server's start-up thread is
    # not waited for (a daemon; Prefect stops the server's process at exit)
    prepare_run(input_dir, args.db, params, args.work_dir)
    if warm_up is not None:
        warm_up.join()
    if args.no_prefect:
        if args.cluster:
            raise BadInput("--cluster needs Prefect; drop --no-prefect")
        from pipeline.steps import run_local

        summary = run_local(input_dir, args.db, params, workers=args.workers or 2,
                            work_root=args.work_dir)
    else:
        # the CLI reports errors itself in one line; Prefect's own log shows with FIELDLIMITS_DEBUG=1
        os.environ.setdefault("PREFECT_LOGGING_LEVEL",
                              "WARNING" if os.environ.get("FIELDLIMITS_DEBUG") else "CRITICAL")
        from pipeline.flow import run_with_prefect

        summary = run_with_prefect(input_dir, args.db, params, cluster=args.cluster,
                                   workers=args.workers, work_root=args.work_dir)
    print(summary.text())
    print(f"stored in {os.path.abspath(args.db)}; query with: fieldlimits sql \"SELECT * FROM latest_results_airfield LIMIT 20\"",
          file=sys.stdout)
    return 0
