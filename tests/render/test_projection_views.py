"""3D frames on paper: an axis triad in every view, projections named, true forces on projected edges."""

import sys
from pathlib import Path

import numpy as np
import pytest

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "reciprocal"))
from reciprocal_frames import space_truss  # noqa: E402

from sheets.analysis import analyse  # noqa: E402
from sheets.model.schema import NAMED_DIRECTIONS  # noqa: E402
from sheets.reciprocal.diagram import force_diagram  # noqa: E402
from sheets.reciprocal.projection import plane_basis, plane_name  # noqa: E402
from sheets.render import diagram2d, palette  # noqa: E402
from sheets.render.form_figure import model_figure  # noqa: E402


@pytest.fixture
def truss(frame):
    project = space_truss(frame)
    analysis = analyse(project)
    return project, analysis, force_diagram(project, analysis.state("G"))


def _rgb(colour: str) -> np.ndarray:
    return np.array([int(colour[i:i + 2], 16) for i in (1, 3, 5)])


def test_every_3d_render_has_the_triad_in_its_corner(truss):
    from sheets.render.view3d import render_view

    _, _, diagram = truss
    for triad in (True, False):
        image, _ = render_view(diagram, "form", "axonometric", size=(320, 260), triad=triad)
        h, w = image.shape[:2]
        corner = image[int(0.75 * h):, int(0.8 * w):].reshape(-1, 3).astype(int)
        found = {axis: int((np.abs(corner - _rgb(c)).max(axis=1) <= 8).sum()) for axis, c in palette.AXIS_COLOURS.items()}
        if triad:
            assert all(n >= 5 for n in found.values()), found  # the three arrows, in their own colours
        else:
            assert not any(found.values()), found  # nothing else in the frame has those colours


def test_every_projected_panel_names_its_plane_and_has_a_triad(truss):
    project, _, _ = truss
    fig = model_figure(project)
    panels = [ax for ax in fig.axes if ax.get_title()]
    assert len(panels) == len(project.drawing.views)
    for ax, view in zip(panels, project.drawing.views):
        assert ax.get_title().endswith(plane_name(NAMED_DIRECTIONS[view]))
        triad = {t.get_text(): t.get_color() for t in ax.texts if t.get_text() in palette.AXIS_COLOURS}
        assert triad == palette.AXIS_COLOURS
    # plan: x right, y up, z towards the viewer (end-on), as the basis says (right-handed axes, common practice)
    plan = plane_basis(NAMED_DIRECTIONS["plan"])
    assert np.allclose(plan, [[1, 0, 0], [0, 1, 0]])
    assert plane_name((0, 0, 1)) == "projection onto the x-y plane"
    assert plane_name((0, -1, 0)) == "projection onto the x-z plane"
    assert plane_name((1, 0, 0)) == "projection onto the y-z plane"
    assert plane_name((1, -1, 1)).startswith("projection along (0.58, -0.58, 0.58)")


def test_one_scale_for_every_view_of_a_figure(truss):
    project, _, _ = truss
    fig = model_figure(project)
    panels = [ax for ax in fig.axes if ax.get_title()]
    inches_per_metre = set()
    for ax in panels:
        width_inches = ax.get_position().width * fig.get_size_inches()[0]
        x0, x1 = ax.get_xlim()
        inches_per_metre.add(round(width_inches / (x1 - x0), 9))
    assert len(inches_per_metre) == 1
    bars = [t for ax in panels for t in ax.texts if t.get_text().endswith("(every view)")]
    assert len(bars) == 1  # stated once


def test_a_projected_force_diagram_says_so_and_labels_true_forces(truss, tmp_path, monkeypatch):
    project, analysis, diagram = truss
    captured = []
    monkeypatch.setattr(diagram2d, "save_figure", lambda fig, path, fmt=None, dpi=200: captured.append(fig) or Path(path))
    diagram2d.form_force_figure(diagram, tmp_path / "d.png", labels_up_to=120)
    fig = captured[0]
    form, force = fig.axes[:2]
    titles = [t.get_text() for t in fig.texts if t.get_text().startswith(("Form diagram", "Force diagram"))]
    assert len(titles) == 2 and all("projection onto the x-y plane" in t for t in titles)
    assert "true force" in titles[1]
    factor = project.units.factor("force")
    forces = dict(zip(project.member_ids, np.asarray(analysis.state("G").forces) / factor))
    labelled = {}
    for text in force.texts:
        words = text.get_text().split()
        if len(words) == 2 and words[0] in forces:
            labelled[words[0]] = float(words[1])
    assert len(labelled) >= 10
    for mid, value in labelled.items():  # the member force t, not the projected length of its edge
        assert value == pytest.approx(forces[mid], rel=2e-3, abs=1e-9)
    # and the projection does shorten edges: a label giving the drawn length would fail the check above
    pts = diagram.embedding.projection.apply(diagram.points)
    drawn = np.linalg.norm(pts[diagram.faces.right] - pts[diagram.faces.left], axis=1)
    members = diagram.edge_element < project.n_members
    true = np.abs(diagram.graph.forces[diagram.edge_element[members]])
    assert (np.abs(drawn[members] - true) > 0.05 * true.max()).any()
    # an orthographic projection shortens a segment to |t| |P u| (P the plane's basis, u the member's unit
    # vector; common practice): the foreshortening the labels make up for
    coords = np.asarray(project.coords, dtype=float)
    ends = np.asarray(project.ends)[diagram.edge_element[members]]
    u = coords[ends[:, 1]] - coords[ends[:, 0]]
    u /= np.linalg.norm(u, axis=1)[:, None]
    shortened = true * np.linalg.norm(diagram.embedding.projection.apply(u), axis=1)
    assert drawn[members] == pytest.approx(shortened, rel=1e-9, abs=1e-9 * true.max())


@pytest.mark.slow
def test_the_force_cell_render_has_the_triad_too(truss, tmp_path):
    from PIL import Image

    from sheets.render.cells3d import node_cells_figure

    _, analysis, _ = truss
    path = node_cells_figure(analysis, "G", tmp_path / "cells.png")
    image = np.asarray(Image.open(path).convert("RGB")).astype(int)
    h, w = image.shape[:2]
    corner = image[int(0.7 * h):, int(0.76 * w):].reshape(-1, 3)
    for colour in palette.AXIS_COLOURS.values():
        assert (np.abs(corner - _rgb(colour)).max(axis=1) <= 8).sum() >= 5, colour


def test_the_sheet_caption_of_a_3d_frame_says_its_diagrams_are_projections(truss):
    from sheets.report import figures
    from sheets.report.templates import load_template

    _, analysis, _ = truss
    sources = tuple(s for s in figures.SOURCES if s.name == "form and force")
    found, notes = figures.collect_figures(analysis, load_template("a4-portrait"), workers=1, sources=sources)
    assert found and notes == ()
    assert all("projections onto the plane" in f.caption and "true force" in f.caption for f in found)
