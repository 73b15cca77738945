"""The figures of a sheet set, from whichever render stages exist.

Each source below returns ``SheetFigure`` values for one kind of figure, or
nothing when the stage that draws it is not part of this installation (an
optional module that is absent) or has nothing to draw. Vector figures
(matplotlib) are recorded once (sheets.report.vector); 3D views arrive as PNG.

Sources, in the order the sheets use them (part of the sheet: module):
    model          the frame with labels and supports       (render.form_figure)
    loads          each load case's nodal loads              (render.form_figure)
    force_diagram  form beside reciprocal force diagram      (render.diagram2d.reciprocal_figure);
                   where that stage is absent or fails for a state, the form
                   coloured by force alone, part form_forces  (render.form_figure);
                   frames above the label limit: the force summary
                   (colours, histogram, extremes) instead   (render.force_summary)
    force_diagram  3D views of form and force diagram        (render.view3d.force_views_figure)
    force_diagram  closure of the force diagram              (render.diagram2d.closure_figure)
    cells          each node's force cell                    (render.cells3d.node_cells_figure)
    cells          the polyhedral diagram by polarity, 3D
                   frames with a [polyhedral] table           (render.cells3d.polar_diagram_figure)
    minkowski      the Minkowski-sum view                    (render.minkowski.minkowski_figure)
    serviceability each serviceability combination's displaced
                   shape                                     (render.form_figure.displaced_figure)

One label limit serves the whole set: the template's [tables] labels_up_to,
passed to every figure that labels. Above it a frame is summarised: its
states get the force summary, and the 3D views, closure chart, force cells,
polyhedral diagram and Minkowski view (unreadable masses at that size) are not
drawn; the summary says so, and how closely equilibrium holds, in one line.

Render modules of other stages draw to a path ``f(analysis, state_id, path, **inputs)``, the
inputs being the state's diagrams as the build made them once (sheets.reciprocal.stage).
Matplotlib figures are asked for as ``.rlvec`` (sheets.report.vector: recorded
as vector paths), pyvista renders of 3D frames as PNG. A figure that cannot be drawn for one state
(e.g. a node whose members are coplanar has no closed cell) does not stop the
build: it is left out and the cautions page says which and why.
"""

from __future__ import annotations

import ctypes
import dataclasses
import importlib
import multiprocessing
import os
import signal
import sys
import tempfile
from concurrent.futures import ProcessPoolExecutor
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Callable, Iterable

from matplotlib.figure import Figure

from sheets.analysis import Analysis
from sheets.cache import MISSING, StageCache, content_key, without_loads
from sheets.render import form_figure
from sheets.report.pdf_image import PdfImage, from_png
from sheets.report.templates import Template
from sheets.report.vector import VECTOR_SUFFIX, VectorFigure, read_vector_file, record

Progress = Callable[[str], None]


@dataclass(frozen=True)
class SheetFigure:
    key: str  # file stem in figures/, unique in the set
    part: str  # "model", "loads" or a state part (templates.STATE_PARTS)
    state: str | None  # the state (case or combination) id it shows, if any
    title: str
    caption: str
    vector: VectorFigure | None = None
    png: bytes | None = None  # raster views (3D renders)
    file: bytes = b""  # the file for figures/, made where the figure is drawn (``with_file``)
    image: PdfImage | None = None  # the PNG as a PDF image stream, made there too (``with_file``)

    @property
    def file_name(self) -> str:
        return f"{self.key}.pdf" if self.vector is not None else f"{self.key}.png"

    def file_bytes(self, author: str = "") -> bytes:
        return self.vector.pdf_bytes(self.title, author) if self.vector is not None else self.png

    def with_file(self, author: str) -> "SheetFigure":
        """This figure with its file made, and a raster figure with its PDF image stream (compressing a
        vector figure's PDF, or decoding a view with alpha, is much of its cost: done in the worker that
        drew it, and kept with it in the stage cache, so the PDF stage only places them)."""
        image = from_png(self.png) if self.png is not None else None
        return dataclasses.replace(self, file=self.file_bytes(author), image=image)


@dataclass(frozen=True)
class FigureNote:
    """A figure left out of the set, and why (printed on the cautions page)."""

    text: str


def optional(module: str, name: str) -> Any | None:
    """``module.name`` if that module is installed, else None (its own import errors still raise)."""
    try:
        mod = importlib.import_module(module)
    except ModuleNotFoundError as exc:
        if exc.name == module or module.startswith(f"{exc.name}."):
            return None
        raise
    return getattr(mod, name, None)


