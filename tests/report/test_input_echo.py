"""The input echoed on the sheets and in the CSV files, checked against the project's own input files.

The invented atrium demo (313 nodes, 1,152 members, 44 supports, loads in CSV
files) is built once; the PDF is read back with pdfplumber (an independent
reader, test-only) and its input files are read here with the csv and tomllib
modules, not with the package's loader. The self-weight total is checked against
the closed form W = g sum(rho A L) over the members (weight = density x g x
volume: common practice), computed here from the input files.
"""

from __future__ import annotations

import csv
import json
import math
import os
import re
import subprocess
import sys
import tomllib
from pathlib import Path

import pdfplumber
import pytest

ROOT = Path(__file__).resolve().parents[2]
ATRIUM = ROOT / "demo_projects" / "atrium_grid"
G = 9.80665  # m/s^2, standard gravity (CGPM 1901)


def _read_csv(path: Path) -> list[dict[str, str]]:
    with path.open(newline="", encoding="utf-8") as f:
        return list(csv.DictReader(f))


@pytest.fixture(scope="module")
def atrium(tmp_path_factory):
    """(project TOML as data, input CSV rows, PDF path, text and smallest type of each PDF page) of one atrium build."""
    out = tmp_path_factory.mktemp("atrium") / "out"
    # built as a user builds it, by the command in a fresh process: its figure workers are forked
    # from a process with no threads left over from earlier tests
    env = dict(os.environ, PYTHONPATH=os.pathsep.join([str(ROOT)] + [p for p in [os.environ.get("PYTHONPATH")] if p]))
    run = subprocess.run([sys.executable, "-m", "sheets", "build", str(ATRIUM / "atrium_grid.toml"), "--out", str(out)],
                         env=env, capture_output=True, text=True, timeout=1200)
    assert run.returncode in (0, 5), run.stderr[-3000:]  # 5: the set is written; its cover carries design flags
    pdf_path = out / "atrium_grid.pdf"
    with pdfplumber.open(pdf_path) as pdf:
        pages = [page.extract_text() or "" for page in pdf.pages]
        # the type of every member id printed on a page (the compact tables' cells)
        ids = {row["id"] for row in _read_csv(ATRIUM / "members.csv")}
        smallest = [min((w["size"] for w in page.extract_words(extra_attrs=["size"]) if w["text"] in ids), default=99.0)
                    for page in pdf.pages]
    data = tomllib.loads((ATRIUM / "atrium_grid.toml").read_text(encoding="utf-8"))
    inputs = {"nodes": _read_csv(ATRIUM / "nodes.csv"), "members": _read_csv(ATRIUM / "members.csv")}
    for cid, case in data["cases"].items():
        inputs[cid] = _read_csv(ATRIUM / case["loads_file"])
    return data, inputs, pdf_path, pages, smallest


def _lines(pages: list[str]) -> list[str]:
    return [line for text in pages for line in text.splitlines()]


pytestmark = pytest.mark.slow  # one build of a 1,152-member frame for the module


def test_every_node_support_and_member_is_printed(atrium):
    data, inputs, _, pages, _ = atrium
    lines = _lines(pages)
    # the node table (two columns a page: up to two rows a text line): coordinates as given, then how it is held
    node_rows = {}
    for line in lines:
        for m in re.finditer(r"(\w+) (-?[\d.e+-]+) (-?[\d.e+-]+) (-?[\d.e+-]+) (free|fixed [xyz](?:, [xyz])*)", line):
            node_rows[m.group(1)] = m.groups()[1:]
    assert len(inputs["nodes"]) == 313 and len(data["supports"]) == 44
    for row in inputs["nodes"]:
        printed = node_rows[row["id"]]
        assert [float(v) for v in printed[:3]] == [float(row[a]) for a in "xyz"], row["id"]
        fixed = data["supports"].get(row["id"])
        assert printed[3] == ("fixed " + ", ".join(fixed) if fixed else "free"), row["id"]
    # the member table: one row per member with its ends, section and group
    member_rows = {}
    for line in lines:
        for m in re.finditer(r"(\w+) (\w+) (\w+) (CHS\d+) (bar|cable|strut) (.+?) (\d+\.\d+)(?= |$)", line):
            member_rows[m.group(1)] = m.groups()[1:]
    assert len(inputs["members"]) == 1152
    for row in inputs["members"]:
        start, end, section, role, group, length = member_rows[row["id"]]
        assert (start, end, section, group) == (row["start"], row["end"], row["section"], row["group"]), row["id"]
    # every support's reactions in every state: 44 rows under each of the 5 reactions tables
    supported = set(data["supports"])
    reaction_rows, inside = [], False
    for line in lines:
        inside = (inside or line == "Reactions") and not line.startswith("Checks on the solution")
        if inside:
            reaction_rows += [m.group(1) for m in re.finditer(r"(\w+) (free|-?[\d,.]+) (free|-?[\d,.]+) (free|-?[\d,.]+)", line)
                              if m.group(1) in supported]
    states = len(data["cases"]) + len(data["combinations"])
    assert sorted(reaction_rows) == sorted(list(supported) * states)  # every support once in each state's table
    assert "are shown; all of them are in" not in " ".join(lines)


