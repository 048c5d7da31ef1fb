"""``fieldlimits check`` and the early bad-input report of ``run``, called in-process."""

from __future__ import annotations

import shutil

import pandas as pd
import pytest

from fieldlimits.pipeline import cli, progress
from fieldlimits.pipeline.commands import check as check_command


@pytest.fixture
def folder(tmp_path, demo_dir):
    out = tmp_path / "net"
    shutil.copytree(demo_dir, out)
    return out


def test_check_prints_progress_on_stderr_when_it_runs_long(folder, monkeypatch, capsys):
    monkeypatch.setattr(check_command, "PROGRESS_AFTER_S", 0.0)  # every check is "long"
    assert cli.main(["check", str(folder)]) == 0
    out, err = capsys.readouterr()
    assert out.strip().splitlines()[-1].startswith("ok:")
    lines = err.strip().splitlines()
    assert lines and all(line.startswith("checking ") for line in lines)
    assert "(100 %)" in lines[-1]  # the first line at once, then every few seconds and the end


def test_check_of_a_small_folder_prints_no_progress(folder, capsys):
    assert cli.main(["check", str(folder)]) == 0
    assert capsys.readouterr().err == ""


def test_progress_line_names_file_bytes_and_time_left():
    # 500 MB of 2 GB in 10 s: 1.5 GB left at 50 MB/s is 30 s
    text = progress.check_line(500_000_000, 2_000_000_000, 10.0, "wind_rose.csv")
    assert text == ("checking wind_rose.csv: 500 MB of 2.00 GB (25 %), 10 s elapsed, "
                    "about 30 s left")


def test_check_reads_the_folder_once(folder, monkeypatch, capsys):
    from fieldlimits.pipeline import inputs as pipeline_inputs

    def no_load(*args, **kwargs):
        raise AssertionError("check loaded the folder after validating it")

    monkeypatch.setattr(pipeline_inputs, "load_inputs", no_load)
    assert cli.main(["check", str(folder)]) == 0
    last = capsys.readouterr().out.strip().splitlines()[-1]
    rows = len(pd.read_csv(folder / "wind_rose.csv"))
    assert f"wind_rose {rows} rows" in last


def test_check_of_an_unreadable_optional_table_exits_2(folder, capsys):
    (folder / "routes.csv").unlink()
    (folder / "routes.csv").symlink_to("routes.csv")
    assert cli.main(["check", str(folder)]) == 2
    out = capsys.readouterr().out
    assert "routes.csv" in out and "loops" in out and "ok:" not in out


class _SlowStart:
    """Stands in for Prefect's temporary server while it starts; records being waited for."""

    waited = stopped = False
    api_url = "http://127.0.0.1:9/api"

    @classmethod
    def start(cls):
        return cls()

    def ready(self):
        return False

    def wait_ready(self, timeout_s, tick=None):
        _SlowStart.waited = True

    def stop(self, wait_s=5.0):
        _SlowStart.stopped = True


def test_run_reports_bad_input_without_waiting_for_prefect(folder, tmp_path, monkeypatch,
                                                           capsys):
    from fieldlimits.pipeline import prefect_api

    df = pd.read_csv(folder / "runways.csv", dtype=str, keep_default_na=False)
    df.loc[0, "tora_m"] = "long"
    df.to_csv(folder / "runways.csv", index=False)
    monkeypatch.setattr(prefect_api, "TemporaryServer", _SlowStart)
    monkeypatch.delenv("PREFECT_API_URL", raising=False)
    _SlowStart.waited = _SlowStart.stopped = False
    assert cli.main(["run", str(folder), "--db", str(tmp_path / "x.duckdb")]) == 2
    assert "tora_m" in capsys.readouterr().err
    assert not _SlowStart.waited and _SlowStart.stopped  # not waited for, and not left running
    assert not (tmp_path / "x.duckdb").exists()
