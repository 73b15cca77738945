"""The drawing plane a frame is embedded in: the plane itself in 2D, a projection in 3D.

A 3D frame is projected along ``project.drawing.projection`` (the direction
points towards the viewer) onto the plane normal to it, with in-plane axes
(e1, e2, d) right-handed and e2 as close to the frame's vertical axis as the
view allows: plan (0, 0, 1) shows x right and y up, front (0, -1, 0) x right
and z up, side (1, 0, 0) y right and z up.

Where two nodes fall on the same point of that plane (a vertical post seen in
plan) the angular order of edges there is undefined, so the direction is tilted
by the smallest of a few angles that separates every node, about a fixed
in-plane axis chosen not to line up with grid-aligned frames; the tilt is
stated on every figure and export.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from scipy.spatial import cKDTree

from sheets.model.project import frozen_array

TILTS_DEGREES = (1.0, 2.0, 3.0, 5.0, 8.0, 13.0)
TILT_AXIS_ANGLE = 0.37  # radians from e1: an in-plane axis no grid lines up with
SEPARATION = 1e-4  # least projected distance between nodes, x the frame extent


@dataclass(frozen=True)
class Projection:
    name: str  # "drawing plane" (2D), or the view name / "custom" (3D)
    requested: np.ndarray | None  # (3,) unit direction asked for; None in 2D
    direction: np.ndarray | None  # (3,) unit direction used (after any tilt)
    tilt_degrees: float
    basis: np.ndarray  # (2, dim) rows e1, e2: drawing coordinates are coords @ basis.T

    def apply(self, coords: np.ndarray) -> np.ndarray:
        return np.asarray(coords, dtype=float) @ self.basis.T

    @property
    def description(self) -> str:
        if self.direction is None:
            return "the frame's own plane"
        d = ", ".join(f"{v:.3g}" for v in self.requested)
        text = f"{self.name} projection along ({d})"
        if self.tilt_degrees:
            text += f", tilted {self.tilt_degrees:g} deg so that no two nodes coincide in the view"
        return text


def plane_basis(direction, vertical_axis: int = 2) -> np.ndarray:
    """(2, 3) rows e1, e2 of the plane normal to ``direction`` with (e1, e2, d) right-handed."""
    d = np.asarray(direction, dtype=float)
    d = d / np.linalg.norm(d)
    up = np.eye(3)[vertical_axis]
    if abs(up @ d) > 0.999:  # looking along the vertical: y up (x up if y is vertical)
        up = np.eye(3)[1 if vertical_axis != 1 else 0]
    e2 = up - (up @ d) * d
    e2 /= np.linalg.norm(e2)
    e1 = np.cross(e2, d)
    return np.vstack([e1, e2])


def _tilted(direction: np.ndarray, basis: np.ndarray, degrees: float) -> np.ndarray:
    axis = np.cos(TILT_AXIS_ANGLE) * basis[0] + np.sin(TILT_AXIS_ANGLE) * basis[1]
    a = np.radians(degrees)
    return np.cos(a) * direction + np.sin(a) * axis


def _separation(points: np.ndarray) -> float:
    if len(points) < 2:
        return np.inf
    distance, _ = cKDTree(points).query(points, k=2)
    return float(distance[:, 1].min())


def choose_projection(coords: np.ndarray, direction=(0.0, 0.0, 1.0), name: str = "plan", vertical_axis: int = 2) -> Projection:
    """The drawing plane for ``coords``: identity in 2D; in 3D the view along ``direction``, tilted if needed."""
    coords = np.asarray(coords, dtype=float)
    dim = coords.shape[1]
    if dim == 2:
        return Projection("drawing plane", None, None, 0.0, frozen_array(np.eye(2)))
    requested = np.asarray(direction, dtype=float) / np.linalg.norm(direction)
    basis = plane_basis(requested, vertical_axis)
    extent = float(np.ptp(coords, axis=0).max()) if len(coords) else 1.0
    need = SEPARATION * (extent or 1.0)
    best = (_separation(coords @ basis.T), 0.0, requested, basis)
    if best[0] < need:
        for degrees in TILTS_DEGREES:
            d = _tilted(requested, basis, degrees)
            b = plane_basis(d, vertical_axis)
            sep = _separation(coords @ b.T)
            if sep > best[0]:
                best = (sep, degrees, d, b)
            if sep >= need:
                break
    _, tilt, used, used_basis = best
    return Projection(name, frozen_array(requested), frozen_array(used), tilt, frozen_array(used_basis))


def plane_name(direction) -> str:
    """What a drawing along ``direction`` shows, in words: "projection onto the x-y plane" for a view along
    a global axis, else "projection along (dx, dy, dz)" (the axes named as in plane_basis, right then up)."""
    d = np.asarray(direction, dtype=float)
    d = d / np.linalg.norm(d)
    along = np.flatnonzero(np.abs(d) > 1 - 1e-9)
    if len(along):
        basis = plane_basis(d)
        right, up = (int(np.argmax(np.abs(row))) for row in basis)
        return f"projection onto the {'xyz'[right]}-{'xyz'[up]} plane"
    return "projection along (" + ", ".join(f"{v:.2g}" for v in d) + ")"
