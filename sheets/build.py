"""Orchestration: the stages in order, and the only writer of outputs besides export.

Each function takes plain values and returns plain values (or the paths it
wrote); the command line in sheets.cli only parses arguments, calls these and
prints.
"""

from __future__ import annotations

import json
import os
import tempfile
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable

from sheets.analysis import Analysis, analyse
from sheets.analysis.analyse import refuse_before_solving
from sheets.analysis.determinacy import Determinacy, determinacy
from sheets.analysis.equilibrium import project_equilibrium
from sheets.export.atomic import write_atomic
from sheets.export.results import write_results_csv, write_results_json
from sheets.model import Project, load_project
from sheets.render import DRAW_FORMATS

Progress = Callable[[str], None]


def check(path: str | Path) -> tuple[Project, Determinacy]:
    """Everything `build` would refuse, short of solving and drawing: the project file, its template,
    a missing stiffness or prestress, and every case that pushes the frame along a mechanism.

    Raises ProjectError (exit 2) or MechanismError (exit 3) as `solve` and `build` do.
    """
    project = load_project(path)
    check_template(project, Path(path).parent)
    eq = project_equilibrium(project)
    det = determinacy(eq, project.options.rank_tolerance, project.options.dense_limit)
    refuse_before_solving(project, eq, det)
    return project, det


def check_template(project: Project, project_dir: Path) -> None:
    """Find the project's template as `build` does; read it in full only where it is the user's own
    file (the shipped ones are read by the test suite, and reading one costs the PDF libraries)."""
    from sheets.report.templates import builtin_folder, find_template, load_template

    found = find_template(project.info.template, project_dir, project.source)
    if found.parent != builtin_folder():
        load_template(project.info.template, project_dir, project.source)


def solve(path: str | Path, progress: Progress | None = None) -> Analysis:
    note = progress or (lambda _m: None)
    note("reading project")
    project = load_project(path)
    return analyse(project, progress)


def import_drawing(drawing: str | Path, project_path: str | Path, member_layers=(), support_layers=None,
                   dimension: int | None = None, unit: str | None = None, snap: float | None = None):
    """Read a frame drawn in CAD (DXF) and write it as a new project file for the user to complete.

    The file is written only if it loads back as a project, and never over an existing file
    (a hard link from a finished temporary file makes the new name appear whole or not at all).
    Returns the DrawnFrame read.
    """
    from sheets.errors import Problem, ProjectError
    from sheets.export.project_toml import frame_project_toml
    from sheets.model.from_dxf import read_dxf_frame

    target = Path(project_path)
    if target.exists():
        raise ProjectError([Problem(str(target), "", "the project file exists already; import never writes over a file",
                                    "name a new file with --out")])
    frame = read_dxf_frame(drawing, member_layers, support_layers, dimension, unit, snap)
    text = frame_project_toml(frame, Path(drawing).stem.replace("_", " "))
    target.parent.mkdir(parents=True, exist_ok=True)
    fd, name = tempfile.mkstemp(prefix=f".{target.stem}.", suffix=".part.toml", dir=target.parent)
    tmp = Path(name)
    try:
        with os.fdopen(fd, "w", encoding="utf-8") as stream:
            stream.write(text)
        os.chmod(tmp, 0o644)
        load_project(tmp)  # what is written must load: a failure here is a fault of this reader
        try:
            os.link(tmp, target)
        except FileExistsError:
            raise ProjectError([Problem(str(target), "", "the project file appeared while the drawing was read",
                                        "name a new file with --out")]) from None
    finally:
        tmp.unlink(missing_ok=True)
    return frame


