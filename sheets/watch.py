"""`sheets build --watch`: build again whenever the project or a file it includes changes.

The files are polled (modification time and size, a few times a second): it
needs no platform service and sees a file replaced by an editor's save-by-rename
as well as one written in place. A change is built only once the files have
stopped changing for a moment, so a save that writes several files, or one file
in pieces, gives one build. The files watched are those the last build read
(the project may name other files after an edit), and the project file always.
"""

from __future__ import annotations

import os
import threading
from dataclasses import dataclass
from pathlib import Path
from typing import Callable, Iterable

POLL_SECONDS = 0.25
SETTLE_SECONDS = 0.4  # files unchanged this long count as saved

Snapshot = dict[str, tuple[int, int] | None]  # path -> (mtime_ns, size), None where missing


def snapshot(paths: Iterable[str | Path]) -> Snapshot:
    seen: Snapshot = {}
    for path in paths:
        try:
            info = os.stat(path)
        except OSError:
            seen[str(path)] = None
        else:
            seen[str(path)] = (info.st_mtime_ns, info.st_size)
    return seen


def changed(before: Snapshot, after: Snapshot) -> list[str]:
    """The files that changed, appeared or went, by name, in a stable order."""
    return sorted(p for p in before.keys() | after.keys() if before.get(p) != after.get(p))


@dataclass(frozen=True)
class Round:
    """One build of the watch: why it ran (the files that changed; none for the first)."""

    number: int
    changed: tuple[str, ...]


def watch(project: str | Path, build: Callable[[Round], Iterable[str | Path]], stop: threading.Event | None = None,
          poll: float = POLL_SECONDS, settle: float = SETTLE_SECONDS) -> int:
    """Run ``build`` now and after every saved change until ``stop`` is set (or Ctrl-C); return the builds run.

    ``build(round)`` returns the files it read (the project's inputs), or nothing when the project
    could not be read: the files watched until then stay watched.
    """
    stop = stop or threading.Event()
    watched = [str(project)]
    round_ = Round(1, ())
    while True:
        before = snapshot(watched)  # taken before the build: a save during it is built next
        read = [str(p) for p in build(round_) or ()]
        if read:
            watched = list(dict.fromkeys([str(project)] + read))
            before = {**snapshot(watched), **{p: v for p, v in before.items() if p in watched}}
        while True:
            if stop.wait(poll):
                return round_.number
            now = snapshot(watched)
            if now != before:
                break
        while True:  # let the save finish: build once the files stop changing
            if stop.wait(settle):
                return round_.number
            settled = snapshot(watched)
            if settled == now:
                break
            now = settled
        round_ = Round(round_.number + 1, tuple(changed(before, now)))


def shown(paths: Iterable[str], base: str | Path) -> str:
    """File names as the user knows them: relative to the project folder where they are inside it."""
    folder = Path(base).resolve().parent
    names = []
    for p in paths:
        try:
            names.append(Path(p).resolve().relative_to(folder).as_posix())
        except ValueError:
            names.append(str(p))
    return ", ".join(names)
