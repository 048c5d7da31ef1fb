"""Benchmark of the whole pipeline (not collected by pytest: run it by hand).

    python tests/benchmarks/bench_pipeline.py                  # demo + 2 000 airfields
    python tests/benchmarks/bench_pipeline.py --airfields 200 --skip-demo
    python tests/benchmarks/bench_pipeline.py --no-prefect     # the same steps without Prefect
    python tests/benchmarks/bench_pipeline.py --reliability 0.5,0.85,0.95   # with reliability rows
    python tests/benchmarks/bench_pipeline.py --skip-demo --rerun --dask     # reuse and Dask figures
    python tests/benchmarks/bench_pipeline.py --skip-demo --dask-separate    # 2 separate Dask workers
    python tests/benchmarks/bench_pipeline.py --skip-demo --no-prefect --rerun 5   # file size after 1..5 reruns

    # issue 8: scaling from 200 to 20 000 airfields, design day, with the step breakdown
    python tests/benchmarks/bench_pipeline.py --skip-demo --scaling 200,2000,20000 --breakdown

    # issue 16: a third of the runway directions with 1 to 10 obstacles each
    python tests/benchmarks/bench_pipeline.py --skip-demo --obstacles 0.333

Each measured run is ``fieldlimits run`` in a fresh subprocess (Prefect's temporary server
start included; Prefect's one-time database set-up in the fresh ``PREFECT_HOME`` is done
first and timed apart) writing a fresh DuckDB file. Wall time; peak memory as the largest sum of
the resident memory of the run process and all its children (worker processes, the Prefect
server), sampled every 0.2 s with psutil, and the kernel's peak of the largest single
process (``ru_maxrss``); the 1-minute load average before and after (the machine may be
shared). ``--breakdown`` adds one run per size of the same steps in one process without
Prefect, timing each step (load inputs, plan, build cases, chunks, best direction, routes,
load into DuckDB). Networks come from ``python -m fieldlimits.demo_network.synthetic`` (seed ``--seed``;
``--networks DIR`` keeps them between invocations; ``--obstacles S``: a share S of the runway
directions get 1 to 10 obstacles each, 0 by default, the network of the earlier figures). Before
the measured runs one demo run without Prefect compiles the kernels (or loads them from Numba's
cache), timed apart. Targets: demo < 30 s, 2 000 airfields
< 90 s and < 2 GiB (issue 4); 20 000 airfields < 10 min and < 3 GiB (issue 8).
"""

from __future__ import annotations

import argparse
import json
import os
import re
import subprocess
import sys
import tempfile
import time
from pathlib import Path

REPO = Path(__file__).resolve().parents[2]

_WRAPPER = r"""
import json, resource, subprocess, sys, time
import psutil
t0 = time.monotonic()
p = subprocess.Popen(sys.argv[1:], stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
root = psutil.Process(p.pid)
peak_tree = 0
import threading
out = {}
def drain(name, stream):
    out[name] = stream.read()
threads = [threading.Thread(target=drain, args=(n, s)) for n, s in (("stdout", p.stdout), ("stderr", p.stderr))]
for t in threads: t.start()
while p.poll() is None:
    try:
        procs = [root] + root.children(recursive=True)
        total = 0
        for q in procs:
            try:
                total += q.memory_info().rss
            except psutil.Error:
                pass
        peak_tree = max(peak_tree, total)
    except psutil.Error:
        pass
    time.sleep(0.2)
for t in threads: t.join()
dt = time.monotonic() - t0
rss = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss * 1024  # Linux: KiB
print(json.dumps({"rc": p.returncode, "seconds": dt, "peak_rss_bytes": rss,
                  "peak_tree_bytes": peak_tree,
                  "stdout": out.get("stdout", "")[-3000:], "stderr": out.get("stderr", "")[-3000:]}))
"""

