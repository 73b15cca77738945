"""Atomic writes: a temporary file in the target folder, then a rename.

An interrupted run leaves the previous output whole; no half-written file is
ever visible under the final name.
"""

from __future__ import annotations

import os
import tempfile
from contextlib import contextmanager
from pathlib import Path
from typing import Iterator


def write_atomic(path: str | Path, data: bytes | str) -> Path:
    path = Path(path)
    payload = data.encode("utf-8") if isinstance(data, str) else data
    with atomic_path(path) as tmp:
        tmp.write_bytes(payload)
    return path


@contextmanager
def atomic_path(path: str | Path) -> Iterator[Path]:
    """Yield a temporary path beside ``path`` (same suffix, so writers infer the format);
    rename it over ``path`` only if the block succeeds.

    For writers that want a file name (matplotlib, pyvista, reportlab).
    """
    path = Path(path)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, name = tempfile.mkstemp(prefix=f".{path.stem}.", suffix=".part" + path.suffix, dir=path.parent)
    os.close(fd)
    tmp = Path(name)
    try:
        yield tmp
        # mkstemp makes the file private (0600); outputs are ordinary files, readable by others.
        os.chmod(tmp, 0o644)
        os.replace(tmp, path)
    finally:
        if tmp.exists():
            tmp.unlink()
