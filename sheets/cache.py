"""A cache of stage outputs, keyed by the content of exactly what each output depends on.

A key is the SHA-256 of a canonical encoding of the inputs (numbers, strings,
numpy arrays with their dtype and shape, tuples, mappings, frozen dataclasses),
of the stage's name and of the package's own source code, so changed code never
reads an old entry. An entry is written to a temporary file and renamed into place: an
interrupted build leaves either the whole entry or none. An entry that cannot
be read back (a damaged disk, a foreign file) counts as missing and is removed:
the cache can only make a build faster, never change what it writes.

The cache holds pickles of the project's own values; a build keeps it beside
its sets (``.sheets-sets/<name>/cache/``, sheets.build), and only files it made
itself are ever removed.
"""

from __future__ import annotations

import copyreg
import dataclasses
import hashlib
import os
import pickle
import struct
import tempfile
from pathlib import Path
from collections.abc import Mapping
from functools import lru_cache
from types import MappingProxyType
from typing import Any, Callable, TypeVar

import numpy as np

from sheets import __version__

T = TypeVar("T")
Remember = Callable[[str, tuple, Callable[[], Any]], Any]  # (stage, inputs, make) -> make()'s value, perhaps stored
ENTRY_SUFFIX = ".entry"
PART_PREFIX = ".part-"


def no_cache(stage: str, inputs: tuple, make: Callable[[], T]) -> T:
    """The ``Remember`` of a build without a cache: make everything."""
    return make()


def _mapping_proxy(items: dict) -> MappingProxyType:
    return MappingProxyType(items)


# the project's read-only tables (materials, sections) are mapping proxies, which pickle cannot store as they are
copyreg.pickle(MappingProxyType, lambda proxy: (_mapping_proxy, (dict(proxy),)))


def _encode(value: Any, out: "hashlib._Hash") -> None:
    """Feed a canonical, type-tagged encoding of ``value`` to ``out``."""
    if value is None or isinstance(value, bool):
        out.update(b"N" if value is None else (b"T" if value else b"F"))
    elif isinstance(value, (int, np.integer)):
        out.update(b"i" + str(int(value)).encode() + b";")
    elif isinstance(value, (float, np.floating)):
        out.update(b"f" + struct.pack("<d", float(value)))
    elif isinstance(value, str):
        data = value.encode("utf-8")
        out.update(b"s" + struct.pack("<Q", len(data)) + data)
    elif isinstance(value, bytes):
        out.update(b"b" + struct.pack("<Q", len(value)) + value)
    elif isinstance(value, np.ndarray):
        a = np.ascontiguousarray(value)
        out.update(b"a" + a.dtype.str.encode() + repr(a.shape).encode())
        out.update(a.tobytes())
    elif isinstance(value, (list, tuple)):
        out.update(b"(" + struct.pack("<Q", len(value)))
        for item in value:
            _encode(item, out)
        out.update(b")")
    elif isinstance(value, Mapping):
        items = sorted(value.items(), key=lambda kv: repr(kv[0]))
        out.update(b"{" + struct.pack("<Q", len(items)))
        for k, v in items:
            _encode(k, out)
            _encode(v, out)
        out.update(b"}")
    elif isinstance(value, (set, frozenset)):
        _encode(sorted(value, key=repr), out)
    elif dataclasses.is_dataclass(value) and not isinstance(value, type):
        out.update(b"D" + type(value).__qualname__.encode())
        _encode({f.name: getattr(value, f.name) for f in dataclasses.fields(value)}, out)
    else:
        raise TypeError(f"cannot make a cache key of a {type(value).__name__}")


@lru_cache(maxsize=1)
def code_digest() -> str:
    """SHA-256 of the package's own source: a changed stage must never be answered from the cache."""
    digest = hashlib.sha256()
    package = Path(__file__).resolve().parent
    for path in sorted(package.rglob("*.py")):
        digest.update(path.relative_to(package).as_posix().encode() + b"\0" + path.read_bytes() + b"\0")
    return digest.hexdigest()


def content_key(stage: str, *inputs: Any) -> str:
    """The key of ``stage``'s output for these inputs (and this version of the code)."""
    digest = hashlib.sha256()
    _encode(("sheets", __version__, code_digest(), stage, inputs), digest)
    return digest.hexdigest()


