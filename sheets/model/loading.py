"""Read a project file (TOML, plus any CSV files it names) into a Project.

Every problem is collected in one pass and raised together as a ProjectError;
each names the file, the key path, the line where known, and what to do.
"""

from __future__ import annotations

import csv
import datetime
import difflib
import hashlib
import io
import math
import re
import sys
from pathlib import Path
from types import MappingProxyType
from typing import Any, Callable

import numpy as np

from sheets.errors import Problem, ProjectError
from sheets.model import schema
from sheets.model.locate import KeyLines
from sheets.model.nearby import close_pairs
from sheets.model.project import (
    AXES,
    ROLES,
    AnalysisOptions,
    Combination,
    DesignBasis,
    DesignOptions,
    DrawingOptions,
    PolyhedralInput,
    LoadCase,
    Material,
    Prestress,
    Project,
    ProjectInfo,
    Revision,
    Section,
    frozen_array,
)
from sheets.model.units import KINDS, MAX_MAGNITUDE, DisplayUnits, UnitProblem, parse_value, si_factor

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

Path_ = tuple[str, ...]


class _Reader:
    """Collects problems while the file is read; knows where keys are."""

    def __init__(self, path: Path, text: str):
        self.path = path
        self.file = str(path)
        self.lines = KeyLines(text)
        self.problems: list[Problem] = []
        self.hash = hashlib.sha256(text.encode("utf-8"))
        self.inputs: list[str] = [str(path)]  # every file read, for `sheets build --watch`
        # ("nodes" | "members", id) -> (file, line) of a CSV row; TOML entries are found by key path
        self.csv_origin: dict[tuple[str, str], tuple[str, int]] = {}

    def problem(self, where: Path_, message: str, hint: str = "", *, file: str | None = None, line: int | None = None):
        if file is None:
            file, line = self.file, self.lines.line(where)
        if not hint:  # every problem says where to look, at least
            hint = f"see [{where[0]}] in docs/project-file.md" if where else "see docs/project-file.md"
        self.problems.append(Problem(file, ".".join(where), message, hint, line))

    def table(self, data: Any, where: Path_, *, required: bool = False) -> dict:
        if data is None:
            if required:
                self.problem(where[:-1], f"missing table [{'.'.join(where)}]", f"add a [{'.'.join(where)}] table")
            return {}
        if not isinstance(data, dict):
            self.problem(where, f"expected a table, got {type(data).__name__}", "see docs/project-file.md for its form")
            return {}
        return data

    def known_keys(self, data: dict, allowed: tuple[str, ...], where: Path_):
        for key in data:
            if key not in allowed:
                near = difflib.get_close_matches(key, allowed, n=1)
                hint = f"did you mean '{near[0]}'?" if near else f"allowed keys: {', '.join(allowed)}"
                self.problem(where + (key,), f"unknown key '{key}'", hint)

    def text(self, data: dict, key: str, where: Path_, default: str = "", *, required: bool = False) -> str:
        if key not in data:
            if required:
                self.problem(where, f"missing '{key}'", f"add {key} = \"...\"")
            return default
        value = data[key]
        if isinstance(value, (str, int, float)) and not isinstance(value, bool):
            return str(value)
        # TOML dates parse to datetime.date: keep their ISO text
        if hasattr(value, "isoformat"):
            return value.isoformat()
        self.problem(where + (key,), f"expected text, got {value!r}")
        return default

    def choice(self, table: dict, key: str, allowed: tuple[str, ...], default: str, where: Path_, what: str) -> str:
        value = table.get(key, default)
        if value not in allowed:
            self.problem(where + (key,), f"unknown {what} {value!r}", f"use one of {', '.join(allowed)}")
            return default
        return value

    def quantity(self, value: Any, kind: str, units: DisplayUnits, where: Path_) -> float | None:
        try:
            return parse_value(value, kind, units.unit(kind))
        except UnitProblem as exc:
            self.problem(where, str(exc), f"give a number in {units.label(kind)} or a string like \"1.5 {units.label(kind)}\"")
            return None

    def positive(self, value: float | None, where: Path_, what: str) -> float | None:
        if value is not None and value <= 0:
            self.problem(where, f"{what} must be positive, got {value:g} (SI)")
            return None
        return value


def load_project(path: str | Path) -> Project:
    """Read and validate a project file; raise ProjectError listing every problem."""
    path = Path(path)
    try:
        raw = path.read_bytes()
    except OSError as exc:
        raise ProjectError([Problem(str(path), "", f"cannot read the project file: {exc.strerror or exc}", "check the path")])
    try:
        text = raw.decode("utf-8")
    except UnicodeDecodeError as exc:
        raise ProjectError([Problem(str(path), "", f"not UTF-8 text ({exc.reason} at byte {exc.start})", "save the file as UTF-8")])
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        # tomllib puts the place in the message: "... (at line 3, column 7)"
        found = re.search(r"\(at line (\d+), column \d+\)", str(exc))
        line = int(found.group(1)) if found else None
        msg = str(exc)
        raise ProjectError([Problem(str(path), "", f"not valid TOML: {msg}", "fix the syntax at that line", line)])
    except ValueError as exc:  # Python's own limit on integer digits, raised through tomllib
        raise ProjectError([Problem(str(path), "", f"cannot read a value: {exc}", "an integer of thousands of digits "
                                    "is surely a slip: write the number with an exponent, e.g. 1.5e3")])
    reader = _Reader(path, text)
    project = _build(reader, data)
    if reader.problems or project is None:
        raise ProjectError(reader.problems)
    return project


