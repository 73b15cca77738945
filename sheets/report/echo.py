"""The input echoed on the sheets: the engineer's design basis, nodes, members and nodal loads.

A reviewer checks the calculation against what went in, so every node, support,
member and nodal load is printed, all rows, as the project file gives them.
Long tables are set in compact type and run on over as many pages as they need,
their header row repeated on each.
"""

from __future__ import annotations

import numpy as np
from reportlab.pdfbase.pdfmetrics import stringWidth
from reportlab.platypus import Paragraph

from sheets.analysis.analyse import case_self_weight
from sheets.report.columns import GAP, TwoColumnTable
from sheets.report.plain_table import PlainTable
from sheets.report.tables import COMPACT_FONT, Styles, escape, fmt, table, ulabel

PADDING = 6.5  # points of cell padding, left and right together, and a little air


def long_table(sheet, st: Styles, header: list[str], rows: list[list], *, two_columns: bool = False, **kw):
    """A table of every row; above the template's ``[tables] rows`` it is set compact.

    ``two_columns``: a narrow table that is long is set in two columns per page (half the pages).
    """
    compact = len(rows) > sheet.template.table_rows
    if not (two_columns and compact):
        return table(st, header, rows, compact=compact, **kw)
    widths = fit_widths(header, rows, (sheet.width - GAP) / 2, st, max(COMPACT_FONT, st.cell.fontSize - 1))
    kw = {k: v for k, v in kw.items() if k not in ("total_width", "widths")}
    number = st.numbering.next("Table")  # one number for every column and page the table runs over
    whole = table(st, header, rows, compact=True, widths=widths, number=number, whole=True, **kw)
    if isinstance(whole, PlainTable):
        make = whole.with_rows  # the caption and header made once for every column
    else:
        def make(part):
            if part is rows:
                return whole
            return table(st, header, part, compact=True, widths=widths, number=number, whole=True, **kw)
    return TwoColumnTable(make, rows, space_after=st.body.fontSize * 0.8)


def fit_widths(header: list[str], rows: list[list], total: float, st: Styles, size: float) -> list[float]:
    """Column widths for a narrow column: each wide enough for its widest text and header word, the rest shared.

    Widths are measured in the sheets' fonts; padding is a fixed amount per cell, so narrow columns get it in
    full (a proportional share would break short headers such as "Member" across two lines).
    """
    need, whole = [], []
    for c, h in enumerate(header):
        whole.append(PADDING + stringWidth(h, st.fonts.bold, size))
        head = max(stringWidth(w, st.fonts.bold, size) for w in h.split())
        texts = {str(r[c]) for r in rows if len(str(r[c])) <= 28}  # longer texts wrap in their cell
        body = max((stringWidth(t, st.fonts.regular, size) for t in texts), default=0.0)
        need.append(PADDING + max(head, body))
    spare = total - sum(need)
    if spare < 0:
        return [n * total / sum(need) for n in need]  # too narrow: every column gives way, long texts wrap
    # the spare width first keeps headers on one line, then is shared in proportion
    short = [max(w - n, 0.0) for w, n in zip(whole, need)]
    given = min(1.0, spare / sum(short)) if sum(short) else 0.0
    need = [n + s * given for n, s in zip(need, short)]
    spare = total - sum(need)
    return [n + spare * n / sum(need) for n in need]


def support_text(axes: tuple[str, ...], fixed) -> str:
    """How a node is held, per axis: "fixed x, y, z", "fixed z" or "free"."""
    held = [a for a, f in zip(axes, fixed) if f]
    return "fixed " + ", ".join(held) if held else "free"


# -- design basis ------------------------------------------------------------------

BASIS_MISSING = ("The project file gives no design basis ([project.basis]: the design code, the assumptions and "
                 "the derivation of the loads). The reviewer must obtain it from the engineer responsible before "
                 "relying on these sheets.")


def basis_given(sheet, st: Styles) -> list:
    """The engineer's own basis from [project.basis], verbatim, under plain headings."""
    basis = sheet.project.info.basis
    out: list = [Paragraph("Basis given in the project file", st.h2)]
    if basis is None:
        return out + [Paragraph(f"<b>{escape(BASIS_MISSING)}</b>", st.body)]
    out.append(Paragraph("<b>Design code named by the engineer:</b> "
                         + (escape(basis.design_code) if basis.design_code else "not given"), st.body))
    for title, items in (("The engineer's assumptions", basis.assumptions), ("Load derivation", basis.load_derivation),
                         ("Notes", basis.notes)):
        out.append(Paragraph(f"<b>{title}</b>" + ("" if items else ": not given"), st.body))
        for text in items:
            out.append(Paragraph(escape(text), st.caution, bulletText="•"))
    out.append(Paragraph("This basis is printed as the project file gives it; the software does not check it "
                         "against the code named.", st.small))
    return out


