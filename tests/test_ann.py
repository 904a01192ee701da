"""annoy candidates re-ranked exactly agree with exact search (recall@10 >= 0.99) on a structured set of 50k words."""

from __future__ import annotations

import numpy as np

from wordkin.index import ann
from wordkin.index.index_build import build
from wordkin.index.search import exact_top, top_for_vector
from wordkin.index.store import open_vectors

from .conftest import neighbours, structured_set


def test_recall_at_10_on_50k_structured_set(tmp_path):
    n, d = 50_000, 64
    x = structured_set(n, d, seed=11, clusters=800)
    np.save(tmp_path / "syn.npy", x)
    (tmp_path / "syn.words.txt").write_text("\n".join(f"w{i:06d}" for i in range(n)) + "\n")
    vs = open_vectors(tmp_path / "syn.npy", cache_root=tmp_path / "c")
    idx = build(vs)
    assert vs.meta.index.recall_at_10 >= 0.99
    assert idx.usable
    # An independent sample (other seed than the build's) of queries, checked here against exact search.
    rng = np.random.default_rng(99)
    hits = 0
    sample = rng.choice(n, 300, replace=False)
    for r in sample:
        q = np.asarray(vs.unit[r])
        want = set(exact_top(vs, q, 10, [int(r)])[0].tolist())
        got, scores, mode = top_for_vector(vs, q, 10, [int(r)], ann=idx)
        assert mode == "ann"
        hits += len(want & set(got.tolist()))
        np.testing.assert_allclose(scores, vs.unit[got] @ q, rtol=1e-6)  # reported cosines are exact
    assert hits / (10 * len(sample)) >= 0.99
    # Loaded back from the cache (memory-mapped), the same answers.
    vs2 = open_vectors(tmp_path / "syn.npy", cache_root=tmp_path / "c")
    loaded = ann.load(vs2)
    idx2 = loaded.index
    assert loaded.state is ann.IndexState.READY and idx2 is not None and idx2.search_k == idx.search_k
    res = neighbours(vs2, "w000042", 10, ann=idx2)
    assert res.mode == "ann" and len(res.rows) == 10


def test_child_process_build_and_cancel(tmp_path):
    n, d = 4000, 16
    np.save(tmp_path / "s.npy", structured_set(n, d, seed=2))
    (tmp_path / "s.words.txt").write_text("\n".join(f"w{i}" for i in range(n)) + "\n")
    vs = open_vectors(tmp_path / "s.npy", cache_root=tmp_path / "c")
    seen = []
    build(vs, n_trees=4, in_process=False, progress=lambda d, t, s: seen.append(s))
    assert any("adding" in s for s in seen) and vs.meta.index.state == "ready"
    import pytest

    from wordkin.index.errors import CancelledError

    with pytest.raises(CancelledError):
        build(vs, n_trees=4, in_process=False, cancel=lambda: True)
    assert not list(vs.cache_dir.glob(".annoy*tmp"))
