"""Faces of an embedded graph, traced from its rotation system (METHODS.md 5, step 3).

Edge k runs tail -> head; its half-edges are 2k (tail -> head) and 2k + 1
(head -> tail). A rotation system lists, for every vertex, its outgoing
half-edges in counter-clockwise order. Walking a face with the face on the
left, the half-edge after h = (u -> v) is the one leaving v just clockwise of
the twin (v -> u); the faces are the cycles of that permutation. The face on
the left of half-edge 2k is the left face of edge k, the face on the left of
2k + 1 its right face.

Euler's formula (Euler 1758, "Elementa doctrinae solidorum"; for embedded
graphs see Mohar & Thomassen, "Graphs on Surfaces", 2001): a rotation system
of a graph with c connected components is planar exactly when
V - E + F = 2 c. The check is cheap, so every embedding is checked.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
from scipy.sparse.csgraph import connected_components

from sheets.model.project import frozen_array


@dataclass(frozen=True)
class Faces:
    face_of: np.ndarray  # (2k,) face on the left of each half-edge
    left: np.ndarray  # (k,) face on the left of edge k (tail -> head)
    right: np.ndarray  # (k,) face on its right
    count: int
    successor: np.ndarray  # (2k,) next half-edge around the same face
    euler_characteristic: int  # V - E + F over vertices that have edges
    components: int  # connected components of the graph (vertices with edges)

    @property
    def planar(self) -> bool:
        return self.euler_characteristic == 2 * self.components

    def boundary(self, face: int) -> np.ndarray:
        """Half-edges around ``face`` in walking order (face on the left)."""
        start = int(np.flatnonzero(self.face_of == face)[0])
        cycle = [start]
        h = int(self.successor[start])
        while h != start:
            cycle.append(h)
            h = int(self.successor[h])
        return np.array(cycle, dtype=np.int64)


def half_edge_tails(tails: np.ndarray, heads: np.ndarray) -> np.ndarray:
    return np.stack([tails, heads], axis=1).reshape(-1)


def trace_faces(tails: np.ndarray, heads: np.ndarray, rotation: np.ndarray) -> Faces:
    """Faces of the embedding given by ``rotation``: all 2k half-edge ids, grouped by tail, ccw within a group."""
    tails = np.asarray(tails, dtype=np.int64)
    heads = np.asarray(heads, dtype=np.int64)
    rotation = np.asarray(rotation, dtype=np.int64)
    k = len(tails)
    n_half = 2 * k
    if k == 0:
        z = frozen_array(np.zeros(0, dtype=np.int64), dtype=np.int64)
        return Faces(z, z, z, 0, z, 0, 0)
    h_tail = half_edge_tails(tails, heads)
    group_tail = h_tail[rotation]
    if np.any(np.diff(group_tail) < 0):
        raise ValueError("rotation must list half-edges grouped by ascending tail vertex")
    starts = np.flatnonzero(np.r_[True, group_tail[1:] != group_tail[:-1]])
    sizes = np.diff(np.r_[starts, n_half])
    group_start = np.repeat(starts, sizes)
    position = np.arange(n_half)
    clockwise_neighbour = np.where(position == group_start, group_start + np.repeat(sizes, sizes) - 1, position - 1)
    slot = np.empty(n_half, dtype=np.int64)
    slot[rotation] = position
    twin = np.arange(n_half) ^ 1
    successor = rotation[clockwise_neighbour[slot[twin]]]

    graph = sp.csr_matrix((np.ones(n_half), (np.arange(n_half), successor)), shape=(n_half, n_half))
    count, face_of = connected_components(graph, directed=True, connection="weak")
    vertices_with_edges = len(starts)
    adjacency = sp.csr_matrix((np.ones(k), (tails, heads)), shape=(h_tail.max() + 1,) * 2)
    _, labels = connected_components(adjacency, directed=False)
    components = len(np.unique(labels[np.unique(h_tail)]))
    return Faces(
        face_of=frozen_array(face_of, dtype=np.int64),
        left=frozen_array(face_of[0::2], dtype=np.int64),
        right=frozen_array(face_of[1::2], dtype=np.int64),
        count=int(count),
        successor=frozen_array(successor, dtype=np.int64),
        euler_characteristic=int(vertices_with_edges - k + count),
        components=int(components),
    )
