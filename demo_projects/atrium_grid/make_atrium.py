"""Write the invented atrium-roof demo: a square-on-square offset double-layer grid.

12 x 12 bays of 2.4 m (a 28.8 m square atrium), 1.8 m deep: 313 nodes and
1,152 members, on the perimeter bottom nodes. Writes nodes.csv, members.csv and
loads_G.csv, loads_S.csv, loads_W.csv beside this script; atrium_grid.toml
names them. Every name, number and load is invented for the demo.

    python demo_projects/atrium_grid/make_atrium.py
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

BAYS = 12
BAY = 2.4  # m
DEPTH = 1.8  # m
HERE = Path(__file__).resolve().parent


def grid():
    ids, xyz, members = [], [], []
    top = np.zeros((BAYS + 1, BAYS + 1), dtype=int)
    bottom = np.zeros((BAYS, BAYS), dtype=int)
    for i in range(BAYS + 1):
        for j in range(BAYS + 1):
            top[i, j] = len(ids)
            ids.append(f"T{i:02d}{j:02d}")
            xyz.append((i * BAY, j * BAY, DEPTH))
    for i in range(BAYS):
        for j in range(BAYS):
            bottom[i, j] = len(ids)
            ids.append(f"B{i:02d}{j:02d}")
            xyz.append(((i + 0.5) * BAY, (j + 0.5) * BAY, 0.0))
    for i in range(BAYS + 1):
        for j in range(BAYS + 1):
            if i < BAYS:
                members.append((f"TX{i:02d}{j:02d}", top[i, j], top[i + 1, j], "CHS114", "top chord"))
            if j < BAYS:
                members.append((f"TY{i:02d}{j:02d}", top[i, j], top[i, j + 1], "CHS114", "top chord"))
    for i in range(BAYS):
        for j in range(BAYS):
            if i < BAYS - 1:
                members.append((f"BX{i:02d}{j:02d}", bottom[i, j], bottom[i + 1, j], "CHS89", "bottom chord"))
            if j < BAYS - 1:
                members.append((f"BY{i:02d}{j:02d}", bottom[i, j], bottom[i, j + 1], "CHS89", "bottom chord"))
            for di, dj, corner in ((0, 0, "a"), (1, 0, "b"), (1, 1, "c"), (0, 1, "d")):
                members.append((f"D{i:02d}{j:02d}{corner}", bottom[i, j], top[i + di, j + dj], "CHS60", "diagonal"))
    return ids, np.array(xyz), members, top.ravel()


def loads(ids, xyz, top):
    """Nodal loads (kN) on the top nodes by tributary area (common practice)."""
    xy = xyz[top, :2]
    edge_x = np.isclose(xy[:, 0], 0) | np.isclose(xy[:, 0], BAYS * BAY)
    edge_y = np.isclose(xy[:, 1], 0) | np.isclose(xy[:, 1], BAYS * BAY)
    area = BAY * BAY * np.where(edge_x, 0.5, 1.0) * np.where(edge_y, 0.5, 1.0)
    out = {k: np.zeros((len(ids), 3)) for k in "GSW"}
    out["G"][top, 2] = -0.7 * area  # glazing and purlins 0.7 kPa (self-weight added by the case)
    out["S"][top, 2] = -np.where(xy[:, 0] <= BAYS * BAY / 2, 1.0, 0.4) * area  # snow drifted against the north wall
    out["W"][top, 2] = 0.6 * area  # uplift
    out["W"][top, 0] = np.where(np.isclose(xy[:, 0], 0), 0.9 * BAY * DEPTH / 2, 0.0)  # push on the west edge
    return out


def main() -> None:
    ids, xyz, members, top = grid()
    rows = ["id,x,y,z"] + [f"{n},{x:.3f},{y:.3f},{z:.3f}" for n, (x, y, z) in zip(ids, xyz)]
    (HERE / "nodes.csv").write_text("\n".join(rows) + "\n")
    rows = ["id,start,end,section,group"] + [f"{m},{ids[a]},{ids[b]},{s},{g}" for m, a, b, s, g in members]
    (HERE / "members.csv").write_text("\n".join(rows) + "\n")
    for case, f in loads(ids, xyz, top).items():
        rows = ["node,fx,fy,fz"] + [f"{ids[k]},{fx:.4g},{fy:.4g},{fz:.4g}" for k, (fx, fy, fz) in enumerate(f) if np.any(f[k])]
        (HERE / f"loads_{case}.csv").write_text("\n".join(rows) + "\n")
    print(f"{len(ids)} nodes, {len(members)} members")


if __name__ == "__main__":
    main()