# -- the model: nodes, members, nodal loads ------------------------------------------

def node_table(sheet, st: Styles) -> list:
    p = sheet.project
    L = p.units.factor("length")
    rows = [[nid] + [fmt(c / L, "given") for c in xyz] + [support_text(p.axes, p.fixed[i])]
            for i, (nid, xyz) in enumerate(zip(p.node_ids, p.coords))]
    return [Paragraph("Nodes and supports", st.h2),
            Paragraph(escape(f"Every node, its coordinates as given (up to 12 significant digits) and the translations "
                             f"its support fixes; {int(p.fixed.any(axis=1).sum())} of {p.n_nodes} nodes are supported."),
                      st.small),
            long_table(sheet, st, ["Node"] + [f"{a} [{ulabel(p.units, 'length')}]" for a in p.axes] + ["Support"], rows,
                       numeric=set(range(1, p.dim + 1)), total_width=sheet.width * 0.7, two_columns=True)]


def member_table(sheet, st: Styles) -> list:
    p = sheet.project
    L = p.units.factor("length")
    lengths = sheet.analysis.equilibrium.lengths
    rows = [[mid, p.node_ids[a], p.node_ids[b], p.member_sections[e] or "-", p.member_roles[e], p.member_groups[e] or "-",
             fmt(lengths[e] / L, "length")] for e, (mid, (a, b)) in enumerate(zip(p.member_ids, p.ends))]
    return [Paragraph("Members", st.h2),
            long_table(sheet, st, ["Member", "Start", "End", "Section", "Role", "Group", f"Length [{ulabel(p.units, 'length')}]"],
                       rows, numeric={6}, total_width=sheet.width, two_columns=True)]


def case_load_table(sheet, st: Styles, case) -> list:
    """One case's nodal loads: applied as given, self-weight apart, and their sums as a check of the derivation."""
    p = sheet.project
    f = p.units.factor("force")
    unit = ulabel(p.units, "force")
    applied = np.asarray(case.loads)
    weight = case_self_weight(p, case)
    vertical = p.axes[p.vertical_axis]
    loaded = np.flatnonzero((np.abs(applied).max(axis=1) > 0) | (np.abs(weight).max(axis=1) > 0))
    header = ["Node"] + [f"Applied F{a} [{unit}]" for a in p.axes]
    if case.self_weight:
        header.append(f"Self-weight F{vertical} [{unit}]")
    rows = []
    for n in loaded:
        row = [p.node_ids[n]] + [fmt(v / f, "given") for v in applied[n]]
        if case.self_weight:
            row.append(fmt(weight[n, p.vertical_axis] / f, "significant6"))
        rows.append(row)
    total = applied.sum(axis=0) / f
    sums = ["Sum"] + [fmt(v, "given") for v in total]
    if case.self_weight:
        sums.append(fmt(weight[:, p.vertical_axis].sum() / f, "significant6"))
    out: list = [Paragraph(escape(f"Nodal loads of case {case.id}: {case.title}"), st.h2)]
    if not rows:
        return out + [Paragraph("No nodal load.", st.body)]
    note = (f"{len(rows)} loaded node{'s' if len(rows) != 1 else ''}. Applied loads as given in the project file "
            f"(up to 12 significant digits)")
    note += (f"; self-weight (rho g A L, half to each end node, along -{vertical}) apart, to 6 significant digits." if case.self_weight
             else "; this case carries no self-weight.")
    out.append(Paragraph(escape(note), st.small))
    out.append(long_table(sheet, st, header, rows + [sums], numeric=set(range(1, len(header))),
                          total_width=sheet.width * (0.75 if case.self_weight else 0.6), two_columns=True))
    if case.self_weight:
        both = (applied + weight).sum(axis=0) / f
        out.append(Paragraph(escape(f"Case {case.id} with its self-weight: "
                                    + ", ".join(f"sum F{a} = {fmt(v, 'force')}" for a, v in zip(p.axes, both))
                                    + f" {unit}, as in the load cases table of the design basis."), st.small))
    return out
