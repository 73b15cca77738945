"""Stage 2, analyse: Project -> Analysis (determinacy, every state, envelopes)."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import numpy as np

from sheets.analysis.determinacy import Determinacy, determinacy, self_stress_basis
from sheets.analysis.equilibrium import Equilibrium, project_equilibrium
from sheets.analysis.prestress import prestress_forces
from sheets.analysis.solvers import FrameSolver
from sheets.analysis.states import State, check_state, reactions_for
from sheets.cache import Remember, no_cache
from sheets.errors import MechanismError, Problem, ProjectError
from sheets.model.project import AXES, STANDARD_GRAVITY, LoadCase, Project

MECHANISM_LOAD_TOLERANCE = 1e-6  # load component along mechanisms / |load| that is refused

Progress = Callable[[str], None]


@dataclass(frozen=True)
class Envelope:
    """Per member, the largest tension and compression over the states it spans."""

    over: tuple[str, ...]  # state ids
    max_tension: np.ndarray  # (m,) N, >= 0
    max_tension_state: tuple[str, ...]
    max_compression: np.ndarray  # (m,) N, <= 0
    max_compression_state: tuple[str, ...]


@dataclass(frozen=True)
class Analysis:
    project: Project
    equilibrium: Equilibrium
    determinacy: Determinacy
    cases: tuple[State, ...]  # load cases, then the prestress state if any
    combinations: tuple[State, ...]
    envelope: Envelope

    @property
    def states(self) -> tuple[State, ...]:
        return self.cases + self.combinations

    def state(self, state_id: str) -> State:
        for s in self.states:
            if s.id == state_id:
                return s
        raise KeyError(state_id)

    def load_path(self, state: State) -> float:
        """Sum of |t_e| L_e (N m): proportional to material volume at constant stress."""
        return float(np.abs(state.forces) @ self.equilibrium.lengths)

    @property
    def passed(self) -> bool:
        det = self.determinacy
        return det.maxwell_holds and det.bases_verified and all(s.checks.passed for s in self.states)


def self_weight_loads(project: Project, case: LoadCase) -> np.ndarray:
    """Each member's weight rho g A L, half to each end node, along minus the vertical axis."""
    problems = []
    weights = np.zeros(project.n_members)
    lengths = project.lengths()
    for e, sid in enumerate(project.member_sections):
        section = project.sections.get(sid)
        rho_a = section.mass_per_length(project.materials) if section is not None else None
        if rho_a is None:
            problems.append(project.member_ids[e])
            continue
        weights[e] = rho_a * STANDARD_GRAVITY * lengths[e]
    if problems:
        shown = ", ".join(problems[:10]) + (" ..." if len(problems) > 10 else "")
        raise ProjectError([Problem(project.source, f"cases.{case.id}.self_weight",
                                    f"self-weight needs a section with an area and a material with a density for members {shown}",
                                    "give those sections area and material, and the material density, or set self_weight = false")])
    loads = np.zeros((project.n_nodes, project.dim))
    np.add.at(loads[:, project.vertical_axis], project.ends[:, 0], -weights / 2)
    np.add.at(loads[:, project.vertical_axis], project.ends[:, 1], -weights / 2)
    return loads


def case_self_weight(project: Project, case: LoadCase) -> np.ndarray:
    """The self-weight a case adds to its nodal loads (N); zero where the case asks for none."""
    if not case.self_weight:
        return np.zeros((project.n_nodes, project.dim))
    return self_weight_loads(project, case)


