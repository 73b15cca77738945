"""Publishing a set (sheets.export.publish): one atomic switch, deletion only of what sheets wrote,
checks of the output folder before any work, and the lock."""

from __future__ import annotations

import errno
import hashlib
import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from sheets.errors import OutputError
from sheets.export import publish
from sheets.export.publish import SetWriter, sets_folder

ROOT = Path(__file__).resolve().parents[2]


def _publish(out: Path, files: dict[str, str], pdf: str = "set.pdf") -> SetWriter:
    with SetWriter(out) as writer:
        staging = writer.stage()
        for name, text in {**files, pdf: f"pdf of {sorted(files)}"}.items():
            (staging / name).parent.mkdir(parents=True, exist_ok=True)
            (staging / name).write_text(text)
        writer.publish(pdf, "fingerprint")
    return writer


def _tree(folder: Path) -> dict[str, bytes]:
    return {p.relative_to(folder).as_posix(): p.read_bytes() for p in sorted(folder.rglob("*")) if p.is_file()}


def _whole(out: Path) -> dict:
    """The manifest of the set ``out`` shows, checked against the files there: exactly those files, every hash."""
    manifest = json.loads((out / "manifest.json").read_text())
    present = {name for name in _tree(out) if name != "manifest.json"}
    assert present == set(manifest["files"])
    for name, digest in manifest["files"].items():
        assert hashlib.sha256((out / name).read_bytes()).hexdigest() == digest, name
    return manifest


def test_a_set_is_published_by_switching_one_link(tmp_path):
    out = tmp_path / "out" / "girder"
    _publish(out, {"results.json": "one", "figures/a.pdf": "a", "figures/old.pdf": "old"})
    first = os.readlink(out)
    assert out.is_symlink() and first.startswith(".sheets-sets/girder/1-")
    _whole(out)
    _publish(out, {"results.json": "two", "figures/a.pdf": "a"})
    assert os.readlink(out).startswith(".sheets-sets/girder/2-")
    assert _whole(out)["files"].keys() == {"results.json", "figures/a.pdf", "set.pdf"}
    assert (out / "results.json").read_text() == "two"
    assert not (out.parent / first).exists()  # the older set is gone, folder and all
    assert sorted(p.name for p in sets_folder(out).iterdir()) == [".lock", Path(os.readlink(out)).name]


def test_a_manifest_never_deletes_outside_its_own_folder(tmp_path):
    out = tmp_path / "out" / "girder"
    victims = {tmp_path / "victim.txt": "a user's file", tmp_path / "out" / "notes.txt": "beside the set"}
    out.parent.mkdir()
    for path, text in victims.items():
        path.write_text(text)
    _publish(out, {"results.json": "one"})
    folder = out.resolve()
    (folder / "link").symlink_to(tmp_path)  # a symlink inside the set, leading outside
    manifest = json.loads((folder / "manifest.json").read_text())
    digest = hashlib.sha256(b"a user's file").hexdigest()
    manifest["files"].update({str(tmp_path / "victim.txt"): digest, "../../../../victim.txt": digest,
                              "link/victim.txt": digest, "../../../notes.txt": hashlib.sha256(b"beside the set").hexdigest()})
    (folder / "manifest.json").write_text(json.dumps(manifest))
    writer = _publish(out, {"results.json": "two"})
    for path, text in victims.items():
        assert path.read_text() == text
    assert folder.is_dir() and (folder / "link").is_symlink()  # kept: it holds something sheets did not write
    assert not (folder / "results.json").exists()  # what it did write is gone
    assert any("link" in k for k in writer.kept)


def test_a_users_file_in_a_set_is_kept_and_reported(tmp_path):
    out = tmp_path / "girder"
    _publish(out, {"results.json": "one", "figures/a.pdf": "a"})
    (out / "figures" / "my-markup.pdf").write_text("the checker's notes")
    (out / "results.json").write_text("edited by hand")  # listed, but no longer what sheets wrote
    old = out.resolve()
    writer = _publish(out, {"results.json": "two"})
    assert (old / "figures" / "my-markup.pdf").read_text() == "the checker's notes"
    assert (old / "results.json").read_text() == "edited by hand"
    assert not (old / "figures" / "a.pdf").exists() and (old / "manifest.json").is_file()
    assert len(writer.kept) == 1 and "my-markup.pdf" in writer.kept[0] and "results.json" in writer.kept[0]
    _whole(out)


def test_a_folder_sheets_did_not_make_is_refused_untouched(tmp_path):
    out = tmp_path / "girder"
    (out / "sub").mkdir(parents=True)
    (out / "sub" / "draft.txt").write_text("mine")
    with pytest.raises(OutputError, match="files sheets did not write .*sub/draft.txt"):
        SetWriter(out).__enter__()
    assert _tree(out) == {"sub/draft.txt": b"mine"}


