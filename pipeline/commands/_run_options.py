"""The run options shared by ``fieldlimits run`` and ``fieldlimits serve``, checked at the door.

Every option is turned into :class:`pipeline.steps.RunParams` (which checks the values) before
any work starts, so a wrong option stops the command with exit status 2 and a message that
says what to write instead.
"""

from __future__ import annotations

import math

from fieldlimits.pipeline.commands import add_db_argument
from fieldlimits.pipeline.errors import BadInput


def floats(text: str, option: str = "--reliability") -> tuple[float, ...]:
    """``0.5,0.85`` → (0.5, 0.85); ``none`` or empty → ()."""
    if text.strip().lower() in ("", "none"):
        return ()
    try:
        values = tuple(float(x) for x in text.split(",") if x.strip())
    except ValueError:
        raise BadInput(f"{option} expects comma-separated numbers such as 0.5,0.85,0.95 (or "
                       f"'none'); got {text!r}") from None
    return values


def names(text: str) -> tuple[str, ...]:
    return tuple(c.strip() for c in text.split(",") if c.strip())


def add_run_options(parser, *, serve: bool = False) -> None:
    """The input folder, ``--db`` and every option that sets what a run computes and how."""
    parser.add_argument("input_dir", nargs="?", metavar="DIR",
                        help="folder with airfields, runways, climate_monthly, wind_rose, "
                             "aircraft_types (and optional routes) as CSV or Parquet "
                             "(default: the demo network)")
    add_db_argument(parser)
    every = " for every scheduled run" if serve else ""
    parser.add_argument("--temperature-offset", type=float, default=0.0, metavar="K",
                        help=f"climate scenario{every}: add K kelvin to every monthly temperature "
                             f"(default 0, the baseline; -30 ... 30)")
    parser.add_argument("--conditions", default="dry,wet",
                        help="runway conditions to compute, comma separated (default dry,wet)")
    parser.add_argument("--reliability", default="0.5,0.85,0.95", metavar="P,P,...",
                        help="reliability levels, shares of days strictly between 0 and 1 "
                             "(default 0.5,0.85,0.95; 'none' for design-day rows only)")
    parser.add_argument("--reliability-conditions", default=None, metavar="CONDITIONS",
                        help="runway conditions that get reliability rows, comma separated "
                             "(default dry; dry,wet doubles the cost of the reliability step)")
    parser.add_argument("--chunk-size", type=int, default=None, metavar="N",
                        help="cases per chunk task (default 48000; whole airfields per chunk)")
    parser.add_argument("--workers", type=int, default=None, metavar="N",
                        help="parallel chunk tasks (default PREFECT_TASKS_RUNNER_THREAD_POOL_MAX_WORKERS, 2); "
                             "with --cluster local: worker processes")
    parser.add_argument("--cluster", default=None, metavar="ADDRESS",
                        help="run the chunk tasks on a Dask cluster (tcp://host:8786, or 'local' "
                             "for a temporary local cluster); needs the dask extra")
    parser.add_argument("--work-dir", default=None, metavar="PATH",
                        help="folder for the run's temporary case and part files "
                             "(default: next to the database; Dask workers need no access to it)")
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
    parser.add_argument("--no-reuse", action="store_true",
                        help="recompute everything (by default an airfield x type whose inputs and "
                             "the code are unchanged since the last complete run with the same "
                             "parameters is copied from it)")


def run_params(args):
    """:class:`pipeline.steps.RunParams` from the parsed options (raises BadInput, exit 2)."""
    from fieldlimits.pipeline.steps import DEFAULT_CHUNK_SIZE, RunParams

    if not math.isfinite(args.temperature_offset):
        raise BadInput(f"--temperature-offset must be a number of kelvin; got {args.temperature_offset}")
    if args.workers is not None and args.workers < 1:
        raise BadInput(f"--workers must be at least 1; got {args.workers}")
    if args.cluster is not None and not (args.cluster == "local" or "://" in args.cluster):
        raise BadInput(f"--cluster takes a scheduler address such as tcp://host:8786, or 'local'; "
                       f"got {args.cluster!r}")
    chunk_size = DEFAULT_CHUNK_SIZE if args.chunk_size is None else args.chunk_size
    conditions = names(args.conditions)
    if args.reliability_conditions is None:  # default: the dry runway, when the run has it
        reliability_conditions = tuple(c for c in ("dry",) if c in conditions)
    else:
        reliability_conditions = names(args.reliability_conditions)
    return RunParams(
        temperature_offset_k=args.temperature_offset,
        chunk_size=chunk_size,
        conditions=conditions,
        reliability_levels=floats(args.reliability),
        reliability_conditions=reliability_conditions,
        reuse=not args.no_reuse,
        landing_jet_share=args.landing_jet_share,
        landing_turboprop_share=args.landing_turboprop_share,
        landing_wet_increase=args.landing_wet_increase,
    )


def input_folder(args) -> str:
    """The input folder (absolute), the demo network when none is given; it must exist."""
    import os

    if args.input_dir is None:
        from fieldlimits.demo_network import demo_path

        return str(demo_path())
    folder = os.path.abspath(args.input_dir)
    if not os.path.isdir(folder):
        what = "is a file, not a folder" if os.path.exists(folder) else "does not exist"
        raise BadInput(f"the input folder {args.input_dir} {what}; give the folder that holds "
                       f"airfields, runways, climate_monthly, wind_rose and aircraft_types")
    return folder
