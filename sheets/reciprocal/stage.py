"""Stage 3, reciprocal: every diagram of one state, built once.

``state_diagrams`` gathers what the figures and the results of a state need:
the reciprocal force diagram (section 5 of METHODS.md), the per-node force
cells (section 6), the polyhedral diagram by polarity where the project gives a
cell complex (section 7) and the Minkowski-sum view (section 8). Each is built
once here and handed to the render stage and the results document, so no
figure builds its diagram again. A diagram that cannot be built for a state is
left out with the reason, never faked.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass
from typing import Any, Iterable

from sheets.analysis import Analysis
from sheets.cache import Remember, content_key, no_cache, without_loads
from sheets.reciprocal.cells import NodeCells, node_cells
from sheets.reciprocal.diagram import ForceDiagram, force_diagram, frame_spaces
from sheets.reciprocal.minkowski_sum import MinkowskiView, minkowski_view
from sheets.reciprocal.polarity import CellComplex, ProjectPolarity, project_complex, project_polarity


@dataclass(frozen=True)
class StateDiagrams:
    state_id: str
    force: ForceDiagram | None
    cells: NodeCells | None
    polar: ProjectPolarity | None  # 3D frames with a [polyhedral] table
    minkowski: MinkowskiView | None
    problems: tuple[str, ...] = ()  # what could not be built, and why
    key: str = ""  # the content key of what they were built from, where a stage cache keyed them (for the figures)

    @property
    def polar_usable(self) -> bool:
        return self.polar is not None and self.polar.usable


def _attempt(what: str, build, problems: list[str]):
    try:
        return build()
    except Exception as exc:  # a diagram one state cannot have must not stop the others
        problems.append(f"{what}: {type(exc).__name__}: {exc}")
        return None


def state_diagrams(analysis: Analysis, state_id: str, complex_: CellComplex | None = None,
                   force: ForceDiagram | None = None, frame=None) -> StateDiagrams:
    """``force``: the state's force diagram where the caller has already built it; ``frame``: the
    frame's spaces for Bow's letters (``diagram.frame_spaces``), built once for all states."""
    project = analysis.project
    state = analysis.state(state_id)
    problems: list[str] = []
    if force is None:
        force = _attempt("force diagram", lambda: force_diagram(project, state, frame=frame), problems)
    cells = _attempt("force cells", lambda: node_cells(analysis, state_id), problems)
    polar = None
    if project.dim == 3 and (project.polyhedral.cells or project.polyhedral.find_tetrahedra):
        polar = _attempt("polyhedral diagram", lambda: project_polarity(analysis, state_id, complex_), problems)
    view = None
    if cells is not None:
        # 2D: the connected force diagram tiles the plane exactly; 3D: the polarity diagram's
        # shared polygons where it carries this state's forces, else each node's cell.
        planar = force if project.dim == 2 and force is not None and force.passed else None
        matching = polar.diagram if polar is not None and polar.matches_state else None
        view = _attempt("Minkowski-sum view", lambda: minkowski_view(analysis, cells, polar=matching, diagram=planar), problems)
    return StateDiagrams(state_id, force, cells, polar, view, tuple(problems))


def project_diagrams(analysis: Analysis, state_ids: Iterable[str], progress=None,
                     members_up_to: int | None = None, remember: Remember = no_cache) -> dict[str, StateDiagrams]:
    """The diagrams of the given states, the cell complex (if any) found once for all.

    ``members_up_to``: the sheet set's label limit. A larger frame's sheets show a force summary
    instead of its diagrams (sheets.render.force_summary), so none is built (minutes of work and
    hundreds of thousands of edges for a 20,000-member grid); each state says so in ``problems``.

    ``remember``: a stage cache (sheets.cache). A state's diagrams depend on the project without
    its loads, the state and the frame's spaces (Bow's letters, shared by every state), so a
    change of one case redoes only the states that case is part of.
    """
    note = progress or (lambda _m: None)
    project = analysis.project
    if members_up_to is not None and project.n_members > members_up_to:
        reason = (f"not built for the sheet set: {project.n_members} members is above its label limit of "
                  f"{members_up_to} (the sheets show a force summary); `sheets draw` builds and draws them")
        return {sid: StateDiagrams(sid, None, None, None, None, (reason,)) for sid in state_ids}
    complex_ = None
    if project.dim == 3 and (project.polyhedral.cells or project.polyhedral.find_tetrahedra):
        try:
            complex_ = project_complex(project)
        except Exception:  # reported per state by project_polarity, which tries again
            complex_ = None
    try:
        frame = frame_spaces(project)
    except Exception:  # each state's force diagram tries again and reports what fails
        frame = None
    design = content_key("project without loads", without_loads(project)) if remember is not no_cache else ""
    out = {}
    for sid in state_ids:
        note(f"diagrams: {sid}")
        # the key of what the diagrams depend on, made once: it labels them for the figures and keys the cache
        key = content_key("state diagrams", design, analysis.state(sid), frame) if remember is not no_cache else ""
        made = remember("state diagrams", (key,), lambda: state_diagrams(analysis, sid, complex_, frame=frame))
        out[sid] = dataclasses.replace(made, key=key)
    return out


def diagrams_results(analysis: Analysis, diagrams: dict[str, StateDiagrams], detail: bool) -> dict[str, Any]:
    """The numbers of every diagram for the results document (keys in docs/diagram-schema.md, docs/polyhedral.md)."""
    from sheets.reciprocal.summary import CONVENTION, cells_results, minkowski_results, polarity_results

    units = analysis.project.units
    states = {}
    for sid, d in diagrams.items():
        entry: dict[str, Any] = {"problems": list(d.problems)}
        if d.force is not None:
            entry["force_diagram"] = force_diagram_summary(d.force)
        if d.cells is not None:
            entry["node_cells"] = cells_results(d.cells, units, detail)
        if d.minkowski is not None:
            entry["minkowski"] = minkowski_results(d.minkowski, units)
        if d.polar is not None and d.polar.requested:
            entry["polarity"] = polarity_results(d.polar, analysis.project)
        states[sid] = entry
    return {"convention": CONVENTION, "states": states}


def force_diagram_summary(diagram: ForceDiagram) -> dict[str, Any]:
    """How the force diagram was drawn and how well it closes (the full geometry goes in the diagram JSON)."""
    from sheets.export.diagram_json import diagram_checks, embedding_record, scale_record

    emb = diagram.embedding
    return {
        "embedding": embedding_record(diagram),
        "scale": scale_record(diagram),
        "spaces": len(diagram.points),
        "edges": int(diagram.n_edges),
        "crossings": len(emb.crossings),
        "checks": diagram_checks(diagram),
    }