def test_a_folder_of_the_file_by_file_layout_moves_aside_whole(tmp_path):
    """Sets published before the switch to one link: only files the old manifest vouches for."""
    out = tmp_path / "girder"
    (out / "csv").mkdir(parents=True)
    (out / "csv" / "forces.csv").write_text("old forces")
    (out / "girder.pdf").write_text("old pdf")
    (out / ".sheets-build-x1y2").mkdir()  # staging of a build killed under the old layout
    files = {n: hashlib.sha256((out / n).read_bytes()).hexdigest() for n in ("csv/forces.csv", "girder.pdf")}
    (out / "manifest.json").write_text(publish.manifest_bytes(files, "f", "girder.pdf").decode())
    _publish(out, {"results.json": "new"}, pdf="girder.pdf")
    assert out.is_symlink()
    _whole(out)
    assert sorted(p.name for p in sets_folder(out).iterdir()) == [".lock", Path(os.readlink(out)).name]


def test_a_changed_file_of_the_old_layout_stops_the_build(tmp_path):
    out = tmp_path / "girder"
    out.mkdir()
    (out / "girder.pdf").write_text("old pdf")
    (out / "manifest.json").write_text(publish.manifest_bytes({"girder.pdf": "0" * 64}, "f", "girder.pdf").decode())
    with pytest.raises(OutputError, match="girder.pdf"):
        SetWriter(out).__enter__()
    assert (out / "girder.pdf").read_text() == "old pdf"


def test_a_file_or_a_foreign_link_is_refused(tmp_path):
    (tmp_path / "girder").write_text("a file")
    with pytest.raises(OutputError, match="names a file"):
        SetWriter(tmp_path / "girder").__enter__()
    (tmp_path / "elsewhere").mkdir()
    (tmp_path / "linked").symlink_to(tmp_path / "elsewhere")
    with pytest.raises(OutputError, match="symlink sheets did not make"):
        SetWriter(tmp_path / "linked").__enter__()
    with pytest.raises(OutputError, match="inside a file"):
        SetWriter(tmp_path / "girder" / "out").__enter__()
    assert not (tmp_path / ".sheets-sets").exists()


@pytest.mark.parametrize("code, words", [(errno.EACCES, "read-only or you lack permission"),
                                         (errno.EROFS, "read-only or you lack permission"),
                                         (errno.ENOSPC, "disk is full")])
def test_a_folder_that_takes_no_new_file_is_refused(tmp_path, monkeypatch, code, words):
    # The tests run as root, for whom permission bits do not bite: the probe is made to fail as
    # the kernel would on a read-only mount or a full disk.
    def refuse(folder):
        raise OSError(code, os.strerror(code), str(folder))

    monkeypatch.setattr(publish, "probe_folder", refuse)
    with pytest.raises(OutputError, match=words) as info:
        SetWriter(tmp_path / "girder").__enter__()
    assert str(tmp_path) in str(info.value)


def test_a_stale_staging_folder_is_removed_by_the_next_build(tmp_path):
    out = tmp_path / "girder"
    _publish(out, {"results.json": "one"})
    stale = sets_folder(out) / ".sheets-build-killed"
    (stale / "figures").mkdir(parents=True)
    (stale / "figures" / "half.pdf").write_text("half")
    stale_link = tmp_path / ".girder.sheets-link-9-abc"
    stale_link.symlink_to(".sheets-sets/girder/9-abc")
    with SetWriter(out):
        assert not stale.exists() and not os.path.lexists(stale_link)


def test_a_second_build_into_the_same_folder_is_refused(tmp_path):
    out = tmp_path / "girder"
    with SetWriter(out):
        with pytest.raises(OutputError, match=f"another build is writing this folder now \\(process {os.getpid()}"):
            SetWriter(out).__enter__()
    with SetWriter(tmp_path / "other"):  # another folder: no conflict
        pass
    with SetWriter(out):  # released on leaving
        pass


def test_a_killed_holder_releases_the_lock(tmp_path):
    out = tmp_path / "girder"
    code = (f"import sys, time; sys.path.insert(0, {str(ROOT)!r})\n"
            "from sheets.export.publish import SetWriter\n"
            f"w = SetWriter({str(out)!r}).__enter__(); print('locked', flush=True); time.sleep(60)\n")
    holder = subprocess.Popen([sys.executable, "-c", code], stdout=subprocess.PIPE, text=True)
    try:
        assert holder.stdout.readline().strip() == "locked"
        with pytest.raises(OutputError, match=f"process {holder.pid}"):
            SetWriter(out).__enter__()
    finally:
        holder.send_signal(signal.SIGKILL)
        holder.wait(10)
    deadline = time.monotonic() + 10
    with SetWriter(out):
        assert time.monotonic() < deadline


@pytest.mark.parametrize("text", ["[1, 2]", "{not json", '{"schema": "other/1", "files": {}}', '{"schema": "sheets.manifest/1"}'])
def test_an_older_set_with_an_unreadable_manifest_is_kept_whole(tmp_path, text):
    out = tmp_path / "girder"
    _publish(out, {"results.json": "one"})
    old = out.resolve()
    (old / "manifest.json").write_text(text)
    writer = _publish(out, {"results.json": "two"})
    assert (old / "results.json").read_text() == "one" and len(writer.kept) == 1
