"""Start-up time of the command line: `sheets --version` and `sheets check` of a small project.

Each command runs in a fresh interpreter (a subprocess, as a user runs it), best of --repeat,
alternating with the baselines measured in the same run on the same machine:
  python -c pass            the interpreter alone
  python -c "import numpy"  the least any numerical command pays
Printed: absolute seconds, and each command's time as a ratio to both baselines. Target: both
commands under 0.5 s on an ordinary machine; the ratios show what the package adds whatever
the machine's speed or load. Also printed: which heavy libraries each command imported
(none of matplotlib, pyvista, vtk, reportlab, pint, scipy.optimize should appear for these two).

    python3 bench/bench_startup.py [--repeat 7] [--project demo_projects/warehouse_roof/warehouse_roof.toml]
"""

from __future__ import annotations

import argparse
import os
import subprocess
import sys
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
HEAVY = ("matplotlib", "pyvista", "vtk", "reportlab", "pint", "scipy.optimize", "scipy.spatial", "scipy.linalg")
# Run a sheets command in-process after noting sys.modules, so the list of what it imported
# comes from the same interpreter that was timed (the list is printed after the command's exit).
PROBE = """
import atexit, sys
atexit.register(lambda: sys.stderr.write("\\nMODULES " + " ".join(sorted(sys.modules)) + "\\n"))
sys.argv = ["sheets"] + sys.argv[1:]
import runpy
runpy.run_module("sheets", run_name="__main__")
"""


def timed(argv: list[str], env: dict) -> tuple[float, str]:
    start = time.perf_counter()
    done = subprocess.run(argv, capture_output=True, text=True, env=env, cwd=ROOT)
    elapsed = time.perf_counter() - start
    if done.returncode not in (0,):
        raise SystemExit(f"{' '.join(argv)} exited {done.returncode}:\n{done.stderr}")
    return elapsed, done.stderr


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--repeat", type=int, default=7)
    parser.add_argument("--project", default=str(ROOT / "demo_projects" / "warehouse_roof" / "warehouse_roof.toml"))
    args = parser.parse_args()
    env = {**os.environ, "PYTHONPATH": str(ROOT) + os.pathsep + os.environ.get("PYTHONPATH", "")}
    py = sys.executable
    runs = {
        "python -c pass": [py, "-c", "pass"],
        "python -c 'import numpy'": [py, "-c", "import numpy"],
        "sheets --version": [py, "-c", PROBE, "--version"],
        "sheets check (small project)": [py, "-c", PROBE, "check", args.project],
    }
    best = {name: float("inf") for name in runs}
    imported: dict[str, set[str]] = {}
    for _ in range(args.repeat):  # interleaved, so a burst of load on the machine hits every run alike
        for name, argv in runs.items():
            elapsed, stderr = timed(argv, env)
            best[name] = min(best[name], elapsed)
            for line in stderr.splitlines():
                if line.startswith("MODULES "):
                    imported[name] = set(line.split()[1:])
    bare, numpy_ = best["python -c pass"], best["python -c 'import numpy'"]
    print(f"Python {sys.version.split()[0]}; load average {os.getloadavg()[0]:.1f} on {os.cpu_count()} cores; "
          f"best of {args.repeat}")
    print(f"{'run':32} {'seconds':>8} {'/ pass':>8} {'/ numpy':>8}  heavy libraries imported")
    for name in runs:
        heavy = sorted(h for h in HEAVY if h in imported.get(name, ()))
        shown = ", ".join(heavy) if name in imported else ""
        print(f"{name:32} {best[name]:8.3f} {best[name] / bare:8.2f} {best[name] / numpy_:8.2f}  {shown or ('none' if name in imported else '')}")
    for name in ("sheets --version", "sheets check (small project)"):
        print(f"{name}: {'under' if best[name] < 0.5 else 'OVER'} the 0.5 s target on this machine at this load")


if __name__ == "__main__":
    main()
