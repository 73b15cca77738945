"""The reciprocal force diagram of one equilibrium state, in 2D and 3D alike.

METHODS.md section 5. Maxwell (1864), "On reciprocal figures and diagrams of
forces", Phil. Mag. 27 250-261; Cremona (1872), "Le figure reciproche nella
statica grafica"; the vector-based 3D form of the same construction: D'acunto,
Jasienski, Ohlbrock, Fivet, Schwartz & D'Acunto (2019), "Vector-based 3D
graphic statics: a framework for the design of spatial structures based on
the relation between form and force diagrams", Int. J. Solids Struct. 167
58-70; non-planar graphs: Micheletti (2008), "On generalized reciprocal
diagrams for self-stressed frameworks", Int. J. Space Struct. 23(3) 153-166.

Construction: the extended graph (``graph.py``) is embedded (``embedding.py``,
planarised where needed), its faces traced (``faces.py``); every face (space)
becomes a point ``y_f`` of the force diagram and every piece of an element
with left face L and right face R the force-diagram edge from y_L to y_R with

    y_R - y_L = w,    w = t_e u_e for a member, p_v for an external edge,

a vector in R^d (d = 2 or 3: one code path). One face per connected piece is
fixed (the first in Bow's notation, at the origin) and the positions are
integrated over a breadth-first spanning tree of the dual graph (scipy
csgraph), summed along the tree by pointer jumping so that no Python loop runs
per edge. The edges off the tree are the check: on a planar map the vertex
stars generate the cycle space of the dual, so they close exactly when every
vertex is in equilibrium. The errors are kept on the value:

- ``edge_error``: per force-diagram edge, |drawn edge - analysed force vector|
  over the largest force (parallel to the member with length |t_e|);
- ``vertex_error``: per vertex of the embedding, the closure of its force
  polygon |sum of its edges' forces| over the largest force; the ideal vertex's
  entry is the closure of the load line;
- ``parallel_error`` (radians) and ``length_error`` per member, the largest
  over its pieces.

Public API: ``force_diagram(project, state, drawing=None) -> ForceDiagram``
(the project's [drawing] options unless others are given),
``force_diagrams(analysis, state_ids=None)``, and ``reciprocal_diagram`` for
a graph and embedding built by hand. Figures: sheets.render.diagram2d and
sheets.render.view3d; exports: sheets.export.diagram_json and
sheets.export.dxf.
"""

from __future__ import annotations

from dataclasses import dataclass
from functools import cached_property

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import breadth_first_order, connected_components

from sheets.analysis.states import State
from sheets.model.project import DrawingOptions, Project, frozen_array
from sheets.model.units import DisplayUnits
from sheets.render.palette import ZERO_FORCE_RELATIVE
from sheets.reciprocal.bow import FrameLetters, frame_letters, frame_space_labels, member_name, space_labels, space_order
from sheets.reciprocal.embedding import Crossing, Embedding, EmbeddingError, embed
from sheets.reciprocal.faces import Faces
from sheets.reciprocal.graph import ExtendedGraph, extended_graph


