"""The equilibrium matrix A of a pin-jointed frame (METHODS.md section 1).

Column e holds -u_e in the rows of its start node i and +u_e in the rows of its
end node j, so that A t = p for tension-positive forces t and external nodal
loads p (Pellegrino & Calladine 1986, Int. J. Solids Struct. 22(4) 409-428).
Compatibility is the transpose: member elongations are A^T d.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp

from sheets.model.project import Project


@dataclass(frozen=True)
class Equilibrium:
    matrix: sp.csc_matrix  # (n*dim, m) all degrees of freedom, node-major (node, axis)
    free: np.ndarray  # (n*dim,) bool, True where the translation is not fixed
    lengths: np.ndarray  # (m,)
    unit: np.ndarray  # (m, dim) unit vectors start -> end

    @property
    def free_matrix(self) -> sp.csc_matrix:
        return self.matrix[self.free]

    @property
    def support_matrix(self) -> sp.csc_matrix:
        return self.matrix[~self.free]


def equilibrium_matrix(coords: np.ndarray, ends: np.ndarray, fixed: np.ndarray) -> Equilibrium:
    n, dim = coords.shape
    m = len(ends)
    delta = coords[ends[:, 1]] - coords[ends[:, 0]]
    lengths = np.linalg.norm(delta, axis=1)
    unit = delta / lengths[:, None]
    axes = np.arange(dim)
    rows = np.concatenate([(ends[:, 0, None] * dim + axes).ravel(), (ends[:, 1, None] * dim + axes).ravel()])
    cols = np.concatenate([np.repeat(np.arange(m), dim)] * 2)
    vals = np.concatenate([-unit.ravel(), unit.ravel()])
    matrix = sp.csc_matrix((vals, (rows, cols)), shape=(n * dim, m))
    return Equilibrium(matrix, ~fixed.reshape(-1), lengths, unit)


def project_equilibrium(project: Project) -> Equilibrium:
    return equilibrium_matrix(project.coords, project.ends, project.fixed)
