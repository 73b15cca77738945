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
"""

from __future__ import annotations

import numpy as np

from sheets.reciprocal.embedding import Embedding
from sheets.reciprocal.faces import Faces, half_edge_tails


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


def space_labels(embedding: Embedding, faces: Faces) -> tuple[str, ...]:
    """Bow's-notation letter of each face, indexed by face."""
    labels = [""] * faces.count
    for rank, face in enumerate(space_order(embedding, faces)):
        labels[face] = letters(rank)
    return tuple(labels)


def member_name(left: str, right: str) -> str:
    """The name of an edge by the two spaces it parts: 'AB', or 'AA-B' where a label has two letters."""
    a, b = sorted((left, right), key=lambda s: (len(s), s))
    return a + b if len(a) == len(b) == 1 else f"{a}-{b}"
