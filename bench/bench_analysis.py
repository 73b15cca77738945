"""Benchmark of the analyse stage (determinacy + elastic solution + checks) on double-layer grids.

Runs, in one command and on the same machine, each in a fresh child process:
  sheets     load_project + analyse on the largest grid (about 20,000 members) and on the
             size of the dense baseline;
  dense      a plain dense numpy baseline: full SVD of A for the determinacy, dense
             K = A diag(EA/L) A^T and numpy.linalg.solve for the cases (the largest size it
             manages in reasonable time and memory: about 3,000 members by default);
  opensees   OpenSeesPy (Truss elements, Elastic material, UmfPack sparse solver) on the same
             model, case by case, at the largest size it manages (it manages 20,000).
Prints time (best of --repeat runs; the timed part excludes reading the project file,
which is shown apart for sheets), peak memory (peak resident set of the child process,
and the peak traced by tracemalloc in one more run, which sees numpy arrays but not
memory allocated inside SuperLU, LAPACK or OpenSees), ratios against sheets at the same
size, and how closely the member forces agree. Target for sheets at 20,000 members
(reading the file included): 15 s and 2 GB.

    python3 bench/bench_analysis.py [--members 20000] [--dense-members 3000] [--repeat 3]
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import subprocess
import sys
import tempfile
import time
import tracemalloc
from importlib.metadata import version
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path[:0] = [str(HERE.parent), str(HERE)]  # the work tree's sheets, and grids.py

from grids import bays_for_members, double_layer_grid, write_project  # noqa: E402

TARGET_SECONDS = 15.0
TARGET_MB = 2048.0


def rss_mb() -> float:
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0  # kB on Linux


# -- the three contenders, each run in its own child process ---------------------

def case_loads(project):
    """Nodal loads (N) of each case, self-weight included, as sheets forms them."""
    from sheets.analysis.analyse import self_weight_loads

    out = {}
    for case in project.cases:
        loads = np.array(case.loads)
        if case.self_weight:
            loads = loads + self_weight_loads(project, case)
        out[case.id] = loads
    return out


def run_sheets(path: Path, stages: dict) -> dict[str, np.ndarray]:
    from sheets.analysis import analyse
    from sheets.model import load_project

    t0 = time.perf_counter()
    project = load_project(path)
    stages["load"] = time.perf_counter() - t0
    stages["timed from"] = time.perf_counter()
    marks = [("start", time.perf_counter())]
    analysis = analyse(project, lambda msg: marks.append((msg, time.perf_counter())))
    marks.append(("end", time.perf_counter()))
    for (name, start), (_, end) in zip(marks, marks[1:]):
        stages[name] = end - start
    stages["analyse"] = marks[-1][1] - marks[0][1]
    det = analysis.determinacy
    stages["info"] = f"{det.route}; s = {det.self_stress}, k = {det.mechanisms}; checks passed: {analysis.passed}"
    return {s.id: s.forces for s in analysis.cases}


def run_dense(path: Path, stages: dict) -> dict[str, np.ndarray]:
    from sheets.model import load_project

    project = load_project(path)
    loads = case_loads(project)
    t0 = time.perf_counter()
    coords, ends = project.coords, project.ends
    n, dim = coords.shape
    delta = coords[ends[:, 1]] - coords[ends[:, 0]]
    lengths = np.linalg.norm(delta, axis=1)
    unit = delta / lengths[:, None]
    a = np.zeros((n * dim, len(ends)))
    cols = np.arange(len(ends))
    for k in range(dim):
        a[ends[:, 0] * dim + k, cols] = -unit[:, k]
        a[ends[:, 1] * dim + k, cols] = unit[:, k]
    free = ~project.fixed.reshape(-1)
    a_free = a[free]
    sigma = np.linalg.svd(a_free, full_matrices=True, compute_uv=True)[1]
    rank = int((sigma > 1e-8 * sigma[0]).sum())
    stages["determinacy"] = time.perf_counter() - t0
    stiffness = project.member_ea() / lengths
    k_matrix = (a_free * stiffness) @ a_free.T
    rhs = np.column_stack([loads[c].reshape(-1)[free] for c in loads])
    d = np.linalg.solve(k_matrix, rhs)
    forces = stiffness[:, None] * (a_free.T @ d)
    stages["solve"] = time.perf_counter() - t0 - stages["determinacy"]
    stages["info"] = f"dense SVD {a_free.shape[0]} x {a_free.shape[1]}; s = {len(ends) - rank}, k = {a_free.shape[0] - rank}"
    return {c: forces[:, i] for i, c in enumerate(loads)}


def run_opensees(path: Path, stages: dict) -> dict[str, np.ndarray]:
    import openseespy.opensees as ops

    from sheets.model import load_project

    project = load_project(path)
    loads = case_loads(project)
    ea = project.member_ea()
    t0 = time.perf_counter()
    ops.wipe()
    ops.model("basic", "-ndm", 3, "-ndf", 3)
    for k, x in enumerate(project.coords):
        ops.node(k + 1, *map(float, x))
        if project.fixed[k].any():
            ops.fix(k + 1, *map(int, project.fixed[k]))
    ops.uniaxialMaterial("Elastic", 1, 1.0)  # E = 1 with A = EA: the same axial stiffness
    for e, (i, j) in enumerate(project.ends):
        ops.element("Truss", e + 1, int(i) + 1, int(j) + 1, float(ea[e]), 1)
    ops.timeSeries("Constant", 1)
    stages["model"] = time.perf_counter() - t0
    out = {}
    for tag, (case, p) in enumerate(loads.items(), start=1):
        ops.pattern("Plain", tag, 1)
        for k in np.flatnonzero(np.abs(p).sum(axis=1)):
            ops.load(int(k) + 1, *map(float, p[k]))
        ops.system("UmfPack")
        ops.numberer("RCM")
        ops.constraints("Plain")
        ops.integrator("LoadControl", 1.0)
        ops.algorithm("Linear")
        ops.analysis("Static")
        if ops.analyze(1) != 0:
            raise RuntimeError(f"OpenSees failed on case {case}")
        out[case] = np.array([ops.basicForce(e + 1)[0] for e in range(len(project.ends))])
        ops.wipeAnalysis()
        ops.remove("loadPattern", tag)
        ops.reset()
    stages["solve"] = time.perf_counter() - t0 - stages["model"]
    ops.wipe()
    stages["info"] = "Truss/Elastic, UmfPack, RCM numbering"
    return out


RUNNERS = {"sheets": run_sheets, "dense": run_dense, "opensees": run_opensees}


def child(kind: str, path: Path, trace: bool, forces_out: Path) -> None:
    import scipy.sparse.linalg  # noqa: F401  (imports out of the measured part)

    import sheets.analysis  # noqa: F401

    before = rss_mb()
    if trace:
        tracemalloc.start()
    stages: dict = {}
    t0 = time.perf_counter()
    forces = RUNNERS[kind](path, stages)
    seconds = time.perf_counter() - stages.pop("timed from", t0)  # sheets: reading the file is apart
    traced = tracemalloc.get_traced_memory()[1] / 2**20 if trace else None
    if not trace:
        np.savez(forces_out, **forces)
    print(json.dumps({"seconds": seconds, "rss_peak_mb": rss_mb(), "rss_before_mb": before,
                      "traced_peak_mb": traced, "stages": stages}))


# -- the parent: grids, runs, table, ratios --------------------------------------

def run_child(kind: str, path: Path, trace: bool, forces_out: Path, timeout: float) -> dict | None:
    cmd = [sys.executable, str(Path(__file__).resolve()), "--child", kind, str(path), str(forces_out)]
    if trace:
        cmd.append("--trace")
    try:
        done = subprocess.run(cmd, capture_output=True, text=True, timeout=timeout)
    except subprocess.TimeoutExpired:
        print(f"  {kind}: gave up after {timeout:.0f} s")
        return None
    lines = [ln for ln in done.stdout.splitlines() if ln.startswith("{")]
    if done.returncode != 0 or not lines:
        print(f"  {kind} failed: {done.stderr.strip().splitlines()[-1] if done.stderr.strip() else done.returncode}")
        return None
    return json.loads(lines[-1])


def measure(kind: str, path: Path, members: int, work: Path, timeout: float, repeat: int) -> dict | None:
    """Best of ``repeat`` timed runs (fewer when one run takes over 30 s), then one traced run."""
    forces_out = work / f"{kind}-{members}.npz"
    timed = None
    for _ in range(repeat):
        run = run_child(kind, path, False, forces_out, timeout)
        if run is None:
            return None
        if timed is None or run["seconds"] < timed["seconds"]:
            timed = run
        if run["seconds"] > 30:
            break
    traced = run_child(kind, path, True, forces_out, timeout)
    timed["traced_peak_mb"] = traced["traced_peak_mb"] if traced else float("nan")
    timed["members"] = members
    timed["forces"] = forces_out
    return timed


def grid_project(work: Path, members: int) -> tuple[Path, int]:
    bays = bays_for_members(members)
    grid = double_layer_grid(bays, bays)
    return write_project(grid, work / f"grid-{bays}x{bays}"), len(grid.member_ids)


def agreement(a: Path, b: Path) -> float:
    fa, fb = np.load(a), np.load(b)
    return max(float(np.abs(fa[c] - fb[c]).max() / np.abs(fb[c]).max()) for c in fb.files)


def row(name: str, r: dict) -> str:
    return (f"{name:<10} {r['members']:>8,} {r['seconds']:>9.2f} {r['rss_peak_mb']:>10.0f} "
            f"{r['rss_peak_mb'] - r['rss_before_mb']:>10.0f} {r['traced_peak_mb']:>10.0f}   {r['stages'].get('info', '')}")


def main() -> None:
    parser = argparse.ArgumentParser(description="Benchmark of the analyse stage against dense numpy and OpenSeesPy.")
    parser.add_argument("--members", type=int, default=20_000, help="size of the largest grid (members)")
    parser.add_argument("--dense-members", type=int, default=3_000, help="size for the dense numpy baseline")
    parser.add_argument("--timeout", type=float, default=900.0, help="seconds before a baseline is given up")
    parser.add_argument("--repeat", type=int, default=3, help="timed runs per measurement; the best is kept")
    parser.add_argument("--child", nargs=3, metavar=("KIND", "PROJECT", "FORCES"), help=argparse.SUPPRESS)
    parser.add_argument("--trace", action="store_true", help=argparse.SUPPRESS)
    args = parser.parse_args()
    if args.child:
        child(args.child[0], Path(args.child[1]), args.trace, Path(args.child[2]))
        return

    print(f"numpy {np.__version__}, scipy {version('scipy')}, openseespy {version('openseespy')}, "
          f"python {sys.version.split()[0]}; {os.cpu_count()} cores, load average {os.getloadavg()[0]:.1f} at the start")
    with tempfile.TemporaryDirectory(prefix="sheets-bench-") as tmp:
        work = Path(tmp)
        big, big_m = grid_project(work, args.members)
        small, small_m = grid_project(work, args.dense_members)
        print(f"grids: {big_m:,} and {small_m:,} members (square-on-square double-layer)\n")
        results = {}
        results["sheets", big_m] = measure("sheets", big, big_m, work, args.timeout, args.repeat)
        results["sheets", small_m] = measure("sheets", small, small_m, work, args.timeout, args.repeat)
        results["dense", small_m] = measure("dense", small, small_m, work, args.timeout, args.repeat)
        size, path = big_m, big
        while (found := measure("opensees", path, size, work, args.timeout, args.repeat)) is None and size > 2_000:
            path, size = grid_project(work, size // 2)  # the largest it manages
        results["opensees", size] = found
        if found and ("sheets", size) not in results:
            results["sheets", size] = measure("sheets", path, size, work, args.timeout, args.repeat)

        print("seconds: the timed part, best of runs (sheets: analyse, the file read apart); memory in MB")
        print(f"{'run':<10} {'members':>8} {'seconds':>9} {'peak RSS':>10} {'RSS grow':>10} {'traced':>10}")
        for (name, _), r in results.items():
            if r:
                print(row(name, r))
        s_big = results["sheets", big_m]
        print("\nsheets stages at", f"{big_m:,}", "members (s):",
              ", ".join(f"{k} {v:.2f}" for k, v in s_big["stages"].items() if isinstance(v, float)))

        print("\nratios (baseline / sheets, same size; > 1 means sheets is faster or smaller):")
        for name, m in (("dense", small_m), ("opensees", size)):
            base, ours = results.get((name, m)), results.get(("sheets", m))
            if base and ours:
                print(f"  {name:<9} at {m:>7,} members: time {base['seconds'] / ours['seconds']:8.2f}x   "
                      f"peak RSS {base['rss_peak_mb'] / ours['rss_peak_mb']:6.2f}x   "
                      f"RSS growth {(base['rss_peak_mb'] - base['rss_before_mb']) / max(ours['rss_peak_mb'] - ours['rss_before_mb'], 1):6.2f}x   "
                      f"forces agree to {agreement(ours['forces'], base['forces']):.1e} (relative)")
            elif base and not ours:
                print(f"  {name:<9} at {m:,} members: no sheets run at that size")
        d = results["dense", small_m]
        if d:
            print(f"  dense at {small_m:,} members vs sheets at {big_m:,}: time "
                  f"{d['seconds'] / s_big['seconds']:.2f}x for {big_m / small_m:.1f}x the members")

        total = s_big["seconds"] + s_big["stages"]["load"]
        ok_t, ok_m = total <= TARGET_SECONDS, s_big["rss_peak_mb"] <= TARGET_MB
        print(f"\ntarget at {big_m:,} members: read + analyse {total:.2f} s (<= {TARGET_SECONDS:.0f} s: "
              f"{'met' if ok_t else 'NOT met'}), peak RSS {s_big['rss_peak_mb']:.0f} MB (<= {TARGET_MB:.0f} MB: "
              f"{'met' if ok_m else 'NOT met'})")
    print(f"load average {os.getloadavg()[0]:.1f} at the end (other work on the machine slows every run)")


if __name__ == "__main__":
    main()
