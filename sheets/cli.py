"""The `sheets` command: parse arguments, call sheets.build, print readable tables.

Exit codes (DESIGN.md): 0 success, 2 bad input or an output that cannot be
written, 3 the frame cannot carry the loads (mechanism), 4 a verification check
failed, 5 the results are written but the design outcome has flags (members over
utilisation 1, cables in compression, struts in tension, uplift at supports,
deflection over the limit); 4 wins over 5; 1 an internal error (a bug: one line
on stderr asking for a report, the traceback only with SHEETS_DEBUG=1);
130 / 143 / 129 stopped by Ctrl-C / SIGTERM / SIGHUP (nothing half-written is
published).

What the user wrote (titles, ids, file paths, messages quoting the file) is
printed literally: the consoles never turn ``:100:`` into an emoji, and such
text is printed with markup off (or escaped) so ``[x]`` stays ``[x]``.
"""

from __future__ import annotations

import argparse
import importlib
import os
import signal
import sys
import threading
from contextlib import contextmanager
from typing import Iterator, Sequence

from rich.console import Console
from rich.markup import escape
from rich.progress import BarColumn, Progress, SpinnerColumn, TextColumn, TimeElapsedColumn
from rich.table import Table

from sheets import __version__
from sheets.errors import (EXIT_BAD_INPUT, EXIT_BATCH_FAILURES, EXIT_CHECK_FAILED, EXIT_DESIGN_FLAGS, EXIT_OK, MechanismError,
                           OutputError, ProjectError)
from sheets.render import DRAW_FORMATS


class _OnFirstUse:
    """A module imported when one of its names is first used: `sheets --version` and `--help`
    then start without numpy and scipy (bench/bench_startup.py measures it)."""

    def __init__(self, name: str):
        self._name = name

    def __getattr__(self, attr: str):
        return getattr(importlib.import_module(self._name), attr)


build = _OnFirstUse("sheets.build")
np = _OnFirstUse("numpy")

TOP_N = 25  # rows shown per table on screen; the CSV files carry all of them
MAX_REPORT_LINES = 12  # of a failed build's own messages, in a batch report

out = Console(highlight=False, emoji=False)
err = Console(stderr=True, highlight=False, emoji=False)
EXIT_INTERNAL = 1  # a bug in sheets, not in the input