@dataclass(frozen=True)
class ForceDiagram:
    """A reciprocal force diagram and everything needed to draw, label, check and export it.

    Indexing: ``points`` and ``space_labels`` by space (face of the embedding);
    ``edge_*`` by force-diagram edge, i.e. by piece of the planarised extended
    graph (``embedding.tails/heads/element/segment``); ``parallel_error`` and
    ``length_error`` by member; ``vertex_error`` by embedding vertex (nodes,
    crossing vertices, then the ideal vertex).
    """

    state_id: str
    state_kind: str
    state_title: str
    graph: ExtendedGraph
    embedding: Embedding
    faces: Faces
    points: np.ndarray  # (F, dim) N: force-diagram vertex of each space
    space_labels: tuple[str, ...]  # (F,) Bow's notation, capitals
    drawn: np.ndarray  # (k, dim) N: y_right - y_left of each force-diagram edge as drawn
    edge_error: np.ndarray  # (k,) relative to force_scale
    vertex_error: np.ndarray  # (V,) relative force-polygon closure per embedding vertex
    parallel_error: np.ndarray  # (m,) radians, largest over the member's pieces (0 where t = 0)
    length_error: np.ndarray  # (m,) | |edge| - |t| | / force_scale, largest over pieces
    force_scale: float  # N, largest force magnitude: the reference for relative errors
    scale: float  # N per m: a round drawing scale that makes the force diagram about the form's size
    tolerance: float  # relative tolerance the checks are held to
    units: DisplayUnits
    title: str = ""  # project title, for figures and exports

    # -- per force-diagram edge ------------------------------------------
    @property
    def dim(self) -> int:
        return self.graph.dim

    @property
    def n_edges(self) -> int:
        return len(self.embedding.element)

    @property
    def edge_element(self) -> np.ndarray:
        return self.embedding.element

    @cached_property
    def edge_ids(self) -> tuple[str, ...]:
        ids = self.graph.element_ids
        return tuple(ids[e] for e in self.embedding.element.tolist())

    @cached_property
    def edge_kinds(self) -> tuple[str, ...]:
        kinds = self.graph.kinds
        return tuple(kinds[e] for e in self.embedding.element.tolist())

    @property
    def edge_forces(self) -> np.ndarray:
        return self.graph.forces[self.embedding.element]

    @property
    def edge_vectors(self) -> np.ndarray:
        """Analysed force vector of each edge (the drawn one is ``drawn``)."""
        return self.graph.vectors[self.embedding.element]

    @property
    def edge_is_member(self) -> np.ndarray:
        return self.embedding.element < self.graph.n_members

    @property
    def edge_spaces(self) -> np.ndarray:
        """(k, 2) the spaces (left, right) each edge parts: its ends in the force diagram."""
        return np.stack([self.faces.left, self.faces.right], axis=1)

    @cached_property
    def bow_names(self) -> tuple[str, ...]:
        labels = self.space_labels
        return tuple(member_name(labels[a], labels[b]) for a, b in zip(self.faces.left.tolist(), self.faces.right.tolist()))

    @cached_property
    def element_roles(self) -> tuple[str, ...]:
        """Per element: "tension", "compression", "zero", "load", "reaction" or "load+reaction"."""
        zero = ZERO_FORCE_RELATIVE * self.force_scale
        out = []
        for kind, force in zip(self.graph.kinds, self.graph.forces.tolist()):
            if kind != "member":
                out.append(kind)
            elif abs(force) <= zero:
                out.append("zero")
            else:
                out.append("tension" if force > 0 else "compression")
        return tuple(out)

    @cached_property
    def role(self) -> tuple[str, ...]:
        """Per force-diagram edge, the role of its element (see ``element_roles``)."""
        roles = self.element_roles
        return tuple(roles[e] for e in self.embedding.element.tolist())

    @property
    def crossings(self) -> tuple[Crossing, ...]:
        return self.embedding.crossings

    # -- checks ------------------------------------------------------------
    @property
    def closure_error(self) -> float:
        """Largest |drawn edge - analysed force| over the largest force."""
        return float(self.edge_error.max(initial=0.0))

    @property
    def node_error(self) -> np.ndarray:
        """(n,) force-polygon closure of each node of the frame."""
        return self.vertex_error[: self.graph.n_nodes]

    @property
    def load_line_error(self) -> float:
        """Closure of the load line: |sum of all external forces| over the largest force."""
        return float(self.vertex_error[self.embedding.ideal])

    @property
    def passed(self) -> bool:
        """Every edge as analysed (so parallel and of the right length) and every polygon closed, to ``tolerance``.

        ``edge_error`` bounds both the length error and the sideways
        deviation; the angle in ``parallel_error`` is reported, not tested,
        since a tiny force's angle is ill-conditioned.
        """
        return max(self.closure_error, float(self.vertex_error.max(initial=0.0))) <= self.tolerance

    def space_point(self, label: str) -> np.ndarray:
        return self.points[self.space_labels.index(label)]


def force_diagram(project: Project, state: State, drawing: DrawingOptions | None = None,
                  frame: FrameLetters | None = None) -> ForceDiagram:
    """The force diagram of ``state``, embedded as ``drawing`` (default: the project's [drawing] options).

    ``frame``: ``frame_spaces(project, drawing)`` where the caller draws several states (built once)."""
    graph = extended_graph(project, state)
    drawing = drawing or project.drawing
    embedding, faces = embed(graph, drawing, project.vertical_axis)
    try:
        frame = frame or frame_spaces(project, drawing)
        labels = frame_space_labels(embedding, faces, frame, np.asarray(project.ends), project.n_members, project.node_ids)
    except EmbeddingError:  # the frame with every load point cannot be embedded: this state's own letters
        labels = None
    return reciprocal_diagram(graph, embedding, faces, state=state, units=project.units,
                              tolerance=project.options.equilibrium_tolerance, title=project.info.title, labels=labels)


