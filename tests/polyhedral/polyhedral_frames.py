"""Small frames shared by the polyhedral tests (invented geometry, test data only)."""

import numpy as np


def tripod_frame(frame):
    coords = [[0, 0, 0], [4, 0, 0], [1, 3.5, 0], [1.6, 1.2, 3], [2.5, 1.0, 2.0]]
    members = [(0, 3), (1, 3), (2, 3), (0, 4), (1, 4), (3, 4)]
    loads = {"G": {3: [1e3, 2e3, -30e3], 4: [3e3, -1e3, -10e3]}}
    return frame(coords, members, {0: "xyz", 1: "xyz", 2: "xyz"}, loads)


def prism(twist_degrees, radius=2.0, height=3.0):
    """Three-strut tensegrity prism: top triangle turned by ``twist`` against the bottom."""
    a = np.radians([0, 120, 240])
    b = a + np.radians(twist_degrees)
    bottom = np.column_stack([radius * np.cos(a), radius * np.sin(a), np.zeros(3)])
    top = np.column_stack([radius * np.cos(b), radius * np.sin(b), np.full(3, height)])
    coords = np.vstack([bottom, top])
    struts = [(0, 3), (1, 4), (2, 5)]
    rings = [(0, 1), (1, 2), (2, 0), (3, 4), (4, 5), (5, 3)]
    verticals = [(0, 5), (1, 3), (2, 4)]
    return coords, struts + rings + verticals, ["strut"] * 3 + ["cable"] * 9