def _build(r: _Reader, data: dict) -> Project | None:
    r.known_keys(data, schema.TOP_LEVEL, ())
    units = _units(r, data)
    info = _info(r, data)
    geometry = r.table(data.get("geometry"), ("geometry",))
    r.known_keys(geometry, schema.GEOMETRY, ("geometry",))
    dim = geometry.get("dimension", 2)
    if dim not in (2, 3) or isinstance(dim, bool):
        r.problem(("geometry", "dimension"), f"dimension must be 2 or 3, got {dim!r}", "dimension = 2 for a plane frame, 3 for a space frame")
        dim = 2
    vertical = geometry.get("vertical_axis", "y" if dim == 2 else "z")
    if vertical not in AXES[:dim]:
        r.problem(("geometry", "vertical_axis"), f"vertical_axis must be one of {', '.join(AXES[:dim])}, got {vertical!r}")
        vertical = AXES[dim - 1]

    materials = _materials(r, data, units)
    sections = _sections(r, data, units, materials)
    node_ids, coords = _nodes(r, data, geometry, dim, units)
    node_index = {nid: i for i, nid in enumerate(node_ids)}
    members = _members(r, data, geometry, node_index, sections)
    _check_geometry(r, node_ids, coords, members)
    fixed = _supports(r, data, node_index, dim)
    cases = _cases(r, data, node_index, dim, units)
    _check_self_weight(r, cases, members, sections, materials)
    prestress = _prestress(r, data, units, {m[0] for m in members})
    combinations = _combinations(r, data, {c.id for c in cases} | ({prestress.id} if prestress else set()))
    options = _options(r, data)
    drawing = _drawing(r, data, dim, {c.id for c in cases} | {c.id for c in combinations} | ({prestress.id} if prestress else set()))
    design = _design(r, data, units)
    _check_design_ids(r, design, members)
    polyhedral = _polyhedral(r, data, node_index, dim)
    if r.problems:
        return None
    return Project(
        source=r.file,
        info=info,
        units=units,
        dim=dim,
        vertical_axis=AXES.index(vertical),
        node_ids=tuple(node_ids),
        coords=frozen_array(coords),
        member_ids=tuple(m[0] for m in members),
        ends=frozen_array([(node_index[m[1]], node_index[m[2]]) for m in members], dtype=np.int64).reshape(-1, 2),
        member_sections=tuple(m[3] for m in members),
        member_roles=tuple(m[4] for m in members),
        member_groups=tuple(m[5] for m in members),
        materials=MappingProxyType(materials),
        sections=MappingProxyType(sections),
        fixed=frozen_array(fixed, dtype=bool),
        cases=tuple(cases),
        combinations=tuple(combinations),
        prestress=prestress,
        options=options,
        drawing=drawing,
        design=design,
        polyhedral=polyhedral,
        fingerprint=r.hash.hexdigest(),
        inputs=tuple(dict.fromkeys(r.inputs)),
    )


def _units(r: _Reader, data: dict) -> DisplayUnits:
    table = r.table(data.get("units"), ("units",))
    r.known_keys(table, tuple(KINDS), ("units",))
    chosen = {k: v[1] for k, v in KINDS.items()}
    for kind, unit in table.items():
        if kind not in KINDS:
            continue
        if not isinstance(unit, str):
            r.problem(("units", kind), f"expected a unit name, got {unit!r}", f"e.g. {kind} = \"{KINDS[kind][1]}\"")
            continue
        try:
            si_factor(unit, kind)
        except UnitProblem as exc:
            r.problem(("units", kind), str(exc), f'e.g. {kind} = "{KINDS[kind][1]}"')
            continue
        chosen[kind] = unit
    return DisplayUnits(MappingProxyType(chosen))


def _info(r: _Reader, data: dict) -> ProjectInfo:
    where = ("project",)
    table = r.table(data.get("project"), where, required=True)
    r.known_keys(table, schema.PROJECT, where)
    revisions = []
    raw_revisions = table.get("revisions", [])
    if not isinstance(raw_revisions, list):
        r.problem(where + ("revisions",), "expected a list of revision tables", "use [[project.revisions]] blocks")
        raw_revisions = []
    for i, rev in enumerate(raw_revisions):
        w = where + ("revisions", str(i))
        rev = r.table(rev, w)
        r.known_keys(rev, schema.REVISION, w)
        revisions.append(Revision(r.text(rev, "revision", w, required=True), _calendar_date(r, rev, "date", w, required=True), r.text(rev, "note", w)))
    fields = {k: r.text(table, k, where) for k in schema.PROJECT if k not in ("revisions", "title", "template", "date", "basis")}
    fields["date"] = _calendar_date(r, table, "date", where)
    return ProjectInfo(
        title=r.text(table, "title", where, required=bool(table)),
        template=r.text(table, "template", where, "a4-portrait"),
        revisions=tuple(revisions),
        basis=_basis(r, table.get("basis"), where + ("basis",)),
        **fields,
    )


