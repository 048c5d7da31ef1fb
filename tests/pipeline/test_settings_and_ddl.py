"""Offline Prefect defaults, generated DDL in step with schemas.results, command discovery."""

from __future__ import annotations

from fieldlimits.pipeline import ddl, settings
from fieldlimits.schemas import results


def test_offline_defaults_do_not_override_the_user():
    env = {"PREFECT_TASKS_RUNNER_THREAD_POOL_MAX_WORKERS": "4"}
    got = settings.apply_offline_defaults(env)
    # PLATFORM-NOTES: analytics off, telemetry off, no log shipping, 120 s start-up wait
    assert got["PREFECT_SERVER_ANALYTICS_ENABLED"] == "false"
    assert got["DO_NOT_TRACK"] == "1"
    assert got["PREFECT_LOGGING_TO_API_ENABLED"] == "false"
    assert got["PREFECT_SERVER_EPHEMERAL_STARTUP_TIMEOUT_SECONDS"] == "120"
    assert got["PREFECT_TASKS_RUNNER_THREAD_POOL_MAX_WORKERS"] == "4"  # the user's value wins


def test_generated_ddl_files_are_up_to_date():
    assert ddl.stale_files() == [], "run: python -m fieldlimits.pipeline.ddl --write"


def test_result_columns_follow_the_contract():
    # DEVELOPERS.md "Result tables": the column list, in order
    assert results.RESULT_COLUMNS == (
        "run_id", "airfield_id", "runway_id", "aircraft_type_id", "month", "condition", "basis",
        "reliability", "oat_c", "pressure_altitude_m", "density_altitude_m", "headwind_mps",
        "tow_limit_kg", "limiting_factor", "takeoff_distance_m", "takeoff_run_m",
        "accelerate_stop_m", "v1_kt", "vr_kt", "v2_kt", "v_lof_kt", "climb_gradient",
        "share_days_full_mass", "obstacle_clearance_m", "acceleration_height_m", "governing_obstacle_id")


def test_commands_are_discovered():
    from fieldlimits.pipeline.cli import discover_commands

    names = [m.NAME for m in discover_commands()]
    for name in ("run", "check", "sql", "export", "serve", "generate"):
        assert name in names
