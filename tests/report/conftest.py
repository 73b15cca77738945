"""One build of the invented girder project's sheet set, shared by the report tests."""

from __future__ import annotations

import pytest
from girder_project import write_project

from sheets.build import build_sheets


@pytest.fixture(scope="session")
def built(tmp_path_factory):
    """(project path, SheetBuild) of one build, for tests that only read the outputs."""
    folder = tmp_path_factory.mktemp("girder")
    path = write_project(folder)
    return path, build_sheets(path, folder / "out")
