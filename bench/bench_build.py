"""Time each stage of `sheets build` on a project: reading, analysis, member checks, diagrams,
figures (rendering), results, assembly, writing.

    python bench/bench_build.py [PROJECT.toml ...] [--out DIR]
    python bench/bench_build.py --grid 50          # the 20,000-member roof grid of bench/grids.py

With no project, every demo project is timed. Stage times come from the progress
messages ``sheets.build.build_sheets`` sends at the start of each stage (the
reciprocal diagrams, node cells and Minkowski views of the drawn states are built
once, in the "diagrams" stage). Each project is also timed as a ratio against a baseline measured in
the same process: the same build with the figure sources switched off, never as an
absolute pass/fail.

``--grid BAYS`` writes the double-layer grid of BAYS x BAYS bays (8 BAYS^2
members; 50 gives 20,000) with bench/grids.py and runs, each as a command in a
fresh child process, ``sheets solve --json --csv`` (the baseline: reading,
analysis and the results files) and ``sheets build``. Printed: wall time, peak
memory (``resource.getrusage(RUSAGE_CHILDREN).ru_maxrss`` of a wrapper process
whose only child is the command, so the figure workers a build forks count too)
and the PDF size, with build / solve ratios and the PDF against the results
JSON of the same run.
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
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from sheets import build  # noqa: E402
from sheets.model import load_project  # noqa: E402
from sheets.report import figures as figure_sources  # noqa: E402


def timed_build(project: Path, out: Path) -> tuple[dict[str, float], float, build.SheetBuild]:
    marks: list[tuple[str, float]] = []

    def note(message: str) -> None:
        if message in build.BUILD_STAGES:
            marks.append((message, time.perf_counter()))

    start = time.perf_counter()
    result = build.build_sheets(project, out, note)
    end = time.perf_counter()
    stages = {}
    for (name, t0), (_, t1) in zip(marks, marks[1:] + [("end", end)]):
        stages[name] = t1 - t0
    return stages, end - start, result


def measured(command: list[str]) -> dict:
    """Run ``command`` as the only child of a fresh wrapper process: {seconds, peak_mb, returncode}."""
    wrapper = [sys.executable, __file__, "--measure", "--", *command]
    done = subprocess.run(wrapper, capture_output=True, text=True, check=True)
    return json.loads(done.stdout.strip().splitlines()[-1])


def _measure(command: list[str]) -> int:
    """Inside the wrapper: time the command; its peak memory (and that of its own children) is ours to read."""
    start = time.perf_counter()
    code = subprocess.run(command, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL).returncode
    seconds = time.perf_counter() - start
    peak_kb = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss  # kilobytes on Linux
    print(json.dumps({"seconds": seconds, "peak_mb": peak_kb / 1024, "returncode": code}))
    return 0


def grid_build(bays: int, out: Path) -> None:
    sys.path.insert(0, str(ROOT / "bench"))
    from grids import double_layer_grid, write_project

    grid = double_layer_grid(bays, bays)
    project = write_project(grid, out / "grid")
    env_python = [sys.executable, "-m", "sheets"]
    os.environ["PYTHONPATH"] = os.pathsep.join(filter(None, [str(ROOT), os.environ.get("PYTHONPATH", "")]))
    print(f"\ndouble-layer grid {bays} x {bays} bays: {len(grid.node_ids)} nodes, {len(grid.member_ids)} members, "
          f"3 cases, 2 combinations (load average {os.getloadavg()[0]:.1f} on {os.cpu_count()} cores)")
    solve = measured(env_python + ["solve", str(project), "--quiet", "--json", str(out / "solve" / "results.json"),
                                   "--csv", str(out / "solve" / "csv")])
    build_run = measured(env_python + ["build", str(project), "--out", str(out / "build")])
    pdf = out / "build" / "project.pdf"
    results = out / "solve" / "results.json"
    pdf_mb, results_mb = pdf.stat().st_size / 1e6, results.stat().st_size / 1e6
    print(f"  baseline `sheets solve --json --csv`: {solve['seconds']:7.1f} s, peak {solve['peak_mb']:6.0f} MB, "
          f"results.json {results_mb:.1f} MB (exit {solve['returncode']})")
    print(f"  `sheets build`:                       {build_run['seconds']:7.1f} s, peak {build_run['peak_mb']:6.0f} MB, "
          f"PDF {pdf_mb:.1f} MB (exit {build_run['returncode']})")
    print(f"  build / solve: {build_run['seconds'] / solve['seconds']:.1f}x the time, "
          f"{build_run['peak_mb'] / solve['peak_mb']:.1f}x the peak memory; PDF / results.json = {pdf_mb / results_mb:.2f}")


def main(argv=None) -> int:
    argv = sys.argv[1:] if argv is None else argv
    if argv[:2] == ["--measure", "--"]:
        return _measure(argv[2:])
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("projects", nargs="*", type=Path)
    parser.add_argument("--out", type=Path, help="keep the outputs here (default: a temporary folder)")
    parser.add_argument("--grid", type=int, metavar="BAYS", help="time the build of a BAYS x BAYS roof grid in child processes")
    args = parser.parse_args(argv)
    if args.grid:
        with tempfile.TemporaryDirectory() as scratch:
            grid_build(args.grid, args.out or Path(scratch))
        return 0
    projects = args.projects or sorted((ROOT / "demo_projects").glob("*/*.toml"))
    with tempfile.TemporaryDirectory() as scratch:
        base = args.out or Path(scratch)
        for project in projects:
            p = load_project(project)
            print(f"\n{project.name}: {p.dim}D, {p.n_nodes} nodes, {p.n_members} members, "
                  f"{len(p.cases)} cases, {len(p.combinations)} combinations")
            stages, total, result = timed_build(project, base / project.stem)
            for name, seconds in stages.items():
                print(f"  {name:<15} {seconds:8.2f} s")
            print(f"  {'total':<15} {total:8.2f} s   ({result.pdf.stat().st_size / 1e6:.1f} MB PDF, {len(result.files)} files)")
            saved = figure_sources.SOURCES
            try:
                figure_sources.SOURCES = ()
                _, baseline, _ = timed_build(project, base / f"{project.stem}-no-figures")
            finally:
                figure_sources.SOURCES = saved
            print(f"  baseline without figures {baseline:.2f} s; full build / baseline = {total / baseline:.2f}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
