"""Form and force diagram of one state as a DXF drawing a CAD user can open (ezdxf).

- The form is drawn at true size in metres (3D lines for a 3D frame); the
  force diagram beside it at the diagram's round scale (``diagram.scale``
  newtons per metre of drawing), so every force edge can be measured.
- One layer per role and diagram: ``form-tension``, ``form-compression``,
  ``form-zero``, ``form-load``, ``form-reaction``, and the same with
  ``force-`` (plus ``force-load-reaction`` for a support that also carries a
  load: the diagram has one edge for their resultant); ``form-labels``,
  ``force-labels``, ``crossings`` and ``notes``. Layer colours are the
  project palette; line weights grow with |force|.
- Every line has a text label with the id of what it stands for (member id,
  ``P@node`` for a load, ``R@node`` for a reaction); Bow's-notation letters
  mark the spaces (capitals) and the force-diagram points (lower case).

The file is deterministic (ezdxf's fixed-metadata switch is turned on while it
is made and written, so no clock time or random GUID gets in).
"""

from __future__ import annotations

import io
from contextlib import contextmanager
from pathlib import Path

import ezdxf
import numpy as np
from ezdxf.enums import TextEntityAlignment

from sheets.export.atomic import write_atomic
from sheets.reciprocal.anchors import arrow_sides, space_anchors
from sheets.reciprocal.diagram import ForceDiagram
from sheets.render import palette

ROLE_COLOUR = {
    "tension": palette.TENSION,
    "compression": palette.COMPRESSION,
    "zero": palette.ZERO_FORCE,
    "load": palette.LOAD,
    "reaction": palette.REACTION,
    "load-reaction": palette.REACTION,
}
OTHER_LAYERS = {"form-labels": palette.LABEL, "force-labels": palette.LABEL, "crossings": palette.CROSSING, "notes": palette.LABEL}
LINEWEIGHTS = (0, 5, 9, 13, 15, 18, 20, 25, 30, 35, 40, 50, 53, 60, 70, 80, 90, 100, 106, 120, 140, 158, 200, 211)


def _rgb(colour: str) -> tuple[int, int, int]:
    return tuple(int(colour[i: i + 2], 16) for i in (1, 3, 5))


def _lineweight(force: float, largest: float) -> int:
    """DXF line weight (1/100 mm) nearest to the palette's width for this force."""
    mm100 = palette.line_width(force, largest) * 25.4 / 72 * 100
    return min(LINEWEIGHTS[1:], key=lambda w: abs(w - mm100))


@contextmanager
def _fixed_metadata():
    # ezdxf stamps the clock and random GUIDs into every file unless this switch is on;
    # it is turned on only while our document is made and written, then restored.
    before = ezdxf.options.write_fixed_meta_data_for_testing
    ezdxf.options.write_fixed_meta_data_for_testing = True
    try:
        yield
    finally:
        ezdxf.options.write_fixed_meta_data_for_testing = before


def _xyz(point) -> tuple[float, float, float]:
    p = [float(v) for v in np.asarray(point, dtype=float).ravel()]
    return (p[0], p[1], p[2] if len(p) > 2 else 0.0)


def _force_layer(role: str) -> str:
    return "force-load-reaction" if role == "load+reaction" else f"force-{role}"


def diagram_dxf(diagram: ForceDiagram) -> bytes:
    """The DXF text (UTF-8 bytes) of one diagram."""
    with _fixed_metadata():
        doc = ezdxf.new("R2010", setup=False)
        doc.units = ezdxf.units.M
        doc.header["$LWDISPLAY"] = 1
        for side in ("form", "force"):
            for role, colour in ROLE_COLOUR.items():
                if side == "form" and role == "load-reaction":
                    continue
                doc.layers.add(f"{side}-{role}").rgb = _rgb(colour)
        for name, colour in OTHER_LAYERS.items():
            doc.layers.add(name).rgb = _rgb(colour)
        msp = doc.modelspace()
        _form(msp, diagram)
        _force(msp, diagram)
        _notes(msp, diagram)
        stream = io.StringIO()
        doc.write(stream)
        return stream.getvalue().encode(doc.output_encoding)


