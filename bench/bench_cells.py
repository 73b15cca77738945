"""Per-node force cells of a large generated space frame, against its analysis.

Prints the time to build and check every node's cell (one Minkowski solve per
node with a closed cell) and its ratio to the analysis time of the same frame,
measured in the same process. Target (issue 4): 2,000 nodes within 20 s.

    python3 bench/bench_cells.py [--bays 31]
"""

from __future__ import annotations

import argparse
import sys
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))
sys.path.insert(0, str(Path(__file__).resolve().parent))

from conftest import make_frame  # noqa: E402  (the test suite's plain-data Project builder)
from grids import case_loads, double_layer_grid  # noqa: E402  (the shared benchmark frames)

from sheets.analysis import analyse  # noqa: E402
from sheets.reciprocal.cells import node_cells  # noqa: E402


def frame_for(bays: int):
    """The benchmark grid of bench/grids.py (bays x bays) as a Project, its first load case only."""
    grid = double_layer_grid(bays, bays)
    loads = next(iter(case_loads(grid).values())) * 1e3  # kN in grids.py, N here
    return make_frame(grid.coords, grid.ends, grid.supports, {"G": loads})


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--bays", type=int, default=31, help="top bays per side (31 gives 1,985 nodes)")
    args = parser.parse_args()
    project = frame_for(args.bays)
    print(f"frame: {project.n_nodes} nodes, {project.n_members} members")
    t0 = time.perf_counter()
    analysis = analyse(project)
    t_analysis = time.perf_counter() - t0
    t0 = time.perf_counter()
    cells = node_cells(analysis, "G")
    t_cells = time.perf_counter() - t0
    closed = [c for c in cells.cells if c.kind == "cell"]
    iterations = np.array([c.iterations for c in closed])
    print(f"analysis ({analysis.determinacy.route}, {analysis.states[0].method}): {t_analysis:.2f} s")
    print(f"node cells: {t_cells:.2f} s for {len(cells.cells)} nodes ({len(closed)} closed cells, "
          f"{len(cells.of_kind('polygon'))} flat, {len(cells.of_kind('failed'))} failed); "
          f"{1e3 * t_cells / len(cells.cells):.2f} ms per node")
    print(f"Newton iterations per cell: mean {iterations.mean():.1f}, max {iterations.max()}")
    print(f"checks: passed={cells.passed}, largest normal error {cells.normal_error:.1e}, "
          f"largest area error {cells.size_error:.1e}")
    print(f"ratio node cells / analysis: {t_cells / t_analysis:.2f}")


if __name__ == "__main__":
    main()
