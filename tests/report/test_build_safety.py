"""`sheets build` never loses or mixes files: the output is checked before any work, a killed
build leaves a whole set, no worker outlives the build, and a log shows the stages."""

from __future__ import annotations

import errno
import hashlib
import json
import os
import random
import signal
import subprocess
import sys
import time
from pathlib import Path

import pypdf
import pytest

from sheets import cli
from sheets.build import CACHE_FOLDER, build_sheets
from sheets.export import publish

from girder_project import PROJECT, write_project

ROOT = Path(__file__).resolve().parents[2]
REVISION_D = PROJECT.replace('revision = "C"\ndate = "2026-09-14"', 'revision = "D"\ndate = "2026-10-30"').replace(
    "L1 = [0, -30], U1 = [0, -6]", "L1 = [0, -34], U1 = [0, -6]")


def _files(folder: Path) -> dict[str, bytes]:
    return {p.relative_to(folder).as_posix(): p.read_bytes() for p in sorted(folder.rglob("*")) if p.is_file()}


def _assert_whole_set(out: Path) -> str:
    """``out`` shows one whole set: the manifest lists exactly the files there, every SHA-256
    matches, and the PDF, results.json and manifest name the same input. Returns its revision."""
    files = _files(out)
    manifest = json.loads(files.pop("manifest.json"))
    assert set(files) == set(manifest["files"])
    for name, digest in manifest["files"].items():
        assert hashlib.sha256(files[name]).hexdigest() == digest, f"{name} does not match the manifest"
    results = json.loads(files["results.json"])
    fingerprint = results["project"]["fingerprint"]
    assert manifest["input_fingerprint"] == fingerprint
    keywords = pypdf.PdfReader(out / manifest["pdf"]).metadata["/Keywords"]
    assert f"input sha256 {fingerprint}" in keywords and f"revision {results['project']['revision']}" in keywords
    return results["project"]["revision"]


def _command(*args: str) -> list[str]:
    return [sys.executable, "-m", "sheets", *args]


def _env() -> dict[str, str]:
    return {**os.environ, "PYTHONPATH": str(ROOT)}


# -- the output location, checked before any computation ---------------------------

@pytest.fixture
def no_analysis(monkeypatch):
    """Fails the test if the build gets as far as analysing: the checks come first."""
    def refuse(*_args, **_kwargs):
        raise AssertionError("the build computed before checking its output folder")

    monkeypatch.setattr("sheets.build.analyse", refuse)


def test_out_naming_a_file_stops_before_computing(tmp_path, capsys, no_analysis):
    path = write_project(tmp_path / "p")
    target = tmp_path / "girder.pdf"
    target.write_text("not a folder")
    assert cli.main(["build", str(path), "--out", str(target)]) == 2
    err = capsys.readouterr().err
    assert "names a file, not a folder" in err and str(target) in err and "Traceback" not in err
    assert target.read_text() == "not a folder"


@pytest.mark.parametrize("code, words", [(errno.EROFS, "read-only"), (errno.EACCES, "permission"),
                                         (errno.ENOSPC, "disk is full")])
def test_an_output_folder_that_cannot_be_written_stops_before_computing(tmp_path, capsys, monkeypatch, no_analysis,
                                                                       code, words):
    # The tests run as root, for whom permission bits do not bite: the probe file is refused as
    # the kernel refuses it on a read-only mount, a folder without permission, or a full disk.
    def refuse(folder):
        raise OSError(code, os.strerror(code), str(folder))

    path = write_project(tmp_path / "p")
    monkeypatch.setattr(publish, "probe_folder", refuse)
    assert cli.main(["build", str(path), "--out", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err
    assert words in err and str(tmp_path) in err and "--out" in err


def test_a_full_disk_while_writing_keeps_the_previous_set(tmp_path, capsys, monkeypatch):
    path = write_project(tmp_path / "p")
    out = tmp_path / "out"
    build_sheets(path, out)
    before = _files(out)
    path.write_text(REVISION_D)
    real = publish.SetWriter.publish

    def disk_full(self, *args, **kwargs):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC), str(self.stage() / "girder.pdf"))

    monkeypatch.setattr(publish.SetWriter, "publish", disk_full)
    assert cli.main(["build", str(path), "--out", str(out)]) == 2
    err = capsys.readouterr().err
    assert "disk is full" in err and "girder.pdf" in err and "Traceback" not in err
    assert _files(out) == before
    assert not [p for p in publish.sets_folder(out).iterdir() if p.name.startswith(publish.STAGING_PREFIX)]
    monkeypatch.setattr(publish.SetWriter, "publish", real)
    assert cli.main(["build", str(path), "--out", str(out)]) == 0
    assert _assert_whole_set(out) == "D"


