"""The stage cache: keys follow content, entries survive interruption, damaged entries are made anew."""

from __future__ import annotations

import dataclasses
import os
import pickle
from types import MappingProxyType

import numpy as np
import pytest

from sheets.cache import ENTRY_SUFFIX, PART_PREFIX, StageCache, content_key


@dataclasses.dataclass(frozen=True)
class Options:
    scale: float
    name: str


def test_keys_follow_content_not_identity():
    a = np.arange(6, dtype=float).reshape(2, 3)
    assert content_key("s", a, Options(1.0, "x")) == content_key("s", a.copy(), Options(1.0, "x"))
    assert content_key("s", {"b": 1, "a": 2}) == content_key("s", MappingProxyType({"a": 2, "b": 1}))
    different = [
        content_key("s", a.reshape(3, 2)),  # same bytes, other shape
        content_key("s", a.astype(np.float32)),  # other dtype
        content_key("s", a + 1e-15 * (a == 5)),  # one value, one ulp-scale change
        content_key("t", a),  # other stage
        content_key("s", (1, 2)),
        content_key("s", (2, 1)),
        content_key("s", "1"),
        content_key("s", 1),
        content_key("s", 1.0),
    ]
    assert len(set(different)) == len(different)
    with pytest.raises(TypeError):
        content_key("s", object())


def test_get_or_make_makes_once(tmp_path):
    cache = StageCache(tmp_path / "c")
    calls = []

    def make():
        calls.append(1)
        return {"forces": np.array([1.0, -2.0])}

    first = cache.get_or_make("diagrams", (np.ones(3),), make)
    again = StageCache(tmp_path / "c").get_or_make("diagrams", (np.ones(3),), make)
    assert len(calls) == 1 and np.array_equal(first["forces"], again["forces"])
    StageCache(tmp_path / "c").get_or_make("diagrams", (np.zeros(3),), make)
    assert len(calls) == 2


def test_no_folder_turns_it_off(tmp_path):
    cache = StageCache(None)
    assert cache.get_or_make("x", (1,), lambda: 5) == 5 and cache.prune() == 0


def test_damaged_entries_are_made_anew(tmp_path):
    cache = StageCache(tmp_path / "c")
    cache.get_or_make("x", (1,), lambda: "right")
    (entry,) = (tmp_path / "c" / "x").glob(f"*{ENTRY_SUFFIX}")
    entry.write_bytes(pickle.dumps("right")[:5])  # truncated, as by a full disk
    assert StageCache(tmp_path / "c").get_or_make("x", (1,), lambda: "made again") == "made again"
    assert StageCache(tmp_path / "c").get_or_make("x", (1,), lambda: "not called") == "made again"


def test_a_killed_write_leaves_no_entry_and_prune_clears_parts(tmp_path):
    folder = tmp_path / "c" / "x"
    folder.mkdir(parents=True)
    (folder / f"{PART_PREFIX}abc").write_bytes(b"half")
    mine = tmp_path / "c" / "x" / "notes.txt"  # not the cache's: never removed
    mine.write_text("keep", encoding="utf-8")
    cache = StageCache(tmp_path / "c")
    assert cache.get_or_make("x", (1,), lambda: 1) == 1
    assert cache.prune() == 1
    assert mine.read_text(encoding="utf-8") == "keep" and not list(folder.glob(f"{PART_PREFIX}*"))


def test_prune_keeps_the_most_recently_read(tmp_path):
    cache = StageCache(tmp_path / "c")
    for k in range(4):
        cache.get_or_make("x", (k,), lambda k=k: bytes(1000) + bytes([k]))
    entries = sorted((tmp_path / "c" / "x").glob(f"*{ENTRY_SUFFIX}"))
    for age, path in enumerate(entries):
        os.utime(path, (1000 + age, 1000 + age))
    assert cache.prune(keep_bytes=2500) == 2
    assert sorted((tmp_path / "c" / "x").glob(f"*{ENTRY_SUFFIX}")) == entries[2:]