def _plain_number(value: Any) -> float | None:
    """A TOML number (no unit) as a float, or None: not a number, a boolean, NaN, infinite, or
    beyond ±MAX_MAGNITUDE (an int too large for a float among them: float() would overflow)."""
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return None
    if isinstance(value, int) and abs(value) > MAX_MAGNITUDE:
        return None
    number = float(value)
    return number if math.isfinite(number) and abs(number) <= MAX_MAGNITUDE else None


_ISO_DATE = re.compile(r"\d{4}-\d{2}-\d{2}")
_DATE_HINT = "write an ISO 8601 calendar date, year-month-day: date = 2026-03-02 (or \"2026-03-02\")"


def _calendar_date(r: _Reader, table: dict, key: str, where: Path_, *, required: bool = False) -> str:
    """An ISO 8601 calendar date (YYYY-MM-DD) as text: a TOML date, or a string of that form naming a
    real day. Sheets and revision tables print it as given, so "3/2/26" would be read two ways."""
    if key not in table or (table[key] == "" and not required):
        if required:
            r.problem(where, f"missing '{key}'", _DATE_HINT)
        return ""
    value = table[key]
    if isinstance(value, datetime.datetime):  # a subclass of date: test it first
        r.problem(where + (key,), f"expected a date alone, got the date and time {value.isoformat()}", _DATE_HINT)
    elif isinstance(value, datetime.date):
        return value.isoformat()
    elif isinstance(value, str) and _ISO_DATE.fullmatch(value.strip()):
        try:
            return datetime.date.fromisoformat(value.strip()).isoformat()
        except ValueError:
            r.problem(where + (key,), f"{value!r} is not a day of the calendar", _DATE_HINT)
    else:
        r.problem(where + (key,), f"expected an ISO 8601 date (YYYY-MM-DD), got {value!r}", _DATE_HINT)
    return ""


def _basis(r: _Reader, data: Any, where: Path_) -> DesignBasis | None:
    """[project.basis]: the code the user names and their assumptions, kept as written."""
    if data is None:
        return None
    table = r.table(data, where)
    r.known_keys(table, schema.BASIS, where)

    def lines(key: str) -> tuple[str, ...]:
        value = table.get(key, [])
        if isinstance(value, str):  # one paragraph given as text
            value = [value]
        if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
            r.problem(where + (key,), f"expected text or a list of texts, got {value!r}",
                      f'e.g. {key} = ["first point", "second point"]')
            return ()
        return tuple(v.strip() for v in value if v.strip())

    return DesignBasis(
        design_code=r.text(table, "design_code", where).strip(),
        assumptions=lines("assumptions"),
        load_derivation=lines("load_derivation"),
        notes=lines("notes"),
    )


def _materials(r: _Reader, data: dict, units: DisplayUnits) -> dict[str, Material]:
    out = {}
    for mid, table in r.table(data.get("materials"), ("materials",)).items():
        w = ("materials", mid)
        table = r.table(table, w)
        r.known_keys(table, schema.MATERIAL, w)
        if "elastic_modulus" not in table:
            r.problem(w, "missing 'elastic_modulus'", 'add elastic_modulus = "210 GPa" (or your material\'s value)')
            continue
        e = r.positive(r.quantity(table["elastic_modulus"], "stress", units, w + ("elastic_modulus",)), w + ("elastic_modulus",), "elastic_modulus")
        fy = r.positive(r.quantity(table["yield_strength"], "stress", units, w + ("yield_strength",)), w + ("yield_strength",), "yield_strength") if "yield_strength" in table else None
        rho = r.positive(r.quantity(table["density"], "density", units, w + ("density",)), w + ("density",), "density") if "density" in table else None
        if e is not None:
            out[mid] = Material(mid, e, fy, rho)
    return out


def _sections(r: _Reader, data: dict, units: DisplayUnits, materials: dict) -> dict[str, Section]:
    out = {}
    kinds = {"area": "area", "second_moment": "second_moment", "axial_stiffness": "force",
             "second_moment_in_plane": "second_moment", "second_moment_out_of_plane": "second_moment"}
    declared_materials = data["materials"] if isinstance(data.get("materials"), dict) else {}  # read, problems or not
    for sid, table in r.table(data.get("sections"), ("sections",)).items():
        w = ("sections", sid)
        table = r.table(table, w)
        r.known_keys(table, schema.SECTION, w)
        values = {
            key: r.positive(r.quantity(table[key], kind, units, w + (key,)), w + (key,), key) if key in table else None
            for key, kind in kinds.items()
        }
        material = table.get("material")
        if material is not None and not isinstance(material, str):
            r.problem(w + ("material",), f"expected a material id, got {material!r}", 'e.g. material = "steel"')
            material = None
        elif material is not None and material not in materials and material not in declared_materials:
            near = difflib.get_close_matches(str(material), list(materials), n=1)
            r.problem(w + ("material",), f"unknown material '{material}'", f"did you mean '{near[0]}'?" if near else "define it under [materials]")
        if values["area"] is None and values["axial_stiffness"] is None and "area" not in table and "axial_stiffness" not in table:
            r.problem(w, "a section needs 'area' (with a material) or 'axial_stiffness'", 'add area = "1200 mm^2"')
        out[sid] = Section(sid, material, values["area"], values["second_moment"], values["axial_stiffness"],
                           values["second_moment_in_plane"], values["second_moment_out_of_plane"])
    return out


