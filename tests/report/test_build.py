"""`sheets build`: deterministic bytes, revisions, atomic replacement, templates, the command line."""

from __future__ import annotations

import json

import pdfplumber
import pypdf
import pytest

from sheets import cli
from sheets.build import build_sheets, default_out_dir
from sheets.errors import ProjectError

from girder_project import PROJECT, write_project


def _files(folder):
    return {p.relative_to(folder).as_posix(): p.read_bytes() for p in sorted(folder.rglob("*")) if p.is_file()}


def test_two_builds_give_the_same_bytes(tmp_path):
    path = write_project(tmp_path / "p")
    first = build_sheets(path, tmp_path / "a")
    second = build_sheets(path, tmp_path / "b")
    a, b = _files(first.pdf.parent), _files(second.pdf.parent)
    assert a.keys() == b.keys()
    for name in a:
        assert a[name] == b[name], f"{name} differs between two builds of the same input"


def test_a_design_change_gives_the_next_revision(tmp_path):
    path = write_project(tmp_path / "p")
    out = tmp_path / "out"
    build_sheets(path, out)
    changed = PROJECT.replace('revision = "C"\ndate = "2026-09-14"', 'revision = "D"\ndate = "2026-10-30"')
    changed = changed.replace('L1 = [0, -30], U1 = [0, -6]', 'L1 = [0, -34], U1 = [0, -6]')
    changed += '\n[[project.revisions]]\nrevision = "D"\ndate = "2026-10-30"\nnote = "Crowd load raised"\n'
    path.write_text(changed)
    result = build_sheets(path, out)
    with pdfplumber.open(result.pdf) as pdf:
        first = pdf.pages[0].extract_text()
        last = pdf.pages[-1].extract_text()
    assert "2026-10-30" in first and "Crowd load raised" in first
    n = len(pypdf.PdfReader(result.pdf).pages)
    assert f"{n} of {n} D" in last  # the last sheet, with the new revision beside it
    assert pypdf.PdfReader(result.pdf).metadata["/CreationDate"].startswith("D:20261030")
    doc = json.loads((out / "results.json").read_text())
    assert doc["project"]["revision"] == "D"


def test_an_interrupted_build_leaves_the_previous_set_whole(tmp_path, monkeypatch):
    path = write_project(tmp_path / "p")
    out = tmp_path / "out"
    build_sheets(path, out)
    before = _files(out)
    path.write_text(PROJECT.replace('revision = "C"', 'revision = "D"'))

    def broken(*args, **kwargs):
        raise RuntimeError("power cut during assembly")

    monkeypatch.setattr("sheets.report.assemble.assemble_from", broken)
    with pytest.raises(RuntimeError, match="power cut"):
        build_sheets(path, out)
    assert _files(out) == before  # the old PDF, results and figures, byte for byte; no staging left
    assert not [p for p in out.iterdir() if p.name.startswith(".sheets-build-")]


def test_files_of_a_removed_state_are_removed_after_the_new_set_is_in_place(tmp_path):
    path = write_project(tmp_path / "p")
    out = tmp_path / "out"
    build_sheets(path, out)
    assert (out / "figures" / "loads-Q.pdf").is_file()
    text = PROJECT.replace('[cases.Q]\ntitle = "Crowd on the left half"\nloads = { L1 = [0, -30], U1 = [0, -6] }\n', "")
    text = text.replace("factors = { G = 1.35, Q = 1.5 }", "factors = { G = 1.35 }")
    path.write_text(text)
    build_sheets(path, out)
    assert not (out / "figures" / "loads-Q.pdf").exists()
    assert (out / "figures" / "loads-G.pdf").is_file()


def test_template_choice_sets_the_page(tmp_path):
    path = write_project(tmp_path / "p", PROJECT.replace('template = "a4-portrait"', 'template = "a3-landscape"'))
    result = build_sheets(path, tmp_path / "out")
    box = pypdf.PdfReader(result.pdf).pages[0].mediabox
    assert (round(float(box.width)), round(float(box.height))) == (1191, 842)  # A3 landscape, ISO 216: 420 x 297 mm


def test_a_copied_and_edited_template_is_used(tmp_path):
    from sheets.report.templates import builtin_folder

    folder = tmp_path / "p"
    folder.mkdir()
    text = (builtin_folder() / "letter-portrait.toml").read_text()
    text = text.replace('footer_caution = "Indicative calculations.', 'footer_caution = "Draft for the checker only. Indicative calculations.')
    (folder / "office.toml").write_text(text)
    path = write_project(folder, PROJECT.replace('template = "a4-portrait"', 'template = "office.toml"'))
    result = build_sheets(path, tmp_path / "out")
    reader = pypdf.PdfReader(result.pdf)
    box = reader.pages[0].mediabox
    assert (round(float(box.width)), round(float(box.height))) == (612, 792)  # US Letter, 8.5 x 11 in
    assert "Draft for the checker only." in reader.pages[-1].extract_text()


def test_default_output_folder(tmp_path):
    assert default_out_dir(tmp_path / "jobs" / "girder.toml") == tmp_path / "jobs" / "out" / "girder"


def test_command_line_build(tmp_path, capsys):
    path = write_project(tmp_path / "p")
    assert cli.main(["build", str(path)]) == 0
    assert (tmp_path / "p" / "out" / "girder" / "girder.pdf").is_file()
    assert "girder.pdf" in capsys.readouterr().out


def test_command_line_reports_a_bad_template(tmp_path, capsys):
    path = write_project(tmp_path / "p", PROJECT.replace('template = "a4-portrait"', 'template = "a4-portriat"'))
    assert cli.main(["build", str(path), "--out", str(tmp_path / "out")]) == 2
    err = capsys.readouterr().err
    assert "unknown template 'a4-portriat'" in err and "a4-portrait" in err
    assert not (tmp_path / "out").exists()
    with pytest.raises(ProjectError):
        build_sheets(path, tmp_path / "out")


def test_separate_runs_give_the_same_bytes(tmp_path):
    """Two processes with different hash seeds (set and dict orders that could leak into the output)."""
    import os
    import subprocess
    import sys
    from pathlib import Path

    path = write_project(tmp_path / "p")
    root = Path(__file__).resolve().parents[2]
    outs = []
    for seed in ("1", "2"):
        out = tmp_path / f"run{seed}"
        env = {**os.environ, "PYTHONHASHSEED": seed, "PYTHONPATH": str(root)}
        subprocess.run([sys.executable, "-m", "sheets", "build", str(path), "--out", str(out)], check=True, env=env,
                       capture_output=True, timeout=600)
        outs.append(_files(out))
    assert outs[0].keys() == outs[1].keys()
    assert [name for name in outs[0] if outs[0][name] != outs[1][name]] == []