def safe_key(*parts: str) -> str:
    text = "-".join(p for p in parts if p)
    return "".join(c if c.isalnum() or c in "-_." else "_" for c in text)


def _vector(fig: Figure) -> VectorFigure:
    try:
        return record(fig)
    finally:
        fig.clear()


def drawn_states(analysis: Analysis) -> list:
    """The states the project asks to draw ([drawing] states; empty = all)."""
    wanted = analysis.project.drawing.states
    return [s for s in analysis.states if not wanted or s.id in wanted]


def summarised(analysis: Analysis, template: Template) -> bool:
    """Whether the frame is above the set's label limit, so that its states get the force summary."""
    return analysis.project.n_members > template.labels_up_to


ROUNDOFF = 1e-9  # relative errors below this are floating-point round-off: one line of text, not a chart


def closure_line(residual: float, tolerance: float) -> str:
    """How closely a state's nodes are in equilibrium (each node's force polygon closes), in one line."""
    verdict = "round-off only" if residual < ROUNDOFF else "within the tolerance" if residual <= tolerance else "BEYOND THE TOLERANCE"
    return (f"Every node's force polygon closes (nodal equilibrium) to {residual:.1e} of the largest force, "
            f"{verdict} (tolerance {tolerance:g}).")


def state_label(state) -> str:
    kind = {"case": "Load case", "prestress": "Prestress", "combination": "Combination"}.get(state.kind, state.kind)
    return f"{kind} {state.id}"


# -- sources: each draws the figures of one state (or of the model, state None) ----

@dataclass(frozen=True)
class Source:
    name: str
    states: Callable[[Analysis], list]  # the states it draws; [None] for the model
    # (analysis, template, scratch, state, prepared): ``prepared`` is the state's diagrams
    # (sheets.reciprocal.stage.StateDiagrams) where the build made them, else None
    draw: Callable[..., Iterable["SheetFigure | FigureNote"]]


def _model(analysis: Analysis, template: Template, scratch: Path, state, prepared=None) -> Iterable[SheetFigure]:
    p = analysis.project
    views = "" if p.dim == 2 else (f" Orthographic views: {', '.join(p.drawing.views)}, each a projection onto the plane "
                                   "named above it with an axis triad, all at the one scale of the scale bar.")
    labels = ("Node and member labels are the project's ids." if p.n_members <= template.labels_up_to
              else f"Labels are omitted for frames above {template.labels_up_to} members; the tables and CSV files carry every id.")
    yield SheetFigure("form-model", "model", None, "Form diagram: geometry, labels and supports",
                      f"The frame as given in the project file.{views} {labels} Triangles mark supports, with the fixed axes named.",
                      vector=_vector(form_figure.model_figure(p, template.labels_up_to)))


def _loads(analysis: Analysis, template: Template, scratch: Path, state, prepared=None) -> Iterable[SheetFigure]:
    p = analysis.project
    title = f"{state_label(state)}: {state.title}"
    how = ("Each loaded node is a dot, darker for a larger load (colour bar); the legend gives the largest load and "
           "the resultant, csv/ and results.json every load." if summarised(analysis, template) else
           "Arrows point in the direction of the load and end at its node.")
    yield SheetFigure(safe_key("loads", state.id), "loads", state.id, f"Loads, {title}",
                      f"Nodal loads of {title} (self-weight included where the case asks for it), "
                      f"magnitudes in {p.units.label('force')}. {how}",
                      vector=_vector(form_figure.loads_figure(p, state.loads, title, template.labels_up_to)))


def _forces(analysis: Analysis, template: Template, scratch: Path, state, prepared=None) -> Iterable[SheetFigure]:
    p = analysis.project
    title = f"{state_label(state)}: {state.title}"
    yield SheetFigure(safe_key("forces", state.id), "form_forces", state.id, f"Member forces, {title}",
                      "Form diagram coloured by force: bluish green solid tension, vermillion dashed compression, grey zero "
                      "force; line width proportional to |force|; labels give each member's force with its sign "
                      "(tension +). Loads black, reactions blue (arrows from their node).",
                      vector=_vector(form_figure.forces_figure(p, state.forces, state.loads, state.reactions, title,
                                                               template.labels_up_to)))


