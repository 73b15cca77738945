"""Every demo project: node cells close, Minkowski totals and sizing obey Maxwell's
load path theorem (sum t L = sum f . x; Maxwell 1870, Trans. R. Soc. Edinburgh 26)."""

import json
from pathlib import Path

import pytest

from sheets.analysis import analyse
from sheets.model.loading import load_project
from sheets.reciprocal.summary import polyhedral_results

DEMOS = sorted((Path(__file__).resolve().parents[2] / "demo_projects").glob("*/*.toml"))


@pytest.mark.parametrize("path", DEMOS, ids=[p.stem for p in DEMOS])
def test_demo_polyhedral_results(path):
    analysis = analyse(load_project(path))
    doc = polyhedral_results(analysis, detail=False)
    json.dumps(doc, allow_nan=False)
    for sid, entry in doc["states"].items():
        state = analysis.state(sid)
        assert entry["node_cells"]["passed"], (sid, entry["node_cells"]["failed_nodes"])
        mk = entry["minkowski"]
        assert mk["passed"], sid
        # the view's load path is the analysis' own figure; sum t L = sum f.x from the state's checks
        lp_unit = analysis.project.units.factor("load_path")
        assert mk["load_path"] * lp_unit == pytest.approx(analysis.load_path(state), rel=1e-12)
        assert mk["sum_f_x"] * lp_unit == pytest.approx(state.checks.load_path_loads, rel=1e-9, abs=1e-9 * analysis.load_path(state))
    sizing = doc["sizing"]
    if sizing["available"]:
        assert sizing["passed"]
        for s in sizing["states"]:
            scale = max(s["volume"], 1e-300)
            assert abs(s["volume_tension"] - s["volume_compression"] - s["loads_times_positions_over_stress"]) <= 1e-9 * scale
