"""`sheets build` with design flags: every file written, the cover states the outcome, exit code 5."""

from __future__ import annotations

import json
import textwrap

import pdfplumber
import pytest

from sheets import cli
from sheets.errors import EXIT_DESIGN_FLAGS

from girder_project import PROJECT, write_project

# The girder with a wind suction case lifting it off its bearings (invented), the strength
# combinations tagged, and a serviceability combination with a deflection limit.
FLAGGED = PROJECT.replace(textwrap.dedent('''\
    [combinations.ULS]
    title = "Strength"
    factors = { G = 1.35, Q = 1.5 }
    '''), textwrap.dedent('''\
    [cases.W]
    title = "Wind suction"
    loads = { U1 = [0, 40], U2 = [0, 40], U3 = [0, 40] }

    [combinations.ULS]
    title = "Strength"
    factors = { G = 1.35, Q = 1.5 }
    purpose = "strength"

    [combinations.ULS-W]
    title = "Strength, suction"
    factors = { G = 1.0, W = 1.5 }
    purpose = "strength"

    [combinations.SLS]
    title = "Serviceability"
    factors = { G = 1.0, Q = 1.0 }
    purpose = "serviceability"
    ''')).replace('stress_limit = "235 MPa"', 'stress_limit = "235 MPa"\ndeflection_limit = 360')
assert "[cases.W]" in FLAGGED and "deflection_limit" in FLAGGED


@pytest.fixture(scope="module")
def flagged_build(tmp_path_factory):
    folder = tmp_path_factory.mktemp("flagged")
    path = write_project(folder, FLAGGED)
    code = cli.main(["build", str(path), "--out", str(folder / "out")])
    return folder / "out", code


def test_build_exits_5_and_still_writes_every_file(flagged_build):
    out, code = flagged_build
    assert code == EXIT_DESIGN_FLAGS == 5
    manifest = json.loads((out / "manifest.json").read_text())
    for name in manifest["files"]:
        assert (out / name).is_file(), name
    assert "girder.pdf" in manifest["files"] and "figures/displaced-SLS.pdf" in manifest["files"]
    doc = json.loads((out / "results.json").read_text())
    uplift = {(s["id"], s["state"]) for s in doc["outcome"]["uplift"]}
    assert doc["outcome"]["flagged"] and uplift == {("L0", "ULS-W"), ("L3", "ULS-W")}
    assert doc["member_checks"]["over"] == ["ULS", "ULS-W"]
    (sls,) = doc["serviceability"]["states"]
    assert sls["state"] == "SLS" and sls["available"] and doc["serviceability"]["span"] == 12.0


def test_the_cover_states_the_outcome_first(flagged_build):
    out, _ = flagged_build
    with pdfplumber.open(out / "girder.pdf") as pdf:
        cover = pdf.pages[0].extract_text()
        text = "\n".join(page.extract_text() or "" for page in pdf.pages)
    assert "Design outcome: FLAGGED" in cover
    assert "Uplift at supports" in cover and "L0" in cover
    assert cover.index("Design outcome") < cover.index("Project number")
    assert "Displacements under the serviceability combinations" in text
    assert "span / 360" in text
    assert 'the combinations tagged purpose = "strength" (ULS, ULS-W)' in text.replace("\n", " ")