_STEPS = r"""
import json, sys, time
from concurrent.futures import ThreadPoolExecutor, as_completed
from fieldlimits.pipeline import chunks, steps
from fieldlimits.pipeline.steps import RunParams
net, db, levels = sys.argv[1], sys.argv[2], sys.argv[3]
levels = () if levels == "none" else tuple(float(x) for x in levels.split(","))
t = {}
def step(name, fn):
    t0 = time.monotonic(); out = fn(); t[name] = time.monotonic() - t0; return out
t_all = time.monotonic()
step("load_inputs", lambda: steps._cached_inputs(net))
prepared = step("plan", lambda: steps.prepare_run(net, db, RunParams(reliability_levels=levels)))
run_id = steps.register(prepared)
work = step("build_cases", lambda: steps.build_cases(prepared, run_id))
def run_chunks():
    kp = prepared.chunk_params()
    with ThreadPoolExecutor(2) as pool:
        futs = [pool.submit(chunks.compute_chunk, work, i, run_id, kp) for i in range(prepared.plan.n_chunks)]
        return sorted((f.result() for f in as_completed(futs)), key=lambda r: r.chunk)
results = step("chunks", run_chunks)
best = step("best_direction", lambda: steps.best_directions(work, results))
route = step("routes", lambda: steps.route_payloads(prepared, work, best))
rows = step("load_duckdb", lambda: steps.load(prepared, run_id, results, best, route, None))
steps.cleanup(prepared, run_id)
t["total"] = time.monotonic() - t_all
print(json.dumps({"steps": t, "cases": prepared.plan.n_cases, "chunks": prepared.plan.n_chunks, "rows": rows}))
"""

class SeparateCluster:
    """``dask scheduler`` and two ``dask worker`` processes on this machine, each in a folder of
    its own (its working directory and ``--local-directory``), as on separate machines; the
    resident memory of all of them is sampled every 0.2 s while a run is measured."""

    def __init__(self, root: Path, env: dict, workers: int = 2):
        self.procs, self.peak = [], 0
        scheduler_file = root / "scheduler.json"
        sys.path.insert(0, str(REPO))  # this checkout's fieldlimits, as the workers import it
        from fieldlimits.pipeline import chunks

        env = {k: v for k, v in env.items() if k != "PREFECT_API_URL"}
        env[chunks.WORKER_ENV_VARIABLE] = chunks.worker_env_value()  # as the README says
        self._start(["scheduler", "--host", "127.0.0.1", "--port", "0", "--no-dashboard",
                     "--scheduler-file", str(scheduler_file)], root / "scheduler", env)
        for _ in range(600):
            if scheduler_file.exists() and scheduler_file.stat().st_size:
                break
            time.sleep(0.1)
        self.address = json.loads(scheduler_file.read_text())["address"]
        for i in range(workers):
            folder = root / f"worker-{i + 1}"
            self._start(["worker", self.address, "--nthreads", "1", "--no-dashboard", "--host",
                         "127.0.0.1", "--local-directory", str(folder / "scratch")], folder, env)
        from distributed import Client

        with Client(self.address, timeout="60s") as client:
            client.wait_for_workers(workers, timeout=120)

    def _start(self, args, folder: Path, env: dict) -> None:
        folder.mkdir(parents=True)
        self.procs.append(subprocess.Popen([sys.executable, "-m", "dask", *args], cwd=folder, env=env,
                                           stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
                                           start_new_session=True))

    def sample(self, stop) -> None:
        import psutil

        while not stop.is_set():
            total = 0
            for p in self.procs:
                try:
                    q = psutil.Process(p.pid)
                    total += sum(x.memory_info().rss for x in [q] + q.children(recursive=True))
                except psutil.Error:
                    pass
            self.peak = max(self.peak, total)
            time.sleep(0.2)

    def measure(self, args: list[str], env: dict) -> dict:
        import threading

        self.peak, stop = 0, threading.Event()
        sampler = threading.Thread(target=self.sample, args=(stop,), daemon=True)
        sampler.start()
        try:
            r = measure(args, env)
        finally:
            stop.set()
            sampler.join()
        r["cluster_peak_bytes"] = self.peak
        return r

    def stop(self) -> None:
        for p in reversed(self.procs):
            p.terminate()
        for p in self.procs:
            try:
                p.wait(timeout=30)
            except subprocess.TimeoutExpired:
                p.kill()


