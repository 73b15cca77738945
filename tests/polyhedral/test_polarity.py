"""The polyhedral reciprocal by polarity (METHODS.md 7) against independent references.

"Polarities in structural analysis and design: n-dimensional graphic statics
and structural transformations", Int. J. Solids Struct. 152-153 (2018) 272-293; "The geometry of structural equilibrium",
R. Soc. Open Sci. 4 (2017) 160759.

References used: scipy.linalg.null_space of the equilibrium matrix (the
self-stress, computed without the polarity), the equilibrium matrix itself
(nodal equilibrium of the implied forces), scipy.spatial.Delaunay.
"""

import dataclasses
from pathlib import Path

import numpy as np
import pytest
from scipy.linalg import null_space
from scipy.spatial import Delaunay

from sheets.analysis import analyse
from sheets.analysis.equilibrium import equilibrium_matrix
from sheets.model.loading import load_project
from sheets.model.project import PolyhedralInput
from sheets.reciprocal.polarity import (
    ComplexError,
    build_complex,
    find_tetrahedra,
    fit_heights,
    polar_diagram,
    project_polarity,
)

TET = np.array([[0, 0, 0], [1, 0, 0], [0, 1, 0], [0, 0, 1], [0.2, 0.25, 0.22]], float)
TET_MEMBERS = np.array([(0, 1), (0, 2), (0, 3), (1, 2), (1, 3), (2, 3), (0, 4), (1, 4), (2, 4), (3, 4)])


def test_tetrahedron_with_interior_node_self_stress():
    # Ten members on five nodes in space: m - 3n + 6 = 1 self-stress (Maxwell's rule), found
    # here as the null space of the equilibrium matrix (no supports), independent of the polarity.
    tets = find_tetrahedra(TET, TET_MEMBERS)
    assert len(tets) == 4
    cx = build_complex(TET, TET_MEMBERS, tets)
    eq = equilibrium_matrix(TET, TET_MEMBERS, np.zeros((5, 3), bool))
    self_stress = null_space(eq.matrix.toarray())  # columns t with A t = 0
    assert self_stress.shape[1] == 1
    t_null = self_stress[:, 0]
    # corners on one plane (height 0), interior node lifted: no external force
    diagram = polar_diagram(TET, TET_MEMBERS, cx, np.array([0, 0, 0, 0, 1.0]))
    ratio = diagram.forces / t_null
    assert np.allclose(ratio, ratio[0], rtol=1e-9)
    assert np.abs(diagram.external).max() <= 1e-12 * np.abs(diagram.forces).max()
    assert diagram.perpendicularity < 1e-12
    # the dual polygon of each member lies in a plane perpendicular to it, with area |t|
    for e in range(len(TET_MEMBERS)):
        p = diagram.polygon(e)
        area = 0.5 * np.linalg.norm(np.cross(p, np.roll(p, -1, axis=0)).sum(axis=0))
        assert area == pytest.approx(abs(diagram.forces[e]), rel=1e-9)


def test_convex_lift_on_delaunay_mesh_is_in_equilibrium_at_interior_nodes():
    # Any lift gives forces in equilibrium at every interior node: checked with the
    # equilibrium matrix of sheets.analysis (A t = external), not with the polarity's own sums.
    rng = np.random.default_rng(3)
    corners = np.array([[x, y, z] for x in (0, 1) for y in (0, 1) for z in (0, 1)], float) * 4
    coords = np.vstack([corners, 0.5 + 3 * rng.random((12, 3))])
    tri = Delaunay(coords)
    edges = sorted({tuple(sorted((int(s[i]), int(s[j])))) for s in tri.simplices for i in range(4) for j in range(i + 1, 4)})
    ends = np.array(edges)
    cx = build_complex(coords, ends, find_tetrahedra(coords, ends))
    heights = 0.5 * np.sum((coords - 2.0) ** 2, axis=1) + rng.normal(scale=0.1, size=len(coords))
    diagram = polar_diagram(coords, ends, cx, heights)
    eq = equilibrium_matrix(coords, ends, np.zeros(coords.shape, bool))
    residual = (eq.matrix @ diagram.forces).reshape(-1, 3) - diagram.external
    scale = np.abs(diagram.forces).max()
    assert np.abs(residual).max() <= 1e-10 * scale
    interior = ~cx.boundary_nodes
    assert interior.any()
    assert np.abs(diagram.external[interior]).max() <= 1e-10 * scale
    assert diagram.perpendicularity < 1e-10


