"""Frames drawn in CAD (DXF) read into project files: round trips and hand-counted drawings.

The drawings are made here with ezdxf as a CAD user would draw them; the
expected nodes, members and supports are counted by hand from the drawing.
"""

from __future__ import annotations

from pathlib import Path

import ezdxf
import numpy as np
import pytest

from sheets.build import import_drawing
from sheets.cli import main
from sheets.errors import ProjectError
from sheets.export.dxf import frame_dxf
from sheets.model import load_project
from sheets.model.from_dxf import read_dxf_frame

DEMOS = Path(__file__).resolve().parents[2] / "demo_projects"


def _geometry(coords, ends, fixed_by_node):
    """The frame as sets of rounded coordinates: members as unordered end pairs, supports with their axes."""
    key = lambda p: tuple(np.round(np.asarray(p, float), 9) + 0.0)  # noqa: E731
    members = {frozenset((key(coords[a]), key(coords[b]))) for a, b in ends}
    return {key(p) for p in coords}, members, {key(coords[n]): axes for n, axes in fixed_by_node.items()}


def _project_geometry(project):
    fixed = {n: "".join(a for a, f in zip("xyz", project.fixed[n]) if f) for n in np.flatnonzero(project.fixed.any(axis=1))}
    return _geometry(project.coords, project.ends.tolist(), fixed)


@pytest.mark.parametrize("demo", ["warehouse_roof/warehouse_roof.toml", "market_canopy/market_canopy.toml"])
def test_round_trip_gives_back_the_same_frame(tmp_path, demo):
    original = load_project(DEMOS / demo)
    drawing = tmp_path / "frame.dxf"
    drawing.write_bytes(frame_dxf(original))
    imported = load_project(_imported(drawing, tmp_path / "imported.toml"))
    assert imported.dim == original.dim
    assert (imported.n_nodes, imported.n_members) == (original.n_nodes, original.n_members)
    assert _project_geometry(imported) == _project_geometry(original)


def _imported(drawing: Path, target: Path, **options) -> Path:
    import_drawing(drawing, target, **options)
    return target


def _cad_drawing(path: Path, units: int = 4):
    """A 2D truss drawn in millimetres as a CAD user would: a polyline top chord, a bottom chord
    drawn as one long line with web members ending on it, one line drawn twice, text, and
    support blocks on a layer of its own."""
    doc = ezdxf.new("R2010")
    doc.header["$INSUNITS"] = units
    msp = doc.modelspace()
    for name in ("chords", "web", "pins", "notes"):
        doc.layers.add(name)
    block = doc.blocks.new("PIN")
    block.add_circle((0, 0), 50)
    # bottom chord: one line 0..8000 mm; web members land on it at 2000, 4000, 6000
    msp.add_line((0, 0), (8000, 0), dxfattribs={"layer": "chords"})
    msp.add_lwpolyline([(0, 0), (2000, 1000), (4000, 2000), (6000, 1000), (8000, 0)], dxfattribs={"layer": "chords"})
    for x, h in ((2000, 1000), (4000, 2000), (6000, 1000)):
        msp.add_line((x, 0), (x, h), dxfattribs={"layer": "web"})
    msp.add_line((2000, 1000), (4000, 0), dxfattribs={"layer": "web"})
    msp.add_line((4000, 0), (6000, 1000), dxfattribs={"layer": "web"})
    msp.add_line((6000, 1000), (4000, 0), dxfattribs={"layer": "web"})  # drawn twice, reversed
    msp.add_text("TRUSS T1", dxfattribs={"layer": "notes"})
    msp.add_blockref("PIN", (0, 0), dxfattribs={"layer": "pins"})
    msp.add_blockref("PIN", (8000, 0), dxfattribs={"layer": "pins"})
    doc.saveas(path)


def test_a_cad_drawing_counted_by_hand(tmp_path):
    drawing = tmp_path / "truss.dxf"
    _cad_drawing(drawing)
    frame = read_dxf_frame(drawing, member_layers=("chords", "web"), support_layers={"pins": "xy"})
    # nodes: 5 on the bottom chord (0, 2, 4, 6, 8 m) and 3 top nodes
    assert frame.dim == 2 and len(frame.node_ids) == 8
    # members: bottom chord split into 4, top chord 4 segments, 3 verticals, 2 diagonals (one drawn twice)
    assert len(frame.member_ids) == 4 + 4 + 3 + 2
    assert frame.unit == "mm"
    assert np.allclose(np.ptp(frame.coords, axis=0), [8.0, 2.0])  # millimetres converted to metres
    supported = {tuple(np.round(frame.coords[frame.node_ids.index(n)], 9)): axes for n, axes in frame.supports.items()}
    assert supported == {(0.0, 0.0): "xy", (8.0, 0.0): "xy"}
    assert any("split" in note for note in frame.notes) and any("repeated" in note for note in frame.notes)
    # the web layer's members keep their layer as the group
    assert frame.member_layers.count("web") == 5


