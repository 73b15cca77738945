"""`sheets build --compare OLD`: the revision comparison section, its figure, the cover line and results.json.

A copy of the invented warehouse roof truss (demo_projects/warehouse_roof) is revised by script: one nodal
load of case G changed, and (in one revision) one node moved. The members the sheets name as changed are
checked against `sheets diff` / compare_results of the same pair, and, for the load change alone, against
the method of joints worked by hand on the truss (statically determinate, so a load at one node changes
exactly the members whose equilibrium involves it; R. C. Hibbeler, Structural Analysis, ch. 3, "Analysis
of statically determinate trusses": the method of joints).
"""

from __future__ import annotations

import json
import re
from pathlib import Path

import numpy as np
import pdfplumber
import pytest

from sheets import cli
from sheets.build import build_sheets, compare_revisions, results_of
from sheets.model import load_project
from sheets.render.form_figure import changes_figure
from sheets.report.templates import load_template, section_order
from sheets.revision.compare import compare_results, frame_marks

DEMOS = Path(__file__).resolve().parents[2] / "demo_projects"
ROOF = DEMOS / "warehouse_roof" / "warehouse_roof.toml"
OLD_L2, NEW_L2 = -2.0, -14.0  # kN: the services load at L2, case G, before and after


def _pdf_text(path: Path) -> str:
    with pdfplumber.open(path) as pdf:
        return " ".join(" ".join(page.extract_text() or "" for page in pdf.pages).split())