MISSING = object()  # what ``StageCache.lookup`` returns for an entry it does not hold


class StageCache:
    """Entries under ``folder/<stage>/<key>.entry``; ``None`` as the folder turns caching off.

    ``read=False`` (``sheets build --force``) makes every stage anew and stores what it made, so the
    next build starts from fresh entries. ``hits`` and ``misses`` name the stage of each lookup, in
    order, so a build can say what it made and what it reused.
    """

    def __init__(self, folder: str | Path | None, read: bool = True):
        self.folder = Path(folder) if folder is not None else None
        self.read = read
        self.hits: list[str] = []
        self.misses: list[str] = []

    def _path(self, stage: str, key: str) -> Path:
        return self.folder / stage / f"{key}{ENTRY_SUFFIX}"

    def lookup(self, stage: str, inputs: tuple) -> tuple[str | None, Any]:
        """(key, the stored value or MISSING); the key is None where caching is off."""
        if self.folder is None:
            return None, MISSING
        key = content_key(stage, *inputs)
        if self.read:
            path = self._path(stage, key)
            try:
                with open(path, "rb") as stream:
                    value = pickle.load(stream)
            except FileNotFoundError:
                pass
            except Exception:  # damaged or foreign: ours to drop (by its name and place), then made anew
                path.unlink(missing_ok=True)
            else:
                self.hits.append(stage)
                return key, value
        self.misses.append(stage)
        return key, MISSING

    def store(self, stage: str, key: str | None, value: Any) -> None:
        """Keep ``value`` under the key ``lookup`` gave (nothing where caching is off)."""
        if key is not None:
            self._put(self._path(stage, key), value)

    def get_or_make(self, stage: str, inputs: tuple, make: Callable[[], T]) -> T:
        """The cached output of ``stage`` for ``inputs``, or ``make()`` stored for next time."""
        key, value = self.lookup(stage, inputs)
        if value is MISSING:
            value = make()
            self.store(stage, key, value)
        return value

    def summary(self) -> str:
        """'made: figure x3, page layout; reused: determinacy, figure x4' for the lookups so far."""
        def counted(stages: list[str]) -> str:
            counts: dict[str, int] = {}
            for stage in stages:
                counts[stage] = counts.get(stage, 0) + 1
            return ", ".join(s if n == 1 else f"{s} x{n}" for s, n in counts.items()) or "nothing"

        return f"made: {counted(self.misses)}; reused: {counted(self.hits)}"

    def _put(self, path: Path, value: Any) -> None:
        try:
            path.parent.mkdir(parents=True, exist_ok=True)
            fd, name = tempfile.mkstemp(prefix=PART_PREFIX, dir=path.parent)
            try:
                with os.fdopen(fd, "wb") as stream:
                    pickle.dump(value, stream, protocol=pickle.HIGHEST_PROTOCOL)
                os.replace(name, path)
            finally:
                if os.path.exists(name):
                    os.unlink(name)
        except OSError:
            pass  # a cache that cannot be written only costs time; the build goes on

    def prune(self, keep_bytes: int = 2 << 30) -> int:
        """Remove the oldest-read entries beyond ``keep_bytes``, and parts left by killed builds; returns files removed."""
        if self.folder is None or not self.folder.is_dir():
            return 0
        removed = 0
        entries = []
        for stage in self.folder.iterdir():
            if not stage.is_dir():
                continue
            for path in stage.iterdir():
                if path.name.startswith(PART_PREFIX) and path.is_file():
                    path.unlink(missing_ok=True)
                    removed += 1
                elif path.suffix == ENTRY_SUFFIX and path.is_file():
                    info = path.stat()
                    entries.append((info.st_atime, info.st_size, path))
        total = sum(size for _, size, _ in entries)
        for _, size, path in sorted(entries):
            if total <= keep_bytes:
                break
            path.unlink(missing_ok=True)
            total -= size
            removed += 1
        return removed


def without_loads(project) -> Any:
    """What a single state's stages depend on besides the state itself: the project without its cases'
    loads (a state carries its own loads; a change to one case must not redo the states it is not in),
    its fingerprint (a digest of those loads too) and the paths it was read from."""
    return dataclasses.replace(project, cases=tuple(dataclasses.replace(c, loads=np.zeros(0)) for c in project.cases),
                               fingerprint="", source="", inputs=())