def test_long_tables_continue_under_a_repeated_header(atrium):
    _, inputs, _, pages, smallest = atrium
    header = "Member Start End Section Role Group"  # "Length [m]" may wrap in a narrow column
    ids = {row["id"] for row in inputs["members"]}
    row = re.compile(r"(?:^| )(\w+) \w+ \w+ CHS\d+ (?:bar|cable|strut) ")
    with_rows = [i for i, text in enumerate(pages) if any(m in ids for m in row.findall(text))]
    assert len(with_rows) >= 5  # 1,152 rows cannot fit on one page, nor on two in two columns
    assert with_rows == list(range(with_rows[0], with_rows[-1] + 1))  # consecutive pages
    for i in with_rows:
        assert header in pages[i], f"page {i + 1} continues the member table without its header"
    assert min(smallest[i] for i in with_rows) >= 6.4  # compact tables stay legible (6.5 pt)
    # the node table runs in two columns a page, each under the header
    node_ids = {row["id"] for row in inputs["nodes"]}
    node_row = re.compile(r"(\w+) -?[\d.e+-]+ -?[\d.e+-]+ -?[\d.e+-]+ (?:free|fixed)")
    node_pages = [i for i, text in enumerate(pages) if any(m in node_ids for m in node_row.findall(text))]
    assert len(node_pages) >= 2
    for i in node_pages:
        assert "Node x [m] y [m] z [m] Support Node x [m] y [m] z [m] Support" in pages[i].splitlines(), i + 1


def _printed_loads(lines: list[str], node_ids: set[str]) -> dict[str, dict[str, list[float]]]:
    """{case id: {node: [fx, fy, fz(, self-weight fz)]}} read from the 'Nodal loads of case' tables."""
    out: dict[str, dict[str, list[float]]] = {}
    case = None
    for line in lines:
        head = re.match(r"^Nodal loads of case (\S+): ", line)
        if head:
            case = head.group(1)
            out[case] = {}
            continue
        if case is None:
            continue
        row = None  # a text line holds one row, or two where the table runs in two columns
        for word in line.split():
            if word in node_ids or word == "Sum":
                row = out[case].setdefault(word, [])
            elif row is not None and re.fullmatch(r"-?[\d.]+(e[+-]\d+)?", word):
                row.append(float(word))
            else:
                row = None
        if "Sum" in out[case]:
            case = None
    return out


def _self_weight_total(data: dict, members: list[dict[str, str]], nodes: list[dict[str, str]]) -> float:
    """W = g sum(rho A L) in kN, from the input files (areas in mm^2, density in kg/m^3)."""
    xyz = {n["id"]: [float(n[a]) for a in "xyz"] for n in nodes}
    rho = float(data["materials"]["S355"]["density"].split()[0])
    total = 0.0
    for m in members:
        area = float(data["sections"][m["section"]]["area"]) * 1e-6
        total += rho * area * math.dist(xyz[m["start"]], xyz[m["end"]]) * G
    return total / 1000.0


