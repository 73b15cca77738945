"""Benchmark: reciprocal force-diagram construction on a large 3D frame.

A square-on-square double-layer grid roof of about 10,000 members (invented
proportions), pinned along the bottom perimeter, with a vertical load on every
top node. It is analysed, then its force diagram is built in the default
embedding (geometric, plan projection): every top-node load is an interior
load in plan, so each ray out to the ideal vertex crosses members and the
planarisation is heavy. Both are timed in this one process; the script prints
the times, the ratio of diagram to analysis time and the diagram's size.

Run: python3 bench/bench_reciprocal.py [bays]   (default 36 bays: 9,800 members)
"""

from __future__ import annotations

import sys
import time
from types import MappingProxyType

import numpy as np

from sheets.analysis import analyse
from sheets.model.project import LoadCase, Material, Project, ProjectInfo, Section, frozen_array
from sheets.model.units import DisplayUnits
from sheets.reciprocal.diagram import force_diagram

BUDGET_SECONDS = 5.0  # the limit for the diagram construction


def double_layer_grid(bays: int = 36, spacing: float = 2.0, depth: float = 1.5, load: float = 12e3) -> Project:
    """Top nodes on a (bays x bays) grid at z = depth, bottom nodes under the square centres at z = 0."""
    n = bays
    ti, tj = np.meshgrid(np.arange(n), np.arange(n), indexing="ij")
    top = np.stack([ti.ravel() * spacing, tj.ravel() * spacing, np.full(n * n, depth)], axis=1)
    bi, bj = np.meshgrid(np.arange(n - 1), np.arange(n - 1), indexing="ij")
    bottom = np.stack([(bi.ravel() + 0.5) * spacing, (bj.ravel() + 0.5) * spacing, np.zeros((n - 1) ** 2)], axis=1)
    coords = np.vstack([top, bottom])

    def t_id(i, j):
        return i * n + j

    def b_id(i, j):
        return n * n + i * (n - 1) + j

    members = []
    for i in range(n):
        for j in range(n):
            if i + 1 < n:
                members.append((t_id(i, j), t_id(i + 1, j)))
            if j + 1 < n:
                members.append((t_id(i, j), t_id(i, j + 1)))
    for i in range(n - 1):
        for j in range(n - 1):
            if i + 1 < n - 1:
                members.append((b_id(i, j), b_id(i + 1, j)))
            if j + 1 < n - 1:
                members.append((b_id(i, j), b_id(i, j + 1)))
            for di in (0, 1):
                for dj in (0, 1):
                    members.append((b_id(i, j), t_id(i + di, j + dj)))
    ends = np.array(members, dtype=np.int64)
    fixed = np.zeros((len(coords), 3), dtype=bool)
    for i in range(n - 1):
        for j in range(n - 1):
            if i in (0, n - 2) or j in (0, n - 2):
                fixed[b_id(i, j)] = True
    loads = np.zeros((len(coords), 3))
    loads[: n * n, 2] = -load
    m = len(ends)
    return Project(
        source="bench-grid.toml",
        info=ProjectInfo(title="Benchmark double-layer grid"),
        units=DisplayUnits(),
        dim=3,
        vertical_axis=2,
        node_ids=tuple(f"N{i + 1}" for i in range(len(coords))),
        coords=frozen_array(coords),
        member_ids=tuple(f"M{e + 1}" for e in range(m)),
        ends=frozen_array(ends, dtype=np.int64),
        member_sections=("S",) * m,
        member_roles=("bar",) * m,
        member_groups=("",) * m,
        materials=MappingProxyType({"steel": Material("steel", 210e9)}),
        sections=MappingProxyType({"S": Section("S", "steel", 2.0e-3)}),
        fixed=frozen_array(fixed, dtype=bool),
        cases=(LoadCase("G", "roof load", frozen_array(loads)),),
        combinations=(),
    )


def main(argv: list[str]) -> int:
    bays = int(argv[1]) if len(argv) > 1 else 36
    project = double_layer_grid(bays)
    print(f"frame: {project.n_nodes} nodes, {project.n_members} members, 3D double-layer grid")

    start = time.perf_counter()
    analysis = analyse(project)
    analysis_time = time.perf_counter() - start
    state = analysis.state("G")

    start = time.perf_counter()
    diagram = force_diagram(project, state)
    diagram_time = time.perf_counter() - start

    new = sum(1 for c in diagram.crossings if not c.node)
    print(f"analysis:        {analysis_time:8.3f} s")
    print(f"force diagram:   {diagram_time:8.3f} s  (budget {BUDGET_SECONDS:g} s: {'within' if diagram_time <= BUDGET_SECONDS else 'OVER'})")
    print(f"ratio diagram / analysis: {diagram_time / analysis_time:.3f}")
    print(f"diagram: {diagram.n_edges} edges, {diagram.faces.count} spaces, {new} crossing vertices, "
          f"{len(diagram.crossings) - new} pass-throughs; embedding: {diagram.embedding.note}")
    print(f"closure: largest edge error {diagram.closure_error:.2e}, largest polygon error "
          f"{diagram.vertex_error.max():.2e} (relative), passed={diagram.passed}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv))
