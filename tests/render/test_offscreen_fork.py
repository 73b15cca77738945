"""A process that has rendered off-screen can still fork figure workers that render.

Mesa's software rasteriser starts threads at the first render when allowed to;
a forked child has none of them and waits for ever (seen as a hung build in a
long-lived process). sheets renders in the calling thread unless the user sets
LP_NUM_THREADS; this runs the parent-renders-then-forks case in a fresh
interpreter and checks the child finishes.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]

SCRIPT = """
import os, sys, time
from sheets.render.offscreen import offscreen_plotter
import pyvista as pv

def render():
    p = offscreen_plotter((120, 120))
    p.add_mesh(pv.Sphere())
    shape = p.screenshot(return_img=True).shape
    p.close()
    return shape

render()
pid = os.fork()
if pid == 0:
    render()
    os._exit(0)
for _ in range(60):
    done, status = os.waitpid(pid, os.WNOHANG)
    if done:
        print("child finished", status)
        sys.exit(0)
    time.sleep(0.5)
os.kill(pid, 9)
print("child hung")
sys.exit(1)
"""


def test_a_worker_forked_after_a_render_can_render():
    env = {k: v for k, v in os.environ.items() if k != "LP_NUM_THREADS"}
    env["PYTHONPATH"] = os.pathsep.join([str(ROOT)] + [p for p in [os.environ.get("PYTHONPATH")] if p])
    done = subprocess.run([sys.executable, "-c", SCRIPT], env=env, capture_output=True, text=True, timeout=120)
    assert done.returncode == 0 and "child finished 0" in done.stdout, done.stdout + done.stderr
