"""``fieldlimits serve --cron "…"``: rerun on a schedule through a Prefect deployment."""

from __future__ import annotations

import os

from pipeline.commands import add_db_argument
from pipeline.errors import BadInput

NAME = "serve"
HELP = "rerun on a cron schedule (a Prefect deployment; needs `prefect server start`)"
DESCRIPTION = (
    "Serve the run flow as a Prefect deployment on a cron schedule. This is a long-running\n"
    "process. Schedules do not run on Prefect's temporary server, so first start a server and\n"
    "point at it:\n\n"
    "  prefect server start &                       # keeps running; UI on port 4200\n"
    "  export PREFECT_API_URL=http://127.0.0.1:4200/api\n"
    "  fieldlimits serve --cron \"0 3 * * 1\" /data/network --db /data/fieldlimits.duckdb"
)


def add_arguments(parser) -> None:
    parser.add_argument("input_dir", nargs="?", metavar="DIR",
                        help="input folder (default: the demo network)")
    parser.add_argument("--cron", required=True, help="cron schedule, e.g. \"0 3 * * 1\" (03:00 on Mondays)")
    add_db_argument(parser)
    parser.add_argument("--name", default="fieldlimits-scheduled", help="deployment name")
    parser.add_argument("--temperature-offset", type=float, default=0.0, metavar="K",
                        help="climate scenario offset for every scheduled run (default 0)")


def run(args) -> int:
    if not os.environ.get("PREFECT_API_URL"):
        raise BadInput(
            "schedules need a running Prefect server: run `prefect server start` in another "
            "shell, then `export PREFECT_API_URL=http://127.0.0.1:4200/api` and try again")
    try:
        from croniter import croniter  # installed with prefect

        if not croniter.is_valid(args.cron):
            raise BadInput(f"not a valid cron schedule: {args.cron!r} (five fields, e.g. \"0 3 * * 1\")")
    except ImportError:
        pass
    if args.input_dir is None:
        from demo_network import demo_path

        input_dir = str(demo_path())
    else:
        input_dir = os.path.abspath(args.input_dir)
    from pipeline.flow import fieldlimits_run
    from pipeline.steps import RunParams

    params = RunParams(temperature_offset_k=args.temperature_offset)
    fieldlimits_run.serve(name=args.name, cron=args.cron, parameters={
        "input_dir": input_dir, "db_path": os.path.abspath(args.db), "params": params.as_dict()})
    return 0