def frame_dxf(project) -> bytes:
    """The frame alone, for CAD exchange: members as lines at true size in metres on one layer per
    group (``members`` for members with none), supports as points on ``supports-<axes>`` layers.
    ``sheets import`` reads it back to the same frame."""
    with _fixed_metadata():
        doc = ezdxf.new("R2010", setup=False)
        doc.units = ezdxf.units.M
        msp = doc.modelspace()
        for layer in sorted({g or "members" for g in project.member_groups}):
            doc.layers.add(layer)
        for (a, b), group in zip(project.ends.tolist(), project.member_groups):
            msp.add_line(_xyz(project.coords[a]), _xyz(project.coords[b]), dxfattribs={"layer": group or "members"})
        for n in np.flatnonzero(project.fixed.any(axis=1)).tolist():
            axes = "".join(axis for axis, fixed in zip("xyz", project.fixed[n]) if fixed)
            layer = f"supports-{axes}"
            if layer not in doc.layers:
                doc.layers.add(layer)
            msp.add_point(_xyz(project.coords[n]), dxfattribs={"layer": layer})
        stream = io.StringIO()
        doc.write(stream)
        return stream.getvalue().encode(doc.output_encoding)


def write_diagram_dxf(diagram: ForceDiagram, path: str | Path) -> Path:
    """Write the diagram's DXF atomically; returns the path written."""
    return write_atomic(path, diagram_dxf(diagram))


def _text_height(diagram: ForceDiagram) -> float:
    extent = float(np.ptp(diagram.graph.coords, axis=0).max()) or 1.0
    return 0.018 * extent


def _add_text(msp, text: str, at, height: float, layer: str):
    msp.add_text(text, height=height, dxfattribs={"layer": layer}).set_placement(_xyz(at), align=TextEntityAlignment.MIDDLE_CENTER)


def _arrow(msp, tail, head, layer: str, weight: int, size: float):
    tail, head = np.asarray(tail, float), np.asarray(head, float)
    msp.add_line(_xyz(tail), _xyz(head), dxfattribs={"layer": layer, "lineweight": weight})
    d = head - tail
    length = np.linalg.norm(d)
    if length <= 0:
        return
    d = d / length
    if len(d) == 2:
        side = np.array([-d[1], d[0]])
    else:
        side = np.cross(d, [0.0, 0.0, 1.0] if abs(d[2]) < 0.9 else [1.0, 0.0, 0.0])
        side /= np.linalg.norm(side)
    for s in (1, -1):
        msp.add_line(_xyz(head), _xyz(head - size * d + s * 0.4 * size * side), dxfattribs={"layer": layer, "lineweight": weight})


def _form(msp, diagram: ForceDiagram):
    graph = diagram.graph
    m = graph.n_members
    coords = graph.coords
    largest = diagram.force_scale
    height = _text_height(diagram)
    member_role = diagram.element_roles
    for e in range(m):
        a, b = coords[graph.tails[e]], coords[graph.heads[e]]
        weight = _lineweight(graph.forces[e], largest)
        msp.add_line(_xyz(a), _xyz(b), dxfattribs={"layer": f"form-{member_role[e]}", "lineweight": weight})
        _add_text(msp, graph.element_ids[e], (a + b) / 2, height, "form-labels")
    # external forces: arrows at their nodes, at the force diagram's scale
    sides = arrow_sides(diagram)
    for r, node in enumerate(graph.external_nodes.tolist()):
        x = coords[node]
        for part, kind, tag in ((graph.external_loads[r], "load", "P"), (graph.external_reactions[r], "reaction", "R")):
            size = float(np.linalg.norm(part))
            if size <= 1e-12 * largest:
                continue
            vec = part / diagram.scale
            tail, head = (x, x + vec) if sides[r] > 0 else (x - vec, x)
            _arrow(msp, tail, head, f"form-{kind}", _lineweight(size, largest), 2 * height)
            _add_text(msp, f"{tag}@{graph.node_ids[node]}", tail if sides[r] < 0 else head, height, "form-labels")
    _crossings(msp, diagram, height)
    if diagram.dim == 2:
        anchors = space_anchors(diagram)
        for f, label in enumerate(diagram.space_labels):
            if np.all(np.isfinite(anchors[f])):
                _add_text(msp, label, anchors[f], 1.3 * height, "form-labels")


