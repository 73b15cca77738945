"""An invented 12 m footbridge girder project for the report tests (text and a writer)."""

from __future__ import annotations

import textwrap
from pathlib import Path

# An invented footbridge truss: a 12 m Warren girder, two cases and one combination.
PROJECT = textwrap.dedent(
    """
    [project]
    title = "Brackwater footbridge - main girder"
    number = "TEST-0042"
    client = "Invented client for tests"
    calculation = "Warren girder G1, 12 m span"
    revision = "C"
    date = "2026-09-14"
    prepared_by = "A. Testwright"
    checked_by = "B. Reviewson"
    status = "For checking"
    template = "a4-portrait"

    [[project.revisions]]
    revision = "A"
    date = "2026-07-01"
    note = "First issue"

    [[project.revisions]]
    revision = "B"
    date = "2026-08-02"
    note = "Chord sections revised"

    [[project.revisions]]
    revision = "C"
    date = "2026-09-14"
    note = "Crowd load case added"

    [units]
    force = "kN"
    length = "m"
    stress = "MPa"
    area = "mm^2"
    second_moment = "mm^4"

    [materials.steel]
    elastic_modulus = "210 GPa"
    yield_strength = "355 MPa"
    density = "7850 kg/m^3"

    [sections.CHORD]
    material = "steel"
    area = 2400
    second_moment = 3.2e6

    [sections.WEB]
    material = "steel"
    area = 900
    second_moment = 5.0e5

    [nodes]
    L0 = [0, 0]
    L1 = [4, 0]
    L2 = [8, 0]
    L3 = [12, 0]
    U1 = [2, 1.8]
    U2 = [6, 1.8]
    U3 = [10, 1.8]

    [members]
    B1 = { ends = ["L0", "L1"], section = "CHORD", group = "bottom chord" }
    B2 = { ends = ["L1", "L2"], section = "CHORD", group = "bottom chord" }
    B3 = { ends = ["L2", "L3"], section = "CHORD", group = "bottom chord" }
    T1 = { ends = ["U1", "U2"], section = "CHORD", group = "top chord" }
    T2 = { ends = ["U2", "U3"], section = "CHORD", group = "top chord" }
    D1 = { ends = ["L0", "U1"], section = "WEB", group = "web" }
    D2 = { ends = ["U1", "L1"], section = "WEB", group = "web" }
    D3 = { ends = ["L1", "U2"], section = "WEB", group = "web" }
    D4 = { ends = ["U2", "L2"], section = "WEB", group = "web" }
    D5 = { ends = ["L2", "U3"], section = "WEB", group = "web" }
    D6 = { ends = ["U3", "L3"], section = "WEB", group = "web" }

    [supports]
    L0 = "xy"
    L3 = "y"

    [cases.G]
    title = "Deck and finishes"
    self_weight = true
    loads = { L1 = [0, -18], L2 = [0, -18] }

    [cases.Q]
    title = "Crowd on the left half"
    loads = { L1 = [0, -30], U1 = [0, -6] }

    [combinations.ULS]
    title = "Strength"
    factors = { G = 1.35, Q = 1.5 }

    [drawing]
    states = ["ULS"]

    [design]
    partial_factor = 1.0
    effective_length_factor = 1.0
    slenderness_limit = 180
    tension_slenderness_limit = 350
    stress_limit = "235 MPa"
    """
)


def write_project(folder: Path, text: str = PROJECT, name: str = "girder.toml") -> Path:
    folder.mkdir(parents=True, exist_ok=True)
    path = folder / name
    path.write_text(text, encoding="utf-8")
    return path
