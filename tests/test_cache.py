"""The cache: the second open maps without parsing; a changed source or a damaged cache is rebuilt, never trusted."""

from __future__ import annotations

import dataclasses
import json
import os

import numpy as np
import pytest

from wordkin.index.ann import annoy_file as ann
from wordkin.index.ann.build import build
from wordkin.index.vectors import open_vectors

from .conftest import gensim_data, structured_set, write_w2v_text


@pytest.fixture
def small(tmp_path):
    words = [f"w{i:05d}" for i in range(3000)]
    return write_w2v_text(tmp_path / "s.txt", words, structured_set(3000, 16, seed=3)), tmp_path / "cache"


def test_second_open_maps_the_cache(small, monkeypatch):
    path, cache = small
    a = open_vectors(path, cache_root=cache)
    assert a.cache_note == "built"
    import wordkin.index.readers.detect as formats

    def boom(*a, **k):
        raise AssertionError("re-parsed")

    monkeypatch.setattr(formats, "read_batches", boom)
    b = open_vectors(path, cache_root=cache)
    assert b.cache_note == "hit"
    assert isinstance(b.unit, np.memmap) and not b.unit.flags["OWNDATA"]
    np.testing.assert_array_equal(np.asarray(a.unit), np.asarray(b.unit))


def test_modified_source_is_rebuilt(small):
    path, cache = small
    open_vectors(path, cache_root=cache)
    with open(path, "a") as f:
        f.write("extra " + " ".join(["0.5"] * 16) + "\n")
    b = open_vectors(path, cache_root=cache)
    assert b.cache_note.startswith("rebuilt") and "extra" in b.words


@pytest.mark.parametrize("damage", ["truncate-matrix", "edit-meta", "old-version", "drop-words", "garbage-meta"])
def test_damaged_cache_is_rebuilt(small, damage):
    path, cache = small
    a = open_vectors(path, cache_root=cache)
    d = a.cache_dir
    del a
    if damage == "truncate-matrix":
        with open(d / "matrix.npy", "r+b") as f:
            f.truncate(os.path.getsize(d / "matrix.npy") - 100)
    elif damage == "edit-meta":
        m = json.loads((d / "meta.json").read_text())
        m["words"] = 12
        (d / "meta.json").write_text(json.dumps(m))
    elif damage == "old-version":
        m = json.loads((d / "meta.json").read_text())
        m["tool_version"] = "0.0.1"
        (d / "meta.json").write_text(json.dumps(m))
    elif damage == "drop-words":
        (d / "words.txt").unlink()
    else:
        (d / "meta.json").write_bytes(b"\x00garbage")
    b = open_vectors(path, cache_root=cache)
    assert b.cache_note.startswith("rebuilt"), b.cache_note
    assert b.n == 3000 and any("rebuilt" in w for w in b.warnings)


def test_unwritable_cache_falls_back_to_no_cache(small, monkeypatch):
    path, _ = small
    import wordkin.index.cache as cache_mod

    def full(*a, **k):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(cache_mod, "new_build_dir", full)
    vs = open_vectors(path, cache_root=path.parent / "ro")
    assert vs.cache_dir is None and any("No space left" in w for w in vs.warnings)


def test_no_cache_keeps_nothing(tmp_path):
    vs = open_vectors(gensim_data("test_glove.txt"), cache_root=tmp_path / "c", use_cache=False)
    assert vs.cache_dir is None and not (tmp_path / "c").exists()
    assert vs.n == 76


def test_damaged_annoy_index_is_rejected_with_the_reason(small):
    path, cache = small
    vs = open_vectors(path, cache_root=cache)
    build(vs, n_trees=5)
    assert ann.load(vs).state is ann.IndexState.READY
    f = vs.cache_dir / ann.INDEX_FILE
    data = f.read_bytes()
    f.write_bytes(data[: len(data) // 2])
    vs2 = open_vectors(path, cache_root=cache)
    loaded = ann.load(vs2)
    assert loaded.state is ann.IndexState.REJECTED and loaded.index is None
    assert "annoy.ann has" in loaded.reason and "bytes, expected" in loaded.reason
    # A foreign index of the same size but other dimensions is refused too.
    from annoy import AnnoyIndex

    other = AnnoyIndex(8, "angular")
    for i in range(10):
        other.add_item(i, np.ones(8))
    other.build(2)
    other.save(str(f))
    vs3 = open_vectors(path, cache_root=cache)
    vs3.meta = vs3.meta.with_index(dataclasses.replace(vs3.meta.index, file_bytes=(f.stat().st_size,)))
    loaded = ann.load(vs3)
    assert loaded.state is ann.IndexState.REJECTED and loaded.reason  # wrong dimensions: annoy itself refuses it