def _fixed(value: float, digits: int = 3) -> str:
    """Thousands-separated fixed point, with no '-0.000' for values that round to zero."""
    return f"{round(float(value), digits) + 0.0:,.{digits}f}"


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="sheets",
        description="Calculation sheets for pin-jointed frames: forces, determinacy, graphic statics, load path.",
    )
    parser.add_argument("--version", action="version", version=f"sheets {__version__}")
    sub = parser.add_subparsers(dest="command", required=True, metavar="COMMAND")

    p = sub.add_parser("check", help="validate a project file and report the determinacy of the frame")
    p.add_argument("project", help="the project file (.toml)")
    p.set_defaults(run=_check)

    p = sub.add_parser("solve", help="solve every load case and combination; print and export the results")
    p.add_argument("project", help="the project file (.toml)")
    p.add_argument("--json", metavar="FILE", help="write the results document (schema sheets.results/1) here")
    p.add_argument("--csv", metavar="DIR", help="write the results as CSV tables into this folder")
    p.add_argument("--quiet", action="store_true", help="print only the summary, not the force tables")
    p.set_defaults(run=_solve)

    p = sub.add_parser("draw", help="draw each state's form and force diagrams (figures; DXF and JSON on request)")
    p.add_argument("project", help="the project file (.toml)")
    p.add_argument("--case", metavar="ID", action="append", dest="cases",
                   help="a case or combination to draw (repeat for more; default: [drawing] states, else all)")
    p.add_argument("--out", metavar="DIR", help="output folder (default: <project folder>/out/<project name>-diagrams/)")
    p.add_argument("--format", choices=DRAW_FORMATS, default="png", help="figure format (default png)")
    p.add_argument("--dxf", action="store_true", help="also write each diagram as a DXF drawing")
    p.add_argument("--diagram-json", action="store_true", help="also write each diagram as JSON (schema sheets.diagram/1)")
    p.add_argument("--cells", action="store_true",
                   help="also draw each node's force cell (3D) or force polygon (2D), and the polyhedral diagram where [polyhedral] gives one")
    p.add_argument("--minkowski", action="store_true", help="also draw the Minkowski-sum view (load path per member)")
    p.add_argument("--meshes", action="store_true", help="3D: also write the cells and Minkowski pieces as OBJ and VTP meshes")
    p.set_defaults(run=_draw)

    p = sub.add_parser("build", help="write the PDF calculation sheet set, results JSON/CSV and every figure")
    p.add_argument("project", help="the project file (.toml)")
    p.add_argument("--out", metavar="DIR", help="output folder (default: <project folder>/out/<project name>/)")
    p.add_argument("--force", action="store_true",
                   help="make every stage anew instead of reusing what an earlier build made from the same inputs")
    p.add_argument("--watch", action="store_true",
                   help="build, then build again whenever the project or a file it includes is saved (Ctrl-C stops)")
    p.add_argument("--compare", metavar="OLD",
                   help="add a revision comparison with an earlier revision: its project file or results.json")
    _threshold_options(p)
    p.set_defaults(run=_build)

    p = sub.add_parser("diff", help="list what changed between two revisions (project files or results JSON)")
    p.add_argument("old", help="the earlier revision: a project file or its results.json")
    p.add_argument("new", help="the later revision: a project file or its results.json")
    _threshold_options(p)
    p.add_argument("--json", metavar="FILE", help="also write the comparison (schema sheets.comparison/1) here")
    p.set_defaults(run=_diff)

    p = sub.add_parser("batch", help="build the sheet sets of many projects, going on past failures")
    p.add_argument("paths", nargs="+", metavar="PATH", help="project files, or folders searched for *.toml")
    p.add_argument("--jobs", type=int, default=1, metavar="N", help="builds run at the same time on this machine (default 1)")
    p.add_argument("--scheduler", metavar="ADDRESS",
                   help="run on an existing Dask distributed cluster, e.g. tcp://host:8786 (workers must see the same paths)")
    p.set_defaults(run=_batch)

    p = sub.add_parser("import", help="read a frame drawn in CAD (DXF) into a new project file to complete")
    p.add_argument("drawing", help="the drawing (.dxf)")
    p.add_argument("--out", metavar="FILE", required=True, help="the project file to write (must not exist)")
    p.add_argument("--member-layer", metavar="LAYER", action="append", default=[], dest="member_layers",
                   help="a layer whose lines are members (repeat for more; default: every layer but the support layers)")
    p.add_argument("--support-layer", metavar="LAYER=AXES", action="append", default=[], dest="support_layers",
                   help="a layer whose points or blocks are supports fixing AXES, e.g. pins=xyz (repeat for more; "
                        "default: layers named ...supports-<axes>)")
    p.add_argument("--dimension", type=int, choices=(2, 3), help="2 or 3 (default: 2 when every line lies at one z)")
    p.add_argument("--unit", metavar="UNIT", help="the drawing's length unit when it does not state one (m, mm, cm, in, ft)")
    p.add_argument("--snap", type=float, metavar="DISTANCE",
                   help="ends closer than this (drawing units) are one node (default: a millionth of the drawing's size)")
    p.set_defaults(run=_import)
    return parser


def _threshold(text: str) -> float:
    value = float(text)
    if not value >= 0:  # also refuses nan
        raise argparse.ArgumentTypeError(f"must be a number at or above 0, got {text}")
    return value


def _threshold_options(p: argparse.ArgumentParser) -> None:
    """The thresholds of a revision comparison (`diff`, `build --compare`)."""
    p.add_argument("--force-change", type=_threshold, default=0.01, metavar="FRACTION",
                   help="a member force counts as changed beyond this fraction of the state's largest force (default 0.01)")
    p.add_argument("--utilisation-change", type=_threshold, default=0.01, metavar="AMOUNT",
                   help="a utilisation counts as changed beyond this (default 0.01)")


class PlainLines:
    """Stands in for the bar where stderr is not a terminal (a log file, CI), where a transient bar
    shows nothing: one plain line per stage, i.e. per update that moves the count on."""

    def __init__(self, command: str):
        self.command = command

    def add_task(self, description: str, total=None) -> int:
        return 0

    def update(self, task, description: str | None = None, completed=None, **_ignored) -> None:
        if description and completed is not None:
            say(self.command, description)