def results_of(path: str | Path, progress: Progress | None = None) -> dict[str, Any]:
    """The results document of a revision: a results JSON file as it is, or a project file solved now."""
    from sheets.errors import Problem, ProjectError
    from sheets.export.results import results_document

    source = Path(path)
    if source.suffix.lower() != ".json":
        analysis = solve(source, progress)
        return results_document(analysis, result_sections(analysis))
    try:
        doc = json.loads(source.read_text(encoding="utf-8"))
    except OSError as exc:
        raise ProjectError([Problem(str(source), "", f"cannot read the results: {exc.strerror or exc}", "check the path")]) from None
    except (UnicodeDecodeError, ValueError) as exc:
        raise ProjectError([Problem(str(source), "", f"not a JSON results document: {exc}",
                                    "give a results.json written by sheets, or a project file")]) from None
    if not isinstance(doc, dict) or doc.get("schema") != "sheets.results/1":
        found = doc.get("schema") if isinstance(doc, dict) else type(doc).__name__
        raise ProjectError([Problem(str(source), "schema", f"not a results document of schema sheets.results/1 (found {found!r})",
                                    "give a results.json written by sheets, or a project file")])
    return doc


def compare_revisions(old: str | Path, new: str | Path, force_change: float = 0.01, utilisation_change: float = 0.01,
                      progress: Progress | None = None):
    """What changed from revision ``old`` to ``new`` (each a project file or a results JSON)."""
    from sheets.revision.compare import compare_results

    return compare_results(results_of(old, progress), results_of(new, progress), force_change, utilisation_change)


DIAGRAM_DETAIL_NODES = 500  # above this many nodes the results carry cell summaries, not every face


def result_sections(analysis: Analysis, checks=None, sizing=None, diagrams=None) -> dict[str, Any]:
    """Sections later stages add to the results document: member checks, sizing, and the
    diagrams of the drawn states where the caller built them (values made once, passed in)."""
    from sheets.analysis.member_checks import member_checks, member_checks_results
    from sheets.analysis.outcome import design_outcome, outcome_results
    from sheets.analysis.serviceability import serviceability, serviceability_results
    from sheets.analysis.sizing import size_members, sizing_results

    project = analysis.project
    checks = checks or member_checks(analysis)
    service = serviceability(analysis)
    sections = {
        "member_checks": member_checks_results(checks, project),
        "sizing": sizing_results(sizing or size_members(analysis), project.units),
        "serviceability": serviceability_results(service, project.units),
        "outcome": outcome_results(design_outcome(analysis, checks, service), project.units),
    }
    if diagrams:
        from sheets.reciprocal.stage import diagrams_results

        sections["diagrams"] = diagrams_results(analysis, diagrams, detail=project.n_nodes <= DIAGRAM_DETAIL_NODES)
    return sections


def design_outcome_of(analysis: Analysis, checks=None):
    """The design outcome (sheets.analysis.outcome) of an analysis: member checks and serviceability made here if not given."""
    from sheets.analysis.member_checks import member_checks
    from sheets.analysis.outcome import design_outcome
    from sheets.analysis.serviceability import serviceability

    return design_outcome(analysis, checks or member_checks(analysis), serviceability(analysis))


def check_result_targets(json_path: str | Path | None, csv_dir: str | Path | None) -> None:
    """Before solving: ``json_path`` can be a file and ``csv_dir`` a folder there (else an OutputError, exit 2)."""
    from sheets.export.publish import check_file_target, check_folder_target

    if json_path is not None:
        check_file_target(Path(json_path), "--json")
    if csv_dir is not None:
        check_folder_target(Path(csv_dir), "--csv")


def write_results(analysis: Analysis, json_path: str | Path | None = None, csv_dir: str | Path | None = None,
                  sections: dict[str, Any] | None = None) -> list[Path]:
    from sheets.export.publish import output_error

    written: list[Path] = []
    try:
        if json_path is not None:
            written.append(write_results_json(analysis, json_path, sections if sections is not None else result_sections(analysis)))
        if csv_dir is not None:
            written.extend(write_results_csv(analysis, csv_dir))
    except OSError as exc:  # each file is written atomically: what was there before stays whole
        raise output_error(exc, json_path if csv_dir is None else csv_dir) from exc
    return written


# -- the calculation sheet set (`sheets build`) ---------------------------------

