"""Publishing a sheet set all at once: one symlink switched atomically to a whole, versioned folder.

Layout for ``--out DIR`` (``DIR`` = ``<parent>/<name>``)::

    <parent>/<name>                          symlink owned by sheets -> .sheets-sets/<name>/<n>-<hash>
    <parent>/.sheets-sets/<name>/.lock       held (flock) by the build writing this set
    <parent>/.sheets-sets/<name>/<n>-<hash>/ one whole set: PDF, results.json, csv/, figures/, manifest.json
    <parent>/.sheets-sets/<name>/.sheets-build-*/  staging of a build in progress

A new set is written into a staging folder, fsynced, renamed to its versioned name, and a new
symlink is renamed over ``DIR`` (``os.replace``: atomic). Whatever moment a build is killed,
``DIR`` resolves to the whole previous set or the whole new one. Afterwards older versioned
folders are emptied of the files their own manifest lists (and whose hash still matches), never
following a symlink or leaving the folder; anything else in them (a user's file) is kept.

Before any computation ``SetWriter`` checks that ``DIR`` can be written (not a file, not a folder
sheets did not make, a parent that accepts a new file) and takes the lock; every problem is an
``OutputError`` (exit code 2) naming the path and what to do.
"""

from __future__ import annotations

import errno
import fcntl
import hashlib
import json
import os
import re
import shutil
import stat
import tempfile
from pathlib import Path, PurePosixPath

from sheets.errors import OutputError

SETS_FOLDER = ".sheets-sets"
STAGING_PREFIX = ".sheets-build-"
LOCK_NAME = ".lock"
MANIFEST = "manifest.json"
MANIFEST_SCHEMA = "sheets.manifest/1"
_VERSION = re.compile(r"^(\d+)-([0-9a-f]{12})$")
_LINK_INFIX = ".sheets-link-"  # temporary symlink beside DIR, renamed over it
_PART_FILE = re.compile(r"^\.manifest\..*\.part\.json$")  # an atomic write of the old layout, cut short

_FULL = (errno.ENOSPC, errno.EDQUOT)
_DENIED = (errno.EACCES, errno.EPERM, errno.EROFS)


def sets_folder(out: Path) -> Path:
    """Where the versioned folders, the staging folder and the lock of ``out`` live."""
    return out.parent / SETS_FOLDER / out.name


def output_error(exc: OSError, path: Path | str) -> OutputError:
    """An OSError met while writing, as a message naming the path and what to do."""
    where = exc.filename or path
    if exc.errno in _FULL:
        return OutputError(where, "the disk is full", "free some space or choose another folder with --out")
    if exc.errno in _DENIED:
        return OutputError(where, "cannot write here: the folder is read-only or you lack permission",
                           "fix its permissions or choose another folder with --out")
    return OutputError(where, f"cannot write here ({exc.strerror or exc})", "check the folder, or choose another with --out")


def probe_folder(folder: Path) -> None:
    """Create and remove a small file in ``folder``: the only sure test that it accepts new files
    (os.access says yes to root on a read-only mount)."""
    fd, name = tempfile.mkstemp(prefix=".sheets-probe-", dir=folder)
    try:
        os.write(fd, b"\0" * 4096)
        os.fsync(fd)
    finally:
        os.close(fd)
        os.unlink(name)


def check_writable(folder: Path, what: str) -> None:
    """``folder`` (or, if missing, its nearest existing ancestor) is a folder that accepts new files."""
    existing = folder
    while not os.path.lexists(existing) and existing != existing.parent:
        existing = existing.parent
    if not existing.is_dir():
        raise OutputError(existing, f"{what} would be inside a file, not a folder", "choose another path")
    if not os.access(existing, os.W_OK | os.X_OK):
        raise OutputError(existing, "cannot write here: you lack permission", "fix its permissions or choose another path")
    try:
        probe_folder(existing)
    except OSError as exc:
        raise output_error(exc, existing) from exc