def say(command: str, text: str) -> None:
    err.print(f"[{command}] {text}", markup=False, highlight=False, soft_wrap=True)


@contextmanager
def progress_bar(first: str = "starting", command: str = "sheets"):
    """A transient bar with a description, on stderr; yields (bar, task) for the caller to update.
    Where stderr is not a terminal, plain lines instead (``PlainLines``)."""
    if not err.is_terminal:
        yield PlainLines(command), 0
        return
    with Progress(TextColumn("{task.description}"), BarColumn(), TextColumn("{task.completed}/{task.total}"),
                  TimeElapsedColumn(), console=err, transient=True) as bar:
        yield bar, bar.add_task(first, total=None)


@contextmanager
def progress_notes(command: str = "sheets") -> Iterator:
    """A transient spinner naming the stage being worked on (stderr, so stdout stays clean);
    where stderr is not a terminal, one plain line per stage."""
    if not err.is_terminal:
        yield lambda message: say(command, message)
        return
    with Progress(SpinnerColumn(), TextColumn("{task.description}"), TimeElapsedColumn(), console=err, transient=True) as bar:
        task = bar.add_task("starting", total=None)
        yield lambda message: bar.update(task, description=message)


def _determinacy_table(det) -> Table:
    t = Table(title="Stability and determinacy", show_header=False)
    t.add_column("quantity")
    t.add_column("value", justify="right")
    rows = [
        ("nodes / members", f"{det.n_nodes} / {det.n_members}"),
        ("fixed / free translations", f"{det.n_fixed} / {det.n_free}"),
        ("rank of equilibrium matrix", str(det.rank)),
        ("self-stress states s", str(det.self_stress)),
        ("mechanisms k", str(det.mechanisms)),
        ("Maxwell's rule m - d n + fixed = s - k", f"{det.maxwell} = {det.self_stress - det.mechanisms}  {'holds' if det.maxwell_holds else 'FAILS'}"),
        ("conditioning (smallest kept / largest singular value)", f"{det.conditioning:.3e}"),
        ("null-space residual (relative)", f"{det.null_residual:.1e}  {'verified' if det.bases_verified else 'FAILS'}"),
        ("route", det.route),
    ]
    for row in rows:
        t.add_row(*row)
    return t


def _check(args) -> int:
    project, det = build.check(args.project)
    out.print(f"[bold]{escape(project.info.title)}[/bold]  ({project.dim}D, {project.n_nodes} nodes, {project.n_members} members, "
              f"{len(project.cases)} cases, {len(project.combinations)} combinations)")
    out.print(_determinacy_table(det))
    out.print(f"The frame is {det.classification}.")
    if det.mechanisms:
        out.print("No load case has a component along a mechanism: `sheets solve` and `sheets build` will carry them.")
    return EXIT_OK


def _forces_table(analysis, state) -> Table:
    p = analysis.project
    u = p.units
    f = u.factor("force")
    order = np.argsort(-np.abs(state.forces), kind="stable")
    shown = order[:TOP_N]
    extra = f" (largest {TOP_N} of {p.n_members}; all in the CSV files)" if p.n_members > TOP_N else ""
    t = Table(title=escape(f"{state.kind} {state.id}: {state.title}{extra}"))
    t.add_column("member")
    t.add_column("nodes")
    t.add_column(escape(f"force [{u.label('force')}]"), justify="right")
    t.add_column("sense")
    for e in shown:
        a, b = p.ends[e]
        val = state.forces[e] / f
        sense = "tension" if val > 1e-9 * max(1.0, abs(val)) else "compression" if val < -1e-9 * max(1.0, abs(val)) else "zero"
        t.add_row(escape(p.member_ids[e]), escape(f"{p.node_ids[a]}-{p.node_ids[b]}"), _fixed(val), sense)
    return t


def _reactions_table(analysis, state) -> Table:
    p = analysis.project
    u = p.units
    f = u.factor("force")
    t = Table(title=escape(f"Reactions, {state.id} [{u.label('force')}]"))
    t.add_column("node")
    for axis in p.axes:
        t.add_column(axis, justify="right")
    supported = np.flatnonzero(p.fixed.any(axis=1))
    for n in supported[:TOP_N]:
        t.add_row(escape(p.node_ids[n]), *[_fixed(state.reactions[n, a] / f) if p.fixed[n, a] else "free" for a in range(p.dim)])
    return t