def _csv_rows(r: _Reader, name: Any, where: Path_, columns: tuple[str, ...], optional: tuple[str, ...] = ()):
    """Yield (line number, row dict) from a CSV file the project names; problems name the CSV."""
    if not isinstance(name, str):
        r.problem(where, f"expected a file name, got {name!r}")
        return
    path = (r.path.parent / name)
    try:
        raw = path.read_bytes()
    except OSError as exc:
        r.problem(where, f"cannot read '{name}': {exc.strerror or exc}", "the path is relative to the project file")
        return
    r.hash.update(b"\0" + name.encode() + b"\0" + raw)
    r.inputs.append(str(path))
    text = _csv_text(r, raw, name, where, str(path))
    if text is None:
        return
    reader = csv.DictReader(io.StringIO(text))
    try:
        header = [h.strip() for h in (reader.fieldnames or [])]
    except csv.Error as exc:
        r.problem(where, f"'{name}' cannot be read as CSV: {exc}", "check the quoting of the first line", file=str(path), line=1)
        return
    reader.fieldnames = header
    missing = [c for c in columns if c not in header]
    if missing:
        r.problem(where, f"'{name}' lacks the column(s) {', '.join(missing)}", f"the first line must name the columns: {', '.join(columns + optional)}", file=str(path), line=1)
        return
    unknown = [c for c in header if c not in columns + optional]
    for c in unknown:
        r.problem(where, f"'{name}' has an unknown column '{c}'", f"allowed: {', '.join(columns + optional)}", file=str(path), line=1)
    rows = iter(reader)
    while True:
        try:
            row = next(rows)
        except StopIteration:
            return
        except csv.Error as exc:  # e.g. a field longer than the csv module's limit
            r.problem(where, f"'{name}' cannot be read as CSV here: {exc}", "check the quoting on this line",
                      file=str(path), line=reader.line_num)
            return
        if not any((v or "").strip() for v in row.values() if isinstance(v, str)):
            continue
        if None in row or None in row.values():  # DictReader's marks for too many / too few values
            count = len(header) + len(row.get(None) or []) - sum(v is None for v in row.values())
            r.problem(where, f"'{name}' has {count} values on this line, its header names {len(header)} columns",
                      f"give one value per column: {', '.join(header)}", file=str(path), line=reader.line_num)
        yield reader.line_num, str(path), {k: (v or "").strip() for k, v in row.items() if k is not None}


def _csv_text(r: _Reader, raw: bytes, name: str, where: Path_, file: str) -> str | None:
    """A CSV file's text, or None after a problem with its line: not UTF-8, or NUL characters
    (a spreadsheet's binary file named in place of its CSV export, most often)."""
    if b"\0" in raw:
        r.problem(where, f"'{name}' holds NUL bytes: a binary file, not CSV text",
                  "export it from the spreadsheet as CSV, UTF-8", file=file, line=raw[:raw.index(b"\0")].count(b"\n") + 1)
        return None
    try:
        return raw.decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        r.problem(where, f"'{name}' is not UTF-8 text ({exc.reason} at byte {exc.start})",
                  "export it from the spreadsheet as CSV, UTF-8", file=file, line=raw[:exc.start].count(b"\n") + 1)
        return None


def _coordinate_vector(r: _Reader, value: Any, dim: int, units: DisplayUnits, where: Path_, kind: str, file=None, line=None):
    if not isinstance(value, (list, tuple)) or len(value) != dim:
        r.problem(where, f"expected {dim} components [{', '.join(AXES[:dim])}], got {value!r}", f"give one value per axis, e.g. [{', '.join(['0'] * dim)}]", file=file, line=line)
        return None
    out = []
    for axis, v in zip(AXES, value):
        try:
            out.append(parse_value(v, kind, units.unit(kind)))
        except UnitProblem as exc:
            r.problem(where, f"{axis}: {exc}", f"give a number in {units.label(kind)} or a string with a unit", file=file, line=line)
            return None
    return out


def _nodes(r: _Reader, data: dict, geometry: dict, dim: int, units: DisplayUnits):
    ids: list[str] = []
    coords: list[list[float]] = []
    seen: dict[str, str] = {}
    # A node whose coordinates cannot be read stays known (already reported), so
    # members and loads naming it are not reported again as naming an unknown node.
    unreadable = [math.nan] * dim

    def add(nid: str, xyz, where: Path_, file=None, line=None):
        if not nid:
            r.problem(where, "a node has an empty id", "give every node an id", file=file, line=line)
            return
        if nid in seen:
            r.problem(where, f"duplicate node id '{nid}' (also at {seen[nid]})", "give every node its own id", file=file, line=line)
            return
        seen[nid] = f"{file or r.file}:{line or r.lines.line(where)}"
        if file is not None:
            r.csv_origin[("nodes", nid)] = (file, line)
        ids.append(nid)
        coords.append(xyz)

    if "nodes_file" in geometry:
        cols = ("id",) + AXES[:dim]
        for line, file, row in _csv_rows(r, geometry["nodes_file"], ("geometry", "nodes_file"), cols):
            xyz = _coordinate_vector(r, [row[a] for a in AXES[:dim]], dim, units, ("geometry", "nodes_file"), "length", file, line)
            add(row["id"], xyz or unreadable, ("geometry", "nodes_file"), file, line)
    for nid, value in r.table(data.get("nodes"), ("nodes",)).items():
        xyz = _coordinate_vector(r, value, dim, units, ("nodes", nid), "length")
        add(nid, xyz or unreadable, ("nodes", nid))
    if not ids and not r.problems:
        r.problem(("nodes",), "the project has no nodes", "add a [nodes] table or geometry.nodes_file")
    return ids, np.array(coords, dtype=float).reshape(-1, dim)