def _refuse_mechanism(project: Project, det: Determinacy, eq: Equilibrium, state_id: str, p_free: np.ndarray):
    modes = det.mechanism_modes
    if not modes.shape[1]:
        return
    norm = np.linalg.norm(p_free)
    along = modes.T @ p_free
    if norm == 0 or np.linalg.norm(along) <= MECHANISM_LOAD_TOLERANCE * norm:
        return
    mode = modes @ along
    mode /= np.abs(mode).max()
    free_dofs = np.flatnonzero(eq.free)
    order = np.argsort(-np.abs(mode))[:6]
    motions = tuple(
        (project.node_ids[free_dofs[i] // project.dim], AXES[free_dofs[i] % project.dim], float(mode[i]))
        for i in order
        if abs(mode[i]) > 1e-3
    )
    shown = ", ".join(f"{n} {'+' if v > 0 else '-'}{a}" for n, a, v in motions)
    remedy = ("The frame has no supports at all: fix its rigid-body motions under [supports]."
              if not project.fixed.any() else "Add members or supports that stop this motion.")
    raise MechanismError(
        state_id,
        f"state '{state_id}' pushes the frame along a mechanism ({det.mechanisms} in all; "
        f"{np.linalg.norm(along) / norm:.1%} of the load): largest motions {shown}. {remedy}",
        motions,
    )


def case_loads(project: Project, case: LoadCase) -> np.ndarray:
    """A case's nodal loads (n, dim) in N, its self-weight included."""
    loads = np.array(case.loads)
    if case.self_weight:
        loads = loads + self_weight_loads(project, case)
    return loads


def refuse_before_solving(project: Project, eq: Equilibrium, det: Determinacy) -> None:
    """Everything `analyse` would refuse, found without solving a case (so `sheets check` can say it).

    Raises ProjectError for a missing axial stiffness or a prestress that cannot be made (exit 2),
    then MechanismError for the cases that push the frame along a mechanism: all of them in one
    message, each worded as `analyse` words it (exit 3). Combinations are sums of cases, so a
    combination is refused only through one of its cases, as in `analyse`.
    """
    if det.self_stress > 0 or project.options.method == "elastic":
        _ea_or_error(project)
    if project.prestress is not None:
        prestress_forces(project, self_stress_basis(eq.free_matrix, det), eq.lengths)
    refused = []
    for case in project.cases:
        try:
            _refuse_mechanism(project, det, eq, case.id, case_loads(project, case).reshape(-1)[eq.free])
        except MechanismError as exc:
            refused.append(exc)
    if refused:
        first = refused[0]
        raise MechanismError(first.state_id, "\n  ".join(str(e) for e in refused), first.motions)


def _ea_or_error(project: Project) -> np.ndarray:
    ea = project.member_ea()
    missing = [project.member_ids[e] for e in np.flatnonzero(~np.isfinite(ea))]
    if missing:
        shown = ", ".join(missing[:10]) + (" ..." if len(missing) > 10 else "")
        raise ProjectError([Problem(project.source, "sections",
                                    f"the linear-elastic solution needs the axial stiffness EA of members {shown}",
                                    "give their sections an area and a material (or axial_stiffness)")])
    return ea


def _state(project, eq, kind, sid, title, loads, forces, d_free, method, factors=()) -> State:
    reactions = reactions_for(eq, forces, loads)
    displacements = None
    if d_free is not None:
        full = np.zeros(project.n_nodes * project.dim)
        full[eq.free] = d_free
        displacements = full.reshape(project.n_nodes, project.dim)
    checks = check_state(eq, project.coords, forces, loads, reactions, project.options.equilibrium_tolerance)
    return State(sid, kind, title, loads, forces, reactions, displacements, method, checks, factors)


def analyse(project: Project, progress: Progress | None = None, remember: Remember = no_cache) -> Analysis:
    """``remember``: a stage cache (sheets.cache); the determinacy, the costly part of a large frame,
    depends on the geometry and supports alone, so it is kept across changes of loads and sections."""
    note = progress or (lambda _msg: None)
    note("equilibrium matrix")
    eq = project_equilibrium(project)
    note("determinacy")
    opts = project.options
    det = remember("determinacy", (project.coords, project.ends, project.fixed, opts.rank_tolerance, opts.dense_limit),
                   lambda: determinacy(eq, opts.rank_tolerance, opts.dense_limit))
    needs_stiffness = det.self_stress > 0 or project.options.method == "elastic"
    ea = _ea_or_error(project) if needs_stiffness else project.member_ea()
    solver = FrameSolver(eq, det, ea, project.options.method)

    cases = []
    for case in project.cases:
        note(f"case {case.id}")
        loads = case_loads(project, case)
        p_free = loads.reshape(-1)[eq.free]
        _refuse_mechanism(project, det, eq, case.id, p_free)
        sol = solver.solve(p_free)
        cases.append(_state(project, eq, "case", case.id, case.title, loads, sol.forces, sol.displacements_free, sol.method))

    if project.prestress is not None:
        note("prestress")
        basis = self_stress_basis(eq.free_matrix, det)
        forces = prestress_forces(project, basis, eq.lengths)
        zero = np.zeros((project.n_nodes, project.dim))
        cases.append(_state(project, eq, "prestress", project.prestress.id, f"prestress ({project.prestress.method})",
                            zero, forces, None, "self-stress"))

    by_id = {s.id: s for s in cases}
    combos = []
    for combo in project.combinations:
        note(f"combination {combo.id}")
        parts = [(by_id[cid], f) for cid, f in combo.factors]
        loads = sum((f * s.loads for s, f in parts), np.zeros((project.n_nodes, project.dim)))
        forces = sum((f * s.forces for s, f in parts), np.zeros(project.n_members))
        # The geometry given is the prestressed one: the prestress state adds no displacement to it.
        moving = [(s, f) for s, f in parts if s.kind != "prestress"]
        has_d = all(s.displacements is not None for s, _ in moving) and solver.has_stiffness
        d_free = (sum((f * s.displacements.reshape(-1)[eq.free] for s, f in moving), np.zeros(int(eq.free.sum())))
                  if has_d and parts else None)
        combos.append(_state(project, eq, "combination", combo.id, combo.title, loads, forces, d_free,
                             "combination",
                             combo.factors))

    envelope = make_envelope(project, combos or cases)
    return Analysis(project, eq, det, tuple(cases), tuple(combos), envelope)


def make_envelope(project: Project, states) -> Envelope:
    ids = tuple(s.id for s in states)
    m = project.n_members
    if not states:
        zero = np.zeros(m)
        return Envelope(ids, zero, ("",) * m, zero, ("",) * m)
    table = np.array([s.forces for s in states])  # (states, m)
    it, ic = table.argmax(axis=0), table.argmin(axis=0)
    cols = np.arange(m)
    tension = np.maximum(table[it, cols], 0.0)
    compression = np.minimum(table[ic, cols], 0.0)
    return Envelope(
        ids,
        tension,
        tuple(ids[i] if tension[e] > 0 else "" for e, i in enumerate(it)),
        compression,
        tuple(ids[i] if compression[e] < 0 else "" for e, i in enumerate(ic)),
    )
