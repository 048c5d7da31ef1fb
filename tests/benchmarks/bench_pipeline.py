"""Benchmark of the whole pipeline (not collected by pytest: run it by hand).

    python tests/benchmarks/bench_pipeline.py                  # demo + 2 000 airfields
    python tests/benchmarks/bench_pipeline.py --airfields 200 --skip-demo
    python tests/benchmarks/bench_pipeline.py --no-prefect     # the same steps without Prefect
    python tests/benchmarks/bench_pipeline.py --reliability 0.5,0.85,0.95   # with reliability rows
    python tests/benchmarks/bench_pipeline.py --skip-demo --rerun --dask     # reuse and Dask figures

Each measured run is ``fieldlimits run`` in a fresh subprocess (Prefect's temporary server
start included) writing a fresh DuckDB file. Wall time and the peak resident memory of the
run process and its children (``resource.getrusage(RUSAGE_CHILDREN)``; each run in its own
wrapper process so one run's peak does not hide another's). Targets (issue 4): demo < 30 s,
2 000 airfields < 90 s and < 2 GiB.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
import time
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]

_WRAPPER = r"""
import json, resource, subprocess, sys, time
t0 = time.monotonic()
p = subprocess.run(sys.argv[1:], capture_output=True, text=True)
dt = time.monotonic() - t0
rss = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss * 1024  # Linux: KiB
print(json.dumps({"rc": p.returncode, "seconds": dt, "peak_rss_bytes": rss,
                  "stdout": p.stdout[-3000:], "stderr": p.stderr[-3000:]}))
"""


def measure(args: list[str], env: dict) -> dict:
    out = subprocess.run([sys.executable, "-c", _WRAPPER, *args], capture_output=True, text=True,
                         env=env, cwd=REPO)
    return json.loads(out.stdout)


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--airfields", type=int, default=2000)
    ap.add_argument("--seed", type=int, default=7)
    ap.add_argument("--skip-demo", action="store_true")
    ap.add_argument("--no-prefect", action="store_true")
    ap.add_argument("--reliability", default="none",
                    help="reliability levels for the runs (default none: design day, as issue 4 "
                         "specifies; e.g. 0.5,0.85,0.95 for the issue-6 figure)")
    ap.add_argument("--rerun", action="store_true",
                    help="also time an unchanged rerun of the synthetic network (results reused)")
    ap.add_argument("--dask", action="store_true",
                    help="also run the synthetic network on a temporary local Dask cluster (2 workers)")
    ap.add_argument("--keep", action="store_true", help="keep the temporary folder")
    a = ap.parse_args()

    tmp = Path(tempfile.mkdtemp(prefix="fieldlimits-bench-"))
    env = {**os.environ, "PYTHONPATH": str(REPO) + os.pathsep + os.environ.get("PYTHONPATH", "")}
    env.setdefault("PREFECT_HOME", str(tmp / "prefect-home"))
    base = [sys.executable, "-m", "pipeline.cli", "run"]
    extra = (["--no-prefect"] if a.no_prefect else []) + ["--reliability", a.reliability]
    results = {}

    if not a.skip_demo:
        r = measure(base + ["--db", str(tmp / "demo.duckdb"), "--quiet"] + extra, env)
        results["demo"] = r
        # second demo run: Prefect's database already migrated (the usual case)
        r2 = measure(base + ["--db", str(tmp / "demo.duckdb"), "--quiet", "--no-reuse"] + extra, env)
        results["demo_warm"] = r2

    if a.airfields:
        net = tmp / f"syn{a.airfields}"
        t0 = time.monotonic()
        subprocess.run([sys.executable, "-m", "pipeline.cli", "generate", str(net), "--airfields",
                        str(a.airfields), "--seed", str(a.seed)], check=True, env=env, cwd=REPO,
                       capture_output=True)
        gen_s = time.monotonic() - t0
        r = measure(base + [str(net), "--db", str(tmp / "syn.duckdb"), "--quiet"] + extra, env)
        r["generate_seconds"] = gen_s
        results[f"synthetic_{a.airfields}"] = r
        if a.rerun:
            results[f"rerun_{a.airfields}"] = measure(
                base + [str(net), "--db", str(tmp / "syn.duckdb"), "--quiet"] + extra, env)
        if a.dask and not a.no_prefect:
            results[f"dask_{a.airfields}"] = measure(
                base + [str(net), "--db", str(tmp / "dask.duckdb"), "--quiet", "--cluster", "local",
                        "--workers", "2"] + extra, env)

    for name, r in results.items():
        first = r["stdout"].splitlines()[0] if r["stdout"] else r["stderr"][-300:]
        print(f"{name:<16} exit {r['rc']}  {r['seconds']:7.1f} s  peak RSS "
              f"{r['peak_rss_bytes'] / 2**20:7.0f} MiB   {first}")
        if r["rc"] != 0:
            print(r["stderr"])
    if not a.keep:
        import shutil

        shutil.rmtree(tmp, ignore_errors=True)
    else:
        print(f"kept {tmp}")
    return 0 if all(r["rc"] == 0 for r in results.values()) else 1


if __name__ == "__main__":
    sys.exit(main())
