"""Sheet templates: page, title block, section order and caution text, kept as TOML data.

A project names a template in ``[project] template``: either the name of one
that ships with the package ("a4-portrait", "a3-landscape", "letter-portrait")
or a path, relative to the project file, to a copy a user has edited. Every
problem in a template is reported at once as a ProjectError naming the
template file and key.

Where the shipped templates live: the top-level ``templates/`` folder of the
repository. The package reaches it through ``sheets/report/templates``, a
symbolic link to that folder, listed as package data so a built wheel (``pip
install .``) carries real copies of the files; a source checkout or an editable
install (``pip install -e .``) reads them through the link, or straight from
``templates/`` beside the package where a checkout has no symlinks.
"""

from __future__ import annotations

import difflib
import sys
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from sheets.errors import Problem, ProjectError

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover
    import tomli as tomllib

# reportlab (and the fonts, through matplotlib) are imported only when a template is parsed:
# finding one by name stays cheap for `sheets check`.
PAGE_SIZES = ("A4", "A3", "letter")
ORIENTATIONS = ("portrait", "landscape")
SECTIONS = ("cover", "comparison", "design_basis", "model", "determinacy", "states", "envelope", "member_checks", "sizing",
            "serviceability", "issued_files", "cautions")
OPTIONAL_SECTIONS = {"comparison": "cover"}  # shown only when asked for, and then after this section if the order omits it
STATE_PARTS = ("forces", "reactions", "checks", "form_forces", "force_diagram", "cells", "minkowski", "load_path")
FIELDS = ("title", "number", "client", "calculation", "sheet", "revision", "date", "prepared_by", "checked_by",
          "status", "fingerprint")
KEYS = {
    "": ("template", "page", "text", "title_block", "sections", "tables"),
    "template": ("name", "description"),
    "page": ("size", "orientation", "margin_mm"),
    "text": ("font_size", "footer_caution", "cautions"),
    "title_block": ("columns", "fields"),
    "field": ("field", "label", "span"),
    "sections": ("order", "state_parts"),
    "tables": ("rows", "labels_up_to"),
}
MM = 72 / 25.4  # points per millimetre
FOOTER_SIZE = 6.5  # points, the footer caution's type size


@dataclass(frozen=True)
class TitleField:
    field: str  # one of FIELDS
    label: str
    span: int = 1


@dataclass(frozen=True)
class Template:
    name: str
    source: str  # the file it was read from
    page_size: tuple[float, float]  # points, after orientation
    margin: float  # points
    font_size: float
    footer_caution: str
    cautions: tuple[str, ...]
    columns: int
    fields: tuple[TitleField, ...]
    order: tuple[str, ...]
    state_parts: tuple[str, ...]
    table_rows: int
    labels_up_to: int


def section_order(template: Template, present: set[str] = frozenset()) -> tuple[str, ...]:
    """The template's order, with each optional section that is ``present`` (asked for in this build) placed
    where ``OPTIONAL_SECTIONS`` puts it when the template (a copy made before the section existed) omits it."""
    order = list(template.order)
    for name in sorted(present):
        if name not in order:
            order.insert(order.index(OPTIONAL_SECTIONS[name]) + 1, name)
    return tuple(order)


def builtin_folder() -> Path:
    """The folder of the shipped templates (package data, or the repository's templates/)."""
    here = Path(__file__).resolve().parent
    packaged = here / "templates"
    if packaged.is_dir():
        return packaged
    return here.parents[1] / "templates"


def builtin_names() -> tuple[str, ...]:
    return tuple(sorted(p.stem for p in builtin_folder().glob("*.toml")))