BUILD_STAGES = ("reading project", "analysis", "member checks", "diagrams", "figures", "results", "assembly", "writing files")
CSV_CONTENTS = {
    "nodes.csv": "every node: coordinates and the translations its support fixes",
    "loads.csv": "every nodal load of every case as given, with the self-weight apart",
    "members.csv": "every member: ends, length, section, role, group",
    "forces.csv": "every member's force in every state",
    "reactions.csv": "every reaction in every state",
    "envelope.csv": "every member's largest tension and compression, with the state",
    "checks.csv": "the equilibrium and load path checks of every state",
    "determinacy.csv": "rank, self-stress states, mechanisms, Maxwell's rule, conditioning",
    "displacements.csv": "every node's displacement in every state where computed",
    "member_checks.csv": "every member's indicative checks: demands, resistances, slenderness, utilisations",
}


@dataclass(frozen=True)
class SheetBuild:
    pdf: Path
    files: tuple[Path, ...]  # everything written, the PDF last
    passed: bool  # every verification check passed
    outcome: Any = None  # the design outcome (sheets.analysis.outcome.DesignOutcome)
    outcome_units: Any = None  # the project's display units, to print the outcome in
    kept: tuple[str, ...] = ()  # older sets left in place because they hold files sheets did not write
    stages: str = ""  # what this build made and what it reused from the stage cache (StageCache.summary)
    inputs: tuple[str, ...] = ()  # every file the build read: the project, the files it includes, the template
    comparison: Any = None  # sheets.revision.compare.Comparison with the earlier revision, where asked for


def compare_with(earlier: dict[str, Any], analysis: Analysis, sections: dict[str, Any], force_change: float,
                 utilisation_change: float):
    """This build's results (``sections`` as written to results.json) against an earlier revision's results
    document: the comparison, its results section and its figures (none where nothing changed)."""
    from sheets.export.results import results_document
    from sheets.report.figures import comparison_figure
    from sheets.revision.compare import compare_results, comparison_document

    comparison = compare_results(earlier, results_document(analysis, sections), force_change, utilisation_change)
    figures = () if comparison.empty else (comparison_figure(analysis, comparison),)
    return comparison, {"comparison": comparison_document(comparison)}, figures


def default_out_dir(project_path: str | Path) -> Path:
    """``<project folder>/out/<project file stem>/``."""
    path = Path(project_path)
    return path.parent / "out" / path.stem


CACHE_FOLDER = "cache"  # in the set's own area (.sheets-sets/<name>/), under the build's lock
CACHE_BYTES = 1 << 30  # the oldest-read entries beyond this are removed after each build


