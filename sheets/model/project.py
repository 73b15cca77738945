"""The Project value: everything the later stages need, in SI, frozen.

Ids are the user's strings and are kept in the order the file gives them;
arrays are indexed in that order. Arrays are made read-only on construction.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Mapping

import numpy as np

from sheets.model.units import DisplayUnits

AXES = ("x", "y", "z")
ROLES = ("bar", "cable", "strut")
STANDARD_GRAVITY = 9.80665  # m/s^2, the conventional standard value (CGPM 1901)


def frozen_array(values, dtype=float) -> np.ndarray:
    arr = np.array(values, dtype=dtype)
    arr.setflags(write=False)
    return arr


@dataclass(frozen=True)
class Revision:
    revision: str
    date: str
    note: str = ""


@dataclass(frozen=True)
class DesignBasis:
    """The engineer's design basis ([project.basis]), printed verbatim on the design basis sheet."""

    design_code: str = ""  # the code the user names; the software holds none
    assumptions: tuple[str, ...] = ()
    load_derivation: tuple[str, ...] = ()
    notes: tuple[str, ...] = ()


@dataclass(frozen=True)
class ProjectInfo:
    """What the title block of every sheet shows."""

    title: str
    number: str = ""
    client: str = ""
    calculation: str = ""
    revision: str = ""
    date: str = ""
    prepared_by: str = ""
    checked_by: str = ""
    status: str = ""
    template: str = "a4-portrait"
    revisions: tuple[Revision, ...] = ()
    basis: DesignBasis | None = None  # None: the project file gives no [project.basis]


@dataclass(frozen=True)
class Material:
    id: str
    elastic_modulus: float  # Pa
    yield_strength: float | None = None  # Pa
    density: float | None = None  # kg/m^3


@dataclass(frozen=True)
class Section:
    id: str
    material: str | None
    area: float | None  # m^2
    second_moment: float | None = None  # m^4
    axial_stiffness: float | None = None  # N, EA given directly
    # per buckling axis where the section is not the same both ways (m^4); None: second_moment
    second_moment_in_plane: float | None = None
    second_moment_out_of_plane: float | None = None

    def ea(self, materials: Mapping[str, Material]) -> float | None:
        if self.axial_stiffness is not None:
            return self.axial_stiffness
        if self.area is not None and self.material in materials:
            return self.area * materials[self.material].elastic_modulus
        return None

    def mass_per_length(self, materials: Mapping[str, Material]) -> float | None:
        """rho A (kg/m), for self-weight; None where the area or the material's density is not given."""
        material = materials.get(self.material) if self.material else None
        if self.area is None or material is None or material.density is None:
            return None
        return material.density * self.area


@dataclass(frozen=True)
class LoadCase:
    id: str
    title: str
    loads: np.ndarray  # (n_nodes, dim) N, nodal loads given in the file
    self_weight: bool = False


@dataclass(frozen=True)
class Combination:
    id: str
    title: str
    factors: tuple[tuple[str, float], ...]  # (case or prestress id, factor)
    purpose: str = ""  # "strength", "serviceability" or "" (untagged): which design checks use it


@dataclass(frozen=True)
class Prestress:
    """A self-stress state added as its own state, so combinations can factor it.

    ``method`` is "scaled" (the single self-stress state scaled so ``member``
    carries ``force``) or "feasible" (a linear programme finds a self-stress
    with cables in tension and struts in compression by at least ``level``).
    """

    id: str
    method: str
    level: float = 0.0  # N, for "feasible"
    member: str = ""  # for "scaled"
    force: float = 0.0  # N, for "scaled"


@dataclass(frozen=True)
class AnalysisOptions:
    # "auto": equilibrium alone where the frame is determinate, linear-elastic
    # compatibility where it is not; "elastic": always the stiffness method.
    method: str = "auto"
    rank_tolerance: float = 1e-8  # singular values below this x the largest count as zero
    equilibrium_tolerance: float = 1e-9  # largest nodal residual / largest force
    # members or free dofs above this take the sparse route; the full SVD costs O(n^3): about 0.05 s
    # at 500 members but 9 s at 2,000 here, where the sparse route takes 0.02 s (bench/README.md)
    dense_limit: int = 500