def check_file_target(path: Path, option: str) -> None:
    """``path`` can be written as a file (``--json FILE``)."""
    if path.is_dir():
        raise OutputError(path, f"{option} names a folder, not a file", f"give a file name, e.g. {path / 'results.json'}")
    check_writable(path.parent, f"the {option} file")


def check_folder_target(path: Path, option: str) -> None:
    """``path`` can be written as a folder (``--csv DIR``)."""
    if os.path.lexists(path) and not path.is_dir():
        raise OutputError(path, f"{option} names a file, not a folder", "give a folder path")
    check_writable(path, f"the {option} folder")


def _owned_link(out: Path) -> bool:
    """``out`` is a symlink of the form sheets makes: .sheets-sets/<name>/<n>-<hash>."""
    parts = PurePosixPath(os.readlink(out)).parts
    return len(parts) == 3 and parts[0] == SETS_FOLDER and parts[1] == out.name and bool(_VERSION.match(parts[2]))


def _sha256(path: Path) -> str:
    digest = hashlib.sha256()
    with open(path, "rb") as f:
        for block in iter(lambda: f.read(1 << 20), b""):
            digest.update(block)
    return digest.hexdigest()


def _read_manifest(folder: Path) -> dict[str, str] | None:
    """The ``files`` table of ``folder``'s manifest, or None if there is no readable one."""
    try:
        doc = json.loads((folder / MANIFEST).read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None
    if not isinstance(doc, dict) or doc.get("schema") != MANIFEST_SCHEMA or not isinstance(doc.get("files"), dict):
        return None
    files = doc["files"]
    return {str(k): str(v) for k, v in files.items()}


def _listed_file(folder: Path, name: str) -> Path | None:
    """``folder/name`` if ``name`` is a plain relative path to a regular file reached without any
    symlink; None for an absolute path, '..', or anything leading outside ``folder``."""
    rel = PurePosixPath(name)
    if not rel.parts or rel.is_absolute() or any(p in ("..", ".", "") for p in rel.parts) or "\\" in name:
        return None
    path = folder
    for part in rel.parts:
        path = path / part
        try:
            mode = os.lstat(path).st_mode
        except OSError:
            return None
        if stat.S_ISLNK(mode):
            return None
    return path if stat.S_ISREG(mode) else None


def _ours(folder: Path) -> tuple[list[Path], list[str]]:
    """Split ``folder``'s contents into files its manifest vouches for (listed, hash matching, plus
    the manifest) and the relative names of everything else, a user's files."""
    listed = _read_manifest(folder) or {}
    vouched = {folder / MANIFEST} if listed else set()
    for name, digest in listed.items():
        path = _listed_file(folder, name)
        if path is not None and _sha256(path) == digest:
            vouched.add(path)
    foreign = []
    for root, dirs, files in os.walk(folder):  # never follows symlinks
        here = Path(root)
        for d in list(dirs):
            if os.path.islink(here / d):
                foreign.append((here / d).relative_to(folder).as_posix())
                dirs.remove(d)
            elif here == folder and d.startswith(STAGING_PREFIX):
                dirs.remove(d)  # a cut-short build of the old layout: ours by name
        for f in files:
            path = here / f
            if path not in vouched and not (here == folder and _PART_FILE.match(f)):
                foreign.append(path.relative_to(folder).as_posix())
    return sorted(vouched), sorted(foreign)


def _remove_set(folder: Path) -> list[str]:
    """Delete the files ``folder``'s manifest vouches for, then empty folders; the folder itself
    goes only if nothing else is left. Returns what was kept (a user's files)."""
    vouched, foreign = _ours(folder)
    if not vouched:
        return foreign or ["(no manifest)"]
    for path in vouched:
        if path.name != MANIFEST or path.parent != folder or not foreign:
            path.unlink(missing_ok=True)
    for root, dirs, files in os.walk(folder, topdown=False):
        for d in dirs:
            sub = Path(root) / d
            if not os.path.islink(sub):
                try:
                    sub.rmdir()
                except OSError:
                    pass  # not empty: a user's file is in it
    if not foreign:
        try:
            folder.rmdir()
        except OSError:
            pass
    return foreign


def _fsync_tree(folder: Path) -> None:
    """Every file and folder of the staged set on disk before the switch (a power cut then leaves a
    whole set, not empty files under the new name)."""
    for root, _dirs, files in os.walk(folder, topdown=False):
        for name in files:
            fd = os.open(Path(root) / name, os.O_RDONLY)
            try:
                os.fsync(fd)
            finally:
                os.close(fd)
        _fsync_dir(Path(root))


def _fsync_dir(folder: Path) -> None:
    fd = os.open(folder, os.O_RDONLY | os.O_DIRECTORY)
    try:
        os.fsync(fd)
    finally:
        os.close(fd)


def manifest_bytes(files: dict[str, str], fingerprint: str, pdf_name: str) -> bytes:
    doc = {"schema": MANIFEST_SCHEMA, "input_fingerprint": fingerprint, "pdf": pdf_name, "files": files}
    return (json.dumps(doc, indent=1, sort_keys=True) + "\n").encode("utf-8")


class SetWriter:
    """``with SetWriter(out) as w:`` checks ``out`` and takes its lock (before any computation);
    ``w.stage()`` gives a private staging folder to fill; ``w.publish(...)`` switches ``out`` to it.
    Leaving the block removes an unpublished staging folder and releases the lock."""

    def __init__(self, out: str | Path):
        self.out = Path(os.path.abspath(out))
        self.area = sets_folder(self.out)
        self.kept: list[str] = []  # older sets kept because they hold a user's files
        self._lock_fd: int | None = None
        self._staging: Path | None = None
        self._legacy = False  # ``out`` is a real folder of the file-by-file layout, to be moved aside

    # -- before computing ------------------------------------------------------

    def __enter__(self) -> "SetWriter":
        self._check_target()
        check_writable(self.out.parent, "the output folder")
        try:
            self.area.mkdir(parents=True, exist_ok=True)
            probe_folder(self.area)
        except OSError as exc:
            raise output_error(exc, self.area) from exc
        self._lock()
        try:
            self._remove_leftovers()
        except BaseException:
            self._unlock()
            raise
        return self

    def __exit__(self, *exc_info) -> None:
        try:
            if self._staging is not None:
                shutil.rmtree(self._staging, ignore_errors=True)
        finally:
            self._unlock()

    def _check_target(self) -> None:
        out = self.out
        if not out.name or out.name in (".", ".."):
            raise OutputError(out, "is not a folder name sheets can publish to", "name a folder, e.g. --out out/girder")
        if os.path.islink(out):
            if not _owned_link(out):
                raise OutputError(out, f"is a symlink sheets did not make (to {os.readlink(out)})",
                                  "remove it or choose another folder with --out; sheets replaces only its own links")
        elif out.is_dir():
            _vouched, foreign = _ours(out)
            if foreign:
                shown = ", ".join(foreign[:5]) + (f" and {len(foreign) - 5} more" if len(foreign) > 5 else "")
                raise OutputError(out, f"is a folder holding files sheets did not write ({shown})",
                                  "move them away or choose another folder with --out; a build never deletes them")
            self._legacy = True
        elif os.path.lexists(out):
            raise OutputError(out, "--out names a file, not a folder", "give a folder path with --out")

    def _lock(self) -> None:
        path = self.area / LOCK_NAME
        try:
            fd = os.open(path, os.O_RDWR | os.O_CREAT, 0o644)
        except OSError as exc:
            raise output_error(exc, path) from exc
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
        except BlockingIOError:
            holder = os.read(fd, 32).decode("ascii", "replace").strip()
            os.close(fd)
            raise OutputError(self.out, f"another build is writing this folder now (process {holder or 'unknown'}, "
                                        f"lock {path})", "wait for it to finish, or choose another folder with --out")
        os.ftruncate(fd, 0)
        os.write(fd, f"{os.getpid()}\n".encode("ascii"))
        self._lock_fd = fd

    def _unlock(self) -> None:
        if self._lock_fd is not None:
            os.close(self._lock_fd)  # closing releases the flock; the kernel does the same for a killed build
            self._lock_fd = None

    def _remove_leftovers(self) -> None:
        """Staging folders and temporary links of builds that were killed: ours by name and place."""
        for entry in self.area.iterdir():
            if entry.name.startswith(STAGING_PREFIX) and entry.is_dir() and not entry.is_symlink():
                shutil.rmtree(entry, ignore_errors=True)
        for entry in self.out.parent.iterdir():
            if entry.name.startswith(f".{self.out.name}{_LINK_INFIX}") and entry.is_symlink():
                entry.unlink()
        if self._legacy:  # the same leftovers of the file-by-file layout, inside ``out``
            for entry in self.out.iterdir():
                if entry.name.startswith(STAGING_PREFIX) and entry.is_dir() and not entry.is_symlink():
                    shutil.rmtree(entry, ignore_errors=True)
                elif _PART_FILE.match(entry.name) and entry.is_file() and not entry.is_symlink():
                    entry.unlink()

    # -- writing and publishing --------------------------------------------------

    def stage(self) -> Path:
        """A private, empty folder to write the new set into."""
        if self._staging is None:
            self._staging = Path(tempfile.mkdtemp(prefix=STAGING_PREFIX, dir=self.area))
            os.chmod(self._staging, 0o755)
        return self._staging

    def publish(self, pdf_name: str, fingerprint: str) -> tuple[Path, ...]:
        """Write the manifest, switch ``out`` to the staged set in one rename, then remove older sets.
        Returns the published paths (through ``out``), the PDF last but for the manifest."""
        staging = self.stage()
        staged = sorted((p.relative_to(staging).as_posix() for p in staging.rglob("*") if p.is_file()),
                        key=lambda name: (name == pdf_name, name))
        files = {name: _sha256(staging / name) for name in staged}
        manifest = manifest_bytes(files, fingerprint, pdf_name)
        (staging / MANIFEST).write_bytes(manifest)
        for path in staging.rglob("*"):
            os.chmod(path, 0o755 if path.is_dir() else 0o644)
        _fsync_tree(staging)
        version = f"{self._next_number()}-{hashlib.sha256(manifest).hexdigest()[:12]}"
        os.rename(staging, self.area / version)
        self._staging = None
        _fsync_dir(self.area)
        if self._legacy:
            self._move_legacy_aside()
        link = self.out.parent / f".{self.out.name}{_LINK_INFIX}{version}"
        link.unlink(missing_ok=True)
        os.symlink(PurePosixPath(SETS_FOLDER, self.out.name, version).as_posix(), link)
        os.replace(link, self.out)  # the switch: atomic
        _fsync_dir(self.out.parent)
        for entry in sorted(self.area.iterdir()):
            if entry.name != version and _VERSION.match(entry.name) and entry.is_dir() and not entry.is_symlink():
                try:
                    kept = _remove_set(entry)
                except OSError as exc:  # the new set is in place; an old one that cannot go is only reported
                    kept = [f"not removed: {exc.strerror or exc}"]
                if kept:
                    self.kept.append(f"{entry} (holds {', '.join(kept[:5])})")
        return tuple(self.out / name for name in staged) + (self.out / MANIFEST,)

    def _next_number(self) -> int:
        numbers = [int(m.group(1)) for m in map(_VERSION.match, os.listdir(self.area)) if m]
        return max(numbers, default=0) + 1

    def _move_legacy_aside(self) -> None:
        """A folder of the file-by-file layout (checked to hold only files sheets wrote) becomes an
        older versioned set, removed like any other. Between this rename and the link ``out`` is
        briefly absent: once per folder, and the old set is whole in the sets folder meanwhile."""
        if not any(self.out.iterdir()):
            self.out.rmdir()
            return
        digest = hashlib.sha256((self.out / MANIFEST).read_bytes()).hexdigest()[:12]
        os.rename(self.out, self.area / f"{self._next_number()}-{digest}")
