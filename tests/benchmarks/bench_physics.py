"""Physics speed benchmark (not a test): ground runs and weight-limit solves per second.

Run from the repository root::

    python -m tests.benchmarks.bench_physics            # full run (about a minute)
    python -m tests.benchmarks.bench_physics --quick    # smaller arrays, fewer repeats

Prints
  * closed-form ground-run evaluations per second on 1 000 000 mixed cases (quadratic thrust,
    random masses, densities, drag, friction, thrust coefficients, slopes, head- and
    tailwinds) — :func:`physics.groundrun.ground_run_m`;
  * ground runs per second for a mix of the three thrust models (closed form for quadratic
    and turbofan; for propellers too, with Gauss–Legendre only where friction + slope is
    not positive) — ``ground_run_for_thrust_law``;
  * weight-limit solves per second on 100 000 mixed cases (a third each turbofan,
    quadratic, propeller; varied runways, elevations, temperatures, slopes, winds);
  * the same solves returning only what the loop returns (limit mass and limiting factor,
    ``figures=False``);
  * transport-rule solves (the default requirements: engine failure, accelerate-stop, climb)
    with and without the figures, and with the timed event sequence, with their CPU time
    (steadier than the wall time on a shared machine);
  * the same per-case solve as a plain Python loop (scipy ``solve_ivp`` for the ground run +
    ``brentq`` on the mass, tests/physics/reference_loop.py) on a sample stratified by the
    result (structural, no_takeoff, limited: their loop times differ tenfold) and weighted
    to the mix of all cases, in rounds interleaved with the vectorised solve, and the ratio:
    first like for like (limit and factor; the figure of each round too), then against the
    solve that also reports the distances and speeds at the limit.

Each figure is the best of a few repeats (the machine is shared). By default the script
re-executes itself once with glibc's malloc told to keep freed memory
(``MALLOC_MMAP_THRESHOLD_``/``MALLOC_TRIM_THRESHOLD_``): numpy's large temporaries are
otherwise returned to the system after every operation and page-faulted back in, which costs
up to half the time of a large-array run. ``--no-malloc-tuning`` measures without it.
"""

from __future__ import annotations

import argparse
import dataclasses
import os
import sys
import time

import numpy as np

_ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
if _ROOT not in sys.path:  # run as a script: python tests/benchmarks/bench_physics.py
    sys.path.insert(0, _ROOT)

_MALLOC_ENV = {"MALLOC_MMAP_THRESHOLD_": "4294967296", "MALLOC_TRIM_THRESHOLD_": "4294967296"}


def _maybe_reexec(argv):
    if "--no-malloc-tuning" in argv or os.environ.get("FIELDLIMITS_BENCH_CHILD") == "1":
        return
    env = dict(os.environ, FIELDLIMITS_BENCH_CHILD="1", **_MALLOC_ENV)
    os.chdir(_ROOT)
    os.execve(sys.executable, [sys.executable, "-m", "tests.benchmarks.bench_physics", *argv], env)


_CPU = {}


def _best(fn, repeats):
    """Best wall time of ``repeats`` calls; the best CPU time is kept in _CPU["last"]."""
    best = float("inf")
    best_cpu = float("inf")
    out = None
    for _ in range(repeats):
        t, c = time.perf_counter(), time.process_time()
        out = fn()
        best = min(best, time.perf_counter() - t)
        best_cpu = min(best_cpu, time.process_time() - c)
    _CPU["last"] = best_cpu
    return best, out


def _ground_run_inputs(n, rng):
    return dict(
        mass_kg=rng.uniform(15e3, 80e3, n), wing_area_m2=rng.uniform(55.0, 130.0, n),
        density_kg_m3=rng.uniform(0.85, 1.30, n), cd=rng.uniform(0.03, 0.09, n), cl=rng.uniform(0.1, 0.5, n),
        mu=rng.choice([0.03, 0.04, 0.05, 0.08], n), thrust0_n=rng.uniform(1.2e5, 2.8e5, n),
        thrust1_n_per_mps=rng.uniform(-500.0, 0.0, n), thrust2_n_per_mps2=rng.uniform(0.0, 0.3, n),
        v_lof_mps=rng.uniform(50.0, 85.0, n), headwind_mps=rng.uniform(-7.5, 12.5, n),
        slope=rng.uniform(-0.02, 0.02, n))