def test_a_second_build_into_the_same_folder_is_refused(tmp_path, capsys, no_analysis):
    path = write_project(tmp_path / "p")
    with publish.SetWriter(tmp_path / "out"):
        assert cli.main(["build", str(path), "--out", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err
    assert "another build is writing this folder now" in err and ".lock" in err


def test_solve_checks_its_targets_before_solving(tmp_path, capsys, monkeypatch):
    path = write_project(tmp_path / "p")
    monkeypatch.setattr("sheets.build.solve", lambda *a, **k: pytest.fail("solved before checking the targets"))
    (tmp_path / "folder").mkdir()
    (tmp_path / "file.csv").write_text("mine")
    assert cli.main(["solve", str(path), "--json", str(tmp_path / "folder")]) == 2
    assert "--json names a folder, not a file" in capsys.readouterr().err
    assert cli.main(["solve", str(path), "--csv", str(tmp_path / "file.csv")]) == 2
    assert "--csv names a file, not a folder" in capsys.readouterr().err
    assert (tmp_path / "file.csv").read_text() == "mine"


def test_solve_reports_a_write_failure_without_a_traceback(tmp_path, capsys, monkeypatch):
    path = write_project(tmp_path / "p")
    target = tmp_path / "results.json"
    target.write_text("previous results")

    def disk_full(path, data):
        raise OSError(errno.ENOSPC, os.strerror(errno.ENOSPC), str(path))

    monkeypatch.setattr("sheets.export.results.write_atomic", disk_full)
    assert cli.main(["solve", str(path), "--json", str(target), "--quiet"]) == 2
    err = capsys.readouterr().err
    assert "disk is full" in err and str(target) in err and "Traceback" not in err
    assert target.read_text() == "previous results"


# -- progress in a log ------------------------------------------------------------

def test_a_log_gets_one_line_per_stage(tmp_path, capsys):
    path = write_project(tmp_path / "p")
    assert cli.main(["build", str(path), "--out", str(tmp_path / "out")]) == 0
    lines = [line for line in capsys.readouterr().err.splitlines() if line.startswith("[build] ")]
    assert lines == [f"[build] {stage}" for stage in ("reading project", "analysis", "member checks", "diagrams",
                                                      "figures", "results", "assembly", "writing files", "done")]


# -- killed builds ------------------------------------------------------------------

def _children(pid: int) -> set[int]:
    found = set()
    for task in Path(f"/proc/{pid}/task").glob("*/children"):
        try:
            found.update(int(c) for c in task.read_text().split())
        except OSError:
            pass
    return found


def _alive(pid: int) -> bool:
    try:
        state = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0]
    except OSError:
        return False
    return state not in ("Z", "X")  # a zombie has ended; only its exit status is left


def _default_stop_signals() -> None:
    """In the child: SIGINT and SIGHUP as a terminal would deliver them (a shell without job
    control starts background commands with SIGINT ignored, nohup ignores SIGHUP)."""
    for sig in (signal.SIGINT, signal.SIGTERM, signal.SIGHUP):
        signal.signal(sig, signal.SIG_DFL)


def _build_until_workers(path: Path, out: Path) -> tuple[subprocess.Popen, set[int]]:
    """Start a build and wait until it has forked its figure workers."""
    build = subprocess.Popen(_command("build", str(path), "--out", str(out)), env=_env(),
                             stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL, preexec_fn=_default_stop_signals)
    deadline = time.monotonic() + 240
    workers: set[int] = set()
    while len(workers) < 2 and build.poll() is None and time.monotonic() < deadline:
        workers |= _children(build.pid)
        time.sleep(0.01)
    assert len(workers) >= 2, "the build never forked its figure workers"
    return build, workers


@pytest.mark.slow
@pytest.mark.parametrize("how", [signal.SIGINT, signal.SIGTERM, signal.SIGHUP, signal.SIGKILL])
def test_a_stopped_build_leaves_no_worker_behind(tmp_path, how):
    path = write_project(tmp_path / "p")
    out = tmp_path / "out"
    build, workers = _build_until_workers(path, out)
    build.send_signal(how)
    code = build.wait(60)
    assert code == (-how if how == signal.SIGKILL else 128 + how)
    deadline = time.monotonic() + 10
    while any(_alive(w) for w in workers) and time.monotonic() < deadline:
        time.sleep(0.05)
    assert [w for w in workers if _alive(w)] == []
    if how != signal.SIGKILL:  # a clean stop: no staging left, lock free, nothing published
        assert not os.path.lexists(out)
        # the lock, and the stage cache of what was made before the stop (entries are whole or absent)
        assert {p.name for p in publish.sets_folder(out).iterdir()} <= {publish.LOCK_NAME, CACHE_FOLDER}


@pytest.mark.slow
def test_a_build_killed_at_random_moments_leaves_a_whole_set(tmp_path):
    """SIGKILL at random moments of a build that replaces a set: ``out`` always shows the whole
    previous set or the whole new one, and the next build cleans up after the killed one."""
    path = write_project(tmp_path / "p")
    out = tmp_path / "out"
    started = time.monotonic()
    first = subprocess.run(_command("build", str(path), "--out", str(out)), env=_env(), capture_output=True, timeout=300)
    assert first.returncode == 0
    duration = time.monotonic() - started  # of a whole build, to spread the kills over
    rng = random.Random(8)
    shown = "C"
    for _ in range(4):
        path.write_text(REVISION_D if shown == "C" else PROJECT)  # every attempt replaces the set shown
        build = subprocess.Popen(_command("build", str(path), "--out", str(out)), env=_env(),
                                 stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        time.sleep(rng.uniform(0.5, 1.1) * duration)  # mostly late in the build, where the files are written
        build.send_signal(signal.SIGKILL)
        build.wait(60)
        shown = _assert_whole_set(out)
    assert cli.main(["build", str(path), "--out", str(tmp_path / "out")]) == 0
    _assert_whole_set(out)
    leftovers = sorted(p.name for p in publish.sets_folder(out).iterdir())
    assert leftovers == sorted([publish.LOCK_NAME, Path(os.readlink(out)).name, CACHE_FOLDER])  # one set, no staging
    # the stage cache the killed builds were writing into gives what a build from nothing gives
    assert cli.main(["build", str(path), "--out", str(tmp_path / "forced"), "--force"]) == 0
    assert _files(out) == _files(tmp_path / "forced")


# -- same input, same bytes ----------------------------------------------------------

@pytest.mark.slow
def test_the_atrium_demo_builds_to_the_same_bytes_twice(tmp_path):
    """The 1,152-member demo takes the sparse determinacy route, whose eigen-solver once started from
    a random vector (results.json, determinacy.csv and the manifest then differed between runs).
    Two runs of the command, as a user makes them; tests/analysis/test_sparse_repeatable.py repeats
    the route within one process."""
    demo = ROOT / "demo_projects" / "atrium_grid" / "atrium_grid.toml"
    sets = []
    for name in ("a", "b"):
        done = subprocess.run(_command("build", str(demo), "--out", str(tmp_path / name)), env=_env(),
                              capture_output=True, timeout=900)
        assert done.returncode in (0, 5), done.stderr  # 5: the set is written and its design outcome has flags
        sets.append(_files(tmp_path / name))
    first, second = sets
    assert first.keys() == second.keys() and "manifest.json" in first
    assert [name for name in first if first[name] != second[name]] == []
    assert json.loads(first["results.json"])["determinacy"]["route"] == "sparse shift-invert"


def test_draw_checks_its_folder_before_analysing(tmp_path, capsys, no_analysis):
    path = write_project(tmp_path / "p")
    (tmp_path / "figures.png").write_text("mine")
    assert cli.main(["draw", str(path), "--out", str(tmp_path / "figures.png")]) == 2
    assert "--out names a file, not a folder" in capsys.readouterr().err
    assert (tmp_path / "figures.png").read_text() == "mine"
