"""Frames shared by the reciprocal-diagram tests (invented geometry, test data only).

``equilibrium_state`` makes a state straight from member forces: the external
force at each node is what equilibrium asks for (p = A t), so every node is
loaded and every external edge exercises the embedding.
"""

from __future__ import annotations

import itertools

import numpy as np

from sheets.analysis.equilibrium import project_equilibrium
from sheets.analysis.states import State


def equilibrium_state(project, forces, state_id="T") -> State:
    forces = np.asarray(forces, dtype=float)
    loads = (project_equilibrium(project).matrix @ forces).reshape(project.n_nodes, project.dim)
    return State(state_id, "case", "forces given", loads, forces, np.zeros_like(loads), None, "given", None)


def king_post(frame, span=8.0, rise=3.0, apex=10e3, ceiling=4e3):
    """Nodes: 0 left support, 1 mid bottom, 2 right support, 3 apex. Members M1, M2 tie; M3, M4 rafters; M5 post."""
    a = span / 2
    coords = [(0, 0), (a, 0), (span, 0), (a, rise)]
    members = [(0, 1), (1, 2), (0, 3), (3, 2), (1, 3)]
    return frame(coords, members, {0: "xy", 2: "y"}, {"L": {3: (0, -apex), 1: (0, -ceiling)}})


def parallel_chord_pratt(frame, panels=6, width=2.0, depth=1.5, load=10e3):
    """Bottom nodes 0..p, top nodes p+1..2p-1 over the inner bottom nodes; panel loads on the top chord.

    Pratt pattern: verticals at every inner panel point, diagonals running down towards mid-span.
    """
    p = panels
    bottom = [(i * width, 0.0) for i in range(p + 1)]
    top = [(i * width, depth) for i in range(1, p)]
    coords = bottom + top
    t = lambda i: p + i  # top node above bottom node i (1 <= i <= p-1)  # noqa: E731
    members = [(i, i + 1) for i in range(p)]  # bottom chord
    members += [(t(i), t(i + 1)) for i in range(1, p - 1)]  # top chord
    members += [(0, t(1)), (t(p - 1), p)]  # end diagonals
    members += [(i, t(i)) for i in range(1, p)]  # verticals
    members += [(t(i), i + 1) for i in range(1, p // 2)] + [(t(i), i - 1) for i in range(p // 2 + 1, p)]
    loads = {t(i): (0.0, -load) for i in range(1, p)}
    return frame(coords, members, {0: "xy", p: "y"}, {"L": loads})


def k5_tetrahedron(frame, level=10e3):
    """A tetrahedron with a fifth node inside, every pair joined (K5: not planar), self-stressed, no supports."""
    from sheets.model.project import Prestress

    coords = [(0, 0, 0), (4, 0, 0), (1.5, 3.5, 0), (1.7, 1.2, 3.0), (1.8, 1.3, 0.8)]
    members = list(itertools.combinations(range(5), 2))
    return frame(coords, members, np.zeros((5, 3), bool), {"none": {}},
                 prestress=Prestress("PS", "scaled", member="M1", force=level))


def interior_loaded_panel(frame, load=(3e3, -12e3)):
    """A square, triangulated towards a centre node that carries the load; pinned at two corners."""
    coords = [(0, 0), (4, 0), (4, 4), (0, 4), (2, 2)]
    members = [(0, 1), (1, 2), (2, 3), (3, 0), (0, 4), (1, 4), (2, 4), (3, 4)]
    return frame(coords, members, {0: "xy", 1: "xy"}, {"L": {4: load}})


def space_truss(frame):
    """A small 3D truss: a square base pinned at its corners, a mid-height ring and an apex (invented)."""
    coords = [(0, 0, 0), (4, 0, 0), (4, 4, 0), (0, 4, 0), (2, 2, 3), (2, 0, 1.5), (4, 2, 1.5), (2, 4, 1.5), (0, 2, 1.5)]
    members = [(0, 5), (5, 1), (1, 6), (6, 2), (2, 7), (7, 3), (3, 8), (8, 0), (5, 4), (6, 4), (7, 4), (8, 4),
               (5, 6), (6, 7), (7, 8), (8, 5)]
    loads = {"G": {4: (0, 0, -20e3), 5: (0, 0, -5e3), 6: (1e3, 0, -5e3)}}
    return frame(coords, members, {0: "xyz", 1: "xyz", 2: "xyz", 3: "xyz"}, loads)


def drawn_checks(project, state, diagram):
    """Independent of the diagram's own error fields: (largest sideways / length / polygon error) relative.

    Uses only the drawn points, the faces each edge parts and the project's own geometry and forces.
    """
    m = project.n_members
    scale = max(np.abs(state.forces).max(initial=0.0), np.linalg.norm(state.external, axis=1).max(initial=0.0), 1e-300)
    drawn = diagram.points[diagram.faces.right] - diagram.points[diagram.faces.left]
    element = diagram.embedding.element
    ends = np.asarray(project.ends)
    u = project.coords[ends[:, 1]] - project.coords[ends[:, 0]]
    u = u / np.linalg.norm(u, axis=1)[:, None]
    is_m = element < m
    d, e = drawn[is_m], element[is_m]
    along = (d * u[e]).sum(axis=1)
    sideways = np.linalg.norm(d - along[:, None] * u[e], axis=1)
    length = np.abs(np.linalg.norm(d, axis=1) - np.abs(state.forces[e]))
    sign = np.abs(along - state.forces[e])  # signed: y_R - y_L = t u
    node_sum = np.zeros((project.n_nodes, project.dim))
    np.add.at(node_sum, ends[:, 0], state.forces[:, None] * u)
    np.add.at(node_sum, ends[:, 1], -state.forces[:, None] * u)
    polygon = np.linalg.norm(node_sum + state.external, axis=1)
    return (float(sideways.max(initial=0.0)) / scale, float(length.max(initial=0.0)) / scale,
            float(sign.max(initial=0.0)) / scale, float(polygon.max(initial=0.0)) / scale)
