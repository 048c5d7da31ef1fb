"""``fieldlimits serve --cron "…"``: rerun on a schedule through a Prefect deployment."""

from __future__ import annotations

import os

from fieldlimits.pipeline.commands._run_options import add_run_options, input_folder, run_params
from fieldlimits.pipeline.errors import BadInput

NAME = "serve"
HELP = "rerun on a cron schedule (a Prefect deployment; needs `prefect server start`)"
DESCRIPTION = (
    "Serve the run flow as a Prefect deployment on a cron schedule. This is a long-running\n"
    "process. It takes the same run options as `fieldlimits run`, checked (with the cron\n"
    "schedule) before anything starts. Schedules do not run on Prefect's temporary server, so\n"
    "first start a server and point at it; each run's flow run is named after the network and\n"
    "the scenario, its log and its summary (an artifact) are in the server's UI:\n\n"
    "  prefect server start &                       # keeps running; UI on port 4200\n"
    "  export PREFECT_API_URL=http://127.0.0.1:4200/api\n"
    "  fieldlimits serve --cron \"0 3 * * 1\" /data/network --db /data/fieldlimits.duckdb"
)

CRON_HELP = ("five fields: minute (0-59), hour (0-23), day of month (1-31), month (1-12), day of "
             "week (0-6, 0 = Sunday), e.g. \"0 3 * * 1\" for 03:00 on Mondays")


def add_arguments(parser) -> None:
    add_run_options(parser, serve=True)
    parser.add_argument("--cron", required=True, help=f"cron schedule: {CRON_HELP}")
    parser.add_argument("--name", default="fieldlimits-scheduled", help="deployment name")


def check_cron(text: str) -> str:
    """The schedule as Prefect will read it, or BadInput saying how a cron string looks."""
    from prefect.client.schemas.schedules import CronSchedule

    try:
        CronSchedule(cron=text)
    except ValueError:  # pydantic's ValidationError, Prefect's own check
        raise BadInput(f"--cron {text!r} is not a valid cron schedule; {CRON_HELP}") from None
    return text


def run(args) -> int:
    params = run_params(args)  # the same checks as `fieldlimits run` (exit 2)
    input_dir = input_folder(args)
    if not args.name.strip():
        raise BadInput("--name must not be empty")
    check_cron(args.cron)
    if not os.environ.get("PREFECT_API_URL"):
        raise BadInput(
            "schedules need a running Prefect server: run `prefect server start` in another "
            "shell, then `export PREFECT_API_URL=http://127.0.0.1:4200/api` and try again")
    from fieldlimits.pipeline.flow import _task_runner, fieldlimits_run

    flow = fieldlimits_run
    if args.cluster or args.workers:
        n = args.workers or int(os.environ.get("PREFECT_TASKS_RUNNER_THREAD_POOL_MAX_WORKERS", "2"))
        flow = flow.with_options(task_runner=_task_runner(args.cluster, n))
    flow.serve(name=args.name, cron=args.cron, parameters={
        "input_dir": input_dir, "db_path": os.path.abspath(args.db), "params": params.as_dict(),
        "work_root": os.path.abspath(args.work_dir) if args.work_dir else None})
    return 0
