"""Many projects built in one go: on this machine, or on an existing Dask cluster.

Each project is built by its own `sheets build` process, so one project's
failure, memory or crash cannot touch another's build, and each gets the exit
status and messages a single build would give. A batch goes on past failures
and reports every one at the end.

On a cluster (``scheduler`` given; needs the optional ``dask[distributed]``),
every worker runs the same command on the same paths, so the workers must see
the project folders at the same paths (a shared file system) and have sheets
installed.
"""

from __future__ import annotations

import subprocess
import sys
import time
from concurrent.futures import ThreadPoolExecutor, as_completed
from dataclasses import dataclass
from pathlib import Path
from typing import Callable, Iterable, Sequence

from sheets.errors import Problem, ProjectError

SKIPPED_FOLDERS = {"out", "templates"}  # outputs and sheet templates are not projects


@dataclass(frozen=True)
class BuildOutcome:
    project: str
    exit_code: int
    seconds: float
    output: str  # what the build printed (stdout then stderr), for the report


def project_files(paths: Iterable[str | Path]) -> list[Path]:
    """The project files named: files as given, folders searched for *.toml (outputs, templates and hidden folders left out)."""
    found: list[Path] = []
    problems = []
    for given in paths:
        path = Path(given)
        if path.is_file():
            found.append(path)
        elif path.is_dir():
            found.extend(sorted(p for p in path.rglob("*.toml")
                                if not any(part in SKIPPED_FOLDERS or part.startswith(".") for part in p.relative_to(path).parts[:-1])))
        else:
            problems.append(Problem(str(path), "", "no such project file or folder", "check the path"))
    if problems:
        raise ProjectError(problems)
    unique = list(dict.fromkeys(p.resolve() for p in found))
    if not unique:
        raise ProjectError([Problem(", ".join(str(p) for p in paths), "", "no project files (*.toml) found", "name project files or folders holding them")])
    return unique


def build_one(project: str | Path, extra: Sequence[str] = ()) -> BuildOutcome:
    """Build one project in its own process; never raises for the project's own faults."""
    start = time.perf_counter()
    done = subprocess.run([sys.executable, "-m", "sheets", "build", str(project), *extra], capture_output=True, text=True,
                          stdin=subprocess.DEVNULL)
    return BuildOutcome(str(project), done.returncode, time.perf_counter() - start, (done.stdout + done.stderr).strip())


def run_batch(projects: Sequence[Path], jobs: int = 1, scheduler: str | None = None,
              on_done: Callable[[BuildOutcome, int, int], None] | None = None) -> tuple[BuildOutcome, ...]:
    """Build every project, ``jobs`` at a time (or on the Dask cluster at ``scheduler``); outcomes in the given order."""
    if scheduler is not None:
        outcomes = _on_cluster(projects, scheduler, on_done)
    else:
        outcomes = {}
        with ThreadPoolExecutor(max(1, jobs)) as pool:
            futures = {pool.submit(build_one, p): str(p) for p in projects}
            for k, future in enumerate(as_completed(futures), 1):
                outcome = future.result()
                outcomes[outcome.project] = outcome
                if on_done:
                    on_done(outcome, k, len(projects))
    return tuple(outcomes[str(p)] for p in projects)


def _on_cluster(projects: Sequence[Path], scheduler: str, on_done) -> dict[str, BuildOutcome]:
    try:
        from distributed import Client, as_completed as cluster_completed
    except ImportError:
        raise ProjectError([Problem("--scheduler", "", "running on a cluster needs Dask distributed, which is not installed",
                                    "pip install 'sheets[cluster]', or leave out --scheduler")]) from None
    try:
        client = Client(scheduler, timeout=20)
    except OSError as exc:
        raise ProjectError([Problem("--scheduler", "", f"no Dask scheduler answers at {scheduler}: {exc}",
                                    "start the cluster, or check the address (e.g. tcp://host:8786)")]) from None
    outcomes = {}
    with client:
        futures = [client.submit(build_one, str(p), pure=False) for p in projects]
        for k, future in enumerate(cluster_completed(futures), 1):
            outcome = future.result()
            outcomes[outcome.project] = outcome
            if on_done:
                on_done(outcome, k, len(projects))
    return outcomes