def build_sheets(path: str | Path, out_dir: str | Path | None = None, progress: Progress | None = None,
                 force: bool = False, compare: str | Path | None = None, force_change: float = 0.01,
                 utilisation_change: float = 0.01) -> SheetBuild:
    """The whole chain: load -> analyse -> member checks -> diagrams and figures -> results -> PDF, into ``out_dir``.

    ``compare``: an earlier revision (project file or results JSON, read and checked before anything
    is computed or written); the set then carries a revision comparison (``compare_with``).

    Writes <out>/<project stem>.pdf, <out>/results.json, <out>/csv/*.csv, <out>/figures/* and
    <out>/manifest.json (SHA-256 of every file). The output folder is checked and locked before
    any computation (sheets.export.publish: an ``OutputError``, exit code 2, if it cannot take the
    set). The set is written into a staging folder and published in one atomic switch of ``out``
    (a symlink to a versioned folder), so an interrupted or killed build leaves the previous set
    whole; older sets are then removed file by file as their own manifests list them.

    Incremental: the determinacy, each state's diagrams and each figure (with its PDF form or
    image stream) are kept in a stage cache (sheets.cache, ``.sheets-sets/<name>/cache/``) under
    the content of exactly what they depend on, so a rebuild after a change redoes only what the
    change reaches; the rest (tables, results, the PDF) is made anew every time, starting from the
    page layout of the last build, and a cached build writes the same bytes as a forced one.
    ``force``: make every stage anew (the cache is refreshed, not read).
    """
    from sheets.analysis.member_checks import member_checks, member_checks_csv
    from sheets.analysis.sizing import size_members
    from sheets.cache import MISSING, StageCache, without_loads
    from sheets.export.publish import SetWriter, output_error
    from sheets.reciprocal.stage import project_diagrams
    from sheets.report.assemble import assemble_from
    from sheets.report.figures import collect_figures, drawn_states
    from sheets.report.sections import IssuedFile
    from sheets.report.templates import load_template

    note = progress or (lambda _m: None)
    note("reading project")
    source = Path(path)
    project = load_project(source)
    template = load_template(project.info.template, source.parent, project.source)
    earlier = None if compare is None else results_of(compare, lambda m: note(f"earlier revision: {m}"))
    out = Path(out_dir) if out_dir is not None else default_out_dir(source)
    with SetWriter(out) as target:  # checks the folder and takes its lock before computing
        cache = StageCache(target.area / CACHE_FOLDER, read=not force)
        note("analysis")
        analysis = analyse(project, progress, cache.get_or_make)
        note("member checks")
        checks = member_checks(analysis)
        sizing = size_members(analysis)
        outcome = design_outcome_of(analysis, checks)
        note("diagrams")
        diagrams = project_diagrams(analysis, [s.id for s in drawn_states(analysis)], progress, template.labels_up_to,
                                    cache.get_or_make)
        note("figures")
        figures, notes = collect_figures(analysis, template, progress, diagrams=diagrams, cache=cache)
        note("results")
        sections = result_sections(analysis, checks, sizing, diagrams)
        comparison = None
        if earlier is not None:
            comparison, section, drawn = compare_with(earlier, analysis, sections, force_change, utilisation_change)
            sections, figures = {**sections, **section}, (*figures, *drawn)
        try:
            staging = target.stage()
            write_results(analysis, staging / "results.json", staging / "csv", sections)
            write_atomic(staging / "csv" / "member_checks.csv", member_checks_csv(checks, project, analysis.equilibrium.lengths))
            for fig in figures:
                write_atomic(staging / "figures" / fig.file_name, fig.file)
            issued = [IssuedFile("results.json", "every result of this set, machine-readable (schema sheets.results/1)")]
            issued += [IssuedFile(f"csv/{p.name}", CSV_CONTENTS.get(p.name, "table")) for p in sorted((staging / "csv").glob("*.csv"))]
            issued += [IssuedFile(f"figures/{f.file_name}", f.title) for f in figures]
            issued.append(IssuedFile("manifest.json", "SHA-256 of every file above and of this PDF"))
            note("assembly")
            pdf_name = f"{source.stem}.pdf"
            # where the pages fell last time is tried first: while only loads change, they fall alike
            layout_key, seed = cache.lookup("page layout", (without_loads(project), template))
            pdf, layout = assemble_from(None if seed is MISSING else seed, analysis, checks, figures, template,
                                        issued=tuple(issued), sizing=sizing, notes=notes, comparison=comparison)
            cache.store("page layout", layout_key, layout)
            write_atomic(staging / pdf_name, pdf)
            note("writing files")
            files = target.publish(pdf_name, project.fingerprint)
        except OSError as exc:  # a full disk or a folder gone read-only while writing: the previous set stays
            raise output_error(exc, target.out) from exc
        cache.prune(CACHE_BYTES)
    return SheetBuild(out / pdf_name, files, analysis.passed, outcome, project.units, tuple(target.kept), cache.summary(),
                      project.inputs + (template.source,), comparison)


# -- force diagrams (`sheets draw`) ----------------------------------------------


@dataclass(frozen=True)
class DrawnState:
    state_id: str
    edges: int  # force-diagram edges
    spaces: int  # faces of the embedding (force-diagram points)
    crossings: int  # crossing vertices and pass-throughs inserted by planarisation
    closure_error: float  # largest relative edge error
    load_line_error: float
    passed: bool
    embedding: str  # the embedding's note


@dataclass(frozen=True)
class DrawResult:
    files: tuple[Path, ...]
    states: tuple[DrawnState, ...]

    @property
    def passed(self) -> bool:
        return all(s.passed for s in self.states)


def _file_stem(state_id: str) -> str:
    return "".join(c if c.isalnum() or c in "-_." else "_" for c in state_id) or "state"