def frame_spaces(project: Project, drawing: DrawingOptions | None = None) -> FrameLetters:
    """The spaces of the frame with a force at every load point and support, as Bow's letters take them
    (``bow.frame_space_labels``): the same for every state."""
    frame = embed(extended_graph(project, frame_state(project)), drawing or project.drawing, project.vertical_axis)
    return frame_letters(frame, np.asarray(project.ends), project.n_members)


@dataclass(frozen=True)
class _FrameState:
    """Stand-in state for Bow's letters: an external force at every load point and support, no member force."""

    forces: np.ndarray
    loads: np.ndarray
    reactions: np.ndarray

    @property
    def external(self) -> np.ndarray:
        return self.loads + self.reactions


def frame_state(project: Project) -> _FrameState:
    """Every node loaded in some case (self-weight: every node a member reaches) pushed along its loads'
    mean direction, and every support pushing back against the frame's total load (or up): the spaces
    of this state are the frame's spaces, whatever a single case loads."""
    n, dim = project.n_nodes, project.dim
    up = np.eye(dim)[project.vertical_axis]
    loads = np.zeros((n, dim))
    for case in project.cases:
        given = np.asarray(case.loads, dtype=float)
        size = float(np.abs(given).max(initial=0.0))
        if size > 0:
            loads += given / size
        if case.self_weight:
            reached = np.zeros(n, dtype=bool)
            reached[np.asarray(project.ends).reshape(-1)] = True
            loads[reached] -= up
    total = loads.sum(axis=0)
    back = -total / np.linalg.norm(total) if np.linalg.norm(total) > 0 else up
    reactions = np.where(np.asarray(project.fixed).any(axis=1)[:, None], back[None, :], 0.0)
    return _FrameState(forces=np.zeros(project.n_members), loads=loads, reactions=reactions)


def force_diagrams(analysis, state_ids=None, drawing: DrawingOptions | None = None) -> tuple[ForceDiagram, ...]:
    """Diagrams of the states asked for: ``state_ids``, else [drawing] states, else every state."""
    project = analysis.project
    wanted = tuple(state_ids or project.drawing.states or (s.id for s in analysis.states))
    frame = frame_spaces(project, drawing)
    return tuple(force_diagram(project, analysis.state(sid), drawing, frame) for sid in wanted)


def reciprocal_diagram(graph: ExtendedGraph, embedding: Embedding, faces: Faces, *, state: State | None = None,
                       units: DisplayUnits | None = None, tolerance: float = 1e-9, title: str = "",
                       labels: tuple[str, ...] | None = None) -> ForceDiagram:
    """Integrate the force-diagram positions over the dual of an embedding and measure the closure.

    ``labels``: Bow's letters of the spaces (default: this embedding's own order, avoiding node ids)."""
    w = graph.vectors[embedding.element]
    scale_force = graph.force_scale or 1.0
    order = space_order(embedding, faces)
    points = integrate(faces, w, order)
    drawn = points[faces.right] - points[faces.left]
    edge_error = np.linalg.norm(drawn - w, axis=1) / scale_force
    vertex_error = _vertex_closure(embedding, w) / scale_force
    parallel, length = _member_errors(graph, embedding, drawn, scale_force)
    return ForceDiagram(
        state_id=state.id if state else "",
        state_kind=state.kind if state else "",
        state_title=state.title if state else "",
        graph=graph,
        embedding=embedding,
        faces=faces,
        points=frozen_array(points),
        space_labels=labels or space_labels(embedding, faces, graph.node_ids),
        drawn=frozen_array(drawn),
        edge_error=frozen_array(edge_error),
        vertex_error=frozen_array(vertex_error),
        parallel_error=frozen_array(parallel),
        length_error=frozen_array(length),
        force_scale=float(graph.force_scale),
        scale=drawing_scale(graph.coords, points),
        tolerance=float(tolerance),
        units=units or DisplayUnits(),
        title=title,
    )


