"""annoy candidates re-ranked exactly agree with exact search (recall@10 >= 0.99) on a structured set of 50k words."""

from __future__ import annotations

import numpy as np

from wordkin.index.ann import annoy_file as ann
from wordkin.index.ann.build import build
from wordkin.index.search import exact_top, top_for_vector
from wordkin.index.vectors import open_vectors

from .conftest import neighbours, structured_set


def test_recall_at_10_on_50k_structured_set(tmp_path):
    n, d = 50_000, 96  # more dimensions than the index keeps: it holds a projection
    x = structured_set(n, d, seed=11, clusters=800)
    np.save(tmp_path / "syn.npy", x)
    (tmp_path / "syn.words.txt").write_text("\n".join(f"w{i:06d}" for i in range(n)) + "\n")
    vs = open_vectors(tmp_path / "syn.npy", cache_root=tmp_path / "c")
    idx = build(vs)
    assert vs.meta.index.recall_at_10 >= 0.99
    assert idx.usable
    assert idx.projection is not None and idx.projection.shape == (d, ann.PROJECTED_DIMS)
    assert vs.meta.index.projected_dims == ann.PROJECTED_DIMS and vs.meta.index.candidates >= 100
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


def _clustered_set(tmp_path, seed: int, n: int = 20_000, d: int = 48):
    """A cached .npy set of ``n`` x ``d`` rows in 400 clusters, words ``w00000``..."""
    x = structured_set(n, d, seed=seed, clusters=400)
    np.save(tmp_path / "w.npy", x)
    (tmp_path / "w.words.txt").write_text("\n".join(f"w{i:05d}" for i in range(n)) + "\n")
    return open_vectors(tmp_path / "w.npy", cache_root=tmp_path / "c")


def test_recall_is_estimated_on_frequent_words_and_a_weak_index_is_tuned_up(tmp_path):
    from wordkin.index.ann.annoy_file import RECALL_MARGIN, TARGET_RECALL
    from wordkin.index.ann.tuning import _truth, choose_search_k, measure_recall, recall_samples

    vs = _clustered_set(tmp_path, seed=5)
    frequent, random = recall_samples(vs)
    assert list(frequent[:3]) == [0, 1, 2] and len(frequent) == len(random) == 500  # file order first
    assert not set(frequent) & set(random)
    # A deliberately weak index: one tree.
    build(vs, n_trees=1)
    idx = ann.load(vs).index
    assert idx is not None
    truth = (_truth(vs, frequent, 10), _truth(vs, random, 10))
    weak = measure_recall(vs, idx, 20, (frequent, random), truth)
    assert weak.worst < TARGET_RECALL and weak.missing > 0.05  # reported below the target, per sample
    tuned = choose_search_k(vs, idx)
    assert tuned.search_k > 20 and tuned.worst > weak.worst
    assert tuned.worst >= TARGET_RECALL + RECALL_MARGIN or tuned.search_k == max(ann.SEARCH_K_LADDER)
    # The same vectors, the same choice (no timing decides).
    assert choose_search_k(vs, idx).search_k == tuned.search_k
    info = vs.meta.index
    assert (
        info.recall_frequent > 0
        and info.recall_random > 0
        and info.recall_at_10 == min(info.recall_frequent, info.recall_random)
    )


def test_principal_axes_span_the_top_singular_vectors_and_are_deterministic():
    from wordkin.index.ann.projection import principal_axes

    x = structured_set(3000, 40, seed=3)
    unit = x / np.linalg.norm(x, axis=1, keepdims=True)
    a = principal_axes(unit, np.array([], dtype=np.int64), 8)
    assert a.shape == (40, 8) and a.dtype == np.float32
    np.testing.assert_allclose(a.T @ a, np.eye(8), atol=1e-5)
    # The same subspace as numpy's SVD of the rows (best rank-8 approximation, Eckart-Young): equal projectors.
    _, _, vt = np.linalg.svd(unit.astype(np.float64), full_matrices=False)
    v = vt[:8].T
    np.testing.assert_allclose(a @ a.T, v @ v.T, atol=1e-4)
    assert np.array_equal(a, principal_axes(unit, np.array([], dtype=np.int64), 8))  # the same axes again
    # A sample of the rows (seeded) when the set is larger than the sample: still deterministic, nearly the same.
    b = principal_axes(unit, np.array([0, 1], dtype=np.int64), 8, sample=2000)
    assert np.array_equal(b, principal_axes(unit, np.array([0, 1], dtype=np.int64), 8, sample=2000))
    assert np.linalg.norm(b @ b.T - v @ v.T) < 1.0  # of at most 4 (sqrt(2 * 8)) for unrelated subspaces


def test_agreement_bound_is_scipys_wilson_interval():
    from scipy.stats import binomtest

    from wordkin.index.ann.tuning import CALC_SAMPLE, TARGET_AGREEMENT, agreement_lower_bound

    for k, n in [(600, 600), (599, 600), (597, 600), (180, 200), (3, 10), (0, 50)]:
        # A two-sided 90% interval has the one-sided 95% bound as its lower end.
        ref = binomtest(k, n).proportion_ci(confidence_level=0.90, method="wilson").low
        assert abs(agreement_lower_bound(k, n) - ref) < 1e-9, (k, n)
    # What the rule lets through on the build's sample: at most one answer of 600 may differ.
    assert agreement_lower_bound(CALC_SAMPLE - 1, CALC_SAMPLE) >= TARGET_AGREEMENT
    assert agreement_lower_bound(CALC_SAMPLE - 2, CALC_SAMPLE) < TARGET_AGREEMENT


def test_analogy_search_k_is_raised_or_refused_on_a_weak_index(tmp_path):
    from wordkin.index.ann.tuning import CALC_SAMPLE, TARGET_AGREEMENT, agreement_lower_bound, choose_calc_search_k

    vs = _clustered_set(tmp_path, seed=9)
    build(vs, n_trees=1)
    idx = ann.load(vs).index
    assert idx is not None
    weak = idx.with_search(10)
    sk, agree = choose_calc_search_k(vs, weak)
    if sk is None:  # nothing within the ladder both clears the bound and is worth the index's work
        assert agreement_lower_bound(round(agree * CALC_SAMPLE), CALC_SAMPLE) < TARGET_AGREEMENT
    else:
        assert sk > 10 and agreement_lower_bound(round(agree * CALC_SAMPLE), CALC_SAMPLE) >= TARGET_AGREEMENT
    assert choose_calc_search_k(vs, weak) == (sk, agree)  # deterministic
