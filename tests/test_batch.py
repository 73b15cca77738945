"""Batches: every project built, failures reported with their exit status, the same sets on a Dask cluster."""

from __future__ import annotations

import hashlib
import shutil
from pathlib import Path

import pytest

from sheets.batch import project_files, run_batch
from sheets.cli import main

DEMOS = Path(__file__).resolve().parents[1] / "demo_projects"


def _variants(folder: Path) -> list[Path]:
    """Two design variants of the roof truss and one broken project."""
    folder.mkdir(parents=True)
    text = (DEMOS / "warehouse_roof" / "warehouse_roof.toml").read_text(encoding="utf-8")
    (folder / "roof_a.toml").write_text(text, encoding="utf-8")
    (folder / "roof_b.toml").write_text(text.replace("loads.U3 = [0, -13.5]", "loads.U3 = [0, -16.0]"), encoding="utf-8")
    (folder / "broken.toml").write_text(text.replace('L6 = "y"    # sliding bearing', 'L9 = "y"'), encoding="utf-8")
    return sorted(folder.glob("*.toml"))


def _set_files(folder: Path) -> dict[str, str]:
    return {p.relative_to(folder).as_posix(): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(folder.rglob("*")) if p.is_file() and not any(part.startswith(".") for part in p.relative_to(folder).parts)}


def test_folders_are_searched_and_outputs_left_out(tmp_path):
    projects = _variants(tmp_path / "v")
    (tmp_path / "v" / "out" / "roof_a").mkdir(parents=True)
    (tmp_path / "v" / "out" / "roof_a" / "copy.toml").write_text("", encoding="utf-8")
    assert project_files([tmp_path / "v"]) == [p.resolve() for p in projects]


@pytest.mark.slow
def test_a_broken_project_is_reported_and_the_rest_are_built(tmp_path, capsys):
    folder = tmp_path / "v"
    _variants(folder)
    assert main(["batch", str(folder), "--jobs", "2"]) == 6
    captured = capsys.readouterr()
    text = " ".join(captured.out.split())
    assert "2 of 3 projects built" in text
    assert "broken.toml" in text and "L9" in text  # the failure, with the build's own message
    for name in ("roof_a", "roof_b"):
        assert (folder / "out" / name / f"{name}.pdf").is_file()
    assert not (folder / "out" / "broken").exists()


@pytest.mark.slow
def test_a_dask_cluster_gives_the_same_sets_as_the_local_run(tmp_path):
    distributed = pytest.importorskip("distributed")  # an optional extra; installed with the test extras
    local, remote = tmp_path / "local", tmp_path / "remote"
    for folder in (local, remote):
        folder.mkdir()
        shutil.copy(DEMOS / "warehouse_roof" / "warehouse_roof.toml", folder / "roof.toml")
    here = run_batch(project_files([local]), jobs=1)
    with distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=True, dashboard_address=None) as cluster:
        there = run_batch(project_files([remote]), scheduler=cluster.scheduler_address)
    assert [o.exit_code for o in here] == [o.exit_code for o in there]
    assert here[0].exit_code in (0, 5), here[0].output  # 5: built, with design flags on the cover
    assert _set_files(local / "out" / "roof") == _set_files(remote / "out" / "roof") != {}


def test_no_scheduler_answering_is_a_clear_error(tmp_path, capsys):
    pytest.importorskip("distributed")
    folder = tmp_path / "v"
    folder.mkdir()
    shutil.copy(DEMOS / "warehouse_roof" / "warehouse_roof.toml", folder / "roof.toml")
    assert main(["batch", str(folder), "--scheduler", "tcp://127.0.0.1:9"]) == 2
    err = " ".join(capsys.readouterr().err.split())
    assert "no Dask scheduler answers at tcp://127.0.0.1:9" in err and "Traceback" not in err