def draw_project(path: str | Path, out_dir: str | Path | None = None, state_ids=None, fmt: str = "png",
                 dxf: bool = False, diagram_json: bool = False, progress: Progress | None = None,
                 on_state: Callable[[int, int, str], None] | None = None, cells: bool = False,
                 minkowski: bool = False, meshes: bool = False) -> DrawResult:
    """Load, analyse and draw the force diagram of each state asked for (default: [drawing] states, else all).

    Per state, into ``out_dir`` (default ``<project folder>/out/<project stem>-diagrams/``):
    ``<state>-diagrams.<fmt>`` (form and force side by side), ``<state>-closure.<fmt>`` (the
    verification), for a 3D frame ``<state>-views.png`` (pyvista views), and on request
    ``<state>.dxf`` and ``<state>.diagram.json`` (schema sheets.diagram/1); with ``dxf`` also
    ``frame.dxf``, the frame alone for CAD (read back by ``sheets import``). ``on_state(i, n, id)``
    is called before each state is drawn.
    """
    from sheets.errors import Problem, ProjectError
    from sheets.export.diagram_json import write_diagram_json
    from sheets.export.dxf import write_diagram_dxf
    from sheets.export.publish import check_folder_target
    from sheets.reciprocal.diagram import force_diagram
    from sheets.render.diagram2d import form_force_figure, verification_figure
    from sheets.report.templates import load_template

    note = progress or (lambda _m: None)
    if fmt not in DRAW_FORMATS:
        raise ValueError(f"format must be one of {', '.join(DRAW_FORMATS)}")
    note("reading project")
    source = Path(path)
    project = load_project(source)
    # beside the sheet set, not inside it: the set's folder belongs to `sheets build` alone
    out = Path(out_dir) if out_dir is not None else default_out_dir(source).with_name(f"{source.stem}-diagrams")
    check_folder_target(out, "--out")  # before analysing: a bad folder costs no time
    labels_up_to = load_template(project.info.template, source.parent, project.source).labels_up_to  # as in the sheets
    analysis = analyse(project, progress)
    known = [s.id for s in analysis.states]
    wanted = list(state_ids or project.drawing.states or known)
    unknown = [sid for sid in wanted if sid not in known]
    if unknown:
        raise ProjectError([Problem(str(source), "", f"no case or combination '{sid}'", f"known: {', '.join(known)}")
                            for sid in unknown])
    files: list[Path] = []
    drawn: list[DrawnState] = []
    if dxf:
        from sheets.export.dxf import frame_dxf

        files.append(write_atomic(out / "frame.dxf", frame_dxf(project)))
    for i, sid in enumerate(wanted):
        if on_state is not None:
            on_state(i, len(wanted), sid)
        note(f"diagram {sid}")
        diagram = force_diagram(project, analysis.state(sid))
        stem = _file_stem(sid)
        files.append(form_force_figure(diagram, out / f"{stem}-diagrams.{fmt}", fmt, labels_up_to=labels_up_to))
        files.append(verification_figure(diagram, out / f"{stem}-closure.{fmt}", fmt))
        if project.dim == 3:
            from sheets.render.view3d import views_figure

            note(f"3D views {sid}")
            files.append(views_figure(diagram, out / f"{stem}-views.png", "png", views=project.drawing.views,
                                      labels_up_to=labels_up_to))
        if dxf:
            files.append(write_diagram_dxf(diagram, out / f"{stem}.dxf"))
        if diagram_json:
            files.append(write_diagram_json(diagram, out / f"{stem}.diagram.json"))
        if cells or minkowski or meshes:  # issue 4: node force cells, polarity, Minkowski sums
            from sheets.render.minkowski import polyhedral_outputs

            note(f"force cells {sid}")
            from sheets.reciprocal.stage import state_diagrams

            prepared = state_diagrams(analysis, sid, force=diagram)  # the force diagram above, not built again
            files.extend(polyhedral_outputs(analysis, sid, out, stem, fmt, cells, minkowski, meshes, prepared,
                                            labels_up_to=labels_up_to))
        drawn.append(DrawnState(sid, diagram.n_edges, diagram.faces.count, len(diagram.crossings), diagram.closure_error,
                                diagram.load_line_error, diagram.passed, diagram.embedding.note))
    if on_state is not None:
        on_state(len(wanted), len(wanted), "")
    return DrawResult(tuple(files), tuple(drawn))