def find_template(name: str, project_dir: Path, source: str | None = None) -> Path:
    """A shipped template by name, or a file path relative to the project folder (``source``: the project file, for messages)."""
    where = source or str(project_dir)
    candidate = Path(name)
    if candidate.suffix == ".toml" or len(candidate.parts) > 1:
        path = candidate if candidate.is_absolute() else project_dir / candidate
        if not path.is_file():
            hint = (f"the shipped template is named without .toml: template = \"{candidate.stem}\""
                    if candidate.stem in builtin_names() and len(candidate.parts) == 1 else "the path is relative to the project file")
            raise ProjectError([Problem(where, "project.template", f"template file '{name}' not found", hint)])
        return path
    path = builtin_folder() / f"{name}.toml"
    if not path.is_file():
        names = builtin_names()
        near = difflib.get_close_matches(name, names, n=1)
        hint = f"did you mean '{near[0]}'?" if near else f"use one of {', '.join(names)} or a path to a .toml file"
        raise ProjectError([Problem(where, "project.template", f"unknown template '{name}'", hint)])
    return path


def load_template(name: str, project_dir: str | Path = ".", source: str | None = None) -> Template:
    """Read and validate a template; raise ProjectError listing every problem."""
    path = find_template(name, Path(project_dir), source)
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError) as exc:
        raise ProjectError([Problem(str(path), "", f"cannot read the template: {exc}", "save it as UTF-8 text")])
    except tomllib.TOMLDecodeError as exc:
        raise ProjectError([Problem(str(path), "", f"not valid TOML: {exc}", "fix the syntax at that line",
                                    getattr(exc, "lineno", None))])
    return _parse(data, str(path))


class _Reader:
    def __init__(self, file: str):
        self.file = file
        self.problems: list[Problem] = []

    def problem(self, where: str, message: str, hint: str = ""):
        self.problems.append(Problem(self.file, where, message, hint))

    def table(self, data: dict, key: str, allowed: tuple[str, ...]) -> dict:
        value = data.get(key, {})
        if not isinstance(value, dict):
            self.problem(key, f"expected a table [{key}]")
            return {}
        self.keys(value, allowed, key)
        return value

    def keys(self, data: dict, allowed: tuple[str, ...], where: str):
        for key in data:
            if key not in allowed:
                near = difflib.get_close_matches(key, allowed, n=1)
                self.problem(f"{where}.{key}" if where else key, f"unknown key '{key}'",
                             f"did you mean '{near[0]}'?" if near else f"allowed keys: {', '.join(allowed)}")

    def choice(self, data: dict, key: str, where: str, options, default):
        value = data.get(key, default)
        if value not in options:
            near = difflib.get_close_matches(str(value), list(options), n=1)
            self.problem(f"{where}.{key}", f"{key} must be one of {', '.join(options)}, got {value!r}",
                         f"did you mean '{near[0]}'?" if near else "")
            return default
        return value

    def number(self, data: dict, key: str, where: str, default: float, low: float, high: float, whole: bool = False):
        value = data.get(key, default)
        ok = isinstance(value, (int, float)) and not isinstance(value, bool) and low <= value <= high
        if ok and whole and not float(value).is_integer():
            ok = False
        if not ok:
            kind = "a whole number" if whole else "a number"
            self.problem(f"{where}.{key}", f"{key} must be {kind} from {low:g} to {high:g}, got {value!r}")
            return default
        return int(value) if whole else float(value)

    def text(self, data: dict, key: str, where: str, default: str) -> str:
        value = data.get(key, default)
        if not isinstance(value, str):
            self.problem(f"{where}.{key}", f"expected text, got {value!r}")
            return default
        return value

    def names(self, data: dict, key: str, where: str, allowed: tuple[str, ...]) -> tuple[str, ...]:
        value = data.get(key, list(allowed))
        if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
            self.problem(f"{where}.{key}", f"expected a list of names, got {value!r}", f"names: {', '.join(allowed)}")
            return allowed
        for v in value:
            if v not in allowed:
                near = difflib.get_close_matches(v, allowed, n=1)
                self.problem(f"{where}.{key}", f"unknown name '{v}'", f"did you mean '{near[0]}'?" if near else f"names: {', '.join(allowed)}")
        if len(set(value)) != len(value):
            self.problem(f"{where}.{key}", "a name appears twice", "list each once")
        return tuple(v for v in dict.fromkeys(value) if v in allowed)


def _page_size(size: str, orientation: str) -> tuple[float, float]:
    """(width, height) in points of a size in PAGE_SIZES turned to an orientation in ORIENTATIONS."""
    from reportlab.lib import pagesizes

    return getattr(pagesizes, orientation)(getattr(pagesizes, size))


