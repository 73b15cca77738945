"""Time each stage of `sheets build` on a project: reading, analysis, member checks, diagrams,
figures (rendering), results, assembly, writing.

    python bench/bench_build.py [PROJECT.toml ...] [--out DIR]

With no project, every demo project is timed. Stage times come from the progress
messages ``sheets.build.build_sheets`` sends at the start of each stage (the
reciprocal diagrams, node cells and Minkowski views of the drawn states are built
once, in the "diagrams" stage). Each project is also timed as a ratio against a baseline measured in
the same process: the same build with the figure sources switched off, never as an
absolute pass/fail.
"""

from __future__ import annotations

import argparse
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


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("projects", nargs="*", type=Path)
    parser.add_argument("--out", type=Path, help="keep the outputs here (default: a temporary folder)")
    args = parser.parse_args(argv)
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
