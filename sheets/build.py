"""Orchestration: the stages in order, and the only writer of outputs besides export.

Each function takes plain values and returns plain values (or the paths it
wrote); the command line in sheets.cli only parses arguments, calls these and
prints.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any, Callable

from sheets.analysis import Analysis, analyse
from sheets.analysis.determinacy import Determinacy, determinacy
from sheets.analysis.equilibrium import project_equilibrium
from sheets.export.results import write_results_csv, write_results_json
from sheets.model import Project, load_project

Progress = Callable[[str], None]


def check(path: str | Path) -> tuple[Project, Determinacy]:
    """Load and validate a project and find its determinacy, without solving any case."""
    project = load_project(path)
    det = determinacy(project_equilibrium(project), project.options.rank_tolerance, project.options.dense_limit)
    return project, det


def solve(path: str | Path, progress: Progress | None = None) -> Analysis:
    note = progress or (lambda _m: None)
    note("reading project")
    project = load_project(path)
    return analyse(project, progress)


def result_sections(analysis: Analysis) -> dict[str, Any]:
    """Sections later stages add to the results document (diagrams, cells, sizing)."""
    return {}


def write_results(analysis: Analysis, json_path: str | Path | None = None, csv_dir: str | Path | None = None) -> list[Path]:
    written: list[Path] = []
    if json_path is not None:
        written.append(write_results_json(analysis, json_path, result_sections(analysis)))
    if csv_dir is not None:
        written.extend(write_results_csv(analysis, csv_dir))
    return written
