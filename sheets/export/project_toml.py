"""A project file (TOML) for a frame read from elsewhere (a CAD drawing), for the user to complete.

It holds what the drawing says (nodes, members, supports) and marks plainly
what it cannot say (sections, materials, loads): the file loads as it is, and
its one load case is empty until the user fills it in.
"""

from __future__ import annotations

import json
from pathlib import Path

from sheets.model.from_dxf import DrawnFrame
from sheets.model.project import AXES


def _string(text: str) -> str:
    return json.dumps(text, ensure_ascii=False)  # a JSON string is a TOML basic string


def _number(value: float) -> str:
    return repr(float(value) + 0.0)  # shortest text that reads back to the same float; no "-0.0"


def _key(text: str) -> str:
    bare = text and all(c.isalnum() and c.isascii() or c in "-_" for c in text)
    return text if bare else _string(text)


def frame_project_toml(frame: DrawnFrame, title: str) -> str:
    lines = [
        f"# Made by `sheets import` from {Path(frame.source).name}: nodes, members and supports as drawn.",
        "# Still to do before this file is a design: sections and materials, the loads of every case,",
        "# combinations, and the [design] factors (docs/project-file.md).",
    ]
    lines += [f"# Import note: {note}" for note in frame.notes]
    lines += ["", "[project]", f"title = {_string(title)}", "", "[units]", 'force = "kN"', 'length = "m"', "",
              "[geometry]", f"dimension = {frame.dim}", f'vertical_axis = "{AXES[frame.dim - 1]}"', "", "[nodes]"]
    lines += [f"{_key(nid)} = [{', '.join(_number(v) for v in xyz)}]" for nid, xyz in zip(frame.node_ids, frame.coords)]
    lines += ["", "[members]", "# group: the drawing layer each member was drawn on"]
    for mid, (a, b), layer in zip(frame.member_ids, frame.ends.tolist(), frame.member_layers):
        lines.append(f"{_key(mid)} = {{ ends = [{_string(frame.node_ids[a])}, {_string(frame.node_ids[b])}], group = {_string(layer)} }}")
    lines += ["", "[supports]"]
    if not frame.supports:
        lines.append("# none were drawn: name the fixed axes of each supported node, e.g. N1 = \"xy\"")
    lines += [f"{_key(nid)} = {_string(axes)}" for nid, axes in frame.supports.items()]
    lines += ["", "[cases.G]", 'title = "Permanent (add the nodal loads: loads.NODE = [fx, fy(, fz)])"', ""]
    return "\n".join(lines)
