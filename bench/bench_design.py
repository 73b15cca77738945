"""Benchmark of the design stages (member checks, serviceability, design outcome) against the analyse stage.

    python3 bench/bench_design.py                  # about 20,000 members
    python3 bench/bench_design.py --members 5000   # quick look

The grid of bench/grids.py, with its combinations tagged (gravity and uplift for strength,
a serviceability combination added), the buckling curve method, effective length factors
per group and a deflection limit. Printed: seconds of each stage (best of --repeat) and
its ratio to the analyse stage measured in the same run. Nothing here is an assertion.
"""

from __future__ import annotations

import argparse
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path[:0] = [str(HERE.parent), str(HERE)]  # the work tree's sheets, and grids.py

import grids  # noqa: E402

from sheets.analysis import analyse  # noqa: E402
from sheets.analysis.member_checks import member_checks  # noqa: E402
from sheets.analysis.outcome import design_outcome  # noqa: E402
from sheets.analysis.serviceability import serviceability  # noqa: E402
from sheets.model import load_project  # noqa: E402

DESIGN = """
[combinations.service]
factors = { permanent = 1.0, snow = 1.0 }
purpose = "serviceability"

[design]
partial_factor = 1.0
effective_length_factor = 1.0
compression_method = "buckling_curve"
buckling_curve = "b"
deflection_limit = 250
"""


def best(repeat: int, run):
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        value = run()
        times.append(time.perf_counter() - start)
    return min(times), value


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--members", type=int, default=20_000)
    parser.add_argument("--repeat", type=int, default=3)
    args = parser.parse_args()
    bays = grids.bays_for_members(args.members)
    with tempfile.TemporaryDirectory() as folder:
        path = grids.write_project(grids.double_layer_grid(bays, bays), Path(folder))
        text = path.read_text()
        text = text.replace("factors = { permanent = 1.35, snow = 1.5 }", "factors = { permanent = 1.35, snow = 1.5 }\npurpose = \"strength\"")
        text = text.replace("factors = { permanent = 1.0, wind = 1.5 }", "factors = { permanent = 1.0, wind = 1.5 }\npurpose = \"strength\"")
        path.write_text(text + DESIGN)
        project = load_project(path)
    t_analyse, analysis = best(args.repeat, lambda: analyse(project))
    t_checks, checks = best(args.repeat, lambda: member_checks(analysis))
    t_service, service = best(args.repeat, lambda: serviceability(analysis))
    t_outcome, outcome = best(args.repeat, lambda: design_outcome(analysis, checks, service))
    print(f"{project.n_members} members, {project.n_nodes} nodes, {len(analysis.states)} states; best of {args.repeat}")
    print(f"{'stage':<16}{'seconds':>10}{'/ analyse':>12}")
    for name, t in (("analyse", t_analyse), ("member checks", t_checks), ("serviceability", t_service),
                    ("design outcome", t_outcome)):
        print(f"{name:<16}{t:>10.4f}{t / t_analyse:>12.3f}")
    print(f"outcome flagged: {outcome.flagged}; members over 1: {len(outcome.over_utilised)}; uplift at {len(outcome.uplift)} supports")


if __name__ == "__main__":
    main()
