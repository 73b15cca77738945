"""Generate square-on-square offset double-layer grids as sheets projects (benchmark input).

Top grid: nx x ny square bays of side ``bay`` at height ``depth``; bottom grid: one
node under the centre of every top bay (offset by half a bay); top chords, bottom
chords, and four diagonals from each bottom node to the corners of its bay. The
grid has 8 nx ny members (20,000 at 50 x 50). It stands on the perimeter bottom
nodes (vertical supports, plus two horizontal ones at corners to stop the
rigid-body motions in plan).

Written as a project: project.toml, nodes.csv, members.csv and one loads CSV per
case (3 cases: permanent with self-weight, snow on half the roof, wind uplift with
a sideways push), plus two combinations. All names and values are invented.

    python3 bench/grids.py OUT_DIR --bays 50 50
"""

from __future__ import annotations

import argparse
from dataclasses import dataclass
from pathlib import Path

import numpy as np


@dataclass(frozen=True)
class Grid:
    node_ids: list[str]
    coords: np.ndarray  # (n, 3) m
    member_ids: list[str]
    ends: np.ndarray  # (m, 2) node indices
    sections: list[str]  # per member: "chord" or "diagonal"
    supports: dict[int, str]  # node index -> fixed axes
    top: np.ndarray  # indices of top nodes
    bays: tuple[int, int]


def double_layer_grid(nx: int, ny: int, bay: float = 2.0, depth: float = 1.5) -> Grid:
    ids, coords = [], []
    top = -np.ones((nx + 1, ny + 1), dtype=int)
    bottom = -np.ones((nx, ny), dtype=int)
    for i in range(nx + 1):
        for j in range(ny + 1):
            top[i, j] = len(ids)
            ids.append(f"T{i}_{j}")
            coords.append((i * bay, j * bay, depth))
    for i in range(nx):
        for j in range(ny):
            bottom[i, j] = len(ids)
            ids.append(f"B{i}_{j}")
            coords.append(((i + 0.5) * bay, (j + 0.5) * bay, 0.0))
    members: list[tuple[str, int, int, str]] = []
    for i in range(nx + 1):
        for j in range(ny + 1):
            if i < nx:
                members.append((f"TX{i}_{j}", top[i, j], top[i + 1, j], "chord"))
            if j < ny:
                members.append((f"TY{i}_{j}", top[i, j], top[i, j + 1], "chord"))
    for i in range(nx):
        for j in range(ny):
            if i < nx - 1:
                members.append((f"BX{i}_{j}", bottom[i, j], bottom[i + 1, j], "chord"))
            if j < ny - 1:
                members.append((f"BY{i}_{j}", bottom[i, j], bottom[i, j + 1], "chord"))
            for di, dj, corner in ((0, 0, "a"), (1, 0, "b"), (1, 1, "c"), (0, 1, "d")):
                members.append((f"D{i}_{j}{corner}", bottom[i, j], top[i + di, j + dj], "diagonal"))
    supports: dict[int, str] = {}
    for i in range(nx):
        for j in range(ny):
            if i in (0, nx - 1) or j in (0, ny - 1):
                supports[bottom[i, j]] = "z"
    supports[bottom[0, 0]] = "xyz"
    supports[bottom[nx - 1, 0]] = "yz"
    return Grid(
        node_ids=ids,
        coords=np.array(coords),
        member_ids=[m[0] for m in members],
        ends=np.array([(m[1], m[2]) for m in members]),
        sections=[m[3] for m in members],
        supports=supports,
        top=top.ravel(),
        bays=(nx, ny),
    )


