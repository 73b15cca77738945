"""Sheet templates: the shipped ones, and clear errors for bad ones."""

from __future__ import annotations

import pytest

from sheets.errors import ProjectError
from sheets.report.templates import builtin_folder, builtin_names, load_template

MM = 72 / 25.4


@pytest.mark.parametrize(
    "name, size_mm",
    [
        ("a4-portrait", (210, 297)),  # ISO 216 A4
        ("a3-landscape", (420, 297)),  # ISO 216 A3, turned
        ("letter-portrait", (215.9, 279.4)),  # ANSI Letter, 8.5 x 11 in
    ],
)
def test_shipped_templates(name, size_mm):
    t = load_template(name)
    assert name in builtin_names()
    assert t.page_size == pytest.approx((size_mm[0] * MM, size_mm[1] * MM), abs=1.0)
    assert t.order[0] == "cover" and "cautions" in t.order
    assert "licensed engineer" in t.footer_caution
    assert {f.field for f in t.fields} >= {"title", "number", "calculation", "sheet", "revision", "date", "prepared_by", "checked_by"}


def test_the_shipped_templates_are_the_top_level_folder():
    # sheets/report/templates is a link to the repository's templates/ (package data when installed)
    assert (builtin_folder() / "a4-portrait.toml").resolve().parent.name == "templates"


def _copy(tmp_path, edit):
    text = (builtin_folder() / "a4-portrait.toml").read_text()
    path = tmp_path / "mine.toml"
    path.write_text(edit(text))
    return path


def test_every_problem_of_a_bad_template_is_reported_at_once(tmp_path):
    def edit(text):
        text = text.replace('size = "A4"', 'size = "A5"')
        text = text.replace('orientation = "portrait"', 'orientation = "portriat"')
        text = text.replace('font_size = 8.5', 'font_size = 40')
        text = text.replace('[tables]', '[tables]\ncolour = "red"')
        text = text.replace('order = ["cover", ', 'order = [')
        return text

    path = _copy(tmp_path, edit)
    with pytest.raises(ProjectError) as exc:
        load_template("mine.toml", tmp_path)
    problems = {p.where: p for p in exc.value.problems}
    assert problems["page.size"].message.startswith("size must be one of A4, A3, letter")
    assert problems["page.orientation"].hint == "did you mean 'portrait'?"
    assert "font_size" in problems["text.font_size"].message
    assert problems["tables.colour"].message == "unknown key 'colour'"
    assert "cover" in problems["sections.order"].message
    assert all(p.file == str(path) for p in exc.value.problems)


def test_a_footer_caution_that_does_not_fit_is_refused(tmp_path):
    _copy(tmp_path, lambda t: t.replace('footer_caution = "', 'footer_caution = "' + "Very long words. " * 20))
    with pytest.raises(ProjectError, match="does not fit"):
        load_template("mine.toml", tmp_path)


def test_an_empty_caution_is_refused(tmp_path):
    _copy(tmp_path, lambda t: t.replace('footer_caution = "Indicative', 'footer_caution = "" # "Indicative'))
    with pytest.raises(ProjectError, match="footer caution"):
        load_template("mine.toml", tmp_path)


def test_bad_toml_and_missing_files(tmp_path):
    (tmp_path / "broken.toml").write_text("[page\nsize = 1\n")
    with pytest.raises(ProjectError, match="not valid TOML"):
        load_template("broken.toml", tmp_path)
    with pytest.raises(ProjectError, match="not found"):
        load_template("missing.toml", tmp_path)
    with pytest.raises(ProjectError) as exc:
        load_template("a3-landscap", tmp_path)
    assert exc.value.problems[0].hint == "did you mean 'a3-landscape'?"


def test_title_block_fields_are_checked(tmp_path):
    _copy(tmp_path, lambda t: t.replace('{ field = "sheet", label = "Sheet" },', '{ field = "page", label = "Sheet" },'))
    with pytest.raises(ProjectError) as exc:
        load_template("mine.toml", tmp_path)
    assert any("field must be one of" in p.message for p in exc.value.problems)
