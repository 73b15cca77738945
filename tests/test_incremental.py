"""Incremental builds: a build that reuses the stage cache writes exactly what a forced build writes.

The check is a byte-for-byte comparison of every file of two sheet sets of the same revision: one
built after an earlier revision filled the cache, one built with ``force`` from nothing. The
demos are copied so the edits stay in the test's folder.
"""

from __future__ import annotations

import re
import shutil
from pathlib import Path

import pytest

from sheets.build import build_sheets

DEMOS = Path(__file__).resolve().parents[1] / "demo_projects"


def _copy_demo(name: str, tmp_path: Path) -> Path:
    folder = tmp_path / name
    shutil.copytree(DEMOS / name, folder)
    return folder / f"{name}.toml"


def _set_bytes(out: Path) -> dict[str, bytes]:
    return {p.relative_to(out).as_posix(): p.read_bytes() for p in sorted(out.rglob("*")) if p.is_file()}


def _edit(path: Path, old: str, new: str) -> None:
    text = path.read_text(encoding="utf-8")
    assert text.count(old) == 1, f"the edit must name one place in {path.name}: {old!r}"
    path.write_text(text.replace(old, new), encoding="utf-8")


def _figures_made(stages: str) -> int:
    """How many figures a build drew (from its 'made: ...; reused: ...' summary)."""
    made = stages.split(";")[0]
    found = re.search(r"figure(?: x(\d+))?", made)
    return 0 if found is None else int(found.group(1) or 1)


# (demo, an edit that changes one load value, how many figures that edit must redraw at most)
LOAD_EDITS = [
    # wind case W is part of W itself and ULS-2 only: its loads figure and ULS-2's figures
    ("warehouse_roof", ("loads.U3 = [0.0, 12.60]", "loads.U3 = [0.0, 13.10]")),
    # a 3D frame with a cell complex: force cells, polyhedral diagram and Minkowski views per state
    ("gallery_node", ("loads = { O = [0, 0, -6.0] }", "loads = { O = [0, 0, -6.5] }")),
]


@pytest.mark.parametrize("demo,edit", LOAD_EDITS, ids=[d for d, _ in LOAD_EDITS])
def test_a_cached_rebuild_equals_a_forced_build_byte_for_byte(tmp_path, demo, edit):
    project = _copy_demo(demo, tmp_path)
    first = build_sheets(project, tmp_path / "cached")
    assert "reused: nothing" in first.stages  # an empty cache: everything made
    _edit(project, *edit)
    cached = build_sheets(project, tmp_path / "cached")
    forced = build_sheets(project, tmp_path / "forced", force=True)
    assert "reused: nothing" in forced.stages
    assert "figure" in cached.stages.split("reused:")[1], cached.stages  # the unchanged states' figures
    assert _figures_made(cached.stages) < _figures_made(first.stages), cached.stages
    old, new = _set_bytes(tmp_path / "cached"), _set_bytes(tmp_path / "forced")
    assert old.keys() == new.keys()
    assert [name for name in old if old[name] != new[name]] == []


def test_a_rebuild_of_one_load_change_redraws_only_the_states_it_reaches(tmp_path):
    """Wind case W is in W and ULS-2 alone (the demo's combinations): the figures of G, S, ULS-1 and
    SLS-1 and the model figure are reused, and the determinacy (geometry alone) too."""
    project = _copy_demo("warehouse_roof", tmp_path)
    full = build_sheets(project, tmp_path / "out")
    _edit(project, *LOAD_EDITS[0][1])
    again = build_sheets(project, tmp_path / "out")
    reused = again.stages.split("reused:")[1]
    assert "determinacy" in reused
    assert "state diagrams x4" in reused  # G, S, ULS-1, SLS-1
    figures = [f.stem for f in (tmp_path / "out" / "figures").iterdir()]
    reached = [f for f in figures if f.endswith("-W") or f.endswith("-ULS-2")]
    assert reached and len(reached) < len(figures)
    assert _figures_made(again.stages) == len(reached), (full.stages, again.stages, sorted(reached))


def test_a_geometry_change_redoes_the_determinacy_and_every_figure(tmp_path):
    project = _copy_demo("warehouse_roof", tmp_path)
    build_sheets(project, tmp_path / "out")
    text = project.read_text(encoding="utf-8")
    # move the apex node a little: every state's geometry changes
    match = re.search(r"^U3 = \[([-\d.]+), ([-\d.]+)\]$", text, re.M)
    assert match is not None, "the demo's apex node U3 is in its [nodes] table"
    y = match.group(2)
    _edit(project, match.group(0), match.group(0).replace(f"{y}]", f"{float(y) + 0.05:g}]"))
    again = build_sheets(project, tmp_path / "out")
    reused = again.stages.split("reused:")[1]
    assert "determinacy" not in reused and "figure" not in reused, again.stages
    forced = build_sheets(project, tmp_path / "forced", force=True)
    assert _set_bytes(tmp_path / "out") == _set_bytes(tmp_path / "forced")
    assert forced.passed == again.passed


def test_a_damaged_cache_only_costs_time(tmp_path):
    project = _copy_demo("warehouse_roof", tmp_path)
    build_sheets(project, tmp_path / "out")
    cache = tmp_path / ".sheets-sets" / "out" / "cache"
    entries = sorted(cache.rglob("*.entry"))
    assert entries
    for entry in entries[::2]:
        entry.write_bytes(b"not a pickle")
    rebuilt = build_sheets(project, tmp_path / "out")
    build_sheets(project, tmp_path / "forced", force=True)
    assert _set_bytes(tmp_path / "out") == _set_bytes(tmp_path / "forced")
    assert "figure" in rebuilt.stages.split(";")[0]  # the damaged entries were made anew