def comparison_figure(analysis: Analysis, comparison) -> SheetFigure:
    """The frame with the members and nodes changed from an earlier revision marked (``comparison``:
    sheets.revision.compare.Comparison). Drawn by the build once it has compared the results, not a source:
    it exists only when a comparison is asked for."""
    from sheets.revision.compare import frame_marks

    p = analysis.project
    marks = frame_marks(comparison, dict(zip(p.node_ids, p.coords.tolist())))
    force = comparison.thresholds["force_change"]
    caption = (f"The frame of this revision; heavy reddish purple: the members changed from {comparison.old} "
               f"in geometry, section or role, in force by more than {force * 100:g} % of their state's largest force, or in "
               f"governing utilisation by more than {comparison.thresholds['utilisation_change']:g}. Added members "
               "are heavy blue and dash-dotted, removed ones dashed grey where they were; squares mark added nodes, "
               "crosses removed ones, rings moved ones (dotted from where they stood). The tables of this section "
               "list every change.")
    return SheetFigure("revision-changes", "comparison", None, "Members changed from the earlier revision", caption,
                       vector=_vector(form_figure.changes_figure(p, marks, f"Changes from {comparison.old}"))
                       ).with_file(p.info.prepared_by)


def _serviceability_states(analysis: Analysis) -> list:
    from sheets.analysis.design_states import design_states

    return [s for s in design_states(analysis).serviceability if s.displacements is not None]


def _displaced(analysis: Analysis, template: Template, scratch: Path, state, prepared=None) -> Iterable[SheetFigure]:
    from sheets.analysis.serviceability import state_displacements

    p = analysis.project
    title = f"{state_label(state)}: {state.title}"
    worst = state_displacements(p, state, None, None)
    yield SheetFigure(safe_key("displaced", state.id), "serviceability", state.id, f"Displaced shape, {title}",
                      "The frame as given (grey) and displaced (blue) under the combination; the displacements are "
                      "exaggerated by the round factor in the legend, lengths are true to the scale bar. "
                      f"The ring marks node {worst.deflection_node}, the largest displacement along the vertical axis.",
                      vector=_vector(form_figure.displaced_figure(p, state.displacements, title, template.labels_up_to,
                                                                  worst.deflection_node)))


def _loaded_cases(analysis: Analysis) -> list:
    return [s for s in analysis.cases if s.kind == "case" and abs(s.loads).max(initial=0.0) > 0]


def _external(module: str, function: str, part: str, title: str, caption: str, analysis: Analysis, scratch: Path,
              state, vector: bool, inputs: dict | None = None) -> list:
    """One figure another render module draws to a path: ``module.function(analysis, state_id, path, **inputs)``.

    ``vector``: ask for ``.rlvec`` (matplotlib figures, kept as vectors), else PNG (pyvista renders).
    ``inputs``: diagrams the build already made, so the render stage does not build them again.
    """
    draw = optional(module, function)
    key = safe_key(function.removesuffix("_figure").replace("_", "-"), state.id)
    path = scratch / f"{key}{VECTOR_SUFFIX if vector else '.png'}"
    label = f"{state_label(state)}: {state.title}"
    try:
        written = Path(draw(analysis, state.id, path, **(inputs or {})) or path)
    except Exception as exc:  # one figure that cannot be drawn must not stop the sheet set
        return [FigureNote(f"{title} of {label} is not in this set: {type(exc).__name__}: {exc}")]
    if written.suffix == VECTOR_SUFFIX:  # the module may pick its own format: go by what it wrote
        return [SheetFigure(key, part, state.id, f"{title}, {label}", caption, vector=read_vector_file(written))]
    if written.suffix.lower() != ".png":
        return [FigureNote(f"{title} of {label} is not in this set: {function} wrote a {written.suffix} file")]
    png = written.read_bytes()
    return [SheetFigure(key, part, state.id, f"{title}, {label}", caption, png=png)]


RECIPROCAL = ("sheets.render.diagram2d", "reciprocal_figure")
RECIPROCAL_CAPTION = (
    "Left, the form diagram: members coloured by sense (bluish green solid tension, vermillion dashed compression, grey "
    "zero force), width proportional to |force|, labels with the signed force (tension +), loads black and reactions "
    "blue, spaces lettered in Bow's notation (the same letters in every state). Right, drawn at the same scale, the "
    "reciprocal force diagram: each edge parallel to its member, its length the force at the drawn scale, labelled by "
    "the member; its points carry the space letters in lower case.")


