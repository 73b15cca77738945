"""A rebuild after one load value changed, as a ratio of a full build (sheets' stage cache).

    python bench/bench_incremental.py [--project demo_projects/atrium_grid/atrium_grid.toml] [--repeat R]

The demo is copied to a scratch folder. For each load case, one load value of one node in that
case's loads (the first non-zero component of the first loaded node) is raised by 10 % and the
set is built again; the baseline is a full build of the same revision with ``force`` (every
stage made anew) in the same run. Two ways:

- in one process (what ``sheets build --watch`` does): ``build_sheets`` called in turn, the
  imports paid once by a warm-up build;
- as commands (what running ``sheets build`` twice does): ``python -m sheets build [--force]``,
  each a fresh process paying its imports.

Prints the seconds of each and the ratio rebuild / full, and what the rebuild made and reused;
never a pass/fail. The target of the project: a ratio of 0.30 or less for the largest demo.

And how far the change reaches, in one process: the pages of the set that differ from the
previous revision's (each page rendered at 72 dpi with pypdfium2, a test extra, the title block
and footer left out: they carry the input fingerprint, which every change moves), and the
rebuild's own stage times. From those, a floor: the rebuild as it is, but with the PDF stage
costing only the full build's PDF time times the share of pages that changed, i.e. a PDF made
by parts that kept every page the change does not reach for nothing.
"""

from __future__ import annotations

import argparse
import csv
import io
import os
import re
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from sheets.build import BUILD_STAGES, build_sheets  # noqa: E402
from sheets.model import load_project  # noqa: E402
from sheets.report.document import FOOTER_HEIGHT, ROW_HEIGHT, SheetDocument  # noqa: E402
from sheets.report.templates import load_template  # noqa: E402

DEFAULT = ROOT / "demo_projects" / "atrium_grid" / "atrium_grid.toml"


def raise_one_load(project: Path, case_id: str) -> str:
    """Raise one load value of ``case_id`` by 10 % in whichever file gives it; returns what changed."""
    text = project.read_text(encoding="utf-8")
    block = re.search(rf"^\[cases\.{re.escape(case_id)}\]\n(.*?)(?=^\[|\Z)", text, re.M | re.S)
    named = re.search(r'^loads_file\s*=\s*"([^"]+)"', block.group(1), re.M) if block else None
    if named:
        path = project.parent / named.group(1)
        rows = list(csv.reader(io.StringIO(path.read_text(encoding="utf-8"))))
        for row in rows[1:]:
            for c, value in enumerate(row[1:], start=1):
                if float(value) != 0:
                    row[c] = f"{float(value) * 1.1:.6g}"
                    buffer = io.StringIO()
                    csv.writer(buffer, lineterminator="\n").writerows(rows)
                    path.write_text(buffer.getvalue(), encoding="utf-8")
                    return f"{path.name}: node {row[0]} {rows[0][c]} {value} -> {row[c]}"
    if block:  # loads written in the project file: the first non-zero component of a load vector
        for line in re.finditer(r"^loads\b.*$", block.group(1), re.M):
            for vector in re.finditer(r"\[([^\[\]]*)\]", line.group(0)):
                for number in re.finditer(r"-?[\d.]+(?:[eE][-+]?\d+)?", vector.group(1)):
                    if float(number.group(0)) != 0:
                        at = block.start(1) + line.start() + vector.start(1) + number.start()
                        old, new = number.group(0), f"{float(number.group(0)) * 1.1:.6g}"
                        project.write_text(text[:at] + new + text[at + len(old):], encoding="utf-8")
                        return f"{project.name}: {line.group(0).split('=')[0].strip()} {old} -> {new}"
    raise SystemExit(f"no load value to change in case {case_id} of {project}")


def timed(call) -> tuple[float, object]:
    start = time.perf_counter()
    value = call()
    return time.perf_counter() - start, value


class StageClock:
    """The seconds of each build stage, from the build's progress notes (``BUILD_STAGES``)."""

    def __init__(self):
        self.marks: list[tuple[str, float]] = []

    def __call__(self, message: str) -> None:
        if message in BUILD_STAGES:
            self.marks.append((message, time.perf_counter()))

    def seconds(self, end: float) -> dict[str, float]:
        ends = [t for _, t in self.marks[1:]] + [end]
        return {stage: stop - start for (stage, start), stop in zip(self.marks, ends)}


def timed_stages(call) -> tuple[float, dict[str, float], object]:
    clock = StageClock()
    start = time.perf_counter()
    value = call(clock)
    end = time.perf_counter()
    return end - start, clock.seconds(end), value


