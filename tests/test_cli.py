"""The command line: `sheets check` refuses what `build` would, prints the user's text literally,
starts without the drawing libraries, and never shows a traceback for a bug unless asked."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

from sheets.cli import main
from two_panels import project  # tests/ is on the path (tests/conftest.py)

ROOT = Path(__file__).resolve().parents[1]
WAREHOUSE = ROOT / "demo_projects" / "warehouse_roof" / "warehouse_roof.toml"

def run(capsys, *args: str) -> tuple[int, str, str]:
    code = main(list(args))
    said = capsys.readouterr()
    return code, said.out, said.err


def test_a_sound_project_passes_check_and_its_title_is_printed_literally(tmp_path, capsys):
    code, out, err = run(capsys, "check", str(project(tmp_path)))
    assert code == 0, err
    assert "Two panels [bay 3] :100: rev" in out  # neither markup nor an emoji
    assert "\N{HUNDRED POINTS SYMBOL}" not in out
    assert "No load case has a component along a mechanism" in out


def test_an_error_at_line_100_is_printed_with_100_literally(tmp_path, capsys):
    padding = "".join(f"# note {k}\n" for k in range(200))
    path = project(tmp_path)
    text = path.read_text(encoding="utf-8").replace("[members]\n", "[members]\n" + padding, 1)
    lines = text.splitlines()
    lines.insert(99, 'x1 = ["BL", "NOWHERE"]')  # becomes line 100, inside [members]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    code, _, err = run(capsys, "check", str(path))
    assert code == 2
    assert f"{path}:100:" in err
    assert "\N{HUNDRED POINTS SYMBOL}" not in err
    assert "unknown node 'NOWHERE'" in err


def test_check_refuses_a_load_along_a_mechanism_as_solve_does(tmp_path, capsys):
    # The sideways load at TR pushes the unbraced right panel along its sway (exit 3, DESIGN.md).
    path = project(tmp_path, more="[cases.wind]\nloads = { TR = [2, 0] }\n")
    code, _, check_err = run(capsys, "check", str(path))
    assert code == 3
    code, _, solve_err = run(capsys, "solve", str(path), "--quiet")
    assert code == 3
    solve_message = [line for line in solve_err.splitlines() if "state 'wind'" in line]
    assert solve_message and solve_message[0] in check_err.splitlines()
    assert "TR +x" in check_err or "TR -x" in check_err
    assert "gravity" not in check_err  # the vertical load does no work in the sway: carried


def test_check_names_every_case_along_a_mechanism(tmp_path, capsys):
    more = "[cases.wind]\nloads = { TR = [2, 0] }\n\n[cases.gust]\nloads = { TM = [-1, 0] }\n"
    code, _, err = run(capsys, "check", str(project(tmp_path, more=more)))
    assert code == 3
    assert "state 'wind'" in err and "state 'gust'" in err


def test_check_of_a_frame_without_supports_refuses_an_unbalanced_load(tmp_path, capsys):
    # No [supports]: the three rigid-body motions of the plane are free, so a load with a resultant
    # cannot be carried (Pellegrino & Calladine 1986: k = n_free - r counts them as mechanisms).
    path = project(tmp_path, supports="")
    results = [run(capsys, command, str(path)) for command in ("check", "solve")]
    assert [code for code, _, _ in results] == [3, 3]
    for _, _, err in results:
        assert "no supports at all" in err and "[supports]" in err


def test_check_refuses_an_unknown_template_with_the_nearest_name(tmp_path, capsys):
    code, _, err = run(capsys, "check", str(project(tmp_path, project_extra='template = "a4-portrat"')))
    assert code == 2
    assert "unknown template 'a4-portrat'" in err and "did you mean 'a4-portrait'?" in err


def test_check_reads_the_users_own_template_as_build_does(tmp_path, capsys):
    from sheets.report.templates import builtin_folder

    mine = (builtin_folder() / "a4-portrait.toml").read_text(encoding="utf-8")
    (tmp_path / "office.toml").write_text(mine, encoding="utf-8")
    path = project(tmp_path, project_extra='template = "office.toml"')
    assert run(capsys, "check", str(path))[0] == 0
    (tmp_path / "office.toml").write_text(mine.replace('size = "A4"', 'size = "A9"'), encoding="utf-8")
    code, _, err = run(capsys, "check", str(path))
    assert code == 2 and "office.toml" in err and "A9" in err


def test_check_refuses_a_missing_stiffness_where_solve_needs_one(tmp_path, capsys):
    # The braced panel carries a self-stress state, so solving needs EA: a section with neither a
    # material nor an axial stiffness is refused by check as by solve (exit 2).
    path = project(tmp_path)
    path.write_text(path.read_text(encoding="utf-8").replace('material = "steel"\narea', "area"), encoding="utf-8")
    results = [run(capsys, command, str(path)) for command in ("check", "solve")]
    assert [code for code, _, _ in results] == [2, 2]
    assert all("axial stiffness EA" in err for _, _, err in results)


def test_check_refuses_a_prestress_the_frame_cannot_take(tmp_path, capsys):
    # 'scaled' prestress needs the named member to carry force in the single self-stress state;
    # b2 lies in the unbraced panel, outside the braced panel's self-stress.
    path = project(tmp_path, more='[prestress]\nmethod = "scaled"\nmember = "b2"\nforce = "5 kN"\n')
    code, _, err = run(capsys, "check", str(path))
    assert code == 2 and "carries no force in the self-stress state" in err


def test_an_internal_error_is_one_line_and_exit_1_unless_debugging(tmp_path, capsys, monkeypatch):
    import sheets.build

    def bug(_path):
        raise ZeroDivisionError("float division by zero")

    monkeypatch.setattr(sheets.build, "check", bug)
    monkeypatch.delenv("SHEETS_DEBUG", raising=False)
    code, _, err = run(capsys, "check", str(project(tmp_path)))
    assert code == 1
    assert "internal error" in err and "please report" in err and "Traceback" not in err
    assert len(err.strip().splitlines()) == 1
    monkeypatch.setenv("SHEETS_DEBUG", "1")
    with pytest.raises(ZeroDivisionError):
        main(["check", str(project(tmp_path))])


HEAVY = ("matplotlib", "pyvista", "vtk", "reportlab", "pint", "scipy.optimize", "openseespy")


def _imported_after(code: str) -> set[str]:
    """Top-level names (and scipy.optimize) in sys.modules after running ``code`` in a fresh interpreter."""
    probe = code + "\nimport sys\nprint('\\n'.join(sys.modules))"
    env = {**os.environ, "PYTHONPATH": str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", "")}
    done = subprocess.run([sys.executable, "-c", probe], capture_output=True, text=True, env=env, cwd=ROOT, check=True)
    names = set(done.stdout.split())
    return {h for h in HEAVY if h in names}


def test_importing_the_command_line_loads_no_heavy_library():
    assert _imported_after("import sheets.cli") == set()
    # --version and --help do not even need numpy
    assert "numpy" not in subprocess.run(
        [sys.executable, "-c", "import sys, sheets.cli; print(' '.join(sys.modules))"],
        capture_output=True, text=True, cwd=ROOT, check=True,
        env={**os.environ, "PYTHONPATH": str(ROOT)}).stdout.split()


def test_check_of_a_demo_project_loads_no_drawing_unit_or_optimisation_library():
    assert _imported_after(f"from sheets import build\nbuild.check({str(WAREHOUSE)!r})") == set()


def test_a_binary_file_given_as_the_project_exits_2_without_a_traceback(tmp_path):
    # As a user runs it: a fresh interpreter, `python -m sheets check`, stderr as printed.
    path = tmp_path / "drawing.toml"
    path.write_bytes(b"\x89PNG\r\n\x1a\n\x00\x00\x00\rIHDR" + bytes(range(256)))
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    done = subprocess.run([sys.executable, "-m", "sheets", "check", str(path)], capture_output=True, text=True, env=env, cwd=ROOT)
    assert done.returncode == 2
    assert "Traceback" not in done.stderr and "not UTF-8" in done.stderr and str(path) in done.stderr
