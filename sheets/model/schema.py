"""The keys a project file may hold, table by table.

Kept as data so unknown keys can be reported with the nearest known one, and so
later stages add their tables in one place. See docs/project-file.md.
"""

from __future__ import annotations

TOP_LEVEL = (
    "project",
    "units",
    "geometry",
    "materials",
    "sections",
    "nodes",
    "members",
    "member_defaults",
    "supports",
    "cases",
    "combinations",
    "analysis",
    "prestress",
    "drawing",
    "design",
    "polyhedral",
)

PROJECT = (
    "title",
    "number",
    "client",
    "calculation",
    "revision",
    "date",
    "prepared_by",
    "checked_by",
    "status",
    "template",
    "revisions",
    "basis",
)
BASIS = ("design_code", "assumptions", "load_derivation", "notes")
REVISION = ("revision", "date", "note")
GEOMETRY = ("dimension", "vertical_axis", "nodes_file", "members_file")
MATERIAL = ("elastic_modulus", "yield_strength", "density")
SECTION = ("material", "area", "second_moment", "axial_stiffness", "second_moment_in_plane", "second_moment_out_of_plane")
MEMBER = ("ends", "section", "role", "group")
MEMBER_DEFAULTS = ("section", "role", "group")
CASE = ("title", "self_weight", "loads", "loads_file")
COMBINATION = ("title", "factors", "purpose")
PURPOSES = ("strength", "serviceability")
ANALYSIS = ("method", "rank_tolerance", "equilibrium_tolerance", "dense_limit")
PRESTRESS = ("id", "method", "level", "member", "force")
ANALYSIS_METHODS = ("auto", "elastic")
PRESTRESS_METHODS = ("scaled", "feasible")
DRAWING = ("embedding", "projection", "views", "minkowski_mix", "states")
EMBEDDINGS = ("geometric", "combinatorial")
NAMED_DIRECTIONS = {
    "plan": (0.0, 0.0, 1.0),
    "front": (0.0, -1.0, 0.0),
    "side": (1.0, 0.0, 0.0),
    "axonometric": (1.0, -1.0, 1.0),
}
DESIGN = ("partial_factor", "effective_length_factor", "slenderness_limit", "tension_slenderness_limit", "stress_limit",
          "compression_method", "buckling_curve", "imperfection_factor", "buckling_partial_factor",
          "effective_length_factors", "buckling_lengths", "deflection_limit")
COMPRESSION_METHODS = ("euler", "buckling_curve")
BUCKLING_CURVES = ("a0", "a", "b", "c", "d")  # EN 1993-1-1 Table 6.1 curve names
BUCKLING_LENGTH = ("in_plane", "out_of_plane")
POLYHEDRAL = ("cells", "find_tetrahedra", "heights")