PROJECTED_CAPTION = (
    " The frame is three-dimensional: both diagrams are projections onto the plane named above each panel (axis "
    "triad in the corner), so force edges are foreshortened and each edge's label gives the member's true force.")


def _summary(analysis: Analysis, template: Template, scratch: Path, state, prepared=None) -> Iterable[SheetFigure]:
    """The force summary of one state of a frame above the label limit (sheets.render.force_summary)."""
    from sheets.render.force_summary import force_summary_figure

    p = analysis.project
    title = f"{state_label(state)}: {state.title}"
    limit = template.labels_up_to
    note = closure_line(state.checks.residual, state.checks.tolerance)
    caption = (f"The frame has {p.n_members} members, above this set's label limit of {limit}, so its forces are "
               f"summarised: the form in the project's views with every member coloured by its force on one diverging "
               f"scale centred at zero (vermillion compression, light grey zero, bluish green tension; colour bar in "
               f"{p.units.label('force')}), a histogram of the member forces with tension and compression apart, and "
               f"the extreme members. The force diagram, node force cells and Minkowski-sum view are not drawn at this "
               f"size (`sheets draw` draws them on request); csv/forces.csv lists every member's force.")
    yield SheetFigure(safe_key("summary", state.id), "force_diagram", state.id, f"Member forces summarised, {title}",
                      caption, vector=_vector(force_summary_figure(p, state.forces, title, note=note)))


def _form_and_force(analysis: Analysis, template: Template, scratch: Path, state,
                    prepared=None) -> Iterable[SheetFigure | FigureNote]:
    """The reciprocal figure (form beside force diagram) where that stage exists; else the coloured form alone.
    Frames above the label limit get the force summary instead."""
    if summarised(analysis, template):
        yield from _summary(analysis, template, scratch, state, prepared)
        return
    if optional(*RECIPROCAL) is not None:
        caption = RECIPROCAL_CAPTION + (PROJECTED_CAPTION if analysis.project.dim == 3 else "")
        items = _external(*RECIPROCAL, "force_diagram", "Form and force diagrams", caption, analysis,
                          scratch, state, vector=True,
                          inputs={**_prepared_diagram(prepared), "labels_up_to": template.labels_up_to})
        yield from items
        if any(isinstance(i, SheetFigure) for i in items):
            return
    yield from _forces(analysis, template, scratch, state)


def _prepared_diagram(prepared) -> dict:
    return {"diagram": prepared.force} if prepared is not None and prepared.force is not None else {}


def _prepared_cells(prepared) -> dict:
    return {"cells": prepared.cells} if prepared is not None and prepared.cells is not None else {}


def _prepared_view(prepared) -> dict:
    return {"view": prepared.minkowski} if prepared is not None and prepared.minkowski is not None else {}


def _polar(analysis: Analysis, template: Template, scratch: Path, state, prepared=None) -> Iterable[SheetFigure | FigureNote]:
    """The connected polyhedral force diagram, where the project gives a cell complex and a lift exists."""
    from sheets.reciprocal.polarity import project_polarity

    if summarised(analysis, template):
        return []
    polar = prepared.polar if prepared is not None and prepared.polar is not None else project_polarity(analysis, state.id)
    if not polar.usable:
        return [FigureNote(f"Polyhedral force diagram of {state_label(state)}: {polar.note}")]
    return _external("sheets.render.cells3d", "polar_diagram_figure", "cells", "Polyhedral force diagram (polarity)",
                     "One connected polyhedral force diagram from a stress function lifted over the cell complex: "
                     "each member is a planar polygon perpendicular to it with area equal to its force (bluish green "
                     "tension, vermillion compression); around each node the polygons close into a cell.",
                     analysis, scratch, state, vector=False, inputs={"polar": polar, "labels_up_to": template.labels_up_to})


def _has_complex(analysis: Analysis) -> list:
    spec = analysis.project.polyhedral
    return drawn_states(analysis) if analysis.project.dim == 3 and (spec.cells or spec.find_tetrahedra) else []