def _members(r: _Reader, data: dict, geometry: dict, node_index: dict, sections: dict):
    defaults = r.table(data.get("member_defaults"), ("member_defaults",))
    r.known_keys(defaults, schema.MEMBER_DEFAULTS, ("member_defaults",))
    declared_sections = set(r.table(data.get("sections"), ("sections",)))
    out = []
    seen: dict[str, str] = {}

    def add(mid: str, start: str, end: str, section: str, role: str, group: str, where: Path_, file=None, line=None):
        ok = True
        if mid in seen:
            r.problem(where, f"duplicate member id '{mid}' (also at {seen[mid]})", "give every member its own id", file=file, line=line)
            return
        for end_id in (start, end):
            if end_id not in node_index:
                near = difflib.get_close_matches(end_id, list(node_index), n=1)
                r.problem(where, f"member '{mid}' names an unknown node '{end_id}'", f"did you mean '{near[0]}'?" if near else "define the node under [nodes]", file=file, line=line)
                ok = False
        if start == end and ok:
            r.problem(where, f"member '{mid}' starts and ends at node '{start}' (zero length)", "join two different nodes", file=file, line=line)
            ok = False
        if section and section not in declared_sections:
            near = difflib.get_close_matches(section, list(declared_sections), n=1)
            r.problem(where, f"member '{mid}' names an unknown section '{section}'", f"did you mean '{near[0]}'?" if near else "define it under [sections]", file=file, line=line)
            ok = False
        if role not in ROLES:
            r.problem(where, f"member '{mid}' has role '{role}'", f"role is one of {', '.join(ROLES)}", file=file, line=line)
            ok = False
        seen[mid] = f"{file or r.file}:{line or r.lines.line(where)}"
        if file is not None:
            r.csv_origin[("members", mid)] = (file, line)
        if ok:
            out.append((mid, start, end, section, role, group))

    d_section = str(defaults.get("section", ""))
    d_role = str(defaults.get("role", "bar"))
    d_group = str(defaults.get("group", ""))
    if "members_file" in geometry:
        for line, file, row in _csv_rows(r, geometry["members_file"], ("geometry", "members_file"), ("id", "start", "end"), ("section", "role", "group")):
            add(row["id"], row["start"], row["end"], row.get("section") or d_section, row.get("role") or d_role, row.get("group") or d_group, ("geometry", "members_file"), file, line)
    for mid, value in r.table(data.get("members"), ("members",)).items():
        w = ("members", mid)
        if isinstance(value, list):
            value = {"ends": value}
        if not isinstance(value, dict):
            r.problem(w, f"expected [start, end] or a table with 'ends', got {value!r}", 'e.g. B1 = ["N1", "N2"]')
            continue
        r.known_keys(value, schema.MEMBER, w)
        ends = value.get("ends")
        if not (isinstance(ends, list) and len(ends) == 2 and all(isinstance(e, str) for e in ends)):
            r.problem(w, f"'ends' must be two node ids, got {ends!r}", 'e.g. ends = ["N1", "N2"]')
            continue
        add(mid, ends[0], ends[1], str(value.get("section", d_section)), str(value.get("role", d_role)), str(value.get("group", d_group)), w)
    if not out and not r.problems:
        r.problem(("members",), "the project has no members", "add a [members] table or geometry.members_file")
    return out


def _check_geometry(r: _Reader, node_ids, coords: np.ndarray, members):
    if len(node_ids) < 2:
        return
    readable = np.flatnonzero(np.isfinite(coords).all(axis=1))
    if len(readable) < 2:
        return
    extent = float(np.ptp(coords[readable], axis=0).max()) or 1.0
    tol = 1e-9 * extent
    for a, b in close_pairs(coords[readable], tol):
        i, j = readable[a], readable[b]
        file, line = r.csv_origin.get(("nodes", node_ids[j]), (None, None))
        r.problem(("nodes", node_ids[j]), f"node '{node_ids[j]}' coincides with node '{node_ids[i]}'", "merge them or move one", file=file, line=line)
    index = {nid: i for i, nid in enumerate(node_ids)}
    pairs: dict[tuple[int, int], str] = {}
    for mid, a, b, *_ in members:
        key = tuple(sorted((index[a], index[b])))
        file, line = r.csv_origin.get(("members", mid), (None, None))
        if key in pairs:
            r.problem(("members", mid), f"member '{mid}' joins the same nodes as member '{pairs[key]}'", "remove the duplicate or merge their sections", file=file, line=line)
        pairs[key] = mid
        if a != b and np.linalg.norm(coords[index[a]] - coords[index[b]]) <= tol:
            r.problem(("members", mid), f"member '{mid}' has zero length", "its end nodes coincide", file=file, line=line)