def test_fit_recovers_forces_of_a_lift_and_refuses_others():
    cx = build_complex(TET, TET_MEMBERS, find_tetrahedra(TET, TET_MEMBERS))
    target = polar_diagram(TET, TET_MEMBERS, cx, np.array([0.0, 0.3, -0.2, 0.1, 1.0])).forces
    fit = fit_heights(TET, TET_MEMBERS, cx, target)
    assert fit.fits and fit.misfit < 1e-8
    # forces in equilibrium with corner loads, but not of the polyhedral kind: no lift
    rng = np.random.default_rng(0)
    loaded = rng.normal(size=len(TET_MEMBERS)) * 10
    eq = equilibrium_matrix(TET, TET_MEMBERS, np.zeros((5, 3), bool))
    # make the interior node balanced by projecting out its residual (only corners loaded)
    a_int = eq.matrix.toarray()[12:15]
    loaded -= np.linalg.pinv(a_int) @ (a_int @ loaded)
    fit = fit_heights(TET, TET_MEMBERS, cx, loaded)
    assert not fit.fits
    assert "per-node cells" in fit.note


def test_find_tetrahedra_cube_of_five_and_refusals():
    # A cube split into five tetrahedra (a central regular one and four corners): the
    # Delaunay tetrahedralisation of the cospherical corners need not be this one, so the
    # 4-clique route has to find it. Closed form: volumes 1/3 (centre) + 4 x 1/6 = 1.
    cube = np.array([[x, y, z] for x in (0, 1) for y in (0, 1) for z in (0, 1)], float)
    centre = [0, 3, 5, 6]  # (0,0,0), (0,1,1), (1,0,1), (1,1,0)
    corners = [[1, 0, 3, 5], [2, 0, 3, 6], [4, 0, 5, 6], [7, 3, 5, 6]]
    tets = [centre] + corners
    edges = sorted({tuple(sorted((t[i], t[j]))) for t in tets for i in range(4) for j in range(i + 1, 4)})
    found = find_tetrahedra(cube, np.array(edges))
    assert sorted(tuple(sorted(t)) for t in found) == sorted(tuple(sorted(t)) for t in tets)
    with pytest.raises(ComplexError):
        find_tetrahedra(cube, np.array(edges[:-1]))
    with pytest.raises(ComplexError, match="not members"):
        build_complex(cube, np.array(edges[:-1]), tuple(tuple(t) for t in tets))


def test_project_file_generative_and_analysis_use():
    # The [polyhedral] table read from a project file (heights in m sqrt(kN) with the default units).
    path = Path(__file__).with_name("cell_with_centre.toml")
    project = load_project(path)
    analysis = analyse(project)
    generative = project_polarity(analysis, "PS")
    assert generative.use == "generative" and generative.usable
    # heights in m sqrt(kN): forces in kN are the dual areas; compare with the analysed self-stress
    ps = analysis.state("PS").forces
    ratio = generative.diagram.forces / ps
    assert np.allclose(ratio, ratio[0], rtol=1e-8)
    without_heights = dataclasses.replace(project, polyhedral=PolyhedralInput(find_tetrahedra=True))
    fitted = project_polarity(dataclasses.replace(analysis, project=without_heights), "PS")
    assert fitted.use == "analysis" and fitted.fit.fits
    assert np.allclose(fitted.diagram.forces, ps, rtol=1e-6, atol=1e-6 * np.abs(ps).max())
