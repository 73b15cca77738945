"""Sheet and revision dates are ISO 8601 calendar dates (YYYY-MM-DD), or an error with their line.

ISO 8601-1:2019, section 5.2.2.1 (calendar date, extended format YYYY-MM-DD); TOML 1.0.0
"Local Date" is the same form (RFC 3339 full-date). A date such as "3/2/26" reads as
2 March or 3 February depending on the reader, which a signed sheet must not allow.
"""

from __future__ import annotations

import pytest

from sheets.model import load_project
from test_loading_errors import broken, line_of, only, problems, write

REVISIONS = """
[[project.revisions]]
revision = "A"
date = 2026-02-10
note = "first issue"

[[project.revisions]]
revision = "B"
date = {second}
note = "after review"
"""


def with_revisions(second: str) -> str:
    return broken('date = 2026-03-02\n', 'date = 2026-03-02\n' + REVISIONS.format(second=second))


@pytest.mark.parametrize("written, kept", [("2026-03-02", "2026-03-02"), ('"2026-03-02"', "2026-03-02"),
                                           ('" 2026-03-02 "', "2026-03-02"), ('""', "")])
def test_iso_dates_toml_or_text_are_kept_as_iso_text(tmp_path, written, kept):
    project = load_project(write(tmp_path, broken("date = 2026-03-02", f"date = {written}")))
    assert project.info.date == kept


@pytest.mark.parametrize("written, says", [
    ('"02/03/2026"', "expected an ISO 8601 date"),
    ('"2 March 2026"', "expected an ISO 8601 date"),
    ('"2026-3-2"', "expected an ISO 8601 date"),
    ('"20260302"', "expected an ISO 8601 date"),
    ('"2026-02-30"', "is not a day of the calendar"),
    ('"2026-13-01"', "is not a day of the calendar"),
    ("2026-03-02T10:30:00", "expected a date alone"),
    ("20260302", "expected an ISO 8601 date"),
    ("[2026, 3, 2]", "expected an ISO 8601 date"),
])
def test_a_project_date_that_is_not_iso_8601_is_an_error_with_its_line(tmp_path, written, says):
    text = broken("date = 2026-03-02", f"date = {written}")
    p = only(problems(write(tmp_path, text)), where="project.date")
    assert says in p.message
    assert p.line == line_of(text, f"date = {written}")
    assert "YYYY-MM-DD" in p.message or "2026-03-02" in p.hint
    assert p.file.endswith("project.toml")


def test_revision_dates_are_checked_with_the_line_of_their_own_block(tmp_path):
    project = load_project(write(tmp_path, with_revisions('"2026-03-02"')))
    assert [(r.revision, r.date) for r in project.info.revisions] == [("A", "2026-02-10"), ("B", "2026-03-02")]

    text = with_revisions('"March 2026"')
    p = only(problems(write(tmp_path, text)), where="project.revisions.1.date")
    assert "expected an ISO 8601 date" in p.message
    assert p.line == line_of(text, 'date = "March 2026"')  # the second block's line, not the first's


def test_a_revision_without_a_date_is_an_error(tmp_path):
    text = with_revisions('"2026-03-02"').replace('date = "2026-03-02"\n', "")
    p = only(problems(write(tmp_path, text)), where="project.revisions.1", contains="missing 'date'")
    assert p.line == line_of(text, 'revision = "B"') - 1  # the [[project.revisions]] header of block B