_RUN_LINE = re.compile(r"complete: (\d+) airfields, (\d+) cases")


def measure(args: list[str], env: dict) -> dict:
    before = os.getloadavg()[0]
    out = subprocess.run([sys.executable, "-c", _WRAPPER, *args], capture_output=True, text=True,
                         env=env, cwd=REPO)
    try:
        r = json.loads(out.stdout)
    except json.JSONDecodeError:
        r = {"rc": 1, "seconds": 0.0, "peak_rss_bytes": 0, "peak_tree_bytes": 0,
             "stdout": out.stdout[-3000:], "stderr": out.stderr[-3000:]}
    r["load_before"], r["load_after"] = before, os.getloadavg()[0]
    m = _RUN_LINE.search(r["stdout"])
    if m:
        r["airfields"], r["cases"] = int(m.group(1)), int(m.group(2))
    return r


def network(n: int, seed: int, folder: Path, env: dict, obstacles: float = 0.0) -> tuple[Path, float]:
    """A synthetic network of ``n`` airfields (generated unless already in ``folder``)."""
    net = folder / (f"net{n}-seed{seed}" + (f"-obstacles{obstacles:g}" if obstacles else ""))
    if (net / "airfields.csv").exists():
        return net, 0.0
    t0 = time.monotonic()
    subprocess.run([sys.executable, "-m", "fieldlimits.demo_network.synthetic", "--airfields", str(n), "--seed",
                    str(seed), "--out", str(net), "--obstacle-share", str(obstacles)], check=True, env=env,
                   cwd=REPO, capture_output=True)
    return net, time.monotonic() - t0


def _mib(x) -> str:
    return f"{x / 2**20:7.0f}"