def _supports(r: _Reader, data: dict, node_index: dict, dim: int) -> np.ndarray:
    fixed = np.zeros((len(node_index), dim), dtype=bool)
    problems_before = len(r.problems)
    for nid, value in r.table(data.get("supports"), ("supports",)).items():
        w = ("supports", nid)
        if nid not in node_index:
            near = difflib.get_close_matches(nid, list(node_index), n=1)
            r.problem(w, f"support on unknown node '{nid}'", f"did you mean '{near[0]}'?" if near else "use a node id from [nodes]")
            continue
        axes = list(AXES[:dim]) if value == "all" else value  # a list: the check below wants one
        if isinstance(axes, str):
            axes = list(axes)
        if not isinstance(axes, list) or not axes or any(a not in AXES[:dim] for a in axes):
            r.problem(w, f"expected the fixed axes, e.g. \"{''.join(AXES[:dim])}\" or \"{AXES[dim - 1]}\", got {value!r}", f"name axes among {', '.join(AXES[:dim])}, or \"all\"")
            continue
        for a in axes:
            fixed[node_index[nid], AXES.index(a)] = True
    if not fixed.any() and "supports" in data and len(r.problems) == problems_before:
        r.problem(("supports",), "no translation is fixed anywhere", "fix at least the rigid-body motions")
    return fixed


def _cases(r: _Reader, data: dict, node_index: dict, dim: int, units: DisplayUnits) -> list[LoadCase]:
    out = []
    tables = r.table(data.get("cases"), ("cases",))
    if not tables and "cases" not in data and "prestress" not in data:
        r.problem(("cases",), "the project has no load cases and no prestress", "add a [cases.ID] table with loads")
    for cid, table in tables.items():
        w = ("cases", cid)
        table = r.table(table, w)
        r.known_keys(table, schema.CASE, w)
        loads = np.zeros((len(node_index), dim))
        self_weight = table.get("self_weight", False)
        if not isinstance(self_weight, bool):
            r.problem(w + ("self_weight",), f"expected true or false, got {self_weight!r}")
            self_weight = False

        def add(nid: str, vector, where: Path_, file=None, line=None):
            if nid not in node_index:
                near = difflib.get_close_matches(nid, list(node_index), n=1)
                r.problem(where, f"load on unknown node '{nid}'", f"did you mean '{near[0]}'?" if near else "use a node id from [nodes]", file=file, line=line)
                return
            v = _coordinate_vector(r, vector, dim, units, where, "force", file, line)
            if v is not None:
                loads[node_index[nid]] += v

        if "loads_file" in table:
            cols = ("node",) + tuple(f"f{a}" for a in AXES[:dim])
            for line, file, row in _csv_rows(r, table["loads_file"], w + ("loads_file",), cols):
                add(row["node"], [row[c] for c in cols[1:]], w + ("loads_file",), file, line)
        for nid, vector in r.table(table.get("loads"), w + ("loads",)).items():
            add(nid, vector, w + ("loads", nid))
        out.append(LoadCase(cid, r.text(table, "title", w, cid), frozen_array(loads), self_weight))
    return out


def _check_self_weight(r: _Reader, cases: list[LoadCase], members, sections: dict, materials: dict):
    """Self-weight (rho g A L) needs every member's area and its material's density: say so here, with the line."""
    weighed = [c.id for c in cases if c.self_weight]
    if not weighed:
        return
    lacking = []
    for mid, _a, _b, sid, *_ in members:
        section = sections.get(sid)
        if section is None or section.mass_per_length(materials) is None:
            lacking.append(mid)
    if lacking:
        shown = ", ".join(lacking[:10]) + (f" and {len(lacking) - 10} more" if len(lacking) > 10 else "")
        for cid in weighed:
            r.problem(("cases", cid, "self_weight"), f"self-weight needs an area and a material density for members {shown}",
                      "give their sections an area and a material, and the material a density, or set self_weight = false")


def _combinations(r: _Reader, data: dict, state_ids: set[str]) -> list[Combination]:
    out = []
    for cid, table in r.table(data.get("combinations"), ("combinations",)).items():
        w = ("combinations", cid)
        table = r.table(table, w)
        r.known_keys(table, schema.COMBINATION, w)
        if cid in state_ids:
            r.problem(w, f"combination '{cid}' has the id of a load case", "give combinations their own ids")
        factors = []
        for case_id, f in r.table(table.get("factors"), w + ("factors",), required=True).items():
            if case_id not in state_ids:
                near = difflib.get_close_matches(case_id, sorted(state_ids), n=1)
                r.problem(w + ("factors", case_id), f"combination '{cid}' names an unknown case '{case_id}'", f"did you mean '{near[0]}'?" if near else "use a case id from [cases]")
            elif _plain_number(f) is None:
                r.problem(w + ("factors", case_id), f"factor must be a finite number within ±{MAX_MAGNITUDE:.0e}, got {f!r}", f"e.g. {case_id} = 1.5")
            else:
                factors.append((case_id, _plain_number(f)))
        purpose = r.choice(table, "purpose", schema.PURPOSES, "", w, "combination purpose") if "purpose" in table else ""
        out.append(Combination(cid, r.text(table, "title", w, cid), tuple(factors), purpose))
    return out