def _crossings(msp, diagram: ForceDiagram, height: float):
    """Crossing vertices: in 2D at the crossing; in 3D at the point of each crossing member."""
    graph, emb = diagram.graph, diagram.embedding
    index = {eid: e for e, eid in enumerate(graph.element_ids)}
    for c in emb.crossings:
        if diagram.dim == 2:
            places = [c.point]
        else:
            places = []
            for eid in c.elements:
                e = index[eid]
                if e >= graph.n_members:
                    continue
                a, b = graph.coords[graph.tails[e]], graph.coords[graph.heads[e]]
                pa, pb = emb.points[graph.tails[e]], emb.points[graph.heads[e]]
                t = float(np.clip((c.point - pa) @ (pb - pa) / max((pb - pa) @ (pb - pa), 1e-300), 0, 1))
                places.append(a + t * (b - a))
        for place in places:
            msp.add_point(_xyz(place), dxfattribs={"layer": "crossings"})
            _add_text(msp, c.label, np.asarray(place, float) + np.r_[0.0, 1.2 * height, np.zeros(diagram.dim - 2)], 0.8 * height, "crossings")


def force_offset(diagram: ForceDiagram) -> np.ndarray:
    """Where the force diagram's drawing origin goes: to the right of the form with a gap."""
    coords = diagram.graph.coords
    lo, hi = coords.min(axis=0), coords.max(axis=0)
    pts = diagram.points / diagram.scale
    extent = float((hi - lo).max()) or 1.0
    offset = np.zeros(diagram.dim)
    offset[0] = hi[0] + 0.3 * extent - pts[:, 0].min(initial=0.0)
    offset[1:] = lo[1:] - pts[:, 1:].min(axis=0, initial=0.0) if len(pts) else 0.0
    return offset


def _force(msp, diagram: ForceDiagram):
    offset = force_offset(diagram)
    pts = diagram.points / diagram.scale + offset
    height = _text_height(diagram)
    largest = diagram.force_scale
    for k in range(diagram.n_edges):
        a, b = pts[diagram.faces.left[k]], pts[diagram.faces.right[k]]
        role = diagram.role[k]
        msp.add_line(_xyz(a), _xyz(b), dxfattribs={"layer": _force_layer(role), "lineweight": _lineweight(diagram.edge_forces[k], largest)})
        if np.linalg.norm(b - a) > 0.5 * height:
            _add_text(msp, _edge_tag(diagram, k), (a + b) / 2, 0.8 * height, "force-labels")
    for f, label in enumerate(diagram.space_labels):
        _add_text(msp, label.lower(), pts[f] + np.r_[0.0, 0.9 * height, np.zeros(diagram.dim - 2)], height, "force-labels")


def _edge_tag(diagram: ForceDiagram, k: int) -> str:
    role = diagram.role[k]
    if role in ("tension", "compression", "zero"):
        return diagram.edge_ids[k]
    node = diagram.edge_ids[k].split(":", 1)[1]
    return {"load": "P", "reaction": "R"}.get(role, "P+R") + "@" + node


def _notes(msp, diagram: ForceDiagram):
    units = diagram.units
    height = _text_height(diagram)
    lo = diagram.graph.coords.min(axis=0)
    per_metre = units.to_display(diagram.scale, "force")
    lines = [
        f"{diagram.title} - state {diagram.state_id}: {diagram.state_title}",
        f"form diagram in m; force diagram at 1 m = {per_metre:g} {units.label('force')} (to the right)",
        diagram.embedding.note,
        f"closure: largest edge error {diagram.closure_error:.1e}, load line {diagram.load_line_error:.1e} "
        f"(relative to the largest force); indicative graphic statics, not a code check",
    ]
    for i, line in enumerate(lines):
        at = np.r_[lo[0], lo[1] - (3 + 1.6 * i) * height, np.zeros(diagram.dim - 2)]
        msp.add_text(line, height=0.8 * height, dxfattribs={"layer": "notes"}).set_placement(_xyz(at), align=TextEntityAlignment.LEFT)
