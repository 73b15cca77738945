"""Figures and mesh files: written atomically, deterministic where the renderer allows,
and carrying the ids; face areas re-measured by VTK (pyvista) after a round trip."""

import json

import numpy as np
import pytest

from sheets.analysis import analyse
from sheets.export.meshes import cells_mesh, obj_text, write_mesh
from sheets.reciprocal.cells import node_cells
from sheets.render.cells3d import cell_gallery_figure, node_cells_figure
from sheets.render.minkowski import minkowski_figure
from sheets.render.palette import COMPRESSION, TENSION

from polyhedral_frames import tripod_frame


def truss_2d(frame):
    coords = [[0, 0], [3, 0], [6, 0], [1.5, 2], [4.5, 2]]
    members = [(0, 1), (1, 2), (0, 3), (3, 1), (1, 4), (4, 2), (3, 4)]
    return frame(coords, members, {0: "xy", 2: "y"}, {"P": {3: [0, -10e3], 4: [2e3, -10e3]}})


def _has_colour(png_path, hex_colour, tol=40):
    from PIL import Image

    img = np.asarray(Image.open(png_path).convert("RGB")).reshape(-1, 3).astype(int)
    target = np.array([int(hex_colour[k:k + 2], 16) for k in (1, 3, 5)])
    return bool((np.abs(img - target).sum(axis=1) < tol).any())


def test_2d_figures_are_deterministic(frame, tmp_path):
    analysis = analyse(truss_2d(frame))
    for make in (node_cells_figure, minkowski_figure, cell_gallery_figure):
        a = make(analysis, "P", tmp_path / f"{make.__name__}_a.png")
        b = make(analysis, "P", tmp_path / f"{make.__name__}_b.png")
        assert a.read_bytes() == b.read_bytes()
        assert a.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    assert _has_colour(tmp_path / "minkowski_figure_a.png", TENSION)  # tension pieces
    assert _has_colour(tmp_path / "minkowski_figure_a.png", COMPRESSION, tol=60)  # compression pieces
    svg = minkowski_figure(analysis, "P", tmp_path / "view.svg")
    assert b"<svg" in svg.read_bytes()
    assert not list(tmp_path.glob(".*.part*"))  # no temporary files left behind


def test_3d_figures_render_off_screen(frame, tmp_path):
    analysis = analyse(tripod_frame(frame))
    sid = analysis.states[0].id
    for make in (node_cells_figure, minkowski_figure, cell_gallery_figure):
        out = make(analysis, sid, tmp_path / f"{make.__name__}.png")
        assert out.stat().st_size > 10_000
    assert _has_colour(tmp_path / "minkowski_figure.png", COMPRESSION, tol=90)


def test_meshes_carry_ids_and_areas(frame, tmp_path):
    import pyvista as pv

    project = tripod_frame(frame)
    analysis = analyse(project)
    cells = node_cells(analysis, analysis.states[0].id)
    mesh = cells_mesh(cells, project.coords, 1e-3)
    text = obj_text(mesh)
    assert "o N4" in text and "g N4/M1" in text and "g N4/external" in text
    write_mesh(mesh, tmp_path / "cells.obj")
    assert (tmp_path / "cells.obj").read_text() == text
    back = pv.read(write_mesh(mesh, tmp_path / "cells.vtp"))
    assert list(back.cell_data["owner"]) == list(mesh.owner)
    # VTK measures each face; area / scale^2 is the force the face stands for
    areas = back.compute_cell_sizes(length=False, volume=False).cell_data["Area"] / 1e-6
    for area, stands, node in zip(areas, back.cell_data["stands_for"], back.cell_data["owner"]):
        cell = cells.cell(str(node))
        k = [",".join(p.id if p.kind == "member" else "external" for p in parts) for parts in cell.parts].index(str(stands))
        assert area == pytest.approx(cell.expected[k], rel=1e-6)
    ply = write_mesh(mesh, tmp_path / "cells.ply")
    assert pv.read(ply).n_cells == len(mesh.faces)


@pytest.mark.slow
def test_gltf_export(frame, tmp_path):
    project = tripod_frame(frame)
    analysis = analyse(project)
    cells = node_cells(analysis, analysis.states[0].id)
    out = write_mesh(cells_mesh(cells, project.coords, 1e-3), tmp_path / "cells.gltf")
    doc = json.loads(out.read_text())
    assert doc["meshes"] and doc["accessors"]


def test_polyhedral_outputs_with_polar_diagram(tmp_path):
    from pathlib import Path

    from sheets.model.loading import load_project
    from sheets.render.minkowski import polyhedral_outputs

    analysis = analyse(load_project(Path(__file__).with_name("cell_with_centre.toml")))
    files = polyhedral_outputs(analysis, "PS", tmp_path, "PS", meshes=True)
    names = sorted(p.name for p in files)
    assert names == sorted(["PS-cells.png", "PS-cells-gallery.png", "PS-polar.png", "PS-minkowski.png",
                            "PS-cells.obj", "PS-cells.vtp", "PS-minkowski.obj", "PS-minkowski.vtp"])
    assert all(p.stat().st_size > 0 for p in files)
    assert "o M10" in (tmp_path / "PS-minkowski.obj").read_text()