def _state_figure(module: str, function: str, part: str, title: str, caption: str, vector_dims=(2, 3), dims=(2, 3),
                  inputs: Callable[[Any], dict] = lambda prepared: {}, labels: bool = False):
    """A source of one figure per drawn state, drawn by ``module.function``; none for frames above the label
    limit (the force summary stands for them). ``labels``: the function takes the set's ``labels_up_to``."""
    def draw(analysis: Analysis, template: Template, scratch: Path, state, prepared=None):
        if summarised(analysis, template):
            return []
        extra = {"labels_up_to": template.labels_up_to} if labels else {}
        return _external(module, function, part, title, caption, analysis, scratch, state,
                         vector=analysis.project.dim in vector_dims, inputs={**inputs(prepared), **extra})

    def states(analysis: Analysis) -> list:
        return drawn_states(analysis) if analysis.project.dim in dims and optional(module, function) is not None else []

    return Source(function, states, draw)


SOURCES: tuple[Source, ...] = (
    Source("model", lambda analysis: [None], _model),
    Source("loads", _loaded_cases, _loads),
    Source("form and force", drawn_states, _form_and_force),
    _state_figure("sheets.render.view3d", "force_views_figure", "force_diagram", "Form and force diagrams in 3D views",
                  "Form (top row) and force diagram (bottom row) rendered in orthographic views, every view of a row at "
                  "one scale (its bar true for lengths parallel to the view), an axis triad in each; tube radius "
                  "proportional to |force|, colours as in the form diagram; force labels give the true force.",
                  dims=(3,), inputs=_prepared_diagram, labels=True),
    _state_figure("sheets.render.diagram2d", "closure_figure", "force_diagram", "Closure of the force diagram",
                  "How closely the drawn force diagram closes: each node's force polygon and the load line (left), each "
                  "edge against its analysed force (middle), both relative to the largest force and against the tolerance; "
                  "and the load line drawn head to tail (right).", inputs=_prepared_diagram),
    _state_figure("sheets.render.cells3d", "node_cells_figure", "cells", "Force cells at the nodes",
                  "Each node's force cell (Rankine's polyhedra, one closed cell per node; a polygon in 2D) drawn at the node, "
                  "all at one scale: a face per member with area |force| (bluish green tension, vermillion compression) "
                  "and a face for the external force (black load, blue reaction).", vector_dims=(2,),
                  inputs=_prepared_cells),
    Source("polyhedral diagram", _has_complex, _polar),
    _state_figure("sheets.render.minkowski", "minkowski_figure", "minkowski", "Minkowski-sum view",
                  "The sum (1 - s) form + s force: every member becomes a rectangle (2D) or prism (3D) whose size is "
                  "proportional to |force| x length, its share of the load path (bluish green tension, vermillion "
                  "compression); the totals are set beside Maxwell's load path theorem.", vector_dims=(2,),
                  inputs=_prepared_view, labels=True),
    Source("displaced shape", _serviceability_states, _displaced),
)


# -- running the sources: in order, or on two worker processes ----------------

_WORK: dict = {}  # set in forked worker processes only: what the parent handed over


def _run(args, index: int, state_id: str | None) -> list:
    analysis, template, scratch, sources, diagrams = args
    state = None if state_id is None else analysis.state(state_id)
    prepared = None if state_id is None else diagrams.get(state_id)
    author = analysis.project.info.prepared_by
    return [item.with_file(author) if isinstance(item, SheetFigure) else item
            for item in sources[index].draw(analysis, template, scratch, state, prepared)]


def _task(index: int, state_id: str | None) -> list:
    return _run(_WORK["args"], index, state_id)


def _start_worker(args, parent: int) -> None:
    _die_with_parent(parent)
    for sig in (signal.SIGTERM, signal.SIGHUP):  # not the command's handler: terminate() must end a worker
        signal.signal(sig, signal.SIG_DFL)
    signal.signal(signal.SIGINT, signal.SIG_IGN)  # Ctrl-C reaches the whole group; the parent stops the workers
    _WORK["args"] = args


PR_SET_PDEATHSIG = 1  # linux/prctl.h


def _die_with_parent(parent: int) -> None:
    """Ask Linux to SIGKILL this worker when the build that forked it dies, even by SIGKILL (no
    cleanup code of the parent runs then); exit at once if that has already happened."""
    if sys.platform.startswith("linux"):
        try:
            ctypes.CDLL(None, use_errno=True).prctl(PR_SET_PDEATHSIG, signal.SIGKILL, 0, 0, 0)
        except (OSError, AttributeError):
            pass
    if os.getppid() != parent:
        os._exit(1)