def _checks_table(analysis) -> Table:
    p = analysis.project
    t = Table(title="Verification of every state")
    for col in ("state", "method", "nodal residual", "resultant", "moment", f"load path [{p.units.label('load_path')}]", "load path error", "result"):
        t.add_column(escape(col), justify="left" if col in ("state", "method", "result") else "right")
    lp = p.units.factor("load_path")
    for s in analysis.states:
        c = s.checks
        t.add_row(escape(s.id), s.method, f"{c.residual:.1e}", f"{c.resultant:.1e}", f"{c.moment:.1e}",
                  _fixed(analysis.load_path(s) / lp), f"{c.load_path_error:.1e}",
                  "[green]pass[/green]" if c.passed else "[red]FAIL[/red]")
    return t


def _solve(args) -> int:
    build.check_result_targets(args.json, args.csv)  # before solving: a bad target costs no time
    with progress_notes("solve") as note:
        analysis = build.solve(args.project, note)
        written = build.write_results(analysis, args.json, args.csv)
    p = analysis.project
    out.print(f"[bold]{escape(p.info.title)}[/bold]  ({p.dim}D, {p.n_nodes} nodes, {p.n_members} members)")
    out.print(_determinacy_table(analysis.determinacy))
    if not args.quiet:
        for state in analysis.states:
            out.print(_forces_table(analysis, state))
            if p.fixed.any():
                out.print(_reactions_table(analysis, state))
    out.print(_checks_table(analysis))
    outcome = build.design_outcome_of(analysis)
    _print_outcome(outcome, p.units)
    for path in written:
        out.print(f"wrote {path}", markup=False)
    if not analysis.passed:
        err.print("[red]A verification check failed: the results are written but must not be used as they stand.[/red]")
        return EXIT_CHECK_FAILED
    return EXIT_DESIGN_FLAGS if outcome.flagged else EXIT_OK


def _print_outcome(outcome, units) -> None:
    """The design outcome, flags first (the same sentences as the cover of the sheets)."""
    title = "[bold red]Design outcome: flagged[/bold red]" if outcome.flagged else "[bold]Design outcome[/bold]"
    out.print(title)
    for sentence in outcome.sentences(units.label("force"), units.factor("force")):
        out.print(f"  {sentence}", markup=False)


def _build(args) -> int:
    if args.watch:
        return _watch(args)
    return _report_build(_build_once(args, args.force))


def _build_once(args, force: bool):
    stages = build.BUILD_STAGES
    with progress_bar(command="build") as (bar, task):
        bar.update(task, total=len(stages))

        def note(message: str) -> None:
            if message in stages:
                bar.update(task, completed=stages.index(message), description=message)
            else:
                bar.update(task, description=message)

        result = build.build_sheets(args.project, args.out, note, force=force, compare=args.compare,
                                    force_change=args.force_change, utilisation_change=args.utilisation_change)
        bar.update(task, completed=len(stages), description="done")
    return result


def _report_build(result) -> int:
    out.print(f"wrote {result.pdf}", markup=False)
    out.print(f"  and {len(result.files) - 1} more files beside it (results.json, csv/, figures/, manifest.json)")
    if result.comparison is not None:
        from sheets.revision.compare import summary

        out.print(f"  {summary(result.comparison)}", markup=False, soft_wrap=True)
    for folder in result.kept:
        err.print(f"kept an earlier set, it holds files sheets did not write: {folder}", markup=False)
    if result.outcome is not None:
        _print_outcome(result.outcome, result.outcome_units)
    if not result.passed:
        err.print("[red]A verification check failed: the sheets say so and must not be used as they stand.[/red]")
        return EXIT_CHECK_FAILED
    return EXIT_DESIGN_FLAGS if result.outcome is not None and result.outcome.flagged else EXIT_OK


def _watch(args) -> int:
    """Build now and on every saved change; a build that fails says why and the watch goes on
    (the last whole set stays in place). Ctrl-C ends it (exit 130, as for any command)."""
    import time

    from sheets.watch import shown, watch

    def one(round_) -> tuple[str, ...]:
        if round_.changed:
            out.print(f"changed: {shown(round_.changed, args.project)}", markup=False)
        started = time.perf_counter()
        try:
            result = _build_once(args, args.force and round_.number == 1)
        except (ProjectError, MechanismError, OutputError) as exc:
            _report_error(exc)
            out.print("not built; the last set is unchanged. Watching for the next save (Ctrl-C stops).")
            return ()
        _report_build(result)
        out.print(f"build {round_.number} in {time.perf_counter() - started:.1f} s; {result.stages}", markup=False)
        out.print(f"watching {len(set(result.inputs))} files for changes (Ctrl-C stops)")
        return result.inputs

    watch(args.project, one)
    return EXIT_OK