def _prestress(r: _Reader, data: dict, units: DisplayUnits, member_ids: set[str]) -> Prestress | None:
    if "prestress" not in data:
        return None
    w = ("prestress",)
    table = r.table(data["prestress"], w)
    r.known_keys(table, schema.PRESTRESS, w)
    method = table.get("method", "feasible")
    if method not in schema.PRESTRESS_METHODS:
        r.problem(w + ("method",), f"unknown prestress method {method!r}", f"use one of {', '.join(schema.PRESTRESS_METHODS)}")
        return None
    sid = r.text(table, "id", w, "prestress")
    if method == "feasible":
        level = r.quantity(table.get("level", 0.0), "force", units, w + ("level",))
        level = r.positive(level, w + ("level",), "level")
        if "level" not in table:
            r.problem(w, "feasible prestress needs 'level', the least force in every cable and strut", 'add level = "5 kN"')
        return Prestress(sid, method, level=level or 0.0)
    member = r.text(table, "member", w, required=True)
    if member and member not in member_ids:
        r.problem(w + ("member",), f"unknown member '{member}'", "name the member whose force sets the prestress level")
    force = r.quantity(table.get("force", 0.0), "force", units, w + ("force",))
    if "force" not in table:
        r.problem(w, "scaled prestress needs 'force', the force in the named member", 'add force = "20 kN"')
    return Prestress(sid, method, member=member, force=force or 0.0)


def _options(r: _Reader, data: dict) -> AnalysisOptions:
    w = ("analysis",)
    table = r.table(data.get("analysis"), w)
    r.known_keys(table, schema.ANALYSIS, w)
    defaults = AnalysisOptions()
    method = r.choice(table, "method", schema.ANALYSIS_METHODS, defaults.method, w, "analysis method")

    def number(key: str, default, check: Callable[[float], bool], rule: str):
        value = table.get(key, default)
        if isinstance(value, bool) or not isinstance(value, (int, float)) or not check(value):
            r.problem(w + (key,), f"{key} must be {rule}, got {value!r}")
            return default
        return value

    return AnalysisOptions(
        method=method,
        rank_tolerance=float(number("rank_tolerance", defaults.rank_tolerance, lambda v: 0 < v < 1e-2, "between 0 and 0.01")),
        equilibrium_tolerance=float(number("equilibrium_tolerance", defaults.equilibrium_tolerance, lambda v: 0 < v < 1e-2, "between 0 and 0.01")),
        dense_limit=int(number("dense_limit", defaults.dense_limit, lambda v: isinstance(v, int) and v >= 0, "a whole number >= 0")),
    )


def _drawing(r: _Reader, data: dict, dim: int, state_ids: set[str]) -> DrawingOptions:
    w = ("drawing",)
    table = r.table(data.get("drawing"), w)
    r.known_keys(table, schema.DRAWING, w)
    defaults = DrawingOptions()
    embedding = r.choice(table, "embedding", schema.EMBEDDINGS, defaults.embedding, w, "embedding")
    projection, name = defaults.projection, defaults.projection_name
    value = table.get("projection", name)
    if isinstance(value, str) and value in schema.NAMED_DIRECTIONS:
        projection, name = schema.NAMED_DIRECTIONS[value], value
    elif isinstance(value, list) and len(value) == 3 and all(_plain_number(v) is not None for v in value) and any(value):
        projection, name = tuple(_plain_number(v) for v in value), "custom"
    else:
        r.problem(w + ("projection",), f"projection must be one of {', '.join(schema.NAMED_DIRECTIONS)} or a direction [x, y, z], got {value!r}")
    views = table.get("views", list(defaults.views))
    if not isinstance(views, list) or any(v not in schema.NAMED_DIRECTIONS for v in views):
        r.problem(w + ("views",), f"views must be a list drawn from {', '.join(schema.NAMED_DIRECTIONS)}, got {views!r}")
        views = list(defaults.views)
    mix = table.get("minkowski_mix", defaults.minkowski_mix)
    if isinstance(mix, bool) or not isinstance(mix, (int, float)) or not 0 < mix < 1:
        r.problem(w + ("minkowski_mix",), f"minkowski_mix must be between 0 and 1 (exclusive), got {mix!r}")
        mix = defaults.minkowski_mix
    states = table.get("states", [])
    if not isinstance(states, list) or not all(isinstance(x, str) for x in states):
        r.problem(w + ("states",), f"states must be a list of case or combination ids, got {states!r}")
        states = []
    for x in states:
        if x not in state_ids:
            near = difflib.get_close_matches(x, sorted(state_ids), n=1)
            r.problem(w + ("states",), f"unknown case or combination '{x}'", f"did you mean '{near[0]}'?" if near else "use ids from [cases] or [combinations]")
    return DrawingOptions(embedding, projection, name, tuple(views), float(mix), tuple(states))


