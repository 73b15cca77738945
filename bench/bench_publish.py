"""Cost of publishing a sheet set all at once (sheets.export.publish), as a ratio.

    python bench/bench_publish.py [--files N] [--size KB] [--repeat R]

Writes a synthetic set (N figure files of SIZE KB, a results file and a PDF) two ways in the
same process: the baseline writes each file atomically straight into a folder (the file-by-file
layout, no fsync); the measured way stages the same files, takes the lock, hashes them, writes
the manifest, fsyncs, renames the folder and switches the link, then removes the older set.
Prints both times and their ratio, never a pass/fail.
"""

from __future__ import annotations

import argparse
import os
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from sheets.export.atomic import write_atomic  # noqa: E402
from sheets.export.publish import SetWriter  # noqa: E402


def synthetic_set(files: int, size_kb: int) -> dict[str, bytes]:
    rng = __import__("random").Random(0)
    payload = {f"figures/figure-{i:03d}.pdf": rng.randbytes(size_kb * 1024) for i in range(files)}
    payload["results.json"] = rng.randbytes(size_kb * 1024)
    payload["set.pdf"] = rng.randbytes(10 * size_kb * 1024)
    return payload


def file_by_file(folder: Path, payload: dict[str, bytes]) -> None:
    for name, data in payload.items():
        write_atomic(folder / name, data)


def one_switch(out: Path, payload: dict[str, bytes]) -> None:
    with SetWriter(out) as writer:
        staging = writer.stage()
        for name, data in payload.items():
            write_atomic(staging / name, data)
        writer.publish("set.pdf", "bench")


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--files", type=int, default=40)
    parser.add_argument("--size", type=int, default=200, help="KB per figure file")
    parser.add_argument("--repeat", type=int, default=5)
    args = parser.parse_args(argv)
    payload = synthetic_set(args.files, args.size)
    with tempfile.TemporaryDirectory(dir=os.environ.get("BENCH_DIR")) as scratch:
        base = Path(scratch)
        timings = {"file by file": [], "one switch": []}
        for r in range(args.repeat):
            start = time.perf_counter()
            file_by_file(base / "plain", payload)
            timings["file by file"].append(time.perf_counter() - start)
            start = time.perf_counter()
            one_switch(base / "linked", payload)  # from the second round on, an older set is removed too
            timings["one switch"].append(time.perf_counter() - start)
    best = {k: min(v) for k, v in timings.items()}
    total_mb = sum(map(len, payload.values())) / 1e6
    print(f"{len(payload)} files, {total_mb:.1f} MB, best of {args.repeat}")
    for name, seconds in best.items():
        print(f"  {name:<13} {seconds * 1000:8.1f} ms")
    print(f"  one switch / file by file = {best['one switch'] / best['file by file']:.2f}")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
