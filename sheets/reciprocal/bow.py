"""Bow's notation: a letter for every space (face), members named by the two spaces they part.

Bow (1873), "Economics of Construction in relation to Framed Structures"; a
trade convention for 2D sheets (common practice), used here in 3D too. Spaces
of the form are capital letters; the matching points of the force diagram are
the same letters in lower case.

Order (common practice, made deterministic): first the outer spaces between
external forces, going clockwise around the frame and starting with the space
that contains the direction due left (so a roof truss loaded on top gets A at
the left, then B, C, ... between the loads from left to right); then the inner
spaces from left to right (ties: top to bottom), by the mean of their corners.

The letters belong to the frame, not to a load case: they are given once to
the spaces of the frame with an external force at every node that is loaded
in any case or supported (``frame_spaces``), and each space of a state takes
the letter of the frame space its members border (the first in that order
where a state joins several, as where a load point carries nothing in that
state). The same space so keeps its letter on every sheet. No letter equals a
node id (in either case), so 'B' never names both a node and a space.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from sheets.reciprocal.embedding import Embedding
from sheets.reciprocal.faces import Faces, half_edge_tails


def letter_sequence(count: int, avoid=()) -> list[str]:
    """The first ``count`` letters A, B, ..., Z, AA, ... that equal no string in ``avoid`` (ignoring case)."""
    taken = {str(a).upper() for a in avoid}
    out, index = [], 0
    while len(out) < count:
        candidate = letters(index)
        index += 1
        if candidate not in taken:
            out.append(candidate)
    return out


def letters(index: int) -> str:
    """0 -> A, 25 -> Z, 26 -> AA, ... (bijective base 26)."""
    out = ""
    index += 1
    while index:
        index, r = divmod(index - 1, 26)
        out = chr(ord("A") + r) + out
    return out


def space_order(embedding: Embedding, faces: Faces) -> np.ndarray:
    """Faces in labelling order (outer spaces clockwise from the left, then inner ones)."""
    h_tail = half_edge_tails(embedding.tails, embedding.heads)
    around_ideal = embedding.rotation[h_tail[embedding.rotation] == embedding.ideal]
    outer = faces.face_of[np.roll(around_ideal, 1)] if len(around_ideal) else np.zeros(0, dtype=np.int64)
    _, first = np.unique(outer, return_index=True)
    outer = outer[np.sort(first)]

    finite = h_tail < embedding.ideal
    sums = np.zeros((faces.count, 2))
    np.add.at(sums, faces.face_of[finite], embedding.points[h_tail[finite]])
    counts = np.bincount(faces.face_of[finite], minlength=faces.count)
    centre = sums / np.maximum(counts, 1)[:, None]
    extent = float(np.ptp(embedding.points, axis=0).max()) or 1.0
    key_x = np.round(centre[:, 0] / (1e-6 * extent))
    inner = np.setdiff1d(np.arange(faces.count), outer)
    inner = inner[np.lexsort((-centre[inner, 1], key_x[inner]))]
    return np.concatenate([outer, inner]).astype(np.int64)


def space_labels(embedding: Embedding, faces: Faces, avoid=()) -> tuple[str, ...]:
    """Bow's-notation letter of each face, indexed by face, in this embedding's own order."""
    labels = [""] * faces.count
    names = letter_sequence(faces.count, avoid)
    for rank, face in enumerate(space_order(embedding, faces)):
        labels[face] = names[rank]
    return tuple(labels)


def _piece_params(embedding: Embedding, element_ends: np.ndarray, members: np.ndarray, at: float) -> np.ndarray:
    """Position along its member (0 at the tail node, 1 at the head) of each member piece's point ``at``
    (0 its start, 0.5 its middle, 1 its end), in the drawing plane."""
    pts = embedding.points
    e = embedding.element[members]
    a, b = pts[element_ends[e, 0]], pts[element_ends[e, 1]]
    p = (1 - at) * pts[embedding.tails[members]] + at * pts[embedding.heads[members]]
    d = b - a
    return np.einsum("ij,ij->i", p - a, d) / np.maximum(np.einsum("ij,ij->i", d, d), 1e-300)


@dataclass(frozen=True)
class FrameLetters:
    """What a state's letters take from the frame's spaces, and nothing else (so it can key a cache of a
    state's diagrams): each member piece of the frame, in member order and along the member, with where
    it ends along its member (member index + fraction) and the frame's ranks of the spaces either side."""

    ends: np.ndarray  # (pieces,) member index + fraction at the piece's end, ascending
    left: np.ndarray  # (pieces,) frame rank of the space on the piece's left
    right: np.ndarray  # (pieces,) and on its right
    count: int  # spaces of the frame


def frame_letters(frame: tuple[Embedding, Faces], element_ends: np.ndarray, n_members: int) -> FrameLetters:
    """``frame``: the embedding and faces of the frame with an external force at every load point and support."""
    frame_emb, frame_faces = frame
    rank = np.empty(frame_faces.count, dtype=np.int64)
    rank[space_order(frame_emb, frame_faces)] = np.arange(frame_faces.count)
    theirs = np.flatnonzero(frame_emb.element < n_members)
    theirs = theirs[np.lexsort((frame_emb.segment[theirs], frame_emb.element[theirs]))]
    ends = frame_emb.element[theirs] + np.clip(_piece_params(frame_emb, element_ends, theirs, 1.0), 0, 1)
    return FrameLetters(ends, rank[frame_faces.left[theirs]], rank[frame_faces.right[theirs]], int(frame_faces.count))


def frame_space_labels(embedding: Embedding, faces: Faces, frame: FrameLetters, element_ends: np.ndarray,
                       n_members: int, avoid=()) -> tuple[str, ...]:
    """Letters of a state's spaces taken from the frame's spaces (see the module docstring).

    ``frame``: ``frame_letters`` of the frame's embedding; ``element_ends``: (m, 2) node indices of each
    member. A space with no member of its own, or a second piece of a frame space cut by a force's ray,
    gets a letter after the frame's."""
    ours = np.flatnonzero(embedding.element < n_members)
    mids = embedding.element[ours] + np.clip(_piece_params(embedding, element_ends, ours, 0.5), 0, 1)
    match = np.minimum(np.searchsorted(frame.ends, mids), len(frame.ends) - 1)
    best = np.full(faces.count, np.iinfo(np.int64).max)
    np.minimum.at(best, faces.left[ours], frame.left[match])
    np.minimum.at(best, faces.right[ours], frame.right[match])
    own = np.empty(faces.count, dtype=np.int64)
    own[space_order(embedding, faces)] = np.arange(faces.count)
    extra = frame.count
    used: set[int] = set()
    final = np.empty(faces.count, dtype=np.int64)
    for f in np.lexsort((own, best)).tolist():  # frame order, then the state's own order for ties
        if best[f] < frame.count and int(best[f]) not in used:
            final[f] = best[f]
            used.add(int(best[f]))
        else:
            final[f] = extra
            extra += 1
    names = letter_sequence(extra, avoid)
    return tuple(names[r] for r in final.tolist())


def member_name(left: str, right: str) -> str:
    """The name of an edge by the two spaces it parts: 'AB', or 'AA-B' where a label has two letters."""
    a, b = sorted((left, right), key=lambda s: (len(s), s))
    return a + b if len(a) == len(b) == 1 else f"{a}-{b}"
