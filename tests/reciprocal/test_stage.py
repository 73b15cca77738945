"""The diagrams stage: every diagram of a state built once, then shared by figures and results."""

from __future__ import annotations

from pathlib import Path

import numpy as np

from sheets.analysis import analyse
from sheets.build import result_sections
from sheets.model import load_project
from sheets.reciprocal.stage import project_diagrams
from sheets.report import figures
from sheets.report.templates import load_template

DEMOS = Path(__file__).resolve().parents[2] / "demo_projects"


def test_each_state_gets_its_diagrams_and_they_close():
    analysis = analyse(load_project(DEMOS / "warehouse_roof" / "warehouse_roof.toml"))
    diagrams = project_diagrams(analysis, [s.id for s in analysis.states])
    assert list(diagrams) == [s.id for s in analysis.states]
    for state in analysis.states:
        d = diagrams[state.id]
        assert d.problems == ()
        assert d.force.passed and d.cells.passed and d.minkowski.passed
        # Maxwell's load path theorem (Maxwell 1870): the Minkowski view's sum t L equals sum f . x
        assert np.isclose(d.minkowski.load_path_signed, state.checks.load_path_loads, rtol=1e-9)
    doc = result_sections(analysis, diagrams=diagrams)["diagrams"]
    assert set(doc["states"]) == {s.id for s in analysis.states}
    assert all(entry["force_diagram"]["checks"]["passed"] for entry in doc["states"].values())


def test_figures_use_the_prepared_diagrams_and_do_not_build_them_again(monkeypatch, tmp_path):
    analysis = analyse(load_project(DEMOS / "warehouse_roof" / "warehouse_roof.toml"))
    state = analysis.states[0].id
    diagrams = project_diagrams(analysis, [state])

    def refuse(*_args, **_kw):
        raise AssertionError("force diagram built a second time")

    import sheets.render.diagram2d as diagram2d

    monkeypatch.setattr(diagram2d, "force_diagram", refuse)
    sources = tuple(s for s in figures.SOURCES if s.name in ("form and force", "closure_figure"))
    figs, notes = figures.collect_figures(analysis, load_template("a4-portrait"), workers=1, sources=sources,
                                          diagrams=diagrams)
    drawn = {f.key for f in figs if f.state == state}
    assert {f"reciprocal-{state}", f"closure-{state}"} <= drawn
    # the states without prepared diagrams had to build theirs, and were refused: only they are noted
    assert notes and not [n for n in notes if f"Load case {state}:" in n]