def _design(r: _Reader, data: dict, units: DisplayUnits) -> DesignOptions:
    w = ("design",)
    table = r.table(data.get("design"), w)
    r.known_keys(table, schema.DESIGN, w)
    values: dict[str, float | None] = {}
    for key in ("partial_factor", "effective_length_factor", "slenderness_limit", "tension_slenderness_limit",
                "imperfection_factor", "buckling_partial_factor", "deflection_limit"):
        values[key] = _positive_number(r, table, key, w)
    limit = None
    if "stress_limit" in table:
        limit = r.positive(r.quantity(table["stress_limit"], "stress", units, w + ("stress_limit",)), w + ("stress_limit",), "stress_limit")
    method = r.choice(table, "compression_method", schema.COMPRESSION_METHODS, "euler", w, "compression method")
    curve = r.choice(table, "buckling_curve", schema.BUCKLING_CURVES, "", w, "buckling curve") if "buckling_curve" in table else ""
    given = bool(curve) + ("imperfection_factor" in table)
    if given == 2:
        r.problem(w + ("imperfection_factor",), "both buckling_curve and imperfection_factor are given",
                  "give one: the curve's name, or its imperfection factor")
    elif method == "buckling_curve" and not given and "buckling_curve" not in table:
        r.problem(w + ("compression_method",), "the buckling curve method needs the curve",
                  f"add buckling_curve = \"b\" (one of {', '.join(schema.BUCKLING_CURVES)}) or imperfection_factor = 0.34")
    return DesignOptions(stress_limit=limit, compression_method=method, buckling_curve=curve,
                         effective_length_factors=_length_factors(r, table, w), buckling_lengths=_buckling_lengths(r, table, units, w),
                         **values)


def _positive_number(r: _Reader, table: dict, key: str, w: Path_) -> float | None:
    v = table.get(key)
    number = None if v is None else _plain_number(v)
    if v is not None and (number is None or number <= 0):
        r.problem(w + (key,), f"{key} must be a positive number, got {v!r}")
        return None
    return number


def _length_factors(r: _Reader, table: dict, w: Path_) -> tuple[tuple[str, float], ...]:
    """[design.effective_length_factors]: member or group id -> K (checked against the frame in _check_design_ids)."""
    where = w + ("effective_length_factors",)
    out = []
    for name in r.table(table.get("effective_length_factors"), where):
        k = _positive_number(r, table["effective_length_factors"], name, where)
        if k is not None:
            out.append((name, k))
    return tuple(out)


def _buckling_lengths(r: _Reader, table: dict, units: DisplayUnits, w: Path_):
    """[design.buckling_lengths]: member or group id -> { in_plane = length, out_of_plane = length }."""
    where = w + ("buckling_lengths",)
    out = []
    for name, entry in r.table(table.get("buckling_lengths"), where).items():
        entry = r.table(entry, where + (name,))
        r.known_keys(entry, schema.BUCKLING_LENGTH, where + (name,))
        if not entry:
            r.problem(where + (name,), "a buckling length entry needs in_plane, out_of_plane or both", 'e.g. { in_plane = "3 m", out_of_plane = "6 m" }')
            continue
        lengths = [r.positive(r.quantity(entry[k], "length", units, where + (name, k)), where + (name, k), k) if k in entry else None
                   for k in schema.BUCKLING_LENGTH]
        out.append((name, *lengths))
    return tuple(out)


def _check_design_ids(r: _Reader, design: DesignOptions, members) -> None:
    """Each id in the per-member design tables must name a member or a group."""
    known = {m[0] for m in members} | {m[5] for m in members if m[5]}
    for key, names in (("effective_length_factors", [n for n, _ in design.effective_length_factors]),
                       ("buckling_lengths", [n for n, *_ in design.buckling_lengths])):
        for name in names:
            if name not in known:
                near = difflib.get_close_matches(name, sorted(known), n=1)
                r.problem(("design", key, name), f"'{name}' is neither a member nor a group",
                          f"did you mean '{near[0]}'?" if near else "use a member id or a group name")


def _polyhedral(r: _Reader, data: dict, node_index: dict, dim: int) -> PolyhedralInput:
    w = ("polyhedral",)
    table = r.table(data.get("polyhedral"), w)
    r.known_keys(table, schema.POLYHEDRAL, w)
    if table and dim != 3:
        r.problem(w, "a cell complex needs a 3D frame", "remove [polyhedral] or set geometry.dimension = 3")
    cells = []
    for i, cell in enumerate(table.get("cells", [])):
        if not isinstance(cell, list) or len(cell) < 4 or not all(isinstance(n, str) for n in cell):
            r.problem(w + ("cells",), f"cell {i + 1} must list at least 4 node ids, got {cell!r}")
            continue
        unknown = [n for n in cell if n not in node_index]
        if unknown:
            r.problem(w + ("cells",), f"cell {i + 1} names unknown node(s) {', '.join(unknown)}")
            continue
        cells.append(tuple(cell))
    find = table.get("find_tetrahedra", False)
    if not isinstance(find, bool):
        r.problem(w + ("find_tetrahedra",), f"expected true or false, got {find!r}")
        find = False
    heights = []
    for nid, h in r.table(table.get("heights"), w + ("heights",)).items():
        if nid not in node_index:
            r.problem(w + ("heights", nid), f"height for unknown node '{nid}'")
        elif _plain_number(h) is None:
            r.problem(w + ("heights", nid), f"height must be a finite number within ±{MAX_MAGNITUDE:.0e}, got {h!r}")
        else:
            heights.append((nid, _plain_number(h)))
    return PolyhedralInput(tuple(cells), find, tuple(heights))
