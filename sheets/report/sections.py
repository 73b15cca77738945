"""The sections of a sheet set, in the order a reviewer reads them.

Each section is a function ``(sheet: SheetSet, st: Styles) -> list[Flowable]``
registered in ``SECTIONS`` under the name a template's ``[sections] order``
uses. A section with nothing to show returns an empty list; nothing is faked.
Section titles are plain words of our own.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from functools import cached_property
from typing import Any, Callable

import numpy as np
from reportlab.platypus import Flowable, KeepTogether, PageBreak, Paragraph, Spacer, TableStyle
from reportlab.platypus.tableofcontents import TableOfContents

from sheets import __version__
from sheets.analysis import Analysis
from sheets.analysis.design_states import design_states
from sheets.analysis.member_checks import MemberChecks, group_summaries
from sheets.model.project import AXES
from sheets.report.document import Heading
from sheets.report.echo import basis_given, case_load_table, long_table, member_table, node_table
from sheets.report.figures import SheetFigure, state_label
from sheets.report.pdf_image import ImageFlowable, from_png
from sheets.report.tables import Styles, escape, fmt, key_value, table, ulabel
from sheets.report.templates import Template
from sheets.report.vector import VectorFlowable

Section = Callable[["SheetSet", Styles], list]


@dataclass(frozen=True)
class IssuedFile:
    name: str  # path relative to the PDF's folder
    content: str


@dataclass(frozen=True)
class SheetSet:
    """Everything the sections draw from; ``sizing`` is None where that stage is absent."""

    analysis: Analysis
    checks: MemberChecks
    figures: tuple[SheetFigure, ...]
    template: Template
    width: float  # body width, points
    height: float  # body height, points
    issued: tuple[IssuedFile, ...] = ()
    sizing: Any | None = None
    notes: tuple[str, ...] = field(default_factory=tuple)  # parts not in this set, and why
    comparison: Any | None = None  # sheets.revision.compare.Comparison with an earlier revision, where asked for

    @property
    def project(self):
        return self.analysis.project

    @cached_property
    def serviceability(self):
        from sheets.analysis.serviceability import serviceability

        return serviceability(self.analysis)

    @cached_property
    def outcome(self):
        from sheets.analysis.outcome import design_outcome

        return design_outcome(self.analysis, self.checks, self.serviceability)

    def figures_for(self, part: str, state: str | None = None) -> list[SheetFigure]:
        return [f for f in self.figures if f.part == part and f.state == state]


# -- helpers -----------------------------------------------------------------

def heading(text: str, st: Styles, level: int, key: str) -> Heading:
    style = {0: st.h0, 1: st.h1}.get(level, st.h2)
    return Heading(escape(text), style, level, key)


def para(text: str, st: Styles, style: str = "body") -> Paragraph:
    return Paragraph(text, getattr(st, style))


def figure(fig: SheetFigure, sheet: SheetSet, st: Styles, number: str = "") -> list:
    max_h = sheet.height * 0.62
    if fig.vector is not None:
        body: Flowable = VectorFlowable(fig.vector, max_width=sheet.width, max_height=max_h)
    else:
        image = fig.image or from_png(fig.png)  # made with the figure's file where it was drawn, as a rule
        scale = min(sheet.width / image.width, max_h / image.height)
        body = ImageFlowable(image, image.width * scale, image.height * scale)
    number = number or st.numbering.next("Figure")
    caption = para(f"<b>{escape(number)}. {escape(fig.title)}.</b> {escape(fig.caption)} "
                   f"<font color='#555555'>(figures/{escape(fig.file_name)})</font>", st, "caption")
    return [KeepTogether([body, caption])]


def _force_unit(p) -> str:
    return ulabel(p.units, "force")


# -- cover -------------------------------------------------------------------

def cover(sheet: SheetSet, st: Styles) -> list:
    p = sheet.project
    info = p.info
    a = sheet.analysis
    out: list = [Spacer(1, 6),
                 Paragraph("CALCULATION SHEETS", st.h2),
                 Paragraph(escape(info.title), st.cover_title)]
    if info.calculation:
        out.append(Paragraph(escape(info.calculation), st.h1))
    out += outcome_block(sheet, st)
    pairs = [
        ("Project", info.title), ("Project number", info.number), ("Client", info.client),
        ("Calculation", info.calculation), ("Status", info.status), ("Revision", info.revision),
        ("Date", info.date), ("Prepared by", info.prepared_by), ("Checked by", info.checked_by),
        ("Project file", p.source.replace("\\", "/").rsplit("/", 1)[-1]),
        ("Input fingerprint (SHA-256 of the project file and every file it includes)", p.fingerprint),
        ("Produced by", f"sheets {__version__}; template {sheet.template.name}"),
    ]
    out.append(key_value(st, [(k, v or "-") for k, v in pairs], sheet.width))
    out.append(Spacer(1, 8))
    det = a.determinacy
    passed = "all pass" if a.passed else "ONE OR MORE FAIL: the results must not be used as they stand"
    worst = sheet.checks.worst
    if worst is None:
        util = "no member check made (see Member checks)"
    else:
        u = sheet.checks.governing[worst]
        util = (f"largest utilisation {fmt(u, 'ratio')} in member {p.member_ids[worst]} "
                f"({sheet.checks.governing_check[worst].replace('_', ' ')}, state {sheet.checks.governing_state(worst) or '-'})")
    summary = [
        ("Frame", f"{p.dim}D pin-jointed frame: {p.n_nodes} nodes, {p.n_members} members, "
                  f"{int(p.fixed.sum())} fixed translations"),
        ("Loading", f"{len(p.cases)} load case{'s' if len(p.cases) != 1 else ''}"
                    + (", 1 prestress state" if p.prestress is not None else "")
                    + f", {len(a.combinations)} combination{'s' if len(a.combinations) != 1 else ''}"),
        ("Stability", det.classification),
        ("Verification of the solutions", passed),
        ("Indicative member checks", util),
        ("Serviceability", _serviceability_summary(sheet)),
    ]
    out.append(Paragraph("Summary", st.h2))
    out.append(key_value(st, summary, sheet.width))
    out.append(Paragraph("Revision history", st.h2))
    revisions = list(info.revisions)
    if not revisions and (info.revision or info.date):
        rows = [[info.revision or "-", info.date or "-", "(no revision history given in the project file)"]]
    else:
        rows = [[r.revision, r.date, r.note] for r in revisions]
    out.append(table(st, ["Revision", "Date", "Description"], rows, widths=[sheet.width * 0.12, sheet.width * 0.16, sheet.width * 0.72]))
    if sheet.comparison is not None:
        from sheets.revision.compare import summary

        out.append(para(escape(summary(sheet.comparison)) + " See <i>Revision comparison</i>.", st))
    out.append(Paragraph("Contents", st.h2))
    toc = TableOfContents(dotsMinLevel=0)
    toc.levelStyles = [_toc_style(st, 0), _toc_style(st, 1)]
    toc.tableStyle = TableStyle([("FONT", (0, 0), (-1, -1), st.fonts.regular, st.body.fontSize),
                                 ("VALIGN", (0, 0), (-1, -1), "TOP"),
                                 ("LEFTPADDING", (0, 0), (-1, -1), 0), ("RIGHTPADDING", (0, 0), (-1, -1), 0),
                                 ("TOPPADDING", (0, 0), (-1, -1), 0), ("BOTTOMPADDING", (0, 0), (-1, -1), 0)])
    out.append(toc)
    return out


def _serviceability_summary(sheet: SheetSet) -> str:
    """One line per serviceability combination: the largest deflection, span / deflection and the limit check."""
    s = sheet.serviceability
    if not s.states:
        return s.note
    unit = sheet.project.units
    parts = []
    for x in s.states:
        if not x.available:
            parts.append(f"{x.state}: no displacements")
            continue
        text = f"{x.state}: largest deflection {fmt(x.deflection / unit.factor('displacement'), 'displacement')} " \
               f"{ulabel(unit, 'displacement')} at {x.deflection_node}"
        if x.ratio is not None:
            text += f", span / {x.ratio:,.0f}"
        if x.passed is not None:
            text += f" ({'pass' if x.passed else 'FAIL'} against span / {s.limit:g})"
        parts.append(text)
    return "; ".join(parts)


def outcome_block(sheet: SheetSet, st: Styles) -> list:
    """The design outcome, stated first: flags shaded, each with its ids (sheets.analysis.outcome)."""
    o = sheet.outcome
    u = sheet.project.units
    verdict = ("FLAGGED: the shaded items below need the engineer's action before the design can stand"
               if o.flagged else "no flag raised by the indicative checks")
    if not sheet.analysis.passed:
        verdict = "A VERIFICATION CHECK FAILS: the results must not be used as they stand. " + verdict
    findings = o.findings(ulabel(u, "force"), u.factor("force"))
    rows = [[text] for text, _ in findings]
    return [Paragraph(f"Design outcome: {escape(verdict)}", st.h2),
            table(st, ["What the indicative checks find (states: " + ", ".join(o.states) + ")"], rows, widths=[sheet.width],
                  highlight=[i for i, (_, flag) in enumerate(findings) if flag]),
            Spacer(1, 4)]


def _toc_style(st: Styles, level: int):
    from reportlab.lib.styles import ParagraphStyle

    return ParagraphStyle(f"toc{level}", parent=st.body, fontName=st.fonts.bold if level == 0 else st.fonts.regular,
                          leftIndent=12 * level, firstLineIndent=0, spaceBefore=3 if level == 0 else 0, spaceAfter=0,
                          leading=st.body.fontSize * 1.35)


# -- design basis ------------------------------------------------------------

def design_basis(sheet: SheetSet, st: Styles) -> list:
    p = sheet.project
    u = p.units
    w = sheet.width
    out: list = [heading("Design basis", st, 0, "design-basis")]
    out += basis_given(sheet, st)
    out.append(Paragraph("Assumptions of the analysis", st.h2))
    method = {"auto": "equilibrium alone where the frame is statically determinate, linear-elastic compatibility "
                      "(stiffness method) where it is not",
              "elastic": "linear-elastic compatibility (stiffness method) for every state"}[p.options.method]
    for text in (
        "Pin joints: members are joined by frictionless pins and carry axial force only (tension positive).",
        "Loads act at the nodes only. Self-weight, where a case asks for it, is each member's weight "
        "(density x g x area x length) shared equally between its two end nodes.",
        "Linear, small-displacement analysis: equilibrium is written on the undeformed geometry; "
        "no second-order, buckling (other than the indicative member checks), dynamic or time-dependent effects.",
        f"Forces are found by {method}. Combinations add the states' forces with their factors.",
        "Supports fix the translations named in the project file; a fixed translation carries any reaction.",
        "Units: values are computed in SI and printed in the display units below.",
    ):
        out.append(Paragraph(escape(text), st.caution, bulletText="•"))
    out.append(Paragraph("Units", st.h2))
    kinds = ["force", "length", "displacement", "stress", "area", "second_moment", "load_path", "volume", "mass"]
    out.append(table(st, ["Quantity", "Unit"], [[k.replace("_", " "), ulabel(u, k)] for k in kinds], widths=[w * 0.3, w * 0.2]))
    out.append(Paragraph("Materials", st.h2))
    if p.materials:
        rows = [[m.id, fmt(m.elastic_modulus / u.factor("stress"), "stress"),
                 fmt(None if m.yield_strength is None else m.yield_strength / u.factor("stress"), "stress"),
                 fmt(None if m.density is None else m.density / u.factor("density"), "stress")] for m in p.materials.values()]
        out.append(table(st, ["Material", f"E [{ulabel(u, 'stress')}]", f"f_y [{ulabel(u, 'stress')}]", f"density [{ulabel(u, 'density')}]"],
                         rows, numeric={1, 2, 3}, total_width=w * 0.7))
    else:
        out.append(para("No materials are given; sections state their axial stiffness directly.", st))
    out.append(Paragraph("Sections", st.h2))
    count: dict[str, int] = {}
    for s in p.member_sections:
        count[s] = count.get(s, 0) + 1
    rows = []
    for s in p.sections.values():
        r = np.sqrt(s.second_moment / s.area) if s.area and s.second_moment else None
        rows.append([s.id, s.material or "-", fmt(None if s.area is None else s.area / u.factor("area"), "area"),
                     fmt(None if s.second_moment is None else s.second_moment / u.factor("second_moment"), "second_moment"),
                     fmt(None if r is None else r / u.factor("displacement"), "displacement"),
                     fmt(None if s.axial_stiffness is None else s.axial_stiffness / u.factor("force"), "force"),
                     str(count.get(s.id, 0))])
    out.append(table(st, ["Section", "Material", f"A [{ulabel(u, 'area')}]", f"I [{ulabel(u, 'second_moment')}]",
                          f"r [{ulabel(u, 'displacement')}]", f"EA given [{ulabel(u, 'force')}]", "Members"],
                     rows, numeric={2, 3, 4, 5, 6}, total_width=w))
    out.append(Paragraph("Load cases", st.h2))
    f = u.factor("force")
    rows = []
    for case, state in zip(p.cases, sheet.analysis.cases):
        total = state.loads.sum(axis=0) / f
        rows.append([case.id, case.title, "yes" if case.self_weight else "no",
                     str(int((np.abs(state.loads).max(axis=1) > 0).sum()))] + [fmt(v, "force") for v in total])
    out.append(table(st, ["Case", "Title", "Self-weight", "Loaded nodes"] + [f"Sum F{a} [{_force_unit(p)}]" for a in p.axes],
                     rows, numeric={3} | {4 + i for i in range(p.dim)}, total_width=w))
    if p.prestress is not None:
        ps = p.prestress
        how = (f"the single self-stress state scaled so member {ps.member} carries {fmt(ps.force / f, 'force')} {_force_unit(p)}"
               if ps.method == "scaled" else
               f"a self-stress with every cable in tension and every strut in compression by at least "
               f"{fmt(ps.level / f, 'force')} {_force_unit(p)}, at the least load path (linear programme)")
        out.append(para(f"<b>Prestress {escape(ps.id)}</b>: {escape(how)}.", st))
    out.append(Paragraph("Combinations", st.h2))
    if p.combinations:
        rows = [[c.id, c.title, " + ".join(f"{fac:g} x {cid}" for cid, fac in c.factors), c.purpose or "-"] for c in p.combinations]
        out.append(table(st, ["Combination", "Title", "Factors", "Purpose"], rows, widths=[w * 0.14, w * 0.38, w * 0.33, w * 0.15]))
        out.append(para(escape(f"Member checks and sizing take {design_states(sheet.analysis).note}."), st, "small"))
    else:
        out.append(para("The project gives no combinations; envelopes are taken over the load cases.", st))
    out.append(Paragraph("Factors for the indicative member checks", st.h2))
    d = p.design
    given = lambda v: "not given: the check that needs it is left out" if v is None else f"{v:g}"
    out.append(key_value(st, [
        ("Partial factor on resistance, gamma", given(d.partial_factor)),
        ("Effective length factor, K", given(d.effective_length_factor)),
        ("Slenderness limit for compression members, L_b / r", given(d.slenderness_limit)),
        ("Slenderness limit for tension members, L / r", given(d.tension_slenderness_limit)),
        ("Stress limit for constant-stress sizing", "not given: sizing is left out" if d.stress_limit is None
         else f"{fmt(d.stress_limit / u.factor('stress'), 'stress')} {ulabel(u, 'stress')}"),
    ] + _buckling_factors(d, u), w * 0.8, 0.55))
    out.append(para("These factors come from the project file only; the software holds no code values. "
                    "Choosing them is the engineer's decision under the governing code.", st, "small"))
    return out


def _buckling_factors(d, u) -> list[tuple[str, str]]:
    """The compression method and the per-member buckling data, as the project gives them."""
    from sheets.analysis.buckling import imperfection_factor

    if d.compression_method == "buckling_curve":
        curve = f"curve {d.buckling_curve}, " if d.buckling_curve else ""
        method = f"buckling curve (EN 1993-1-1:2005 6.3.1.2), {curve}imperfection factor α = {imperfection_factor(d):g}"
        gamma = d.buckling_partial_factor if d.buckling_partial_factor is not None else d.partial_factor
        rows = [("Compression method", method),
                ("Partial factor on the buckling resistance", "not given" if gamma is None else
                 f"{gamma:g}" + ("" if d.buckling_partial_factor is not None else " (the partial factor above)"))]
    else:
        rows = [("Compression method", "squash load and Euler's load, min(A f_y, N_cr) / γ")]
    if d.effective_length_factors:
        rows.append(("Effective length factors by member or group", ", ".join(f"{n}: {k:g}" for n, k in d.effective_length_factors)))
    if d.buckling_lengths:
        L = u.factor("length")
        text = lambda v: "K L" if v is None else f"{fmt(v / L, 'length')} {ulabel(u, 'length')}"
        rows.append(("Buckling lengths by member or group (in plane / out of plane)",
                     ", ".join(f"{n}: {text(a)} / {text(b)}" for n, a, b in d.buckling_lengths)))
    rows.append(("Deflection limit, span / n", "not given: the ratio is reported only" if d.deflection_limit is None
                 else f"n = {d.deflection_limit:g}"))
    return rows


# -- model -------------------------------------------------------------------

def model(sheet: SheetSet, st: Styles) -> list:
    p = sheet.project
    u = p.units
    w = sheet.width
    L = u.factor("length")
    lengths = sheet.analysis.equilibrium.lengths
    out: list = [heading("The model", st, 0, "model")]
    lo, hi = p.coords.min(axis=0) / L, p.coords.max(axis=0) / L
    out.append(key_value(st, [
        ("Dimension", f"{p.dim}D; vertical axis {AXES[p.vertical_axis]}"),
        ("Nodes / members", f"{p.n_nodes} / {p.n_members}"),
        ("Extent", ", ".join(f"{a}: {fmt(l, 'length')} to {fmt(h, 'length')} {ulabel(u, 'length')}" for a, l, h in zip(p.axes, lo, hi))),
        ("Total member length", f"{fmt(lengths.sum() / L, 'length')} {ulabel(u, 'length')}"),
        ("Supported nodes", f"{int(p.fixed.any(axis=1).sum())} ({int(p.fixed.sum())} fixed translations)"),
    ], w * 0.8, 0.35))
    drawn = sheet.figures_for("model")
    if drawn:
        out.append(para(f"The frame with its node and member ids and its supports: {st.numbering.ahead('Figure', len(drawn))}.", st))
    for fig in drawn:
        out += figure(fig, sheet, st)
    groups: dict[str, list[int]] = {}
    for e, g in enumerate(p.member_groups):
        groups.setdefault(g, []).append(e)
    if len(groups) > 1 or "" not in groups:
        out.append(Paragraph("Member groups", st.h2))
        rows = [[g or "(none)", str(len(es)), fmt(lengths[es].sum() / L, "length"),
                 ", ".join(sorted({p.member_sections[e] or "-" for e in es}))] for g, es in groups.items()]
        out.append(long_table(sheet, st, ["Group", "Members", f"Length [{ulabel(u, 'length')}]", "Sections"], rows,
                              numeric={1, 2}, total_width=w * 0.8))
    out += node_table(sheet, st)
    out += member_table(sheet, st)
    for case in p.cases:
        out += case_load_table(sheet, st, case)
        for fig in sheet.figures_for("loads", case.id):
            out += figure(fig, sheet, st)
    return out


# -- determinacy -------------------------------------------------------------

def determinacy(sheet: SheetSet, st: Styles) -> list:
    d = sheet.analysis.determinacy
    w = sheet.width
    out: list = [heading("Stability and determinacy", st, 0, "determinacy")]
    out.append(para("Counts from the rank r of the equilibrium matrix A restricted to the free translations "
                    "(Pellegrino and Calladine, \"Matrix analysis of statically and kinematically indeterminate "
                    "frameworks\", Int. J. Solids Struct. 22(4), 1986): self-stress states s = m - r, "
                    "mechanisms k = free translations - r (rigid-body motions left free by the supports included). "
                    "Maxwell's rule as extended by Calladine (Int. J. Solids Struct. 14, 1978) is a check on the counts, "
                    "never a substitute for the rank.", st))
    out.append(key_value(st, [
        ("Nodes n / members m / dimension d", f"{d.n_nodes} / {d.n_members} / {d.dim}"),
        ("Fixed / free translations", f"{d.n_fixed} / {d.n_free}"),
        ("Rank r of the equilibrium matrix", str(d.rank)),
        ("Self-stress states s = m - r", str(d.self_stress)),
        ("Mechanisms k = free - r", str(d.mechanisms)),
        ("Maxwell's rule: m - d n + fixed = s - k",
         f"{d.maxwell} = {d.self_stress - d.mechanisms}: {'holds' if d.maxwell_holds else 'DOES NOT HOLD (the rank is in doubt)'}"),
        ("Conditioning (smallest kept / largest singular value)", f"{d.conditioning:.3e}"),
        ("Rank tolerance (relative to the largest singular value)", f"{d.tolerance:.1e}"),
        ("Route", d.route),
        ("Classification", d.classification),
    ], w * 0.85, 0.5))
    notes = []
    if d.self_stress == 0:
        notes.append("The frame is statically determinate: each state's forces follow from equilibrium alone, "
                     "independent of member stiffness.")
    else:
        notes.append(f"The frame has {d.self_stress} self-stress state{'s' if d.self_stress != 1 else ''}: equilibrium alone "
                     "does not fix the forces; they follow from linear-elastic compatibility and depend on the member stiffnesses EA.")
    if d.mechanisms:
        notes.append(f"The frame has {d.mechanisms} mechanism{'s' if d.mechanisms != 1 else ''}. Every state was checked to have "
                     "no load component along them (a load that excites a mechanism is refused); the frame carries these loads "
                     "only, and any other load may move it.")
    if d.conditioning < 1e-6:
        notes.append("The conditioning is poor: the frame is close to a mechanism and forces may be large and sensitive to geometry.")
    for n in notes:
        out.append(Paragraph(escape(n), st.caution, bulletText="•"))
    return out


# -- each state --------------------------------------------------------------

def _sense(t: float, scale: float) -> str:
    if abs(t) <= 1e-9 * max(scale, 1e-300):
        return "zero"
    return "tension" if t > 0 else "compression"


def states(sheet: SheetSet, st: Styles) -> list:
    a = sheet.analysis
    out: list = [heading("Forces in each load case and combination", st, 0, "states")]
    out.append(para("Tension positive. For each state: the member forces, the reactions, the checks on the solution "
                    "and the figures. The tables list every member and every support; "
                    "csv/forces.csv and csv/reactions.csv carry the same values at full precision.", st))
    for i, state in enumerate(a.states):
        if i:
            out.append(PageBreak())
        out.append(heading(f"{state_label(state)}: {state.title}", st, 1, f"state-{i}"))
        if state.factors:
            out.append(para("Factors: " + escape(" + ".join(f"{f:g} x {cid}" for cid, f in state.factors)), st))
        out.append(para(f"Method: {escape(state.method)}.", st, "small"))
        shown = sum(len(sheet.figures_for(part, state.id)) for part in sheet.template.state_parts if part in FIGURE_PARTS)
        refs = []
        if list(sheet.template.state_parts[:1]) == ["forces"]:  # then the next table is the member forces
            refs.append(f"{st.numbering.ahead('Table')} for its member forces")
        if shown:
            refs.append(f"{st.numbering.ahead('Figure', shown)} for its drawings")
        if refs:
            out.append(para("See " + " and ".join(refs) + ".", st, "small"))
        for part in sheet.template.state_parts:
            out += PARTS[part](sheet, st, state)
    return out


def part_forces(sheet: SheetSet, st: Styles, state) -> list:
    p = sheet.project
    f = p.units.factor("force")
    t = state.forces
    largest = float(np.abs(t).max(initial=0.0))
    n_t = int((t > 1e-9 * largest).sum())
    n_c = int((t < -1e-9 * largest).sum())
    out: list = [Paragraph("Member forces", st.h2)]
    out.append(para(f"{n_t} members in tension, {n_c} in compression, {p.n_members - n_t - n_c} with no force. "
                    f"Largest tension {fmt(max(t.max(initial=0.0), 0.0) / f, 'force')} {_force_unit(p)}, "
                    f"largest compression {fmt(min(t.min(initial=0.0), 0.0) / f, 'force')} {_force_unit(p)}.", st))
    order = np.arange(p.n_members)
    lengths = sheet.analysis.equilibrium.lengths
    rows = [[p.member_ids[e], f"{p.node_ids[p.ends[e, 0]]}-{p.node_ids[p.ends[e, 1]]}",
             fmt(lengths[e] / p.units.factor("length"), "length"), fmt(t[e] / f, "force"), _sense(t[e], largest)] for e in order]
    out.append(long_table(sheet, st, ["Member", "Nodes", f"Length [{ulabel(p.units, 'length')}]", f"Force [{_force_unit(p)}]", "Sense"],
                          rows, numeric={2, 3}, total_width=sheet.width * 0.75, two_columns=True,
                          title=f"Member forces, {state_label(state)}"))
    return out


def part_reactions(sheet: SheetSet, st: Styles, state) -> list:
    p = sheet.project
    f = p.units.factor("force")
    supported = np.flatnonzero(p.fixed.any(axis=1))
    if not len(supported):
        return []
    order = supported
    rows = [[p.node_ids[n]] + [fmt(state.reactions[n, k] / f, "force") if p.fixed[n, k] else "free" for k in range(p.dim)]
            for n in order]
    total = state.reactions.sum(axis=0) / f
    rows.append(["Sum"] + [fmt(v, "force") for v in total])
    out: list = [Paragraph("Reactions", st.h2),
                 long_table(sheet, st, ["Node"] + [f"R{a} [{_force_unit(p)}]" for a in p.axes], rows,
                            numeric=set(range(1, p.dim + 1)), total_width=sheet.width * 0.55, two_columns=True,
                            title=f"Reactions, {state_label(state)}")]
    return out


def part_checks(sheet: SheetSet, st: Styles, state) -> list:
    p = sheet.project
    c = state.checks
    lp = p.units.factor("load_path")
    lp_unit = ulabel(p.units, "load_path")
    rows = [
        ["Largest nodal residual |A t - f| / largest force", fmt(c.residual, "small"), fmt(c.tolerance, "small")],
        ["Resultant of loads and reactions / largest force", fmt(c.resultant, "small"), fmt(c.tolerance, "small")],
        ["Moment of loads and reactions / (largest force x extent)", fmt(c.moment, "small"), fmt(c.tolerance, "small")],
        [f"Maxwell's load path theorem: sum t L = {fmt(c.load_path_members / lp, 'load_path')} {lp_unit}, "
         f"sum f.x = {fmt(c.load_path_loads / lp, 'load_path')} {lp_unit}; relative difference",
         fmt(c.load_path_error, "small"), fmt(c.tolerance, "small")],
    ]
    verdict = "All checks pass." if c.passed else "A CHECK FAILS: this state's results must not be used."
    return [Paragraph("Checks on the solution", st.h2),
            table(st, ["Check", "Value", "Limit"], rows, numeric={1, 2}, title=f"Checks on the solution, {state_label(state)}",
                  widths=[sheet.width * 0.7, sheet.width * 0.12, sheet.width * 0.12], highlight=[] if c.passed else [0, 1, 2, 3]),
            para(f"<b>{verdict}</b> Load path theorem: Maxwell, \"On reciprocal figures, frames, and diagrams of forces\", "
                 "Trans. R. Soc. Edinburgh 26 (1870); reactions counted as loads.", st, "small")]


def _part_figures(part: str) -> Callable:
    def draw(sheet: SheetSet, st: Styles, state) -> list:
        out = []
        for fig in sheet.figures_for(part, state.id):
            out += figure(fig, sheet, st)
        return out

    draw.__name__ = f"part_{part}"
    return draw


def part_load_path(sheet: SheetSet, st: Styles, state) -> list:
    p = sheet.project
    a = sheet.analysis
    lp = p.units.factor("load_path")
    out: list = [Paragraph("Load path", st.h2)]
    total = a.load_path(state)
    text = (f"Load path sum |t| L = {fmt(total / lp, 'load_path')} {ulabel(p.units, 'load_path')} "
            f"(tension {fmt(np.clip(state.forces, 0, None) @ a.equilibrium.lengths / lp, 'load_path')}, "
            f"compression {fmt(-np.clip(state.forces, None, 0) @ a.equilibrium.lengths / lp, 'load_path')}).")
    if p.design.stress_limit:
        vol = total / p.design.stress_limit / p.units.factor("volume")
        text += (f" At a constant stress of {fmt(p.design.stress_limit / p.units.factor('stress'), 'stress')} "
                 f"{ulabel(p.units, 'stress')} this state needs a material volume of {fmt(vol, 'volume')} {ulabel(p.units, 'volume')}.")
    out.append(para(escape(text), st))
    out += _part_figures("load_path")(sheet, st, state)
    return out


FIGURE_PARTS = ("form_forces", "force_diagram", "cells", "minkowski", "load_path")  # the state parts that draw figures
PARTS: dict[str, Callable] = {
    "forces": part_forces,
    "reactions": part_reactions,
    "checks": part_checks,
    "form_forces": _part_figures("form_forces"),
    "force_diagram": _part_figures("force_diagram"),
    "cells": _part_figures("cells"),
    "minkowski": _part_figures("minkowski"),
    "load_path": part_load_path,
}


# -- envelope ----------------------------------------------------------------

def envelope(sheet: SheetSet, st: Styles) -> list:
    p = sheet.project
    env = sheet.analysis.envelope
    f = p.units.factor("force")
    if not env.over:
        return []
    order = np.arange(p.n_members)
    rows = [[p.member_ids[e], fmt(env.max_tension[e] / f, "force"), env.max_tension_state[e] or "-",
             fmt(env.max_compression[e] / f, "force"), env.max_compression_state[e] or "-"] for e in order]
    kind = "combinations" if sheet.analysis.combinations else "load cases"
    out: list = [heading("Envelopes", st, 0, "envelope"),
                 para(f"Largest tension and compression of each member over the {kind} ({escape(', '.join(env.over))}).", st),
                 long_table(sheet, st, ["Member", f"Max tension [{_force_unit(p)}]", "State", f"Max compression [{_force_unit(p)}]",
                                        "State"], rows, numeric={1, 3}, total_width=sheet.width * 0.8, two_columns=True)]
    return out


# -- member checks -----------------------------------------------------------

def member_checks(sheet: SheetSet, st: Styles) -> list:
    p = sheet.project
    c = sheet.checks
    u = p.units
    f = u.factor("force")
    w = sheet.width
    out: list = [heading("Member checks (indicative)", st, 0, "member-checks")]
    out.append(para("<b>Indicative only; not a code check.</b> These checks use the simple expressions below with the "
                    "factors given in the project file. The choice of method, buckling curve and factors, connections, "
                    "local effects and every other requirement of the governing code are for the engineer to determine.", st))
    if c.compression_method == "buckling_curve":
        curve = f"curve {p.design.buckling_curve}, " if p.design.buckling_curve else ""
        compression = (f"Compression: |t| ≤ χ A f_y / γ (γ = {fmt(c.compression_partial_factor, 'factor')}), the buckling curve "
                       f"method of EN 1993-1-1:2005 6.3.1.2 ({curve}imperfection factor α = {c.imperfection_factor:g}): "
                       "λ̄ = √(A f_y / N_cr), Φ = 0.5 [1 + α (λ̄ − 0.2) + λ̄²], χ = 1 / (Φ + √(Φ² − λ̄²)) ≤ 1")
    else:
        compression = "Compression: |t| ≤ min(A f_y, N_cr) / γ"
    for text in (
        "Tension: t ≤ A f_y / γ",
        compression,
        "Euler's load N_cr = π² E I / L_b² about each buckling axis (in plane and out of plane), L_b = K L or the buckling "
        "length the project gives for the member or its group; the axis with the lower N_cr governs",
        "Slenderness: L_b / r ≤ limit for members in compression (the larger over the axes), L / r ≤ limit for members "
        "only in tension; r = √(I / A)",
        "Utilisation = demand / capacity; a value above 1.000 exceeds the check.",
    ):
        out.append(Paragraph(escape(text), st.caution, bulletText="•"))
    out.append(para(f"Demands are each member's largest tension and compression over {escape(c.basis or ', '.join(c.over))}. "
                    "Cables take the tension check only.", st))
    if c.omitted:
        out.append(Paragraph("Checks left out", st.h2))
        for text in c.omitted:
            out.append(Paragraph(escape(text), st.caution, bulletText="•"))
    made = c.made
    if not made:
        out.append(para("No member check could be made with the factors and section data given.", st))
        return out
    worst = c.worst
    failing = c.failing
    out.append(Paragraph("Result", st.h2))
    out.append(key_value(st, [
        ("Checks made", ", ".join(c.title(k) for k in made)),
        ("Members checked", f"{int((~np.isnan(c.governing)).sum())} of {p.n_members}"),
        ("Governing member", f"{p.member_ids[worst]}: utilisation {fmt(c.governing[worst], 'ratio')} "
                             f"({c.title(c.governing_check[worst])}; state {c.governing_state(worst) or '-'})"),
        ("Members above a utilisation of 1.000", f"{len(failing)}" + (" (the first rows of the table of every member "
                                                                         "checked, shaded)" if len(failing) else "")),
        ("Members a check could not be made for", str(len({e for e, _ in c.unchecked}))),
        ("Role conflicts (cable in compression, strut in tension)", str(len(c.role_conflicts))),
    ], w, 0.4))
    groups = group_summaries(c, p.member_groups)
    if len(groups) > 1 or groups[0].group:
        out.append(Paragraph("By member group", st.h2))
        rows = [[g.group or "(none)", str(g.members), str(g.checked), p.member_ids[g.worst] if g.worst is not None else "-",
                 fmt(g.utilisation, "ratio"), g.check.replace("_", " ") or "-", g.state or "-"] for g in groups]
        hi = [i for i, g in enumerate(groups) if g.utilisation > 1]
        out.append(table(st, ["Group", "Members", "Checked", "Governing member", "Utilisation", "Check", "State"], rows,
                         numeric={1, 2, 4}, total_width=w, highlight=hi))
    g = np.nan_to_num(c.governing, nan=-1.0)
    order = np.argsort(-g, kind="stable")
    order = [e for e in order if g[e] >= 0]
    out.append(Paragraph("Every member checked, largest utilisation first", st.h2))
    header = ["Member", "Section", f"Max T [{_force_unit(p)}]", f"Max C [{_force_unit(p)}]", f"A f_y/γ [{_force_unit(p)}]",
              f"N_cr [{_force_unit(p)}]", f"N_c,Rd [{_force_unit(p)}]", "L_b/r or L/r", "u tension", "u comp.", "u slender", "Governs"]
    rows = []
    for e in order:
        slender = c.slenderness[e] if not np.isnan(c.slenderness[e]) else c.tension_slenderness[e]
        u_sl = np.nanmax([c.utilisation["slenderness"][e], c.utilisation["tension_slenderness"][e], -1.0])
        rows.append([p.member_ids[e], p.member_sections[e] or "-", fmt(c.max_tension[e] / f, "force"),
                     fmt(c.max_compression[e] / f, "force"), fmt(c.tension_resistance[e] / f, "force"),
                     fmt(c.euler_load[e] / f, "force"), fmt(c.compression_resistance[e] / f, "force"),
                     fmt(slender, "slenderness"), fmt(c.utilisation["tension"][e], "ratio"),
                     fmt(c.utilisation["compression"][e], "ratio"), fmt(u_sl if u_sl >= 0 else None, "ratio"),
                     f"{fmt(c.governing[e], 'ratio')} {c.governing_check[e].replace('tension_slenderness', 'L/r').replace('slenderness', 'L_b/r')}"])
    hi = [i for i, e in enumerate(order) if c.governing[e] > 1]
    shares = [7, 8, 7.5, 7.5, 7.5, 7.5, 7.5, 6.5, 6.5, 6.5, 6.5, 21]
    out.append(long_table(sheet, st, header, rows, numeric=set(range(2, 11)), widths=[w * x / sum(shares) for x in shares],
                          highlight=hi))
    out += buckling_table(sheet, st)
    out.append(para("The same values, member by member, are in csv/member_checks.csv.", st, "small"))
    if c.unchecked:
        out.append(Paragraph("Members a check could not be made for", st.h2))
        rows = [[p.member_ids[e], why] for e, why in c.unchecked]
        out.append(long_table(sheet, st, ["Member", "Why"], rows, widths=[w * 0.2, w * 0.8]))
    if c.role_conflicts:
        out.append(Paragraph("Role conflicts", st.h2))
        rows = [[p.member_ids[e], p.member_roles[e], why] for e, why in c.role_conflicts]
        out.append(long_table(sheet, st, ["Member", "Role", "Conflict"], rows, widths=[w * 0.2, w * 0.15, w * 0.65],
                              highlight=list(range(len(rows)))))
    return out


def buckling_table(sheet: SheetSet, st: Styles) -> list:
    """Buckling of the compression members, each axis: lengths, critical loads, the governing axis (and chi)."""
    p = sheet.project
    c = sheet.checks
    u = p.units
    f, L = u.factor("force"), u.factor("length")
    util = np.nan_to_num(c.utilisation["compression"], nan=-1.0)
    order = [e for e in np.argsort(-util, kind="stable") if util[e] >= 0]  # every compression member, most used first
    if not order:
        return []
    curve = c.compression_method == "buckling_curve"
    header = ["Member", f"L_b in plane [{ulabel(u, 'length')}]", f"L_b out of plane [{ulabel(u, 'length')}]",
              f"N_cr in plane [{_force_unit(p)}]", f"N_cr out of plane [{_force_unit(p)}]", "Governing axis"]
    header += ["λ̄", "χ"] if curve else []
    header += [f"N_c,Rd [{_force_unit(p)}]", "u comp."]
    rows = []
    for e in order:
        row = [p.member_ids[e], fmt(c.buckling_length_in_plane[e] / L, "length"), fmt(c.buckling_length_out_of_plane[e] / L, "length"),
               fmt(c.euler_load_in_plane[e] / f, "force"), fmt(c.euler_load_out_of_plane[e] / f, "force"), c.buckling_axis[e] or "-"]
        row += [fmt(c.relative_slenderness[e], "ratio"), fmt(c.reduction_factor[e], "ratio")] if curve else []
        row += [fmt(c.compression_resistance[e] / f, "force"), fmt(c.utilisation["compression"][e], "ratio")]
        rows.append(row)
    numeric = set(range(1, len(header))) - {5}
    return [Paragraph("Buckling of the compression members", st.h2),
            long_table(sheet, st, header, rows, numeric=numeric, total_width=sheet.width,
                       highlight=[i for i, e in enumerate(order) if util[e] > 1])]


# -- serviceability: displacements of the serviceability combinations ---------

def serviceability(sheet: SheetSet, st: Styles) -> list:
    s = sheet.serviceability
    p = sheet.project
    u = p.units
    w = sheet.width
    out: list = [heading("Displacements under the serviceability combinations", st, 0, "serviceability")]
    if not s.states:
        return out + [para(escape(s.note.capitalize() + "."), st)]
    D, L = u.factor("displacement"), u.factor("length")
    d_unit = ulabel(u, "displacement")
    out.append(para("Linear-elastic, small-displacement nodal displacements from the analysis (member elongations "
                    "t L / E A). Deflection: the displacement along the vertical axis "
                    f"({AXES[p.vertical_axis]}) of largest magnitude; displacement: the largest |d| of any node.", st))
    span = ("no span: fewer than two supports apart horizontally" if s.span is None else
            f"{fmt(s.span / L, 'length')} {ulabel(u, 'length')}, between supports {s.span_nodes[0]} and {s.span_nodes[1]} "
            "(the largest horizontal distance between two supported nodes)")
    out.append(key_value(st, [
        ("Span for span / deflection", span),
        ("Limit", "none given ([design] deflection_limit): the ratio is reported only" if s.limit is None
         else f"span / {s.limit:g}: the ratio must be at least {s.limit:g}"),
        ("Combinations", ", ".join(x.state for x in s.states)),
    ], w, 0.32))
    rows = []
    for x in s.states:
        if not x.available:
            rows.append([x.state, "-", "-", "-", "-", "-", x.note])
            continue
        move = x.support_movements[0] if x.support_movements else None
        rows.append([x.state, f"{fmt(x.deflection / D, 'displacement')} ({x.deflection_node})",
                     "-" if x.ratio is None else f"{x.ratio:,.0f}",
                     "-" if x.passed is None else ("pass" if x.passed else "FAIL"),
                     f"{fmt(x.total / D, 'displacement')} ({x.total_node})",
                     "none" if move is None else f"{fmt(move[2] / D, 'displacement')} ({move[0]}, {move[1]})", ""])
    out.append(table(st, ["Combination", f"Largest deflection [{d_unit}] (node)", "Span / deflection", "Limit check",
                          f"Largest displacement [{d_unit}] (node)", f"Largest support movement [{d_unit}]", "Note"],
                     rows, numeric={2}, total_width=w, highlight=[i for i, x in enumerate(s.states) if x.passed is False]))
    moving = [(x.state, m) for x in s.states for m in x.support_movements]
    if moving:
        out.append(Paragraph("Support movements (along the directions the supports leave free)", st.h2))
        shown = sorted(moving, key=lambda sm: -abs(sm[1][2]))  # every one, largest first
        out.append(long_table(sheet, st, ["Combination", "Node", "Axis", f"Movement [{d_unit}]"],
                              [[state, n, a, fmt(v / D, "displacement")] for state, (n, a, v) in shown],
                              numeric={3}, total_width=w * 0.6, two_columns=True))
    for x in s.states:
        for fig in sheet.figures_for("serviceability", x.state):
            out += figure(fig, sheet, st)
    out.append(para("Every node's displacement in every state is in csv/displacements.csv.", st, "small"))
    return out


# -- constant-stress sizing (from sheets.analysis.sizing, where present) ------

def sizing(sheet: SheetSet, st: Styles) -> list:
    s = sheet.sizing
    if s is None:
        return []
    p = sheet.project
    u = p.units
    out: list = [heading("Constant-stress sizing", st, 0, "sizing")]
    if not s.available:
        return out + [para(escape(f"Left out: {s.note}."), st)]
    vol, area = u.factor("volume"), u.factor("area")
    out.append(para("Each member sized so that its largest |force| over the states works at the stress limit: "
                    "A = |t| / σ, volume V = Σ A L. Maxwell's load path theorem gives, for each state, "
                    "V_T - V_C = Σ f·x / σ (Maxwell 1870; \"Maxwell's reciprocal diagrams and discrete Michell frames\", "
                    "Struct. Multidisc. Optim. 48, 2013). " + escape(s.note.capitalize() + "."), st))
    mass = s.mass
    out.append(key_value(st, [
        ("Stress limit σ", f"{fmt(s.stress_limit / u.factor('stress'), 'stress')} {ulabel(u, 'stress')}"),
        ("States", design_states(sheet.analysis).note),
        ("Material volume (tension / compression)",
         f"{fmt(s.volume / vol, 'volume')} ({fmt(s.volume_tension / vol, 'volume')} / {fmt(s.volume_compression / vol, 'volume')}) {ulabel(u, 'volume')}"),
        ("Mass", "-" if mass is None else f"{fmt(mass / u.factor('mass'), 'load_path')} {ulabel(u, 'mass')}"),
    ], sheet.width * 0.85, 0.4))
    rows = [[v.state, fmt(v.volume_tension / vol, "volume"), fmt(v.volume_compression / vol, "volume"),
             fmt(v.load_term / vol, "volume"), fmt(v.maxwell_error, "small"), "pass" if v.passed else "FAIL"] for v in s.states]
    out.append(table(st, ["State", f"V_T [{ulabel(u, 'volume')}]", f"V_C [{ulabel(u, 'volume')}]", f"Σ f·x / σ [{ulabel(u, 'volume')}]",
                          "Difference", "Check"], rows, numeric={1, 2, 3, 4}, total_width=sheet.width * 0.85,
                     highlight=[i for i, v in enumerate(s.states) if not v.passed]))
    order = np.argsort(-s.areas, kind="stable")
    rows = [[p.member_ids[e], fmt(s.governing_force[e] / u.factor("force"), "force"), s.governing_state[e] or "-",
             fmt(s.areas[e] / area, "area"), fmt(s.volumes[e] / vol, "volume")] for e in order]
    out.append(Paragraph("Required area of every member, largest first", st.h2))
    out.append(long_table(sheet, st, ["Member", f"Force [{_force_unit(p)}]", "State", f"A [{ulabel(u, 'area')}]", f"V [{ulabel(u, 'volume')}]"],
                          rows, numeric={1, 3, 4}, total_width=sheet.width * 0.7, two_columns=True))
    return out


# -- files issued and cautions -------------------------------------------------

def issued_files(sheet: SheetSet, st: Styles) -> list:
    if not sheet.issued:
        return []
    out: list = [heading("Files issued with these sheets", st, 0, "files"),
                 para("These files sit beside this PDF and carry every value at full precision (the sheets print them rounded). "
                      "Each was produced by the same run, from the input identified by the fingerprint in the footer.", st)]
    out.append(table(st, ["File", "Content"], [[f.name, f.content] for f in sheet.issued],
                     widths=[sheet.width * 0.35, sheet.width * 0.65]))
    return out


def cautions(sheet: SheetSet, st: Styles) -> list:
    a = sheet.analysis
    out: list = [heading("Cautions and limitations", st, 0, "cautions")]
    for text in sheet.template.cautions:
        out.append(Paragraph(escape(text), st.caution, bulletText="•"))
    specific = list(sheet.notes)
    if not a.passed:
        bad = [s.id for s in a.states if not s.checks.passed]
        specific.append("A verification check fails" + (f" for {', '.join(bad)}" if bad else " (Maxwell's rule)")
                        + ": those results must not be used as they stand.")
    specific += list(sheet.checks.omitted)
    if sheet.checks.role_conflicts:
        specific.append(f"{len(sheet.checks.role_conflicts)} member(s) carry a force of the wrong sense for their role "
                        "(see Member checks).")
    if len(sheet.checks.failing):
        specific.append(f"{len(sheet.checks.failing)} member(s) exceed a utilisation of 1.000 in the indicative checks.")
    if sheet.outcome.uplift:
        specific.append(f"Uplift at {len(sheet.outcome.uplift)} support(s): they must hold the frame down (see the cover).")
    if sheet.serviceability.failing:
        specific.append("Deflection over the limit in " + ", ".join(x.state for x in sheet.serviceability.failing) + ".")
    if a.determinacy.mechanisms:
        specific.append(f"The frame has {a.determinacy.mechanisms} mechanism(s); it carries the given loads only.")
    if specific:
        out.append(Paragraph("For this sheet set", st.h2))
        for text in specific:
            out.append(Paragraph(escape(text), st.caution, bulletText="•"))
    return out


def comparison(sheet: SheetSet, st: Styles) -> list:
    """What changed from an earlier revision (sheets.report.comparison); empty unless the build compared."""
    from sheets.report.comparison import comparison_section

    return comparison_section(sheet, st)


SECTIONS: dict[str, Section] = {
    "cover": cover,
    "comparison": comparison,
    "design_basis": design_basis,
    "model": model,
    "determinacy": determinacy,
    "states": states,
    "envelope": envelope,
    "member_checks": member_checks,
    "sizing": sizing,
    "serviceability": serviceability,
    "issued_files": issued_files,
    "cautions": cautions,
}
