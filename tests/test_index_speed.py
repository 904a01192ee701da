"""The index as issue 16 reshaped it: a projected, single-file index within the matrix's size, reported recall on two
samples in ``info``, a rule on work (not a timing) for when the index pays, and a cold index file answered by the
exact scan while it is read in. Nothing here is timed: the speed figures come from ``tests/bench``."""

from __future__ import annotations

import asyncio
import os
import time
from pathlib import Path

import numpy as np
import pytest

from wordkin.index.ann import annoy_file as ann
from wordkin.index.ann import residency
from wordkin.index.ann.build import build
from wordkin.index.search import exact_top, top_for_vector
from wordkin.index.session import Session
from wordkin.index.vectors import open_vectors

from .conftest import cli_json, structured_set


@pytest.fixture(scope="module")
def set300(tmp_path_factory: pytest.TempPathFactory):
    """20,000 words x 300 dimensions (just above the smallest set the index is used for), index built."""
    d = tmp_path_factory.mktemp("set300")
    n = 20_000
    assert not ann.small_set(n, 300) and ann.small_set(14_999, 300) and ann.small_set(40_000, 100)
    np.save(d / "s.npy", structured_set(n, 300, seed=21, clusters=400))
    (d / "s.words.txt").write_text("\n".join(f"w{i:05d}" for i in range(n)) + "\n")
    cache = d / "cache"
    vs = open_vectors(d / "s.npy", cache_root=cache)
    build(vs)
    return d / "s.npy", cache


def test_info_reports_both_samples_and_a_cache_within_twice_the_matrix(set300, monkeypatch):
    path, cache = set300
    monkeypatch.setenv("WORDKIN_CACHE", str(cache))
    info = cli_json("info", str(path))
    idx = info["index"]
    assert idx["state"] == "ready"
    r = idx["recall_at_10"]
    assert set(r) == {"frequent", "random"} and r["frequent"] >= 0.99 and r["random"] >= 0.99
    assert 0 <= idx["queries_missing_a_neighbour"] <= 0.2
    assert idx["projected_dims"] == ann.PROJECTED_DIMS and idx["candidates"] in ann.CANDIDATE_LADDER
    assert idx["trees"] == ann.default_trees(300) == ann.MAX_TREES
    assert idx["calc_top1_agreement"] >= 0.99 or idx["calc_search_k"] is None
    folder = Path(info["cache"])
    assert idx["index_bytes"] == (folder / ann.INDEX_FILE).stat().st_size
    matrix = 4 * info["words"] * info["dims"]
    total = sum(p.stat().st_size for p in folder.iterdir() if p.is_file())
    assert idx["index_bytes"] < matrix and total <= 2 * matrix  # one index file, smaller than the matrix
    assert not list(folder.glob("annoy.1.ann")) and (folder / ann.PROJECTION_FILE).is_file()


def test_a_cold_index_file_is_answered_exactly(set300, monkeypatch):
    path, cache = set300
    vs = open_vectors(path, cache_root=cache)
    share = [0.1]
    monkeypatch.setattr(residency, "resident_share", lambda p: share[0])
    loaded = ann.load(vs)
    assert loaded.index is not None and isinstance(loaded.index.index, ann.LazyIndex)
    assert loaded.index.index._index is None  # annoy has not mapped the cold file
    session = Session.from_load(vs, loaded)
    q = np.asarray(vs.unit[5])
    rows, _, mode = top_for_vector(vs, q, 10, [5], ann=session.index)
    assert mode == "exact"  # the scan answers while the index file is not in memory
    assert session.answering() == "exact search: index not in memory yet"
    assert rows.tolist() == exact_top(vs, q, 10, [5])[0].tolist()
    share[0] = 0.95
    _, _, mode = top_for_vector(vs, q, 10, [5], ann=session.index)
    assert mode == "ann" and session.answering().startswith("index, recall@10")
    assert loaded.index.index._index is not None  # mapped (and checked) at its first use
    share[0] = 0.0  # once warm, not checked again (a query costs no system call)
    assert top_for_vector(vs, q, 10, [5], ann=session.index)[2] == "ann"


def test_resident_share_sees_a_file_leave_and_return_to_the_page_cache(tmp_path):
    f = tmp_path / "blob"
    f.write_bytes(os.urandom(4 * 2**20))
    fd = os.open(f, os.O_RDONLY)
    try:
        os.fsync(fd)
        os.posix_fadvise(fd, 0, 0, os.POSIX_FADV_DONTNEED)  # drop this file's clean pages (no root needed)
    finally:
        os.close(fd)
    cold = residency.resident_share(f)
    if cold is None or cold > 0.5:
        pytest.skip(f"this file system keeps the file in memory (resident share {cold})")
    # Asking does not bring the file in: a second question gets the same answer (RWF_NOWAIT probes, asked
    # first before, started readahead of the pages they probed, and a second check found them resident).
    time.sleep(0.2)
    assert residency.resident_share(f) == pytest.approx(cold, abs=0.05)
    seen: list[int] = []
    assert residency.read_in(f, lambda d, t: seen.append(d), lambda: False)
    assert seen[-1] == 4 * 2**20
    assert residency.resident_share(f) == 1.0
    assert not residency.read_in(f, lambda d, t: None, lambda: True)  # cancelled


def test_the_index_is_used_only_where_it_examines_less_than_a_scan_reads():
    # A rule on work, not a timing: the same vectors always get the same answer.
    assert ann.worthwhile(20_000, 400_000) and not ann.worthwhile(120_000, 400_000)
    assert ann.worthwhile(250_000, 1_000_000) and not ann.worthwhile(260_000, 1_000_000)


def test_default_trees_keep_the_index_within_the_matrix():
    for dims in (300, 200):
        f = ann.projected_dims(dims)
        trees = ann.default_trees(dims)
        assert ann.node_bytes(f) + trees * ann.TREE_BYTES_PER_ITEM <= 4 * dims
    assert ann.default_trees(50) == ann.MIN_TREES  # small vectors: a floor of trees (the cache is then larger)


def test_console_reads_a_cold_index_in_and_then_uses_it(set300, monkeypatch):
    from wordkin.console.tui.app import create_app

    path, cache = set300
    share = [0.0]
    monkeypatch.setattr(residency, "resident_share", lambda p: share[0])
    real_read_in = residency.read_in
    modes: list[str] = []

    def read_in(p, progress, cancel):
        time.sleep(0.5)  # a slow disk: long enough for the status line to be seen
        done = real_read_in(p, progress, cancel)
        share[0] = 1.0
        return done

    monkeypatch.setattr(residency, "read_in", read_in)

    async def main():
        app = create_app(str(path), cache=str(cache), notebook=str(path.parent / "nb.wkn"))
        async with app.run_test(size=(80, 24)) as pilot:
            end = asyncio.get_running_loop().time() + 30
            while not (app.session is not None and app.session.index is not None and app.session.index.warm):
                modes.append(app.query_one("StatusLine").mode)
                assert asyncio.get_running_loop().time() < end, modes[-5:]
                await pilot.pause(0.01)
            await pilot.pause(0.1)
            return app.query_one("StatusLine").mode

    final = asyncio.run(main())
    assert final.startswith("index, recall@10")
    assert any("not in memory yet" in m or "reading it into memory" in m for m in modes), set(modes)