def scaling(sizes: list[int], a, tmp: Path, env: dict, base: list[str], extra: list[str]) -> dict:
    nets = Path(a.networks) if a.networks else tmp
    nets.mkdir(parents=True, exist_ok=True)
    out = {}
    for n in sizes:
        net, gen_s = network(n, a.seed, nets, env, a.obstacles)
        db = tmp / f"scale{n}.duckdb"
        r = measure(base + [str(net), "--db", str(db), "--quiet", "--no-reuse"] + extra, env)
        r["generate_seconds"] = gen_s
        db.unlink(missing_ok=True)
        if a.breakdown:
            b = measure([sys.executable, "-c", _STEPS, str(net), str(tmp / f"steps{n}.duckdb"), a.reliability], env)
            try:
                r["breakdown"] = json.loads(b["stdout"].strip().splitlines()[-1])
                r["breakdown"]["peak_tree_bytes"] = b["peak_tree_bytes"]
                r["breakdown"]["load"] = (b["load_before"], b["load_after"])
            except (json.JSONDecodeError, IndexError):
                r["breakdown"] = {"error": b["stderr"][-1500:]}
            (tmp / f"steps{n}.duckdb").unlink(missing_ok=True)
        out[n] = r
    print(f"\nscaling (design day{'' if a.reliability == 'none' else ', reliability ' + a.reliability}; "
          f"{'no Prefect' if a.no_prefect else 'Prefect flow'}; {os.cpu_count()} CPUs)")
    print(f"{'airfields':>9} {'cases':>10} {'wall s':>8} {'us/case':>8} {'peak tree MiB':>13} "
          f"{'max proc MiB':>12}  load avg before/after")
    for n, r in out.items():
        cases = r.get("cases", 0)
        per = r["seconds"] / cases * 1e6 if cases else float("nan")
        print(f"{n:>9} {cases:>10} {r['seconds']:8.1f} {per:8.1f} {_mib(r['peak_tree_bytes']):>13} "
              f"{_mib(r['peak_rss_bytes']):>12}  {r['load_before']:.2f} / {r['load_after']:.2f}"
              + ("" if r["rc"] == 0 else f"  FAILED: {r['stderr'][-300:]}"))
    if a.breakdown:
        print("\nstep breakdown (same steps in one process, no Prefect), seconds")
        names = ("load_inputs", "plan", "build_cases", "chunks", "best_direction", "routes",
                 "load_duckdb", "total")
        print(f"{'airfields':>9} " + " ".join(f"{s:>14}" for s in names) + f" {'peak MiB':>9}")
        for n, r in out.items():
            b = r.get("breakdown", {})
            if "steps" not in b:
                print(f"{n:>9} failed: {b.get('error', '')[-300:]}")
                continue
            print(f"{n:>9} " + " ".join(f"{b['steps'].get(s, float('nan')):14.1f}" for s in names)
                  + f" {_mib(b['peak_tree_bytes']):>9}")
    return out


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--airfields", type=int, default=2000)
    ap.add_argument("--seed", type=int, default=7)
    ap.add_argument("--skip-demo", action="store_true")
    ap.add_argument("--no-prefect", action="store_true")
    ap.add_argument("--reliability", default="none",
                    help="reliability levels for the runs (default none: design day, as issue 4 "
                         "specifies; e.g. 0.5,0.85,0.95 for the issue-6 figure)")
    ap.add_argument("--rerun", nargs="?", type=int, const=1, default=0, metavar="N",
                    help="also time N unchanged reruns of the synthetic network (results reused; "
                         "default 1) and show the file size after each")
    ap.add_argument("--dask", action="store_true",
                    help="also run the synthetic network on a temporary local Dask cluster (2 workers)")
    ap.add_argument("--dask-separate", action="store_true",
                    help="also run the synthetic network with its chunks on a scheduler and two "
                         "workers started as separate processes (dask scheduler, dask worker), each "
                         "in its own folder; the workers' memory is reported apart")
    ap.add_argument("--scaling", default=None, metavar="N,N,...",
                    help="instead of --airfields: one run per network size (e.g. 200,2000,20000), "
                         "time per case table")
    ap.add_argument("--breakdown", action="store_true",
                    help="with --scaling: also time each step (in one process, no Prefect)")
    ap.add_argument("--networks", default=None, metavar="DIR",
                    help="folder for the generated networks (kept; reused when present)")
    ap.add_argument("--obstacles", type=float, default=0.0, metavar="S",
                    help="share of runway directions with 1 to 10 obstacles (default 0: none, the "
                         "network of the earlier figures; issue 16 asks for a third)")
    ap.add_argument("--json", default=None, metavar="FILE", help="write all figures as JSON")
    ap.add_argument("--keep", action="store_true", help="keep the temporary folder")
    a = ap.parse_args()

    tmp = Path(tempfile.mkdtemp(prefix="fieldlimits-bench-"))
    env = {**os.environ, "PYTHONPATH": str(REPO) + os.pathsep + os.environ.get("PYTHONPATH", "")}
    env.setdefault("PREFECT_HOME", str(tmp / "prefect-home"))
    base = [sys.executable, "-m", "fieldlimits", "run"]
    first_use = None
    if not a.no_prefect:
        # A fresh PREFECT_HOME: Prefect builds its SQLite database on first use (about 10 s
        # here, once per machine). Done and timed apart so every measured run starts as a
        # user's second and later runs do.
        t0 = time.monotonic()
        subprocess.run([sys.executable, "-m", "prefect", "server", "database", "upgrade", "-y"],
                       check=True, env=env, cwd=REPO, capture_output=True)
        first_use = round(time.monotonic() - t0, 1)
        print(f"Prefect database set up (first use of PREFECT_HOME): {first_use} s")
    # Numba compiles the kernels on their first use after an install and caches them beside
    # the sources (physics.compiled): one demo run without Prefect, timed apart, so every
    # measured run starts as a user's later runs do.
    t0 = time.monotonic()
    subprocess.run(base + ["--no-prefect", "--quiet", "--db", str(tmp / "warm.duckdb"),
                           str(REPO / "demo_network" / "data")], check=True, env=env, cwd=REPO, capture_output=True)
    print(f"kernels compiled or loaded from the cache (demo run without Prefect): {time.monotonic() - t0:.1f} s")
    extra = (["--no-prefect"] if a.no_prefect else []) + ["--reliability", a.reliability]
    results = {}

    if not a.skip_demo:
        r = measure(base + ["--db", str(tmp / "demo.duckdb"), "--quiet"] + extra, env)
        results["demo"] = r
        # second demo run: Prefect's database already migrated (the usual case)
        r2 = measure(base + ["--db", str(tmp / "demo.duckdb"), "--quiet", "--no-reuse"] + extra, env)
        results["demo_warm"] = r2

    if a.scaling:
        sizes = [int(x) for x in a.scaling.split(",") if x.strip()]
        for n, r in scaling(sizes, a, tmp, env, base, extra).items():
            results[f"scaling_{n}"] = r
    elif a.airfields:
        net = tmp / f"syn{a.airfields}"
        t0 = time.monotonic()
        subprocess.run([sys.executable, "-m", "fieldlimits", "generate", str(net), "--airfields",
                        str(a.airfields), "--seed", str(a.seed), "--obstacle-share", str(a.obstacles)],
                       check=True, env=env, cwd=REPO, capture_output=True)
        gen_s = time.monotonic() - t0
        r = measure(base + [str(net), "--db", str(tmp / "syn.duckdb"), "--quiet"] + extra, env)
        r["generate_seconds"] = gen_s
        results[f"synthetic_{a.airfields}" + (f"_obstacles{a.obstacles:g}" if a.obstacles else "")] = r
        sizes = [(tmp / "syn.duckdb").stat().st_size] if a.rerun else []
        for i in range(1, a.rerun + 1):
            results[f"rerun{i}_{a.airfields}"] = rr = measure(
                base + [str(net), "--db", str(tmp / "syn.duckdb"), "--quiet"] + extra, env)
            sizes.append((tmp / "syn.duckdb").stat().st_size)
            rr["file_bytes"] = sizes[-1]
        if sizes:
            r["file_bytes"] = sizes[0]
            print("file size after the run and each unchanged rerun: "
                  + ", ".join(f"{b / 2**20:.1f} MiB ({b / sizes[0]:.3f}x)" for b in sizes))
        if a.dask and not a.no_prefect:
            results[f"dask_{a.airfields}"] = measure(
                base + [str(net), "--db", str(tmp / "dask.duckdb"), "--quiet", "--cluster", "local",
                        "--workers", "2"] + extra, env)
        if a.dask_separate and not a.no_prefect:
            cluster = SeparateCluster(tmp / "cluster", env)
            try:
                results[f"dask_separate_{a.airfields}"] = r = cluster.measure(
                    base + [str(net), "--db", str(tmp / "dask-separate.duckdb"), "--quiet",
                            "--cluster", cluster.address] + extra, env)
            finally:
                cluster.stop()
            print(f"separate Dask workers and scheduler: peak RSS {_mib(r['cluster_peak_bytes'])} MiB")

    print()
    for name, r in results.items():
        first = r["stdout"].splitlines()[0] if r["stdout"] else r["stderr"][-300:]
        print(f"{name:<16} exit {r['rc']}  {r['seconds']:7.1f} s  peak RSS (tree) "
              f"{_mib(r['peak_tree_bytes'])} MiB (largest process {_mib(r['peak_rss_bytes'])} MiB)  "
              f"load {r['load_before']:.2f}/{r['load_after']:.2f}   {first}")
        if r["rc"] != 0:
            print(r["stderr"])
    if a.json:
        Path(a.json).write_text(json.dumps({"prefect_first_use_seconds": first_use, **results}, indent=1, default=str))
    if not a.keep:
        import shutil

        shutil.rmtree(tmp, ignore_errors=True)
    else:
        print(f"kept {tmp}")
    return 0 if all(r["rc"] == 0 for r in results.values()) else 1


if __name__ == "__main__":
    sys.exit(main())