def _draw(args) -> int:
    with progress_bar("reading project", "draw") as (bar, task):

        def on_state(done: int, total: int, state_id: str) -> None:
            bar.update(task, completed=done, total=total, description=f"drawing {state_id}" if state_id else "done")

        result = build.draw_project(args.project, args.out, args.cases, args.format, args.dxf, args.diagram_json,
                                    lambda message: bar.update(task, description=message), on_state,
                                    cells=args.cells, minkowski=args.minkowski, meshes=args.meshes)
    t = Table(title="Force diagrams (closure relative to the largest force)")
    for col in ("state", "edges", "spaces", "crossings", "largest edge error", "load line", "result"):
        t.add_column(col, justify="left" if col in ("state", "result") else "right")
    for s in result.states:
        t.add_row(escape(s.state_id), str(s.edges), str(s.spaces), str(s.crossings), f"{s.closure_error:.1e}",
                  f"{s.load_line_error:.1e}", "[green]closes[/green]" if s.passed else "[red]DOES NOT CLOSE[/red]")
    out.print(t)
    if result.states:
        out.print(f"embedding: {result.states[0].embedding}", markup=False)
    for path in result.files:
        out.print(f"wrote {path}", markup=False)
    if not result.passed:
        err.print("[red]A force diagram does not close: the analysed forces are not in equilibrium to the tolerance.[/red]")
        return EXIT_CHECK_FAILED
    return EXIT_OK


class Terminated(KeyboardInterrupt):
    """SIGTERM or SIGHUP (the terminal closed), raised in the main thread so the run unwinds as
    for Ctrl-C: figure workers are stopped, the staging folder removed and the output lock released."""

    def __init__(self, signum: int):
        super().__init__(signum)
        self.signum = signal.Signals(signum)


STOP_SIGNALS = (signal.SIGTERM, signal.SIGHUP)


@contextmanager
def _stop_signals_unwind() -> Iterator[None]:
    if threading.current_thread() is not threading.main_thread():
        yield
        return

    def stop(signum, _frame):
        raise Terminated(signum)

    # a signal ignored by whoever started us (nohup ignores SIGHUP) stays ignored
    previous = {sig: signal.signal(sig, stop) for sig in STOP_SIGNALS if signal.getsignal(sig) is not signal.SIG_IGN}
    try:
        yield
    finally:
        for sig, handler in previous.items():
            signal.signal(sig, handler)
def _diff(args) -> int:
    import json

    from sheets.export.atomic import write_atomic
    from sheets.revision.compare import comparison_document, display_value

    with progress_notes() as note:
        c = build.compare_revisions(args.old, args.new, args.force_change, args.utilisation_change, note)
    out.print(f"from {c.old}\n  to {c.new}", markup=False)
    if c.empty:
        out.print("No change in geometry, loads, states, member forces, utilisations or determinacy.")
    t = Table(title="Changes")
    for col in ("change", "item", "state", "old", "new"):
        t.add_column(col)

    def text(value, kind: str) -> str:
        value = display_value(value, kind, c.units)
        unit = f" {c.units[kind]}" if kind else ""
        if isinstance(value, float):
            return f"{value:.6g}{unit}"
        if isinstance(value, list):
            return "[" + ", ".join(f"{v:.6g}" if isinstance(v, float) else str(v) for v in value) + "]" + unit
        return "" if value is None else str(value)

    for change in c.geometry + c.states + c.loads + c.determinacy + c.forces + c.utilisations:
        t.add_row(change.what, change.item, change.state, text(change.old, change.kind), text(change.new, change.kind))
    if t.row_count:
        out.print(t)
    out.print(f"members changed: {len(c.changed_members)}", markup=False)
    if args.json:
        path = write_atomic(args.json, json.dumps(comparison_document(c), indent=1, sort_keys=True) + "\n")
        out.print(f"wrote {path}", markup=False)
    return EXIT_OK


