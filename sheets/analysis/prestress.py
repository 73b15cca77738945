"""Prestress from the self-stress states (METHODS.md section 3).

A prestress is a self-stress t = S a: forces in equilibrium with no load.
"scaled": the single self-stress state scaled so one member carries a given
force. "feasible": a linear programme (scipy.optimize.linprog, HiGHS) finds
a with every cable in tension and every strut in compression by at least the
given level, at the least load path sum |t_e| L_e.
"""

from __future__ import annotations

import numpy as np

from sheets.errors import Problem, ProjectError
from sheets.model.project import Prestress, Project


def _error(project: Project, key: str, message: str, hint: str) -> ProjectError:
    return ProjectError([Problem(project.source, f"prestress.{key}" if key else "prestress", message, hint)])


def prestress_forces(project: Project, basis: np.ndarray, lengths: np.ndarray) -> np.ndarray:
    spec: Prestress = project.prestress
    s = basis.shape[1]
    if s == 0:
        raise _error(project, "", "the frame has no self-stress state, so it cannot be prestressed",
                     "add members (the frame must be statically indeterminate) or remove [prestress]")
    if spec.method == "scaled":
        if s != 1:
            raise _error(project, "method", f"the frame has {s} self-stress states; 'scaled' needs exactly one",
                         'use method = "feasible" with a level')
        e = project.member_ids.index(spec.member)
        if abs(basis[e, 0]) < 1e-9 * np.abs(basis[:, 0]).max():
            raise _error(project, "member", f"member '{spec.member}' carries no force in the self-stress state",
                         "name a member that the self-stress passes through")
        return basis[:, 0] * (spec.force / basis[e, 0])
    return _feasible(project, basis, lengths)


def _feasible(project: Project, basis: np.ndarray, lengths: np.ndarray) -> np.ndarray:
    from scipy.optimize import linprog  # imported here: `sheets check` of a frame without it starts faster

    spec = project.prestress
    roles = np.array(project.member_roles)
    cable, strut, bar = roles == "cable", roles == "strut", roles == "bar"
    if not (cable.any() or strut.any()):
        raise _error(project, "method", "feasible prestress needs members with role \"cable\" or \"strut\"",
                     "set the roles of the members whose sign is prescribed")
    m, s = basis.shape
    nb = int(bar.sum())
    # variables: a (s, free), w (nb, >= |t| of bars)
    cost = np.concatenate([(lengths[cable] @ basis[cable]) - (lengths[strut] @ basis[strut]), lengths[bar]])
    rows, rhs = [], []
    if cable.any():  # -(S a)_e <= -level
        rows.append(np.hstack([-basis[cable], np.zeros((cable.sum(), nb))]))
        rhs.append(np.full(cable.sum(), -spec.level))
    if strut.any():  # (S a)_e <= -level
        rows.append(np.hstack([basis[strut], np.zeros((strut.sum(), nb))]))
        rhs.append(np.full(strut.sum(), -spec.level))
    if nb:  # +-(S a)_e - w_e <= 0
        eye = np.eye(nb)
        rows.append(np.hstack([basis[bar], -eye]))
        rows.append(np.hstack([-basis[bar], -eye]))
        rhs.append(np.zeros(2 * nb))
    bounds = [(None, None)] * s + [(0, None)] * nb
    result = linprog(cost, A_ub=np.vstack(rows), b_ub=np.concatenate(rhs), bounds=bounds, method="highs")
    if result.status != 0:
        raise _error(project, "level", "no self-stress keeps every cable in tension and every strut in compression",
                     "check the member roles, or the frame cannot be prestressed as intended")
    return basis @ result.x[:s]
