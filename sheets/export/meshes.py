"""Force cells and Minkowski pieces as mesh files, every face carrying its ids.

Formats by suffix:

- ``.obj`` (Wavefront OBJ, text, written here): one ``o`` object per node cell
  or member piece, a ``g`` group per face named after what it stands for
  (e.g. ``g N3/M12`` or ``g N3/external``), so ids survive any viewer;
- ``.vtp`` / ``.vtk`` (VTK, through pyvista): one mesh with cell data arrays
  ``owner`` (node or member id), ``stands_for`` (member ids of the face),
  ``force`` (N, signed for members) and ``kind``;
- ``.ply`` (through pyvista): geometry with integer ``owner_index`` and
  ``force`` cell data (PLY holds no text; the OBJ and VTK files carry the ids);
- ``.gltf`` / ``.glb`` (through pyvista's Plotter.export_gltf, off-screen):
  geometry and colours for web viewers.

Coordinates are in metres for Minkowski pieces and in sqrt(N) for bare cells
(face area = force in N). All writes are atomic (sheets.export.atomic).
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import numpy as np

from sheets.export.atomic import atomic_path, write_atomic
from sheets.reciprocal.cells import NodeCells
from sheets.reciprocal.minkowski_sum import MinkowskiView
from sheets.render import palette


@dataclass(frozen=True)
class MeshFaces:
    """A list of polygons in one coordinate space, each with what it stands for."""

    vertices: np.ndarray  # (k, 3)
    faces: tuple[tuple[int, ...], ...]
    owner: tuple[str, ...]  # node id (cells) or member id (pieces), per face
    stands_for: tuple[str, ...]  # member ids (comma separated) or "external", per face
    force: np.ndarray  # (f,) N, signed for members, |p| for external faces
    kind: tuple[str, ...]  # "cell", "member", "node", per face


def cells_mesh(cells: NodeCells, positions: np.ndarray | None = None, scale: float = 1.0) -> MeshFaces:
    """Closed node cells (3D) as one face list; each cell at ``positions[v]`` (default: all at the origin)."""
    verts, faces, owner, stands, force, kind = [], [], [], [], [], []
    offset = 0
    for v, cell in enumerate(cells.cells):
        if cell.kind != "cell":
            continue
        at = np.zeros(3) if positions is None else np.asarray(positions[v], dtype=float)
        verts.append(at + scale * np.asarray(cell.vertices))
        for k, loop in enumerate(cell.loops):
            if len(loop) < 3:
                continue
            faces.append(tuple(offset + x for x in loop))
            owner.append(cell.node)
            stands.append(",".join(p.id if p.kind == "member" else "external" for p in cell.parts[k]))
            members = [p.force for p in cell.parts[k] if p.kind == "member"]
            force.append(float(sum(members)) if members else float(cell.expected[k]))
            kind.append("cell")
        offset += len(cell.vertices)
    return _frozen(verts, faces, owner, stands, force, kind)


def pieces_mesh(view: MinkowskiView) -> MeshFaces:
    """Member prisms and node cells of a 3D Minkowski view."""
    if view.dim != 3:
        raise ValueError("mesh export of a Minkowski view needs a 3D frame")
    verts, faces, owner, stands, force, kind = [], [], [], [], [], []
    offset = 0
    for piece in view.members + view.nodes:
        if not len(piece.vertices) or not piece.loops:
            continue
        verts.append(piece.vertices)
        for loop in piece.loops:
            faces.append(tuple(offset + x for x in loop))
            owner.append(piece.id)
            stands.append(piece.id if piece.kind == "member" else "")
            force.append(piece.force)
            kind.append(piece.kind)
        offset += len(piece.vertices)
    return _frozen(verts, faces, owner, stands, force, kind)


def _frozen(verts, faces, owner, stands, force, kind) -> MeshFaces:
    v = np.vstack(verts) if verts else np.zeros((0, 3))
    return MeshFaces(v, tuple(faces), tuple(owner), tuple(stands), np.array(force, dtype=float), tuple(kind))


def obj_text(mesh: MeshFaces) -> str:
    lines = ["# sheets: force cells / Minkowski pieces; groups name what each face stands for"]
    lines += [f"v {x:.9g} {y:.9g} {z:.9g}" for x, y, z in mesh.vertices]
    current = None
    for face, owner, stands in zip(mesh.faces, mesh.owner, mesh.stands_for):
        if owner != current:
            lines.append(f"o {_safe(owner)}")
            current = owner
        lines.append(f"g {_safe(owner)}/{_safe(stands) or 'cell'}")
        lines.append("f " + " ".join(str(i + 1) for i in face))
    return "\n".join(lines) + "\n"


def _safe(name: str) -> str:
    return name.replace(" ", "_")


def _polydata(mesh: MeshFaces):
    import pyvista as pv

    flat = np.concatenate([[len(f), *f] for f in mesh.faces]).astype(np.int64) if mesh.faces else np.zeros(0, np.int64)
    poly = pv.PolyData(np.asarray(mesh.vertices, dtype=float), faces=flat)
    return poly


def write_mesh(mesh: MeshFaces, path) -> Path:
    """Write ``mesh`` in the format its suffix names (see the module notes)."""
    path = Path(path)
    suffix = path.suffix.lower()
    if suffix == ".obj":
        return write_atomic(path, obj_text(mesh))
    poly = _polydata(mesh)
    owners = sorted(set(mesh.owner))
    index = {o: k for k, o in enumerate(owners)}
    poly.cell_data["owner_index"] = np.array([index[o] for o in mesh.owner], dtype=np.int32)
    poly.cell_data["force"] = mesh.force
    if suffix in (".vtp", ".vtk"):
        poly.cell_data["owner"] = np.array(mesh.owner, dtype=str)
        poly.cell_data["stands_for"] = np.array(mesh.stands_for, dtype=str)
        poly.cell_data["kind"] = np.array(mesh.kind, dtype=str)
        with atomic_path(path) as tmp:
            poly.save(str(tmp), binary=False)
        return path
    if suffix == ".ply":
        with atomic_path(path) as tmp:
            poly.save(str(tmp), binary=True)
        return path
    if suffix in (".gltf", ".glb"):
        return _gltf(poly, mesh, path)
    raise ValueError(f"unknown mesh format '{suffix}' (use .obj, .vtp, .vtk, .ply, .gltf or .glb)")


def _gltf(poly, mesh: MeshFaces, path: Path) -> Path:
    from sheets.render.offscreen import offscreen_plotter

    largest = float(np.abs(mesh.force).max(initial=0.0))
    colours = [palette.force_colour(f, largest) if k != "node" else "#DDDDDD" for f, k in zip(mesh.force, mesh.kind)]
    rgb = np.array([[int(c[i:i + 2], 16) for i in (1, 3, 5)] for c in colours], dtype=np.uint8).reshape(-1, 3)
    poly = poly.triangulate()  # glTF holds triangles; triangulate keeps cell data per triangle
    poly.cell_data["rgb"] = rgb[poly.cell_data["vtkOriginalCellIds"]] if "vtkOriginalCellIds" in poly.cell_data else \
        _repeat_rgb(rgb, mesh)
    plotter = offscreen_plotter()
    plotter.add_mesh(poly, scalars="rgb", rgb=True)
    with atomic_path(path) as tmp:
        plotter.export_gltf(str(tmp))
    plotter.close()
    return path


def _repeat_rgb(rgb: np.ndarray, mesh: MeshFaces) -> np.ndarray:
    """Fan triangulation of a k-gon gives k - 2 triangles, in face order."""
    counts = np.array([len(f) - 2 for f in mesh.faces])
    return np.repeat(rgb, counts, axis=0)