def _revise(folder: Path, name: str, *, l2: float = OLD_L2, u2_height: float | None = None, revision: str = "B") -> Path:
    text = ROOF.read_text(encoding="utf-8")
    text = text.replace(f"loads.L2 = [0, {OLD_L2}]", f"loads.L2 = [0, {l2}]", 1)
    text = text.replace('revision = "B"\ndate', f'revision = "{revision}"\ndate', 1)
    if u2_height is not None:
        text = text.replace("U2 = [6.0, 1.6077]", f"U2 = [6.0, {u2_height}]", 1)
    path = folder / f"{name}.toml"
    path.write_text(text, encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def roofs(tmp_path_factory):
    folder = tmp_path_factory.mktemp("roofs")
    return {
        "old": _revise(folder, "old"),
        "load": _revise(folder, "load", l2=NEW_L2, revision="C"),
        "both": _revise(folder, "both", l2=NEW_L2, u2_height=1.75, revision="C"),
    }


def _members_changed_line(text: str) -> list[str]:
    """The ids the section lists ('Members changed N of M', then 'Changed members: a, b, ...')."""
    found = re.search(r"Members changed (\d+) of \d+ Changed members: (.*?)\. ", text)
    assert found, "no list of changed members in the comparison section"
    ids = [m.strip() for m in found.group(2).split(",")]
    assert len(ids) == int(found.group(1))
    return ids


# -- an independent expectation: the method of joints, worked joint by joint -----------------------

ROOF_NODES = {"L0": (0.0, 0.0), "L1": (3.0, 0.0), "L2": (6.0, 0.0), "L3": (9.0, 0.0), "L4": (12.0, 0.0), "L5": (15.0, 0.0),
              "L6": (18.0, 0.0), "U1": (3.0, 0.8038), "U2": (6.0, 1.6077), "U3": (9.0, 2.4115), "U4": (12.0, 1.6077),
              "U5": (15.0, 0.8038)}  # as the demo project gives them
ROOF_MEMBERS = {"B1": ("L0", "L1"), "B2": ("L1", "L2"), "B3": ("L2", "L3"), "B4": ("L3", "L4"), "B5": ("L4", "L5"),
                "B6": ("L5", "L6"), "T1": ("L0", "U1"), "T2": ("U1", "U2"), "T3": ("U2", "U3"), "T4": ("U3", "U4"),
                "T5": ("U4", "U5"), "T6": ("U5", "L6"), "V1": ("L1", "U1"), "V2": ("L2", "U2"), "V3": ("L3", "U3"),
                "V4": ("L4", "U4"), "V5": ("L5", "U5"), "D1": ("U1", "L2"), "D2": ("U2", "L3"), "D3": ("U4", "L3"),
                "D4": ("U5", "L4")}
# joints in the order the method of joints takes them, each with the two member forces it finds: in from
# each bearing (every joint has at most two unknowns left when its turn comes)
JOINT_ORDER = (("L0", ("B1", "T1")), ("L1", ("B2", "V1")), ("U1", ("T2", "D1")), ("L2", ("B3", "V2")), ("U2", ("T3", "D2")),
               ("L6", ("B6", "T6")), ("L5", ("B5", "V5")), ("U5", ("T5", "D4")), ("L4", ("B4", "V4")), ("U4", ("T4", "D3")))


def _towards(node: str, member: str) -> np.ndarray:
    a, b = ROOF_MEMBERS[member]
    d = np.subtract(ROOF_NODES[b if a == node else a], ROOF_NODES[node])
    return d / np.hypot(*d)


def _residual(node: str, t: dict[str, float], external: np.ndarray) -> np.ndarray:
    """Sum of the forces on a joint: tension positive, a member pulls its joint towards its other end."""
    return external + sum((t[m] * _towards(node, m) for m in ROOF_MEMBERS if node in ROOF_MEMBERS[m] and m in t),
                          np.zeros(2))


def hand_force_changes(node: str, load: float) -> dict[str, float]:
    """Member forces (kN) of the roof truss under a vertical load ``load`` (kN, + up) at ``node`` alone.

    Reactions from moments about each bearing (L0 pinned, L6 sliding: no horizontal reaction there and
    none at L0 under a vertical load); then JOINT_ORDER; V3 from the vertical equilibrium of L3; the
    horizontal at L3 and both directions at U3 are left over as checks."""
    x = ROOF_NODES[node][0]
    external = {n: np.zeros(2) for n in ROOF_NODES}
    external[node] = external[node] + (0.0, load)
    external["L6"] = external["L6"] + (0.0, -load * x / 18.0)
    external["L0"] = external["L0"] + (0.0, -load * (18.0 - x) / 18.0)
    t: dict[str, float] = {}
    for joint, unknown in JOINT_ORDER:
        rest = _residual(joint, t, external[joint])
        t |= dict(zip(unknown, np.linalg.solve(np.column_stack([_towards(joint, m) for m in unknown]), -rest)))
    t["V3"] = -_residual("L3", t, external["L3"])[1] / _towards("L3", "V3")[1]
    for joint in ("L3", "U3"):
        assert np.abs(_residual(joint, t, external[joint])).max() < 1e-9 * abs(load)
    return t


def test_the_hand_method_itself_holds_known_cases():
    """Checks of the worked method: an apex load on a simply supported truss gives the end panel's top chord
    R / sin(slope) in compression (joint L0 alone); a load at a bottom chord joint with only a vertical above
    it hangs on that vertical alone (joint L1: V1 carries the load in tension)."""
    t = hand_force_changes("U3", -1.0)
    slope = np.arctan2(0.8038, 3.0)
    assert t["T1"] == pytest.approx(-0.5 / np.sin(slope))
    assert t["B1"] == pytest.approx(0.5 / np.tan(slope))
    assert t["V1"] == pytest.approx(0.0, abs=1e-12) and t["V5"] == pytest.approx(0.0, abs=1e-12)
    assert hand_force_changes("L1", -1.0)["V1"] == pytest.approx(1.0)


def _expected(node: str, load: float, largest: float) -> list[str]:
    """The members whose force the load changes by more than 1 % of the state's largest force, by hand;
    every member clearly on one side of that line (the rounded coordinates make some forces tiny, not zero)."""
    t = hand_force_changes(node, load)
    for m, v in t.items():
        assert not 0.5 * 0.01 * largest < abs(v) < 2 * 0.01 * largest, f"{m} too close to the threshold"
    return sorted(m for m, v in t.items() if abs(v) > 0.01 * largest)


@pytest.mark.parametrize(("node", "old", "new"), [("U3", -8.1, -20.1), ("L2", -2.0, -14.0)])
def test_which_members_a_load_change_moves(node, old, new, tmp_path):
    """The apex load goes down the rafters, straight from eaves to apex: by the zero-force rule at U1 and U2
    (and L1, L5) no web member takes any of it, only the chords. A load at L2 climbs V2 and crosses the webs."""
    text = ROOF.read_text(encoding="utf-8")
    changed = text.replace(f"loads.{node} = [0, {old}]", f"loads.{node} = [0, {new}]", 1)
    assert changed != text
    (tmp_path / "old.toml").write_text(text, encoding="utf-8")
    (tmp_path / "new.toml").write_text(changed, encoding="utf-8")
    docs = [results_of(tmp_path / "old.toml"), results_of(tmp_path / "new.toml")]
    c = compare_results(*docs)
    in_g = {x.item: x for x in c.forces if x.state == "G"}
    largest = max(abs(v) for doc in docs for s in doc["states"] if s["id"] == "G" for v in s["forces"].values())
    expected = _expected(node, new - old, largest)
    assert sorted(in_g) == expected
    hand = hand_force_changes(node, new - old)
    for m, x in in_g.items():
        assert (x.new - x.old) / 1e3 == pytest.approx(hand[m], rel=1e-6)
    if node == "U3":
        assert expected == sorted(f"{c}{i}" for c in "BT" for i in range(1, 7))


def test_a_load_change_names_exactly_the_members_the_method_of_joints_finds(roofs, tmp_path):
    result = build_sheets(roofs["load"], tmp_path / "out", compare=roofs["old"])
    doc = json.loads((result.pdf.parent / "results.json").read_text(encoding="utf-8"))
    new_g = next(s for s in doc["states"] if s["id"] == "G")["forces"]
    hand = hand_force_changes("L2", NEW_L2 - OLD_L2)
    largest = max(abs(v) for m, v in new_g.items() for v in (v, v - hand[m]))  # new, and old = new - change
    expected = _expected("L2", NEW_L2 - OLD_L2, largest)
    c = result.comparison
    assert sorted(x.item for x in c.forces if x.state == "G") == expected
    assert list(c.changed_members) == expected  # the combinations with G move the same members, S and W none
    assert [(x.what, x.item, x.state) for x in c.loads] == [("load", "L2", "G")] and c.geometry == ()
    # the sheets name exactly those members, in the summary row and in the table of state G
    text = _pdf_text(result.pdf)
    assert sorted(_members_changed_line(text)) == expected
    assert f"Member forces changed, state G: {len(expected)} members" in text
    row = re.search(r"G L2 \(0, (-[\d.]+)\) \(0, (-[\d.]+)\)", text)  # self-weight included, 6 significant digits
    assert row and float(row.group(2)) - float(row.group(1)) == pytest.approx(NEW_L2 - OLD_L2, abs=1e-4)


def test_a_load_change_and_a_moved_node_agree_with_sheets_diff(roofs, tmp_path, capsys):
    out, cmp_json = tmp_path / "out", tmp_path / "diff.json"
    code = cli.main(["build", str(roofs["both"]), "--out", str(out), "--compare", str(roofs["old"])])
    assert code in (0, 5)  # 5: the demo's design flags (uplift), as without --compare
    printed = " ".join(capsys.readouterr().out.split())
    assert cli.main(["diff", str(roofs["old"]), str(roofs["both"]), "--json", str(cmp_json)]) == 0
    capsys.readouterr()
    diff = json.loads(cmp_json.read_text(encoding="utf-8"))
    doc = json.loads((out / "results.json").read_text(encoding="utf-8"))
    assert doc["comparison"] == diff  # the build's own results give the same comparison as solving the project again
    changed = diff["changed_members"]
    assert [(g["what"], g["item"]) for g in diff["geometry"]] == [("node moved", "U2")]
    text = _pdf_text(out / "both.pdf")
    assert sorted(_members_changed_line(text)) == sorted(changed)
    assert f"{len(changed)} members changed" in printed
    # the section's tables: the moved node with its coordinates, the changed load, a force table per changed state
    assert "node moved U2 (6.000, 1.608) (6.000, 1.750)" in text
    states = sorted({f["state"] for f in diff["member_forces"]})
    for state in states:
        n = sum(1 for f in diff["member_forces"] if f["state"] == state)
        assert f"Member forces changed, state {state}: {n} member" in text
    # the figure: written, listed with the issued files and placed in the section with its caption
    figure = out / "figures" / "revision-changes.pdf"
    assert figure.is_file() and figure.read_bytes().startswith(b"%PDF")
    assert "figures/revision-changes.pdf" in text and "Members changed from the earlier revision" in text
    assert "figures/revision-changes.pdf" in json.loads((out / "manifest.json").read_text(encoding="utf-8"))["files"]
    # the cover records the comparison, with the earlier revision's fingerprint
    old_fingerprint = results_of(roofs["old"])["project"]["fingerprint"][:12]
    cover = text[:text.index("Contents")]
    assert f"Compared with Ostrel Lane Depot - roof truss T2 revision B (fingerprint {old_fingerprint}): " \
           f"{len(changed)} members changed" in cover
    assert "Revision comparison" in text[text.index("Contents"):]


def test_the_previous_sets_results_json_and_no_change(roofs, tmp_path):
    """Compared with the results.json of the set it replaces: the same input, so no change, said in words."""
    out = tmp_path / "out"
    first = build_sheets(roofs["old"], out)
    assert first.comparison is None
    second = build_sheets(roofs["old"], out, compare=out / "results.json")
    assert second.comparison is not None and second.comparison.empty
    text = _pdf_text(second.pdf)
    assert "No change in geometry, supports, members, loads, states, member forces, utilisations or determinacy" in text
    assert "no change in geometry, loads, states" in text  # the cover's line
    assert not (out / "figures" / "revision-changes.pdf").exists()  # nothing to mark: no figure
    doc = json.loads((out / "results.json").read_text(encoding="utf-8"))
    assert doc["comparison"]["changed_members"] == [] and doc["comparison"]["schema"] == "sheets.comparison/1"


def test_no_compare_no_section(built):
    _, result = built
    text = _pdf_text(result.pdf)
    assert "Revision comparison" not in text and "Compared with" not in text
    assert not (result.pdf.parent / "figures" / "revision-changes.pdf").exists()
    assert "comparison" not in json.loads((result.pdf.parent / "results.json").read_text(encoding="utf-8"))


def test_a_bad_earlier_revision_writes_nothing(roofs, tmp_path, capsys):
    out = tmp_path / "out"
    missing = tmp_path / "gone" / "results.json"
    assert cli.main(["build", str(roofs["old"]), "--out", str(out), "--compare", str(missing)]) == 2
    err = " ".join(capsys.readouterr().err.split())
    assert str(missing) in err and "Traceback" not in err
    assert not out.exists()
    wrong = tmp_path / "wrong.json"
    wrong.write_text('{"schema": "sheets.diagram/1"}', encoding="utf-8")
    assert cli.main(["build", str(roofs["old"]), "--out", str(out), "--compare", str(wrong)]) == 2
    err = " ".join(capsys.readouterr().err.split())
    assert "wrong.json" in err and "sheets.results/1" in err
    assert not out.exists()
    with pytest.raises(SystemExit) as stop:  # argparse: a negative threshold is bad input
        cli.main(["build", str(roofs["old"]), "--compare", str(wrong), "--force-change", "-0.1"])
    assert stop.value.code == 2
    assert not out.exists()


def test_a_templates_order_without_the_section_still_shows_it():
    """A template copied before the section existed has no "comparison" in its order: it goes after the cover."""
    t = load_template("a4-portrait")
    assert section_order(t) == t.order and section_order(t, {"comparison"}) == t.order
    older = t.__class__(**{**t.__dict__, "order": tuple(n for n in t.order if n != "comparison")})
    assert section_order(older) == older.order
    assert section_order(older, {"comparison"})[:2] == ("cover", "comparison")


def test_the_figure_of_a_3d_frame_has_every_view_and_marks_removed_and_moved(tmp_path):
    path = DEMOS / "gallery_node" / "gallery_node.toml"
    project = load_project(path)
    old = results_of(path)
    new = json.loads(json.dumps(old))
    gone = new["members"].pop(0)
    new["nodes"][-1]["coordinates"][0] += 0.5
    c = compare_results(old, new)
    marks = frame_marks(c, dict(zip(project.node_ids, project.coords.tolist())))
    assert [m for m, _, _ in marks.removed_members] == [gone["id"]]
    assert [n for n, _ in marks.moved_nodes] == [new["nodes"][-1]["id"]]
    fig = changes_figure(project, marks, "changes")
    panels = [ax for ax in fig.axes if ax.get_title()]
    assert len(panels) == len(project.drawing.views or ("plan",))
    legend = [t.get_text() for t in fig.legends[0].get_texts()]
    assert any(t.startswith("member removed") for t in legend) and any(t.startswith("node moved") for t in legend)


def test_compare_revisions_and_the_build_agree_on_a_moved_node(roofs):
    c = compare_revisions(roofs["old"], roofs["both"])
    moved = [x for x in c.geometry if x.what == "node moved"]
    assert [(x.item, x.old, x.new) for x in moved] == [("U2", [6.0, 1.6077], [6.0, 1.75])]