def _footer_width(footer: str) -> float:
    from reportlab.pdfbase.pdfmetrics import stringWidth

    from sheets.report.fonts import register_fonts

    return stringWidth(footer, register_fonts().regular, FOOTER_SIZE)


def _parse(data: dict[str, Any], file: str) -> Template:
    r = _Reader(file)
    r.keys(data, KEYS[""], "")
    meta = r.table(data, "template", KEYS["template"])
    page = r.table(data, "page", KEYS["page"])
    text = r.table(data, "text", KEYS["text"])
    block = r.table(data, "title_block", KEYS["title_block"])
    sections = r.table(data, "sections", KEYS["sections"])
    tables = r.table(data, "tables", KEYS["tables"])

    size = r.choice(page, "size", "page", PAGE_SIZES, "A4")
    orientation = r.choice(page, "orientation", "page", ORIENTATIONS, "portrait")
    margin = r.number(page, "margin_mm", "page", 12, 5, 40) * MM
    footer = r.text(text, "footer_caution", "text", "")
    if not footer.strip():
        r.problem("text.footer_caution", "the footer caution is missing or empty",
                  "every sheet must carry a short caution, e.g. \"Indicative calculations. Review by a licensed engineer required.\"")
    elif _footer_width(footer) > _page_size(size, orientation)[0] - 2 * margin:
        r.problem("text.footer_caution", "the footer caution does not fit on one line of the page",
                  "shorten it; the full text belongs in the cautions list")
    cautions = text.get("cautions", [])
    if not isinstance(cautions, list) or not cautions or not all(isinstance(c, str) and c.strip() for c in cautions):
        r.problem("text.cautions", "cautions must be a non-empty list of paragraphs", "the cautions page prints them")
        cautions = []
    columns = r.number(block, "columns", "title_block", 6, 2, 16, whole=True)
    fields = _fields(r, block, columns)
    order = r.names(sections, "order", "sections", SECTIONS)
    for required in ("cover", "cautions"):
        if required not in order:
            r.problem("sections.order", f"the section '{required}' cannot be left out",
                      "every sheet set starts with the cover and carries the cautions")
    result = Template(
        name=r.text(meta, "name", "template", Path(file).stem),
        source=file,
        page_size=_page_size(size, orientation),
        margin=margin,
        font_size=r.number(text, "font_size", "text", 8.5, 6, 14),
        footer_caution=footer,
        cautions=tuple(cautions),
        columns=columns,
        fields=fields,
        order=order,
        state_parts=r.names(sections, "state_parts", "sections", STATE_PARTS),
        table_rows=r.number(tables, "rows", "tables", 30, 5, 500, whole=True),
        labels_up_to=r.number(tables, "labels_up_to", "tables", 120, 0, 100000, whole=True),
    )
    if r.problems:
        raise ProjectError(r.problems)
    return result


def _fields(r: _Reader, block: dict, columns: int) -> tuple[TitleField, ...]:
    raw = block.get("fields")
    if not isinstance(raw, list) or not raw:
        r.problem("title_block.fields", "the title block needs a list of fields",
                  'e.g. fields = [{ field = "title", label = "Project" }, { field = "sheet", label = "Sheet" }]')
        return ()
    out = []
    for i, item in enumerate(raw):
        where = f"title_block.fields.{i}"
        if not isinstance(item, dict):
            r.problem(where, f"expected a table like {{ field = \"title\", label = \"Project\" }}, got {item!r}")
            continue
        r.keys(item, KEYS["field"], where)
        field = r.choice(item, "field", where, FIELDS, None)
        span = r.number(item, "span", where, 1, 1, columns, whole=True)
        if field is not None:
            out.append(TitleField(field, r.text(item, "label", where, field.replace("_", " ").capitalize()), span))
    present = {f.field for f in out}
    for needed in ("title", "sheet", "revision", "date"):
        if needed not in present and not r.problems:
            r.problem("title_block.fields", f"the title block must show '{needed}'", f"add {{ field = \"{needed}\", label = \"...\" }}")
    return tuple(out)