def test_the_written_project_solves_like_the_hand_truss(tmp_path):
    """Loads added to the imported file give the forces of the method of joints on the drawn truss.

    10 kN down at the apex (4, 2) m, a pin at (0, 0) and a roller at (8, 0): each support carries
    5 kN. At the left support the top chord rises 1 in 2 (sin a = 1/sqrt 5), so vertical equilibrium
    gives F sin a + 5 = 0, F = -5 sqrt 5 = -11.180 kN, and horizontal equilibrium gives the bottom
    chord T = -F cos a = 10 kN (closed form, method of joints)."""
    from sheets.analysis import analyse

    drawing = tmp_path / "truss.dxf"
    _cad_drawing(drawing)
    target = _imported(drawing, tmp_path / "truss.toml", member_layers=("chords", "web"), support_layers={"pins": "xy"})
    project = load_project(target)
    node_at = lambda x, y: next(n for n, p in zip(project.node_ids, project.coords) if np.allclose(p, [x, y]))  # noqa: E731
    text = target.read_text(encoding="utf-8")
    text = text.replace("[cases.G]\n", f"[cases.G]\nloads.{node_at(4, 2)} = [0, -10]\n")
    text = text.replace(f'{node_at(8, 0)} = "xy"', f'{node_at(8, 0)} = "y"')  # the right pin slides
    target.write_text(text, encoding="utf-8")
    analysis = analyse(load_project(target))
    state = analysis.state("G")

    def force(a, b):
        ends = [set(e) for e in project.ends.tolist()]
        return state.forces[ends.index({project.node_ids.index(node_at(*a)), project.node_ids.index(node_at(*b))})]

    assert force((0, 0), (2, 1)) == pytest.approx(-5e3 * np.sqrt(5), rel=1e-9)
    assert force((0, 0), (2, 0)) == pytest.approx(10e3, rel=1e-9)


def test_a_drawing_without_units_is_refused_unless_they_are_given(tmp_path):
    drawing = tmp_path / "plain.dxf"
    _cad_drawing(drawing, units=0)
    with pytest.raises(ProjectError) as err:
        read_dxf_frame(drawing)
    assert str(drawing) in str(err.value) and "--unit" in str(err.value)
    frame = read_dxf_frame(drawing, member_layers=("chords", "web"), support_layers={"pins": "xy"}, unit="mm")
    assert np.allclose(np.ptp(frame.coords, axis=0), [8.0, 2.0])


def test_a_support_off_the_frame_is_named(tmp_path):
    drawing = tmp_path / "off.dxf"
    _cad_drawing(drawing)
    doc = ezdxf.readfile(drawing)
    doc.modelspace().add_point((5000, 5000), dxfattribs={"layer": "pins"})
    doc.saveas(drawing)
    with pytest.raises(ProjectError) as err:
        read_dxf_frame(drawing, member_layers=("chords", "web"), support_layers={"pins": "xy"})
    assert "(5.0, 5.0" in str(err.value) and "no member end" in str(err.value)


def test_import_never_writes_over_a_file(tmp_path, capsys):
    drawing = tmp_path / "truss.dxf"
    _cad_drawing(drawing)
    target = tmp_path / "mine.toml"
    target.write_text("my own notes\n", encoding="utf-8")
    code = main(["import", str(drawing), "--out", str(target), "--member-layer", "chords", "--support-layer", "pins=xy"])
    assert code == 2
    assert target.read_text(encoding="utf-8") == "my own notes\n"
    assert "exists already" in capsys.readouterr().err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["mine.toml", "truss.dxf"]  # no temporary file left


def test_cli_import_and_errors(tmp_path, capsys):
    drawing = tmp_path / "truss.dxf"
    _cad_drawing(drawing)
    target = tmp_path / "new.toml"
    assert main(["import", str(drawing), "--out", str(target), "--member-layer", "chords", "--member-layer", "web",
                 "--support-layer", "pins=xy"]) == 0
    assert "8 nodes, 13 members, 2 supported nodes" in " ".join(capsys.readouterr().out.split())
    assert load_project(target).n_members == 13
    junk = tmp_path / "junk.dxf"
    junk.write_bytes(b"\x00\x01 not a drawing")
    assert main(["import", str(junk), "--out", str(tmp_path / "x.toml")]) == 2
    err = capsys.readouterr().err
    assert "junk.dxf" in err and "Traceback" not in err
    assert main(["import", str(drawing), "--out", str(tmp_path / "y.toml"), "--member-layer", "chord"]) == 2
    err = " ".join(capsys.readouterr().err.split())
    assert "no layer named 'chord'" in err and "did you mean 'chords'?" in err
    assert not (tmp_path / "x.toml").exists() and not (tmp_path / "y.toml").exists()
