"""Which figures a sheet set carries, from whichever render stages exist."""

from __future__ import annotations

from girder_project import write_project

from sheets.analysis import analyse
from sheets.model import load_project
from sheets.report import figures
from sheets.report.templates import load_template


def _analysis(tmp_path):
    return analyse(load_project(write_project(tmp_path)))


def _keys(analysis, **kw):
    figs, notes = figures.collect_figures(analysis, load_template("a4-portrait"), workers=1, **kw)
    return [f.key for f in figs], notes


def test_model_and_load_figures_are_always_drawn(tmp_path):
    analysis = _analysis(tmp_path)
    sources = tuple(s for s in figures.SOURCES if s.name in ("model", "loads"))
    keys, notes = _keys(analysis, sources=sources)
    assert keys == ["form-model", "loads-G", "loads-Q"] and notes == ()


def test_without_the_reciprocal_stage_the_form_is_coloured_by_force(tmp_path, monkeypatch):
    monkeypatch.setattr(figures, "RECIPROCAL", ("sheets.render.not_installed", "reciprocal_figure"))
    sources = tuple(s for s in figures.SOURCES if s.name == "form and force")
    keys, notes = _keys(_analysis(tmp_path), sources=sources)
    assert keys == ["forces-ULS"] and notes == ()  # [drawing] states = ["ULS"]


def test_a_figure_that_fails_is_noted_and_the_form_still_drawn(tmp_path, monkeypatch):
    import sys
    import types

    broken = types.ModuleType("sheets_test_broken_render")

    def reciprocal_figure(analysis, state_id, path, fmt=None, **inputs):  # inputs: diagram, labels_up_to
        raise ValueError("no planar embedding")

    broken.reciprocal_figure = reciprocal_figure
    monkeypatch.setitem(sys.modules, "sheets_test_broken_render", broken)
    monkeypatch.setattr(figures, "RECIPROCAL", ("sheets_test_broken_render", "reciprocal_figure"))
    sources = tuple(s for s in figures.SOURCES if s.name == "form and force")
    keys, notes = _keys(_analysis(tmp_path), sources=sources)
    assert keys == ["forces-ULS"]
    assert len(notes) == 1 and "Form and force diagrams of Combination ULS" in notes[0] and "no planar embedding" in notes[0]


def test_two_workers_give_the_same_figures_in_the_same_order(tmp_path):
    analysis = _analysis(tmp_path)
    template = load_template("a4-portrait")
    sources = tuple(s for s in figures.SOURCES if s.name in ("model", "loads", "form and force"))
    one, _ = figures.collect_figures(analysis, template, workers=1, sources=sources)
    two, _ = figures.collect_figures(analysis, template, workers=2, sources=sources)
    assert [f.key for f in one] == [f.key for f in two]
    assert [f.file_bytes() for f in one] == [f.file_bytes() for f in two]