def _batch(args) -> int:
    from sheets.batch import project_files, run_batch

    projects = project_files(args.paths)
    with progress_bar("building", "batch") as (bar, task):
        bar.update(task, total=len(projects))

        def done(outcome, k: int, total: int) -> None:  # one line per project, on a terminal or in a log
            bar.update(task, completed=k)
            say("batch", f"{k}/{total} {outcome.project}: exit {outcome.exit_code} ({outcome.seconds:.1f} s)")

        outcomes = run_batch(projects, args.jobs, args.scheduler, done)
    failed = [o for o in outcomes if o.exit_code not in (EXIT_OK, EXIT_DESIGN_FLAGS)]
    flagged = [o for o in outcomes if o.exit_code == EXIT_DESIGN_FLAGS]
    out.print(f"{len(outcomes) - len(failed)} of {len(outcomes)} projects built"
              + (f", {len(flagged)} of them with design flags (exit 5: see each cover)" if flagged else "") + ".", markup=False)
    for o in flagged:
        out.print(f"built, with design flags: {o.project}", markup=False, soft_wrap=True)
    for o in failed:  # plain lines, not a table: paths and messages are long and must stay whole
        out.print(f"not built (exit {o.exit_code}): {o.project}", markup=False, soft_wrap=True)
        for line in o.output.splitlines()[-MAX_REPORT_LINES:]:
            out.print(f"    {line}", markup=False, soft_wrap=True)
    if failed:
        return EXIT_BATCH_FAILURES
    return EXIT_DESIGN_FLAGS if flagged else EXIT_OK


def _import(args) -> int:
    layers = {}
    for spec in args.support_layers:
        layer, sep, axes = spec.rpartition("=")
        if not sep or not layer:
            err.print(f"--support-layer takes LAYER=AXES, e.g. pins=xyz; got '{spec}'", markup=False)
            return EXIT_BAD_INPUT
        layers[layer] = axes.lower()
    frame = build.import_drawing(args.drawing, args.out, args.member_layers, layers, args.dimension, args.unit, args.snap)
    out.print(f"wrote {args.out}: {frame.dim}D, {len(frame.node_ids)} nodes, {len(frame.member_ids)} members, "
              f"{len(frame.supports)} supported nodes (drawing in {frame.unit})", markup=False)
    for note in frame.notes:
        out.print(f"  {note}", markup=False)
    out.print("Add sections, materials and loads before solving (docs/project-file.md).", markup=False)
    return EXIT_OK


def _report_error(exc: OutputError | ProjectError | MechanismError) -> int:
    """Say what is wrong with the input or the output folder, and what to do; return the exit code."""
    if isinstance(exc, OutputError):
        err.print("[red]The output cannot be written.[/red]")
        err.print(f"  {exc}", markup=False, soft_wrap=True)  # unwrapped: the path stays whole to copy
    elif isinstance(exc, ProjectError):
        err.print(f"[red]The project has {len(exc.problems)} problem{'s' if len(exc.problems) != 1 else ''}:[/red]")
        for problem in exc.problems:
            err.print(f"  {problem}", markup=False, soft_wrap=True)  # no breaks inside a path:line
    else:
        err.print("[red]The frame cannot carry the loads.[/red]")
        err.print(f"  {exc}", markup=False, soft_wrap=True)
    return exc.exit_code


def main(argv: Sequence[str] | None = None) -> int:
    args = _parser().parse_args(argv)
    try:
        with _stop_signals_unwind():
            return args.run(args)
    except KeyboardInterrupt as exc:
        stopped_by = exc.signum if isinstance(exc, Terminated) else signal.SIGINT
        err.print(f"Stopped ({stopped_by.name}): nothing half-written was published; earlier outputs are unchanged.",
                  markup=False)
        return 128 + stopped_by
    except (OutputError, ProjectError, MechanismError) as exc:
        return _report_error(exc)
    except Exception as exc:  # last resort for a bug: bad input has its own errors above, never this
        if os.environ.get("SHEETS_DEBUG") == "1":
            raise
        err.print(f"internal error ({type(exc).__name__}: {exc}); please report it with the project file "
                  "(SHEETS_DEBUG=1 shows the traceback)", markup=False, soft_wrap=True)
        return EXIT_INTERNAL


if __name__ == "__main__":
    sys.exit(main())