def _stop_workers(pool: ProcessPoolExecutor) -> None:
    """Cancel what has not started and end the workers now (Ctrl-C, SIGTERM, an error): leaving
    the pool normally would wait for every submitted figure."""
    workers = list((getattr(pool, "_processes", None) or {}).values())  # Python < 3.14 has no public way to end them
    pool.shutdown(wait=False, cancel_futures=True)
    for worker in workers:
        worker.terminate()
    for worker in workers:
        worker.join(timeout=5)
        if worker.is_alive():
            worker.kill()


def figure_inputs(base: str, source: Source, state, prepared) -> tuple:
    """What one figure depends on: ``base`` (``figure_base``), its source, its state (loads, forces,
    reactions, displacements, checks) and the key of the state's diagrams. A change to one case
    redraws only the figures of the states that case is in."""
    return (base, source.name, state, prepared.key if prepared is not None else "")


def figure_base(analysis: Analysis, template: Template) -> str:
    """The digest of what every figure depends on: the project without its loads (sheets.cache.without_loads)
    and the template; made once per build, not once per figure."""
    return content_key("figure base", without_loads(analysis.project), template)


def collect_figures(analysis: Analysis, template: Template, progress: Progress | None = None, workers: int | None = None,
                    sources: tuple[Source, ...] | None = None, diagrams: dict | None = None,
                    cache: StageCache | None = None) -> tuple[tuple[SheetFigure, ...], tuple[str, ...]]:
    """Every figure of the set in a fixed order, and notes on the ones left out.

    Figures are independent, so with ``workers`` > 1 (default: up to 2, the cores a build
    machine has) they are drawn in forked worker processes; the order, and so the bytes of
    the sheet set, do not depend on which finishes first. Where fork is not available they
    are drawn one after another. ``cache`` (sheets.cache.StageCache): figures whose inputs
    (``figure_inputs``) are unchanged are read from it, not drawn again.
    """
    note = progress or (lambda _m: None)
    sources = SOURCES if sources is None else sources
    diagrams = diagrams or {}
    cache = cache or StageCache(None)
    tasks = [(i, None if state is None else state.id) for i, src in enumerate(sources) for state in src.states(analysis)]
    base = figure_base(analysis, template) if cache.folder is not None else ""
    looked = [cache.lookup("figure", figure_inputs(base, sources[i], None if sid is None else analysis.state(sid),
                                                   diagrams.get(sid))) for i, sid in tasks]
    results: list[list | None] = [None if value is MISSING else value for _, value in looked]
    todo = [k for k, value in enumerate(results) if value is None]
    workers = min(2, os.cpu_count() or 1) if workers is None else workers
    with tempfile.TemporaryDirectory(prefix="sheets-figures-") as scratch:
        args = (analysis, template, Path(scratch), sources, diagrams)

        def say(n: int, k: int) -> int:
            i, sid = tasks[k]
            note(f"figures: {sources[i].name} {sid or ''} ({n + 1}/{len(todo)})")
            return k

        def made(k: int, value: list) -> None:
            results[k] = value
            cache.store("figure", looked[k][0], value)

        if workers > 1 and len(todo) > 1 and "fork" in multiprocessing.get_all_start_methods():
            context = multiprocessing.get_context("fork")
            with ProcessPoolExecutor(workers, mp_context=context, initializer=_start_worker,
                                     initargs=(args, os.getpid())) as pool:
                try:
                    futures = [pool.submit(_task, *tasks[k]) for k in todo]
                    for n, (k, future) in enumerate(zip(todo, futures)):
                        made(say(n, k), future.result())
                except BaseException:
                    _stop_workers(pool)
                    raise
        else:
            for n, k in enumerate(todo):
                made(say(n, k), _run(args, *tasks[k]))
    figures = [item for items in results for item in items if isinstance(item, SheetFigure)]
    notes = [item.text for items in results for item in items if isinstance(item, FigureNote)]
    return tuple(_unique_keys(figures)), tuple(notes)


def _unique_keys(figures: list[SheetFigure]) -> list[SheetFigure]:
    """State ids that differ only in characters a file name cannot hold get a numbered suffix."""
    seen: dict[str, int] = {}
    out = []
    for f in figures:
        n = seen.get(f.key, 0)
        seen[f.key] = n + 1
        out.append(f if n == 0 else SheetFigure(**{**f.__dict__, "key": f"{f.key}-{n + 1}"}))
    return out