def case_loads(grid: Grid, bay: float = 2.0) -> dict[str, np.ndarray]:
    """Nodal loads (kN) of the three cases on the top nodes, by tributary area (common practice)."""
    n = len(grid.node_ids)
    nx, ny = grid.bays
    xy = grid.coords[grid.top, :2]
    edge_x = np.isclose(xy[:, 0], 0) | np.isclose(xy[:, 0], nx * bay)
    edge_y = np.isclose(xy[:, 1], 0) | np.isclose(xy[:, 1], ny * bay)
    area = bay * bay * np.where(edge_x, 0.5, 1.0) * np.where(edge_y, 0.5, 1.0)
    cases = {name: np.zeros((n, 3)) for name in ("permanent", "snow", "wind")}
    cases["permanent"][grid.top, 2] = -0.6 * area  # roofing, 0.6 kN/m^2 (self-weight added by the case)
    half = xy[:, 0] <= nx * bay / 2
    cases["snow"][grid.top, 2] = -np.where(half, 1.2, 0.4) * area  # drifted on one half
    cases["wind"][grid.top, 2] = 0.5 * area  # uplift
    cases["wind"][grid.top, 0] = np.where(edge_x & (xy[:, 0] == 0), 0.8 * bay * 1.5, 0.0)  # push on the windward edge
    return cases


def write_project(grid: Grid, out: Path) -> Path:
    out.mkdir(parents=True, exist_ok=True)
    nx, ny = grid.bays
    lines = ["id,x,y,z"] + [f"{nid},{x:.6f},{y:.6f},{z:.6f}" for nid, (x, y, z) in zip(grid.node_ids, grid.coords)]
    (out / "nodes.csv").write_text("\n".join(lines) + "\n")
    lines = ["id,start,end,section"] + [
        f"{mid},{grid.node_ids[a]},{grid.node_ids[b]},{sec}" for mid, (a, b), sec in zip(grid.member_ids, grid.ends, grid.sections)
    ]
    (out / "members.csv").write_text("\n".join(lines) + "\n")
    for name, loads in case_loads(grid).items():
        rows = ["node,fx,fy,fz"] + [
            f"{grid.node_ids[k]},{fx:.6g},{fy:.6g},{fz:.6g}" for k, (fx, fy, fz) in enumerate(loads) if np.any((fx, fy, fz))
        ]
        (out / f"loads_{name}.csv").write_text("\n".join(rows) + "\n")
    supports = "\n".join(f'{grid.node_ids[k]} = "{axes}"' for k, axes in sorted(grid.supports.items()))
    toml = f"""\
[project]
title = "Double-layer roof grid {nx} x {ny} bays (benchmark)"
number = "BENCH-{nx}x{ny}"
date = 2026-01-01

[units]
force = "kN"
length = "m"

[geometry]
dimension = 3
nodes_file = "nodes.csv"
members_file = "members.csv"

[materials.steel]
elastic_modulus = "210 GPa"
density = "7850 kg/m^3"

[sections.chord]
material = "steel"
area = "2800 mm^2"

[sections.diagonal]
material = "steel"
area = "1400 mm^2"

[supports]
{supports}

[cases.permanent]
title = "Permanent: roofing and self-weight"
self_weight = true
loads_file = "loads_permanent.csv"

[cases.snow]
title = "Snow, drifted on one half"
loads_file = "loads_snow.csv"

[cases.wind]
title = "Wind: uplift and sideways push"
loads_file = "loads_wind.csv"

[combinations.gravity]
factors = {{ permanent = 1.35, snow = 1.5 }}

[combinations.uplift]
factors = {{ permanent = 1.0, wind = 1.5 }}
"""
    path = out / "project.toml"
    path.write_text(toml)
    return path


def bays_for_members(members: int) -> int:
    """Square grid with about ``members`` members (8 per bay)."""
    return max(2, int(round((members / 8) ** 0.5)))


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("out", type=Path)
    parser.add_argument("--bays", type=int, nargs=2, metavar=("NX", "NY"), default=(50, 50))
    args = parser.parse_args()
    grid = double_layer_grid(*args.bays)
    path = write_project(grid, args.out)
    print(f"{path}: {len(grid.node_ids)} nodes, {len(grid.member_ids)} members")


if __name__ == "__main__":
    main()
