"""Nearest neighbours: an exact scan (one matrix-vector product and a partial sort) or annoy candidates
re-scored exactly. The query word and all-zero rows are never returned."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np
from numpy.typing import NDArray

from wordkin.index.ann.annoy_file import AnnIndex, small_set
from wordkin.index.errors import UsageError
from wordkin.index.vectors import VectorSet

MAX_K = 10_000


def check_k(k: int, vs: VectorSet) -> int:
    """``k`` clamped to the vocabulary; a usage error (worded for any front end) when it cannot be used."""
    if not isinstance(k, int) or isinstance(k, bool) or k < 1:
        raise UsageError(f"k must be a positive whole number, not {k!r}")
    if k > MAX_K:
        raise UsageError(f"k is at most {MAX_K:,}, not {k:,}")
    return min(k, vs.n)


def check_top(top: int | None, vs: VectorSet) -> int | None:
    """``top`` (only the N most frequent words may answer), None when it covers the whole vocabulary."""
    if top is None:
        return None
    if not isinstance(top, int) or isinstance(top, bool) or top < 1:
        raise UsageError(f"top must be a positive whole number, not {top!r}")
    return None if top >= vs.n else top


def unit_query(vec: NDArray[np.float32]) -> NDArray[np.float32]:
    q = np.ascontiguousarray(vec, dtype=np.float32)
    n = float(np.linalg.norm(q))
    return q / n if n > 0 else q


def best_of(
    vs: VectorSet, scores: NDArray[np.float32], k: int, exclude: Sequence[int] = ()
) -> tuple[NDArray[np.int64], NDArray[np.float32]]:
    """The ``k`` highest of ``scores`` (one per row, or per leading row), best first, ties by row; ``exclude`` and
    zero rows are skipped. ``scores`` is modified in place."""
    n = len(scores)
    if len(exclude):
        ex = np.asarray(exclude, dtype=np.int64)
        scores[ex[ex < n]] = -np.inf
    if len(vs.zero_rows):
        z = vs.zero_rows
        scores[z[z < n]] = -np.inf
    k = min(k, n)
    if k <= 0:
        return np.empty(0, np.int64), np.empty(0, np.float32)
    part = np.argpartition(-scores, k - 1)[:k] if k < n else np.arange(n)
    order = part[np.lexsort((part, -scores[part]))]
    order = order[np.isfinite(scores[order])]
    return order.astype(np.int64), scores[order]


def exact_top(
    vs: VectorSet, q: NDArray[np.float32], k: int, exclude: Sequence[int] = (), top: int | None = None
) -> tuple[NDArray[np.int64], NDArray[np.float32]]:
    """Rows and cosines of the ``k`` rows nearest unit vector ``q``, best first, skipping ``exclude`` and zero rows."""
    m = vs.unit if top is None else vs.unit[:top]
    return best_of(vs, m @ q, k, exclude)


def rerank(
    vs: VectorSet,
    q: NDArray[np.float32],
    cands: NDArray[np.int64],
    k: int,
    exclude: Sequence[int],
    top: int | None = None,
) -> tuple[NDArray[np.int64], NDArray[np.float32]]:
    """Exact cosines for candidate rows, best ``k`` first, skipping ``exclude``, zero rows and rows >= ``top``."""
    if len(cands) == 0:
        return cands, np.empty(0, np.float32)
    drop = np.isin(cands, np.asarray(list(exclude), dtype=np.int64))
    if len(vs.zero_rows):
        drop |= np.isin(cands, vs.zero_rows)
    if top is not None:
        drop |= cands >= top
    cands = np.unique(cands[~drop])
    scores = vs.unit[np.sort(cands)] @ q
    order = np.lexsort((cands, -scores))[:k]
    return cands[order], scores[order]


def use_ann(vs: VectorSet, ann: AnnIndex | None, mode: str) -> bool:
    if mode == "exact" or ann is None:
        return False
    if mode == "ann":
        return True
    return ann.usable and not small_set(vs.n, vs.dims) and ann.is_warm()


def top_for_vector(
    vs: VectorSet,
    q: NDArray[np.float32],
    k: int,
    exclude: Sequence[int],
    *,
    ann: AnnIndex | None = None,
    mode: str = "auto",
    top: int | None = None,
) -> tuple[NDArray[np.int64], NDArray[np.float32], str]:
    """The ``k`` best rows for unit vector ``q``; returns ``(rows, cosines, mode used)``."""
    if use_ann(vs, ann, mode):
        assert ann is not None
        want = k + len(exclude) + 10
        if top is not None:
            want = int(want * min(50.0, vs.n / top))
        cands = np.asarray(ann.candidates(q, want), dtype=np.int64)
        rows, scores = rerank(vs, q, cands, k, exclude, top)
        if len(rows) >= min(k, (top or vs.n) - len(exclude) - len(vs.zero_rows)):
            return rows, scores, "ann"
    rows, scores = exact_top(vs, q, k, exclude, top)
    return rows, scores, "exact"


def mutual(vs: VectorSet, query_row: int, rows: Sequence[int], k: int) -> list[bool]:
    """For each of ``rows``: is ``query_row`` among that row's ``k`` nearest neighbours? One pass over the matrix."""
    if not len(rows):
        return []
    r = np.asarray(rows, dtype=np.int64)
    s = np.asarray(vs.unit @ vs.unit[r].T)  # (n_words, len(rows))
    if len(vs.zero_rows):
        s[vs.zero_rows] = -np.inf
    s[r, np.arange(len(r))] = -np.inf  # a word is not its own neighbour
    t = s[query_row]
    better = np.count_nonzero(s > t[None, :], axis=0)
    return [bool(b < k) for b in better]


def rank_of(
    vs: VectorSet, q: NDArray[np.float32], target: int, exclude: Sequence[int] = (), top: int | None = None
) -> int | None:
    """1-based rank of row ``target`` among all rows by cosine to ``q`` (``exclude`` and zero rows skipped)."""
    m = vs.unit if top is None else vs.unit[:top]
    return rank_in(vs, m @ q, target, exclude, top)


def rank_in(
    vs: VectorSet, scores: NDArray[np.float32], target: int, exclude: Sequence[int] = (), top: int | None = None
) -> int | None:
    """1-based rank of row ``target`` by ``scores`` (ties by row), or None if it is excluded, zero or beyond top."""
    if target in exclude or vs.is_zero(target) or (top is not None and target >= top):
        return None
    s = scores if top is None else scores[:top]
    mask = np.ones(len(s), dtype=bool)
    mask[[e for e in exclude if e < len(s)]] = False
    if len(vs.zero_rows):
        mask[vs.zero_rows[vs.zero_rows < len(s)]] = False
    t = s[target]
    better = int(np.count_nonzero((s > t) & mask))
    ties_before = int(np.count_nonzero((s[:target] == t) & mask[:target]))
    return better + ties_before + 1
