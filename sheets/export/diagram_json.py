"""A force diagram as JSON, schema "sheets.diagram/1" (documented in docs/diagram-schema.md).

Values are SI (N, m) whatever the display units; every record carries the
user's ids (member, node, ``external:<node id>``). The text is deterministic:
keys in a fixed order, floats as Python's shortest round-trip repr.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from sheets.export.atomic import write_atomic
from sheets.export.json_text import json_text
from sheets.reciprocal.diagram import ForceDiagram

SCHEMA = "sheets.diagram/1"


def _vec(values) -> list[float]:
    return [float(v) + 0.0 for v in np.asarray(values, dtype=float).ravel()]  # + 0.0: no "-0.0"


def embedding_record(diagram: ForceDiagram) -> dict:
    """How the diagram was embedded: kind, planarisation, projection."""
    emb = diagram.embedding
    proj = emb.projection
    return {
        "kind": emb.kind,
        "planarised": emb.planarised,
        "note": emb.note,
        "projection": {
            "name": proj.name,
            "requested": None if proj.requested is None else _vec(proj.requested),
            "direction": None if proj.direction is None else _vec(proj.direction),
            "tilt_degrees": float(proj.tilt_degrees),
            "basis": [_vec(row) for row in proj.basis],
        },
    }


def scale_record(diagram: ForceDiagram) -> dict:
    return {"newtons_per_metre": float(diagram.scale), "force_scale": float(diagram.force_scale)}


def diagram_checks(diagram: ForceDiagram) -> dict:
    """Closure, polygon, parallelism and length errors of the drawn diagram."""
    emb = diagram.embedding
    return {
        "tolerance": diagram.tolerance,
        "closure_error": diagram.closure_error,
        "load_line_error": diagram.load_line_error,
        "largest_node_error": float(diagram.node_error.max(initial=0.0)),
        "largest_crossing_error": float(diagram.vertex_error[emb.n_nodes: emb.ideal].max(initial=0.0)),
        "largest_parallel_error_radians": float(diagram.parallel_error.max(initial=0.0)),
        "largest_length_error": float(diagram.length_error.max(initial=0.0)),
        "passed": diagram.passed,
    }


def diagram_document(diagram: ForceDiagram) -> dict:
    """The JSON-ready dictionary for one diagram."""
    graph, emb = diagram.graph, diagram.embedding
    crossing_name = {c.vertex: c.label for c in emb.crossings if not c.node}
    names = list(graph.node_ids) + [crossing_name.get(v, f"vertex {v}") for v in range(emb.n_nodes, emb.ideal)] + ["ideal"]
    m = graph.n_members
    elements = []
    for e, eid in enumerate(graph.element_ids):
        record = {"id": eid, "kind": graph.kinds[e], "force": float(graph.forces[e]), "vector": _vec(graph.vectors[e])}
        if e < m:
            record["from"] = graph.node_ids[graph.tails[e]]
            record["to"] = graph.node_ids[graph.heads[e]]
            record["parallel_error_radians"] = float(diagram.parallel_error[e])
            record["length_error"] = float(diagram.length_error[e])
        else:
            record["node"] = graph.node_ids[graph.tails[e]]
            record["load"] = _vec(graph.external_loads[e - m])
            record["reaction"] = _vec(graph.external_reactions[e - m])
        elements.append(record)
    labels = diagram.space_labels
    edges = [
        {
            "element": diagram.edge_ids[k],
            "piece": int(emb.segment[k]),
            "role": diagram.role[k],
            "form": [names[emb.tails[k]], names[emb.heads[k]]],
            "spaces": [labels[diagram.faces.left[k]], labels[diagram.faces.right[k]]],
            "bow": diagram.bow_names[k],
            "force": float(diagram.edge_forces[k]),
            "vector": _vec(diagram.drawn[k]),
            "error": float(diagram.edge_error[k]),
        }
        for k in range(diagram.n_edges)
    ]
    return {
        "schema": SCHEMA,
        "title": diagram.title,
        "state": {"id": diagram.state_id, "kind": diagram.state_kind, "title": diagram.state_title},
        "dimension": diagram.dim,
        "units": {"force": "N", "length": "m"},
        "embedding": embedding_record(diagram),
        "scale": scale_record(diagram),
        "spaces": [{"label": labels[f], "point": _vec(diagram.points[f])} for f in _label_order(labels)],
        "elements": elements,
        "edges": edges,
        "crossings": [
            {"label": c.label, "point": _vec(c.point), "elements": list(c.elements), "node": c.node or None}
            for c in emb.crossings
        ],
        "nodes": [{"id": nid, "polygon_error": float(diagram.node_error[i])} for i, nid in enumerate(graph.node_ids)],
        "checks": diagram_checks(diagram),
    }


def _label_order(labels) -> list[int]:
    return sorted(range(len(labels)), key=lambda f: (len(labels[f]), labels[f]))


def diagram_json(diagram: ForceDiagram) -> str:
    """The document as text: one top-level key per line group, one record per line."""
    return json_text(diagram_document(diagram), levels=1)


def write_diagram_json(diagram: ForceDiagram, path: str | Path) -> Path:
    """Write the diagram's JSON atomically; returns the path written."""
    return write_atomic(path, diagram_json(diagram))