def page_bodies(pdf: Path, project: Path) -> list:
    """Each page rendered at 72 dpi, without the title block and footer below the body frame."""
    import pypdfium2

    loaded = load_project(project)
    template = load_template(loaded.info.template, project.parent, loaded.source)
    rows = SheetDocument.block_rows(type("Fields", (), {"template": template})())
    below = template.margin + FOOTER_HEIGHT + ROW_HEIGHT * len(rows) + 4  # points, as the page frame
    document = pypdfium2.PdfDocument(pdf.read_bytes())
    bodies = []
    for page in document:
        pixels = page.render(scale=1).to_numpy()
        bodies.append(pixels[: pixels.shape[0] - int(below + 1)].tobytes())
    return bodies


def changed_pages(before: list, after: list) -> int:
    """Pages that differ (a page added or removed counts as changed)."""
    return sum(a != b for a, b in zip(before, after)) + abs(len(before) - len(after))


def command(project: Path, out: Path, force: bool) -> float:
    args = [sys.executable, "-m", "sheets", "build", str(project), "--out", str(out)] + (["--force"] if force else [])
    seconds, result = timed(lambda: subprocess.run(args, capture_output=True, text=True,
                                                   env={**os.environ, "PYTHONPATH": str(ROOT)}))
    if result.returncode not in (0, 5):
        raise SystemExit(f"build failed ({result.returncode}): {result.stderr[-2000:]}")
    return seconds


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--project", type=Path, default=DEFAULT)
    parser.add_argument("--repeat", type=int, default=1,
                        help="changes timed per case, each rebuilt and built in full (the best of each kept)")
    parser.add_argument("--no-commands", action="store_true", help="time in one process only")
    args = parser.parse_args(argv)
    with tempfile.TemporaryDirectory(dir=os.environ.get("BENCH_DIR")) as scratch:
        folder = Path(scratch) / args.project.parent.name
        shutil.copytree(args.project.parent, folder, ignore=shutil.ignore_patterns("out", ".sheets-sets"))
        project = folder / args.project.name
        cases = [c.id for c in load_project(project).cases]
        out, baseline = Path(scratch) / "sets" / "rebuilt", Path(scratch) / "sets" / "full"
        print(f"{args.project.name}: {load_project(project).n_members} members, cases {', '.join(cases)}")
        result = build_sheets(project, out)  # warm-up: imports, and the cache of this revision
        rows, reach = [], []
        for case_id in cases:
            before = page_bodies(result.pdf, project)
            timings = []  # each repetition makes a change of its own, then builds it both ways
            for _ in range(args.repeat):
                what = raise_one_load(project, case_id)
                rebuild, stages, result = timed_stages(lambda clock: build_sheets(project, out, clock))
                full, full_stages, _ = timed_stages(lambda clock: build_sheets(project, baseline, clock, force=True))
                timings.append((rebuild, stages, full, full_stages, what, result))
                if len(timings) == 1:
                    after = page_bodies(result.pdf, project)  # the reach of the first change
            rebuild, stages = min(((t[0], t[1]) for t in timings), key=lambda pair: pair[0])
            full, full_stages = min(((t[2], t[3]) for t in timings), key=lambda pair: pair[0])
            what, result = timings[0][4], timings[-1][5]
            rows.append(("one process", case_id, what, full, rebuild, result.stages))
            share = changed_pages(before, after) / max(len(before), len(after))
            floor = rebuild - stages["assembly"] + full_stages["assembly"] * share
            reach.append((case_id, changed_pages(before, after), len(after), stages, full_stages, floor / full))
            if not args.no_commands:
                raise_one_load(project, case_id)  # another change, so the command's rebuild has one to make
                rebuild_cmd = command(project, out, force=False)
                full_cmd = command(project, baseline, force=True)
                rows.append(("commands", case_id, what, full_cmd, rebuild_cmd, ""))
        print(f"{'how':<12} {'case':<5} {'full s':>7} {'rebuild s':>9} {'ratio':>6}  change / stages of the rebuild")
        for how, case_id, what, full, rebuild, stages in rows:
            print(f"{how:<12} {case_id:<5} {full:7.2f} {rebuild:9.2f} {rebuild / full:6.2f}  {what if how == 'one process' else ''}")
            if stages:
                print(f"{'':<12} {'':<5} {'':>7} {'':>9} {'':>6}  {stages}")
        print("\nHow far each change reaches (one process); stage seconds rebuild / full:")
        for case_id, changed, pages, stages, full_stages, floor in reach:
            times = ", ".join(f"{k} {stages.get(k, 0):.2f}/{full_stages.get(k, 0):.2f}" for k in full_stages
                              if full_stages[k] >= 0.05)
            print(f"  {case_id}: {changed} of {pages} pages changed; {times}")
            print(f"      floor with a PDF made by parts that kept every unchanged page for free: {floor:.2f} of the full build")
    return 0


if __name__ == "__main__":
    sys.exit(main())
