"""Shared fixtures: build a Project straight from arrays, without a project file.

Tests of the analysis stage use ``frame(...)`` so they depend on the Project
value only, not on the file format (tests/model covers the files).
"""

from __future__ import annotations

from types import MappingProxyType

import numpy as np
import pytest

from sheets.model.project import (
    AXES,
    AnalysisOptions,
    Combination,
    LoadCase,
    Material,
    Prestress,
    Project,
    ProjectInfo,
    Section,
    frozen_array,
)
from sheets.model.units import DisplayUnits


def make_frame(
    coords,
    members,
    fixed,
    cases=None,
    *,
    ea=None,
    area=1.0e-3,
    elastic_modulus=200.0e9,
    density=None,
    self_weight=(),
    roles=None,
    combinations=(),
    prestress: Prestress | None = None,
    options: AnalysisOptions | None = None,
) -> Project:
    """A Project in SI from plain data.

    coords (n, dim); members [(i, j), ...] node indices; fixed {node index: "xy"}
    or an (n, dim) bool array; cases {id: (n, dim) loads or {node index: vector}};
    ea None (one section of ``area`` and ``elastic_modulus``) or EA per member;
    self_weight: ids of cases that add self-weight; combinations {id: {case: factor}}.
    Node ids are N1..Nn, member ids M1..Mm.
    """
    coords = np.asarray(coords, dtype=float)
    n, dim = coords.shape
    ends = np.asarray(members, dtype=np.int64).reshape(-1, 2)
    m = len(ends)
    if isinstance(fixed, dict):
        fixed_array = np.zeros((n, dim), dtype=bool)
        for node, axes in fixed.items():
            for axis in axes:
                fixed_array[node, AXES.index(axis)] = True
    else:
        fixed_array = np.asarray(fixed, dtype=bool).reshape(n, dim)
    materials = {"steel": Material("steel", elastic_modulus, None, density)}
    if ea is None:
        sections = {"S": Section("S", "steel", area)}
        member_sections = ("S",) * m
    else:
        ea = np.broadcast_to(np.asarray(ea, dtype=float), (m,))
        sections = {f"S{e + 1}": Section(f"S{e + 1}", None, None, axial_stiffness=float(ea[e])) for e in range(m)}
        member_sections = tuple(f"S{e + 1}" for e in range(m))
    load_cases = []
    for cid, loads in (cases or {}).items():
        array = np.zeros((n, dim))
        if isinstance(loads, dict):
            for node, vector in loads.items():
                array[node] += vector
        else:
            array[:] = loads
        load_cases.append(LoadCase(cid, f"case {cid}", frozen_array(array), cid in self_weight))
    combos = tuple(Combination(cid, f"combination {cid}", tuple(f.items())) for cid, f in dict(combinations).items())
    return Project(
        source="test-frame.toml",
        info=ProjectInfo(title="test frame"),
        units=DisplayUnits(),
        dim=dim,
        vertical_axis=dim - 1,
        node_ids=tuple(f"N{i + 1}" for i in range(n)),
        coords=frozen_array(coords),
        member_ids=tuple(f"M{e + 1}" for e in range(m)),
        ends=frozen_array(ends, dtype=np.int64),
        member_sections=member_sections,
        member_roles=tuple(roles) if roles is not None else ("bar",) * m,
        member_groups=("",) * m,
        materials=MappingProxyType(materials),
        sections=MappingProxyType(sections),
        fixed=frozen_array(fixed_array, dtype=bool),
        cases=tuple(load_cases),
        combinations=combos,
        prestress=prestress,
        options=options or AnalysisOptions(),
    )


@pytest.fixture(scope="session")
def frame():
    """The ``make_frame`` builder (session scope: hypothesis tests may use it)."""
    return make_frame