def integrate(faces: Faces, w: np.ndarray, order: np.ndarray) -> np.ndarray:
    """Positions y (F, d) with y_right - y_left = w on a spanning tree of the dual; roots at the origin.

    ``order`` ranks the faces; the first face of each connected piece is its root.
    """
    n_faces, dim = faces.count, w.shape[1]
    left, right = faces.left, faces.right
    links = np.flatnonzero(left != right)  # a bridge has one face on both sides: no dual link
    lo, hi = np.minimum(left[links], right[links]), np.maximum(left[links], right[links])
    _, first = np.unique(lo * n_faces + hi, return_index=True)
    links = links[first]
    rows = np.concatenate([left[links], right[links]])
    cols = np.concatenate([right[links], left[links]])
    dual = sp.csr_matrix((np.tile(links + 1, 2), (rows, cols)), shape=(n_faces, n_faces))

    parent = np.arange(n_faces)
    step = np.zeros((n_faces, dim))
    count, piece_of = connected_components(dual, directed=False)
    rank = np.empty(n_faces, dtype=np.int64)
    rank[order] = np.arange(n_faces)
    first_rank = np.full(count, n_faces)
    np.minimum.at(first_rank, piece_of, rank)
    for root in order[first_rank]:  # the first face, in label order, of each connected piece
        reached, pred = breadth_first_order(dual, int(root), directed=False, return_predecessors=True)
        child = reached[1:]
        par = pred[child]
        edge = np.asarray(dual[par, child]).ravel().astype(np.int64) - 1
        sign = np.where(left[edge] == par, 1.0, -1.0)
        parent[child] = par
        step[child] = sign[:, None] * w[edge]
    return _sum_to_roots(parent, step)


def _sum_to_roots(parent: np.ndarray, step: np.ndarray) -> np.ndarray:
    """y[f] = step[f] + y[parent[f]] (roots: parent = self, step = 0), by pointer jumping."""
    total, up = step.copy(), parent.copy()
    while np.any(up[up] != up):
        total = total + total[up]
        up = up[up]
    return total  # every up[f] is now a root, at the origin


def _vertex_closure(embedding: Embedding, w: np.ndarray) -> np.ndarray:
    out = np.zeros((embedding.n_vertices, w.shape[1]))
    np.add.at(out, embedding.tails, w)
    np.add.at(out, embedding.heads, -w)
    return np.linalg.norm(out, axis=1)


def _member_errors(graph: ExtendedGraph, embedding: Embedding, drawn: np.ndarray, scale_force: float):
    m = graph.n_members
    is_member = embedding.element < m
    e = embedding.element[is_member]
    d = drawn[is_member]
    coords = graph.coords
    u = coords[graph.heads[:m]] - coords[graph.tails[:m]]
    u = u / np.linalg.norm(u, axis=1)[:, None]
    t = graph.forces[:m]
    size = np.linalg.norm(d, axis=1)
    if graph.dim == 2:
        across = np.abs(d[:, 0] * u[e, 1] - d[:, 1] * u[e, 0])
    else:
        across = np.linalg.norm(np.cross(d, u[e]), axis=1)
    angle = np.arctan2(across, np.abs((d * u[e]).sum(axis=1)))
    carries = np.abs(t[e]) > ZERO_FORCE_RELATIVE * scale_force
    angle = np.where(carries & (size > 0), angle, 0.0)
    parallel = np.zeros(m)
    length = np.zeros(m)
    np.maximum.at(parallel, e, angle)
    np.maximum.at(length, e, np.abs(size - np.abs(t[e])) / scale_force)
    return parallel, length


def nice_scale(value: float) -> float:
    """The smallest of 1, 2, 2.5, 5 x 10^k not below ``value``."""
    if not np.isfinite(value) or value <= 0:
        return 1.0
    power = 10.0 ** np.floor(np.log10(value))
    for step in (1.0, 2.0, 2.5, 5.0, 10.0):
        if step * power >= value * (1 - 1e-12):
            return float(step * power)
    return float(10 * power)


def drawing_scale(coords: np.ndarray, points: np.ndarray) -> float:
    """N per m of drawing so that the force diagram is at most about as large as the form."""
    form = float(np.ptp(coords, axis=0).max()) if len(coords) else 0.0
    force = float(np.ptp(points, axis=0).max()) if len(points) else 0.0
    if form <= 0 or force <= 0:
        return 1.0
    return nice_scale(force / form)