def test_nodal_loads_match_the_input_files(atrium):
    data, inputs, _, pages, _ = atrium
    node_ids = {n["id"] for n in inputs["nodes"]}
    printed = _printed_loads(_lines(pages), node_ids)
    assert set(printed) == set(data["cases"])
    for cid, case in data["cases"].items():
        table = printed[cid]
        given = {row["node"]: [float(row[c]) for c in ("fx", "fy", "fz")] for row in inputs[cid]}
        for node, values in given.items():
            assert table[node][:3] == values, (cid, node)  # as given, to every digit
        for node, values in table.items():
            if node not in given and node != "Sum":
                assert values[:3] == [0.0, 0.0, 0.0], (cid, node)  # a node loaded by self-weight alone
        sums = [sum(v[k] for v in given.values()) for k in range(3)]
        assert table["Sum"][:3] == pytest.approx(sums, abs=1e-9)
        if case.get("self_weight"):
            weight = _self_weight_total(data, inputs["members"], inputs["nodes"])
            assert table["Sum"][3] == pytest.approx(-weight, rel=1e-5)  # 6 significant digits printed
            assert sum(v[3] for n, v in table.items() if n != "Sum") == pytest.approx(-weight, rel=1e-4)
        else:
            assert all(len(v) == 3 for v in table.values())  # no self-weight column


def test_nodes_and_loads_csv_match_the_input(atrium):
    data, inputs, pdf_path, _, _ = atrium
    out = pdf_path.parent
    nodes = _read_csv(out / "csv" / "nodes.csv")
    assert [n["node"] for n in nodes] == [n["id"] for n in inputs["nodes"]]
    for written, given in zip(nodes, inputs["nodes"]):
        assert [float(written[f"{a} [m]"]) for a in "xyz"] == pytest.approx([float(given[a]) for a in "xyz"], abs=1e-12)
        fixed = data["supports"].get(given["id"], "")
        assert [written[f"fixed {a}"] for a in "xyz"] == [str(a in fixed) for a in "xyz"]
    loads = _read_csv(out / "csv" / "loads.csv")
    for cid, case in data["cases"].items():
        rows = {r["node"]: r for r in loads if r["case"] == cid}
        for given in inputs[cid]:
            row = rows[given["node"]]
            assert [float(row[f"applied f{a} [kN]"]) for a in "xyz"] == pytest.approx(
                [float(given[f"f{a}"]) for a in "xyz"], rel=1e-12, abs=1e-12)
        weight = sum(float(r["self-weight fz [kN]"]) for r in rows.values())
        expected = -_self_weight_total(data, inputs["members"], inputs["nodes"]) if case.get("self_weight") else 0.0
        assert weight == pytest.approx(expected, rel=1e-9, abs=1e-12)
        assert all(float(r["self-weight fx [kN]"]) == 0 == float(r["self-weight fy [kN]"]) for r in rows.values())
    issued = " ".join(" ".join(text.split()) for text in atrium[3])
    assert "csv/nodes.csv" in issued and "csv/loads.csv" in issued


def test_results_json_echoes_the_loads_and_basis(atrium):
    data, inputs, pdf_path, _, _ = atrium
    doc = json.loads((pdf_path.parent / "results.json").read_text())
    assert doc["project"]["basis"]["design_code"] == data["project"]["basis"]["design_code"]
    assert doc["project"]["basis"]["assumptions"] == data["project"]["basis"]["assumptions"]
    cases = {c["id"]: c for c in doc["load_cases"]}
    for cid in data["cases"]:
        given = {row["node"]: [float(row[c]) for c in ("fx", "fy", "fz")] for row in inputs[cid]}
        applied = {n: v for n, v in given.items() if any(v)}
        assert cases[cid]["applied"].keys() == applied.keys()
        for node, vector in applied.items():  # node by node: pytest.approx takes no nested mappings
            assert cases[cid]["applied"][node] == pytest.approx(vector, rel=1e-12, abs=1e-12)
        state = next(s for s in doc["states"] if s["id"] == cid)  # a state's loads = applied + self-weight
        for node, total in state["loads"].items():
            parts = [a + w for a, w in zip(cases[cid]["applied"].get(node, [0, 0, 0]),
                                           cases[cid]["self_weight_loads"].get(node, [0, 0, 0]))]
            assert total == pytest.approx(parts, rel=1e-12, abs=1e-12)


def test_design_basis_page_prints_the_basis(atrium):
    data, _, _, pages, _ = atrium
    page = " ".join(next(t for t in pages if "Design basis\n" in t and "Basis given in the project file" in t).split())
    basis = data["project"]["basis"]
    assert f"Design code named by the engineer: {basis['design_code']}" in page
    for text in basis["assumptions"] + basis["load_derivation"] + basis["notes"]:
        assert " ".join(text.split()) in page, text