def main(argv=None):
    argv = sys.argv[1:] if argv is None else argv
    _maybe_reexec(argv)
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="smaller arrays and fewer repeats")
    parser.add_argument("--no-malloc-tuning", action="store_true", help="measure with default malloc settings")
    args = parser.parse_args(argv)

    from fieldlimits.physics import groundrun, limits, thrust
    from fieldlimits.physics import weightlimit as wl
    from tests.physics import fleet
    from tests.physics.reference_loop import loop_solve

    repeats = 2 if args.quick else 4
    n_gr = 200_000 if args.quick else 1_000_000
    n_wl = 20_000 if args.quick else 100_000
    n_loop = 10 if args.quick else 60
    loop_rounds = 2 if args.quick else 3
    rng = np.random.default_rng(2024)
    tuned = os.environ.get("FIELDLIMITS_BENCH_CHILD") == "1"
    print(f"fieldlimits physics benchmark  (numpy {np.__version__}, malloc tuning {'on' if tuned else 'off'})")

    # 1. Closed-form ground runs, quadratic thrust.
    kw = _ground_run_inputs(n_gr, rng)
    dt, s = _best(lambda: groundrun.ground_run_m(**kw), repeats)
    print(f"ground_run_m (closed form, quadratic thrust), {n_gr:,} mixed cases: "
          f"{n_gr / dt:,.0f} evaluations/s  ({dt * 1e3:.0f} ms; NaN share {np.isnan(s).mean():.4f}; "
          f"CPU time {n_gr / _CPU['last']:,.0f}/s)")
    chunk = 65_536

    def chunked():
        for j in range(0, n_gr, chunk):
            groundrun.ground_run_m(**{k: v[j:j + chunk] for k, v in kw.items()})

    dt, _ = _best(chunked, repeats)
    print(f"  same in chunks of {chunk:,}: {n_gr / dt:,.0f} evaluations/s")

    # 2. Ground runs for a mix of thrust models.
    a, site = fleet.random_cases(n_gr // 2, seed=7)
    cases = wl.prepare_cases(a, site)
    mass = 0.5 * (a.oew_kg + a.mtow_kg)

    def mixed_ground_runs():
        from fieldlimits.physics import aerodynamics as aero

        vs = aero.stall_speed_mps(mass, cases.density_kg_m3, a.wing_area_m2, a.cl_max_takeoff)
        return groundrun.ground_run_for_thrust_law(
            cases.thrust_all_engines, mass_kg=mass, wing_area_m2=a.wing_area_m2, density_kg_m3=cases.density_kg_m3,
            cd=cases.cd_ground_roll, cl=a.cl_ground_roll, mu=site.mu_roll, v_lof_mps=a.vlof_over_vs * vs,
            headwind_mps=site.headwind_mps, slope=site.slope)

    dt, _ = _best(mixed_ground_runs, repeats)
    share = float(np.mean(a.thrust_model == thrust.PROPELLER))
    print(f"ground_run_for_thrust_law, {n_gr // 2:,} cases ({share:.0%} propeller: closed form, Gauss-Legendre only where friction + slope ≤ 0): "
          f"{n_gr // 2 / dt:,.0f} evaluations/s")

    # 3. Weight-limit solves.
    a, site = fleet.random_cases(n_wl, seed=11)
    aeo = list(wl.ALL_ENGINES_REQUIREMENTS)
    dt_vec, res = _best(lambda: wl.solve_takeoff_weight(a, site, requirements=aeo), repeats)
    cpu_vec = _CPU["last"]
    names, counts = np.unique(limits.name(res.limiting_factor), return_counts=True)
    mix = ", ".join(f"{k} {v / n_wl:.0%}" for k, v in zip(names, counts))
    print(f"solve_takeoff_weight (all-engines requirements), {n_wl:,} mixed cases: "
          f"{n_wl / dt_vec:,.0f} solves/s  ({dt_vec:.3f} s; CPU time {n_wl / cpu_vec:,.0f}/s; {mix})")
    # the same outputs as the per-case loop below (limit mass and limiting factor, no figures)
    dt_mass, res_mass = _best(lambda: wl.solve_takeoff_weight(a, site, requirements=aeo, figures=False), repeats)
    cpu_mass = _CPU["last"]
    same = np.array_equal(res_mass.tow_limit_kg, res.tow_limit_kg, equal_nan=True)
    print(f"  same, limit and factor only (figures=False, the loop's outputs): {n_wl / dt_mass:,.0f} solves/s  "
          f"({dt_mass:.3f} s; limits identical to the bit: {same})")
    if len(wl.REQUIREMENTS) != len(aeo):
        dt_all, res_tr = _best(lambda: wl.solve_takeoff_weight(a, site), max(repeats // 2, 1))
        cpu_all = _CPU["last"]
        names, counts = np.unique(limits.name(res_tr.limiting_factor), return_counts=True)
        mix = ", ".join(f"{k} {v / n_wl:.0%}" for k, v in zip(names, counts))
        print(f"solve_takeoff_weight (default REQUIREMENTS, {len(wl.REQUIREMENTS)} requirements, transport rules): "
              f"{n_wl / dt_all:,.0f} solves/s  ({dt_all:.3f} s; CPU time {n_wl / cpu_all:,.0f}/s; {mix})")
        dt_tm, res_tm = _best(lambda: wl.solve_takeoff_weight(a, site, figures=False), max(repeats // 2, 1))
        same = np.array_equal(res_tm.tow_limit_kg, res_tr.tow_limit_kg, equal_nan=True)
        print(f"  same, limit and factor only (figures=False): {n_wl / dt_tm:,.0f} solves/s  (CPU time "
              f"{n_wl / _CPU['last']:,.0f}/s; limits identical to the bit: {same}; all-engines solve "
              f"{dt_all / dt_vec:.1f}x faster)")
        # the same with the takeoff event sequence at the table's defaults (1 s recognition,
        # 1 s between stop actions, 8° rotation at 3°/s), as a run of the demo network uses
        timed = dataclasses.replace(a, **{k: np.full(n_wl, v) for k, v in (
            ("engine_failure_recognition_s", 1.0), ("stop_action_interval_s", 1.0), ("rotation_pitch_deg", 8.0),
            ("rotation_rate_deg_per_s", 3.0))})
        dt_ev, _ = _best(lambda: wl.solve_takeoff_weight(timed, site), max(repeats // 2, 1))
        print(f"  same with the timed event sequence (table defaults): {n_wl / dt_ev:,.0f} solves/s  "
              f"(CPU time {n_wl / _CPU['last']:,.0f}/s; {dt_all / dt_ev:.0%} of the idealised sequence's speed)")

    # 4. Plain per-case loop on a sample (same requirements), and the ratio.
    # The loop's time per case depends on the case: about a tenth for a structural case (one
    # evaluation at MTOW) of that of a limited one (MTOW, OEW and a root search), so the
    # sample is stratified by the vectorised result (structural / no_takeoff / limited), a
    # few cases from each class in proportion, and the loop's mean per case is the mean of
    # each class weighted by its share of all n cases: the same mix as the vectorised figure.
    # Rounds interleave the vectorised solve and one pass of the loop over the sample, so the
    # best times of both come from the same stretch of the machine's (shared) time; each
    # case keeps its fastest pass, as the vectorised figure keeps its fastest repeat.
    classes = np.where(res.limiting_factor == limits.code("structural"), 0,
                       np.where(res.limiting_factor == limits.code("no_takeoff"), 1, 2))
    share = np.bincount(classes, minlength=3) / n_wl
    sample, weight = [], []
    for k in range(3):
        members = np.flatnonzero(classes == k)
        if members.size == 0:
            continue
        take = min(members.size, max(2, int(round(n_loop * share[k]))))
        sample.append(rng.choice(members, take, replace=False))
        weight.append(np.full(take, share[k] / take))
    sample, weight = np.concatenate(sample), np.concatenate(weight)
    best_wall, best_cpu = np.full(sample.size, np.inf), np.full(sample.size, np.inf)
    best_vec, best_vec_cpu, per_round = dt_mass, cpu_mass, []
    worst = 0.0
    for rnd in range(loop_rounds):
        t, c = time.perf_counter(), time.process_time()
        wl.solve_takeoff_weight(a, site, requirements=aeo, figures=False)
        vec_round = time.perf_counter() - t
        best_vec, best_vec_cpu = min(best_vec, vec_round), min(best_vec_cpu, time.process_time() - c)
        wall_round = np.empty(sample.size)
        for j, i in enumerate(sample):
            t, cpu = time.perf_counter(), time.process_time()
            m, _ = loop_solve(a, site, int(i))
            wall_round[j] = time.perf_counter() - t
            best_cpu[j] = min(best_cpu[j], time.process_time() - cpu)
            if rnd == 0 and np.isfinite(m):
                worst = max(worst, abs(m - res.tow_limit_kg[i]))
        best_wall = np.minimum(best_wall, wall_round)
        per_round.append(float(weight @ wall_round) / (vec_round / n_wl))
    per_case_loop = float(weight @ best_wall)
    cpu_loop = float(weight @ best_cpu)
    # standard error of the class-weighted mean: sqrt(sum share_k² var_k / n_k)
    var = 0.0
    for k in range(3):
        in_k = classes[sample] == k
        if in_k.sum() > 1:
            var += share[k] ** 2 * best_wall[in_k].var(ddof=1) / in_k.sum()
    counts = ", ".join(f"{name} {int(np.sum(classes[sample] == k))}"
                       for k, name in enumerate(("structural", "no_takeoff", "limited")) if np.any(classes[sample] == k))
    print(f"plain loop (solve_ivp + brentq), {sample.size} cases sampled by class ({counts}), best of "
          f"{loop_rounds} each, weighted by the classes' shares of all {n_wl:,}: {per_case_loop * 1e3:.1f} ms/case "
          f"(standard error {np.sqrt(var) * 1e3:.1f} ms; {1 / per_case_loop:,.1f} solves/s); largest difference from "
          f"the vectorised limit {worst:.2f} kg")
    print(f"vectorised / loop speed ratio per case, same outputs (limit and factor): "
          f"{per_case_loop / (best_vec / n_wl):,.0f}x wall time, {cpu_loop / (best_vec_cpu / n_wl):,.0f}x CPU time "
          f"(rounds: {', '.join(f'{r:,.0f}x' for r in per_round)})")
    print(f"  with the figures at the limit as well (distances, speeds): {per_case_loop / (dt_vec / n_wl):,.0f}x wall time, "
          f"{cpu_loop / (cpu_vec / n_wl):,.0f}x CPU time")
    return 0


if __name__ == "__main__":
    sys.exit(main())
