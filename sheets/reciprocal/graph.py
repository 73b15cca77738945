"""The extended graph of a loaded frame (METHODS.md section 5, step 1).

Members, plus one edge per node that receives an external force (the resultant
of its loads and reactions, ``State.external``), running from the node to one
extra *ideal vertex* that stands for infinity. Every vertex, the ideal one
included, is then in equilibrium: the extended graph is a self-stressed graph.
Maxwell (1864), "On reciprocal figures and diagrams of forces", Phil. Mag. 27
250-261.

Convention used everywhere in sheets.reciprocal: each element (member or
external edge) runs from a tail vertex to a head vertex and carries the vector
``w`` = the force it exerts on its tail (on its head it exerts ``-w``):

- member e = (i, j), tension positive: ``w = t_e u_e``, u_e = (x_j - x_i)/L_e;
- external edge of node v (tail v, head the ideal vertex): ``w = p_v``.

Equilibrium of vertex v is then ``sum(w, tail = v) - sum(w, head = v) = 0``
(the analysis stage's ``A t = p``, rewritten), and at the ideal vertex it is
the closure of the load line, ``sum_v p_v = 0``.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from sheets.analysis.states import State
from sheets.model.project import Project, frozen_array

EXTERNAL_PREFIX = "external:"
# An external resultant below this x the largest force is numerical noise of
# the reactions (A_s t - p_s), not a force: it gets no edge.
EXTERNAL_NOISE = 1e-12


@dataclass(frozen=True)
class ExtendedGraph:
    """Members and external-force edges of one equilibrium state; vertex ``n_nodes`` is ideal."""

    dim: int
    node_ids: tuple[str, ...]
    coords: np.ndarray  # (n, dim) m
    element_ids: tuple[str, ...]  # member ids, then "external:<node id>"
    kinds: tuple[str, ...]  # "member", or for external edges "load", "reaction", "load+reaction"
    tails: np.ndarray  # (k,) vertex index
    heads: np.ndarray  # (k,) vertex index; n_nodes is the ideal vertex
    vectors: np.ndarray  # (k, dim) N, force the element exerts on its tail
    forces: np.ndarray  # (k,) N: members t_e (tension positive), external edges |p_v|
    n_members: int
    external_loads: np.ndarray  # (r,) x dim N: the applied-load part of each external edge
    external_reactions: np.ndarray  # (r,) x dim N: the reaction part (the two sum to its vector)

    @property
    def n_nodes(self) -> int:
        return len(self.node_ids)

    @property
    def ideal(self) -> int:
        return self.n_nodes

    @property
    def n_elements(self) -> int:
        return len(self.element_ids)

    @property
    def is_member(self) -> np.ndarray:
        return np.arange(self.n_elements) < self.n_members

    @property
    def external_nodes(self) -> np.ndarray:
        """Node index of each external edge, in element order."""
        return self.tails[self.n_members:]

    @property
    def force_scale(self) -> float:
        """The largest force magnitude (N): the reference for every relative error."""
        return float(np.linalg.norm(self.vectors, axis=1).max(initial=0.0))

    def vertex_residuals(self) -> np.ndarray:
        """(n + 1, dim) out-sum minus in-sum of ``w`` per vertex: zero in equilibrium."""
        out = np.zeros((self.n_nodes + 1, self.dim))
        np.add.at(out, self.tails, self.vectors)
        np.add.at(out, self.heads, -self.vectors)
        return out


def extended_graph(project: Project, state: State) -> ExtendedGraph:
    """The extended graph of ``state``: members plus one edge per node with a non-zero external resultant."""
    m = project.n_members
    ends = np.asarray(project.ends)
    delta = project.coords[ends[:, 1]] - project.coords[ends[:, 0]]
    unit = delta / np.linalg.norm(delta, axis=1)[:, None]
    member_w = np.asarray(state.forces, dtype=float)[:, None] * unit

    external = np.asarray(state.external, dtype=float)
    magnitude = np.linalg.norm(external, axis=1)
    largest = max(float(np.abs(state.forces).max(initial=0.0)), float(magnitude.max(initial=0.0)))
    loaded = np.flatnonzero(magnitude > EXTERNAL_NOISE * largest) if largest > 0 else np.zeros(0, dtype=np.int64)

    load_size = np.linalg.norm(np.asarray(state.loads, dtype=float), axis=1)
    reaction_size = np.linalg.norm(np.asarray(state.reactions, dtype=float), axis=1)
    noise = EXTERNAL_NOISE * max(largest, 1e-300)
    kinds = ["member"] * m
    for v in loaded:
        has_load, has_reaction = load_size[v] > noise, reaction_size[v] > noise
        kinds.append("load+reaction" if has_load and has_reaction else "reaction" if has_reaction else "load")

    n = project.n_nodes
    return ExtendedGraph(
        dim=project.dim,
        node_ids=project.node_ids,
        coords=project.coords,
        element_ids=project.member_ids + tuple(EXTERNAL_PREFIX + project.node_ids[v] for v in loaded),
        kinds=tuple(kinds),
        tails=frozen_array(np.concatenate([ends[:, 0], loaded]), dtype=np.int64),
        heads=frozen_array(np.concatenate([ends[:, 1], np.full(len(loaded), n)]), dtype=np.int64),
        vectors=frozen_array(np.vstack([member_w, external[loaded]]).reshape(-1, project.dim)),
        forces=frozen_array(np.concatenate([np.asarray(state.forces, dtype=float), magnitude[loaded]])),
        n_members=m,
        external_loads=frozen_array(np.asarray(state.loads, dtype=float)[loaded].reshape(-1, project.dim)),
        external_reactions=frozen_array(np.asarray(state.reactions, dtype=float)[loaded].reshape(-1, project.dim)),
    )
