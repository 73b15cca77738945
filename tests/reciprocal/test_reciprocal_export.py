"""Diagram exports: JSON (schema sheets.diagram/1) and DXF, read back with independent readers.

The JSON is read with the standard library; the DXF with ezdxf's reader
(``ezdxf.readfile``), and its lines are measured against the analysed forces
at the drawing's scale.
"""

import json

import ezdxf
import numpy as np
import pytest

from reciprocal_frames import interior_loaded_panel, king_post, space_truss
from sheets.analysis import analyse
from sheets.export.diagram_json import SCHEMA, diagram_json, write_diagram_json
from sheets.export.dxf import diagram_dxf, force_offset, write_diagram_dxf
from sheets.reciprocal.diagram import force_diagram


@pytest.fixture
def king_post_diagram(frame):
    project = king_post(frame)
    return force_diagram(project, analyse(project).state("L"))


def test_json_carries_every_id_and_reproduces_the_diagram(king_post_diagram, tmp_path):
    d = king_post_diagram
    path = write_diagram_json(d, tmp_path / "kp.diagram.json")
    doc = json.loads(path.read_text(encoding="utf-8"))
    assert doc["schema"] == SCHEMA == "sheets.diagram/1"
    assert doc["units"] == {"force": "N", "length": "m"}
    assert [e["id"] for e in doc["elements"]] == list(d.graph.element_ids)
    assert {e["element"] for e in doc["edges"]} == set(d.graph.element_ids)
    points = {s["label"]: np.array(s["point"]) for s in doc["spaces"]}
    for edge in doc["edges"]:  # each edge joins its two spaces' points and equals its vector
        left, right = edge["spaces"]
        np.testing.assert_allclose(points[right] - points[left], edge["vector"], atol=1e-9)
    members = {e["id"]: e for e in doc["elements"] if e["kind"] == "member"}
    for k, mid in enumerate(d.graph.element_ids[: d.graph.n_members]):
        assert members[mid]["force"] == pytest.approx(d.graph.forces[k])
    assert doc["checks"]["passed"] is True and doc["checks"]["closure_error"] < 1e-9
    assert diagram_json(d) == diagram_json(d)  # deterministic text


def test_json_lists_crossings_with_the_elements_through_them(frame):
    project = interior_loaded_panel(frame)
    d = force_diagram(project, analyse(project).state("L"))
    doc = json.loads(diagram_json(d))
    assert doc["crossings"] and all(len(c["elements"]) >= 2 for c in doc["crossings"])
    assert any("external:N5" in c["elements"] for c in doc["crossings"])
    assert doc["embedding"]["planarised"] is True


def test_dxf_layers_lines_and_labels(king_post_diagram, tmp_path):
    d = king_post_diagram
    path = write_diagram_dxf(d, tmp_path / "kp.dxf")
    doc = ezdxf.readfile(path)
    layers = {layer.dxf.name for layer in doc.layers}
    for name in ("form-tension", "form-compression", "form-load", "form-reaction", "force-tension",
                 "force-compression", "force-load", "force-reaction", "form-labels", "force-labels"):
        assert name in layers
    msp = doc.modelspace()
    force_lines = [e for e in msp.query("LINE") if e.dxf.layer.startswith("force-")]
    assert len(force_lines) == d.n_edges
    # every force line is the analysed force at the drawing's scale, beside the form
    lengths = sorted(np.linalg.norm(np.subtract(e.dxf.end, e.dxf.start)) * d.scale for e in force_lines)
    np.testing.assert_allclose(lengths, sorted(np.abs(d.edge_forces)), rtol=1e-9)
    texts = {e.dxf.text for e in msp.query("TEXT")}
    assert set(d.graph.element_ids[: d.graph.n_members]) <= texts
    assert {label.lower() for label in d.space_labels} <= texts
    assert diagram_dxf(d) == diagram_dxf(d)  # deterministic bytes
    assert force_offset(d)[0] > d.graph.coords[:, 0].max()


def test_dxf_of_a_3d_frame_has_3d_lines(frame, tmp_path):
    project = space_truss(frame)
    d = force_diagram(project, analyse(project).state("G"))
    doc = ezdxf.readfile(write_diagram_dxf(d, tmp_path / "st.dxf"))
    form = [e for e in doc.modelspace().query("LINE") if e.dxf.layer in ("form-tension", "form-compression", "form-zero")]
    assert len(form) == project.n_members
    assert any(abs(e.dxf.start[2] - e.dxf.end[2]) > 0 for e in form)
