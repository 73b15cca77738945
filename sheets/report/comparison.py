"""The "Revision comparison" section: what changed from an earlier revision (``sheets build --compare``).

Reads a ``sheets.revision.compare.Comparison`` (values in SI) and prints it in
the project's display units and the sheets' fixed formats: which revisions,
the thresholds, then one table per kind of change, every row. A kind with no
change is said so in words; nothing is left out.
"""

from __future__ import annotations

from reportlab.platypus import Paragraph

from sheets.report.echo import long_table
from sheets.report.tables import Styles, escape, fmt, key_value, ulabel

FORMAT = {"force": "force", "length": "length", "load_path": "load_path"}  # unit kind -> fixed format


# loads to 6 significant digits, as the input echo prints the self-weight: a moved node changes its
# members' self-weight by less than the force format shows
LOAD_FORMAT = "significant6"


def _value(sheet, value, kind: str, form: str = "") -> str:
    """One old or new value of a change as printed: numbers in the display unit (in the fixed format of
    their kind, or ``form``), vectors in brackets."""
    if value is None:
        return "-"
    if kind:
        factor = sheet.project.units.factor(kind)
        form = form or FORMAT[kind]
        if isinstance(value, list):
            return "(" + ", ".join(fmt(v / factor, form) for v in value) + ")"
        return fmt(value / factor, form)
    if isinstance(value, dict):  # combination factors
        return " + ".join(f"{factor:g} x {case}" for case, factor in value.items())
    if isinstance(value, list):  # a member's ends
        return "-".join(str(v) for v in value)
    return fmt(value, "ratio") if isinstance(value, float) else str(value)


def _unit(sheet, kind: str) -> str:
    return f" [{ulabel(sheet.project.units, kind)}]"


def comparison_section(sheet, st: Styles) -> list:
    from sheets.report.sections import figure, heading, para

    c = sheet.comparison
    if c is None:
        return []
    p = sheet.project
    w = sheet.width
    force, utilisation = c.thresholds["force_change"], c.thresholds["utilisation_change"]
    out: list = [heading("Revision comparison", st, 0, "comparison")]
    out.append(para("What changed from an earlier revision of this design to the one these sheets are for. The earlier "
                    "revision was read from the file given to <i>sheets build --compare</i> (its results document, or its "
                    "project file solved again); both are compared in SI and printed in this project's display units.", st))
    out.append(key_value(st, [
        ("Earlier revision", c.old),
        ("This revision", c.new),
        ("A member force counts as changed", f"when it moves by more than {force * 100:g} % of the largest member force of "
                                             "its state (in either revision)"),
        ("A utilisation counts as changed", f"when the governing indicative utilisation moves by more than {utilisation:g}"),
        ("A node counts as moved", "when it moves by more than a millionth of the frame's size"),
        ("Members changed", f"{len(c.changed_members)} of {p.n_members}"),
    ], w, 0.32))
    if c.changed_members:  # a paragraph, not a table cell: a long list runs on over pages, every id printed
        out.append(para(escape(f"Changed members: {', '.join(c.changed_members)}."), st))
    if c.empty:
        out.append(para("<b>No change</b> in geometry, supports, members, loads, states, member forces, utilisations or "
                        "determinacy between the two revisions.", st))
    unchanged = [name for name, changes in (("geometry and topology", c.geometry), ("loads", c.loads), ("states", c.states),
                                            ("determinacy", c.determinacy), ("member forces", c.forces),
                                            ("utilisations", c.utilisations)) if not changes]
    if unchanged and not c.empty:
        out.append(para(escape("No change in " + ", ".join(unchanged) + "."), st))
    figures = sheet.figures_for("comparison")
    if figures:
        out.append(para(f"The changed members and nodes on the frame: {st.numbering.ahead('Figure', len(figures))}.", st))
        for fig in figures:
            out += figure(fig, sheet, st)
    out += _changes(sheet, st, "Geometry and topology", ["Change", "Item", "Old", "New"],
                    [[x.what, x.item, _value(sheet, x.old, x.kind), _value(sheet, x.new, x.kind)] for x in c.geometry])
    out += _changes(sheet, st, "Loads", ["State", "Node", f"Old{_unit(sheet, 'force')}", f"New{_unit(sheet, 'force')}"],
                    [[x.state, x.item if x.what == "load" else "(factors)", _value(sheet, x.old, x.kind, LOAD_FORMAT),
                      _value(sheet, x.new, x.kind, LOAD_FORMAT)] for x in c.loads],
                    note="nodal loads with the self-weight, which follows the geometry")
    out += _changes(sheet, st, "States added or removed", ["Change", "State"], [[x.what, x.item] for x in c.states])
    out += _changes(sheet, st, "Determinacy", ["Quantity", "Old", "New"],
                    [[x.item.replace("_", " "), _value(sheet, x.old, ""), _value(sheet, x.new, "")] for x in c.determinacy])
    out += _forces(sheet, st)
    out += _changes(sheet, st, "Utilisations", ["Member", "Old", "New", "Change"],
                    [[x.item, fmt(x.old, "ratio"), fmt(x.new, "ratio"), fmt(x.new - x.old, "ratio")] for x in c.utilisations],
                    numeric={1, 2, 3}, note=f"governing indicative utilisation moved by more than {utilisation:g}")
    lp = p.units.factor("load_path")
    out += _changes(sheet, st, "Load paths", ["State", f"Old{_unit(sheet, 'load_path')}", f"New{_unit(sheet, 'load_path')}",
                                              f"Change{_unit(sheet, 'load_path')}"],
                    [[x.state, fmt(x.old / lp, "load_path"), fmt(x.new / lp, "load_path"), fmt((x.new - x.old) / lp, "load_path")]
                     for x in c.load_paths], numeric={1, 2, 3}, note="every state in both revisions, changed or not")
    return out


def _changes(sheet, st: Styles, title: str, header: list[str], rows: list[list], numeric: set[int] | None = None,
             note: str = "") -> list:
    """A heading and the table of one kind of change (every row), or nothing where there is none."""
    if not rows:
        return []
    caption = f"{title}: {len(rows)} change{'s' if len(rows) != 1 else ''}" + (f" ({note})" if note else "")
    return [Paragraph(escape(title), st.h2),
            long_table(sheet, st, header, rows, numeric=numeric, total_width=sheet.width, title=caption)]


def _forces(sheet, st: Styles) -> list:
    """Member forces changed beyond the threshold, a table per state in the order of the states."""
    c = sheet.comparison
    if not c.forces:
        return []
    f = sheet.project.units.factor("force")
    unit = _unit(sheet, "force")
    out: list = [Paragraph("Member forces", st.h2),
                 Paragraph(escape(f"Members whose force moved by more than {c.thresholds['force_change'] * 100:g} % of the "
                                  "largest member force of the state; tension positive."), st.body)]
    by_state: dict[str, list] = {}
    for x in c.forces:
        by_state.setdefault(x.state, []).append(x)
    for state, changes in by_state.items():
        rows = [[x.item, fmt(x.old / f, "force"), fmt(x.new / f, "force"), fmt((x.new - x.old) / f, "force")] for x in changes]
        out.append(long_table(sheet, st, ["Member", f"Old{unit}", f"New{unit}", f"Change{unit}"], rows, numeric={1, 2, 3},
                              total_width=sheet.width * 0.7, two_columns=True,
                              title=f"Member forces changed, state {state}: {len(rows)} member{'s' if len(rows) != 1 else ''}"))
    return out