@dataclass(frozen=True)
class DrawingOptions:
    """How diagrams are drawn ([drawing] table)."""

    embedding: str = "geometric"  # "geometric" (angular order in the drawing) or "combinatorial"
    projection: tuple[float, ...] = (0.0, 0.0, 1.0)  # 3D: direction the frame is projected along
    projection_name: str = "plan"  # the name the user gave, or "custom"
    views: tuple[str, ...] = ("plan", "front", "side", "axonometric")
    minkowski_mix: float = 0.5  # s in (1-s) form + s force
    states: tuple[str, ...] = ()  # which cases/combinations to draw; empty = all


@dataclass(frozen=True)
class DesignOptions:
    """Factors for indicative member checks and sizing ([design] table).

    Nothing here has a built-in code value: a factor the file does not give
    leaves the check that needs it out, and the sheets say so.
    """

    partial_factor: float | None = None  # gamma on resistance
    effective_length_factor: float | None = None  # K for Euler buckling
    slenderness_limit: float | None = None  # L_b/r limit for compression members (L_b = K L or as given)
    tension_slenderness_limit: float | None = None  # L/r limit for tension members
    stress_limit: float | None = None  # Pa, for constant-stress sizing
    # compression: "euler" (min(A f_y, N_cr) / gamma) or "buckling_curve" (chi A f_y / gamma_b)
    compression_method: str = "euler"
    buckling_curve: str = ""  # the curve named in the file ("a0" .. "d"), if named
    imperfection_factor: float | None = None  # alpha of the buckling curve (given, or from the named curve)
    buckling_partial_factor: float | None = None  # gamma on the buckling resistance; None: partial_factor
    # (member or group id, K): overrides effective_length_factor; a member id wins over its group
    effective_length_factors: tuple[tuple[str, float], ...] = ()
    # (member or group id, in-plane length m or None, out-of-plane length m or None): buckling lengths
    buckling_lengths: tuple[tuple[str, float | None, float | None], ...] = ()
    deflection_limit: float | None = None  # n in span / n, for the serviceability check


@dataclass(frozen=True)
class PolyhedralInput:
    """The frame as a cell complex, for the polyhedral reciprocal ([polyhedral] table)."""

    cells: tuple[tuple[str, ...], ...] = ()  # each cell by its node ids
    find_tetrahedra: bool = False  # find the tetrahedral subdivision whose edges are the members
    heights: tuple[tuple[str, float], ...] = ()  # stress-function lift per node id (generative use)


@dataclass(frozen=True)
class Project:
    source: str  # the project file as the user named it
    info: ProjectInfo
    units: DisplayUnits
    dim: int
    vertical_axis: int  # index into AXES; self-weight acts along minus this axis
    node_ids: tuple[str, ...]
    coords: np.ndarray  # (n, dim) m
    member_ids: tuple[str, ...]
    ends: np.ndarray  # (m, 2) int node indices
    member_sections: tuple[str, ...]
    member_roles: tuple[str, ...]
    member_groups: tuple[str, ...]
    materials: Mapping[str, Material]
    sections: Mapping[str, Section]
    fixed: np.ndarray  # (n, dim) bool, True where the translation is fixed
    cases: tuple[LoadCase, ...]
    combinations: tuple[Combination, ...]
    prestress: Prestress | None = None
    options: AnalysisOptions = field(default_factory=AnalysisOptions)
    drawing: DrawingOptions = field(default_factory=DrawingOptions)
    design: DesignOptions = field(default_factory=DesignOptions)
    polyhedral: PolyhedralInput = field(default_factory=PolyhedralInput)
    fingerprint: str = ""  # sha256 of the project file and every file it includes
    inputs: tuple[str, ...] = ()  # the project file and every file it includes, as read

    @property
    def n_nodes(self) -> int:
        return len(self.node_ids)

    @property
    def n_members(self) -> int:
        return len(self.member_ids)

    @property
    def axes(self) -> tuple[str, ...]:
        return AXES[: self.dim]

    def lengths(self) -> np.ndarray:
        d = self.coords[self.ends[:, 1]] - self.coords[self.ends[:, 0]]
        return np.linalg.norm(d, axis=1)

    def member_ea(self) -> np.ndarray:
        """Axial stiffness EA per member (N); NaN where the section gives none."""
        values = [self.sections[s].ea(self.materials) if s in self.sections else None for s in self.member_sections]
        return np.array([np.nan if v is None else v for v in values], dtype=float)
