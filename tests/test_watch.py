"""`sheets build --watch`: a saved change is built once, says what changed and what was made again."""

from __future__ import annotations

import json
import os
import shutil
import signal
import subprocess
import sys
import threading
import time
from pathlib import Path

from sheets.watch import Round, changed, snapshot, watch

DEMOS = Path(__file__).resolve().parents[1] / "demo_projects"


def test_snapshots_name_changed_added_and_removed_files(tmp_path):
    a, b = tmp_path / "a.toml", tmp_path / "b.csv"
    a.write_text("x")
    before = snapshot([a, b])
    b.write_text("new")
    a.unlink()
    assert changed(before, snapshot([a, b])) == [str(a), str(b)]


def test_one_build_per_save_and_the_files_the_build_read_are_watched(tmp_path):
    project, included = tmp_path / "p.toml", tmp_path / "nodes.csv"
    project.write_text("1")
    included.write_text("1")
    rounds: list[Round] = []
    built = threading.Event()
    stop = threading.Event()

    def build(round_: Round):
        rounds.append(round_)
        built.set()
        return [project, included]

    thread = threading.Thread(target=watch, args=(project, build, stop), kwargs={"poll": 0.02, "settle": 0.1})
    thread.start()
    try:
        assert built.wait(5)
        built.clear()
        for k in range(3):  # one save written in pieces: one build
            included.write_text("2" * (k + 2))
            time.sleep(0.01)
        assert built.wait(5)
        built.clear()
        time.sleep(0.3)
        assert len(rounds) == 2
        assert rounds[1].changed == (str(included),)
    finally:
        stop.set()
        thread.join(5)
    assert not thread.is_alive()


def test_a_failed_build_keeps_watching_the_project_file(tmp_path):
    project = tmp_path / "p.toml"
    project.write_text("broken")
    rounds: list[Round] = []
    stop = threading.Event()

    def build(round_: Round):
        rounds.append(round_)
        if len(rounds) == 2:
            stop.set()
        return ()  # the project could not be read

    thread = threading.Thread(target=watch, args=(project, build, stop), kwargs={"poll": 0.02, "settle": 0.05})
    thread.start()
    time.sleep(0.2)
    project.write_text("fixed")
    thread.join(5)
    assert [r.changed for r in rounds] == [(), (str(project),)]


def _read_until(stream, text: str, seen: list[str], timeout: float) -> None:
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        line = stream.readline()
        if not line:
            break
        seen.append(line)
        if text in line:
            return
    raise AssertionError(f"no line with {text!r} in:\n{''.join(seen)}")


def test_the_command_rebuilds_on_a_save_and_says_what_it_rebuilt(tmp_path):
    shutil.copytree(DEMOS / "tensegrity_pavilion", tmp_path / "pavilion")
    project = tmp_path / "pavilion" / "tensegrity_pavilion.toml"
    out = tmp_path / "sets" / "pavilion"
    env = {**os.environ, "PYTHONUNBUFFERED": "1"}
    proc = subprocess.Popen([sys.executable, "-m", "sheets", "build", str(project), "--out", str(out), "--watch"],
                            stdout=subprocess.PIPE, stderr=subprocess.DEVNULL, text=True, env=env)
    seen: list[str] = []
    try:
        _read_until(proc.stdout, "watching", seen, 300)
        first = json.loads((out / "manifest.json").read_text())
        text = project.read_text(encoding="utf-8")
        project.write_text(text.replace('level = "5 kN"', 'level = "6 kN"'), encoding="utf-8")
        _read_until(proc.stdout, "build 2", seen, 300)
        _read_until(proc.stdout, "watching", seen, 30)
        second = json.loads((out / "manifest.json").read_text())
    finally:
        proc.send_signal(signal.SIGINT)
        code = proc.wait(60)
    output = "".join(seen)
    assert "changed: tensegrity_pavilion.toml" in output
    build_line = next(line for line in seen if line.startswith("build 2"))
    assert "made:" in build_line and "reused:" in build_line and "figure" in build_line
    assert first != second  # a new set, published whole
    assert code == 130
