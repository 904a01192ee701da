"""Statistics shared by the check-up of one vector set and the comparison of two: histograms, quartiles, ranks,
Spearman's rho, skewness, seeded samples of pairs, and blocked exact k-nearest-neighbour search restricted to a
set of allowed rows. Plain numpy; the tests check each against scipy."""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

from wordkin.index.progress import CancelFn, ProgressFn, check
from wordkin.index.vectors import VectorSet

#: Queries per block of the blocked search: 128 x 400k float32 scores is 200 MB.
BLOCK = 128
#: Columns sampled per block to bound each row's k-th best score (see ``knn_blocks``).
SAMPLE_COLUMNS = 8192


@dataclass(frozen=True)
class Histogram:
    """``counts[i]`` values fell in ``[edges[i], edges[i + 1])`` (the last bin includes its right edge)."""

    edges: tuple[float, ...]
    counts: tuple[int, ...]

    def to_json(self) -> dict[str, list[float] | list[int]]:
        return {"edges": list(self.edges), "counts": list(self.counts)}

    @classmethod
    def from_json(cls, d: dict[str, list[float]]) -> Histogram:
        return cls(tuple(float(x) for x in d["edges"]), tuple(int(x) for x in d["counts"]))


def histogram(
    values: NDArray[np.floating], bins: int = 20, lo: float | None = None, hi: float | None = None
) -> Histogram:
    v = np.asarray(values, dtype=np.float64)
    if len(v) == 0:
        return Histogram((0.0, 1.0), (0,))
    a = float(v.min()) if lo is None else lo
    b = float(v.max()) if hi is None else hi
    if b <= a:
        b = a + 1e-9
    counts, edges = np.histogram(v, bins=bins, range=(a, b))
    return Histogram(tuple(float(e) for e in edges), tuple(int(c) for c in counts))


def quartiles(values: NDArray[np.floating]) -> tuple[float, float, float]:
    q = np.percentile(np.asarray(values, dtype=np.float64), [25, 50, 75])
    return float(q[0]), float(q[1]), float(q[2])


def average_ranks(x: NDArray[np.floating]) -> NDArray[np.float64]:
    """Ranks 1..n, ties sharing their average rank."""
    x = np.asarray(x)
    order = np.argsort(x, kind="mergesort")
    sx = x[order]
    new = np.concatenate(([True], sx[1:] != sx[:-1]))
    group = np.cumsum(new) - 1
    starts = np.flatnonzero(new)
    ends = np.concatenate((starts[1:], [len(x)]))
    avg = (starts + ends + 1) / 2.0  # mean of 1-based ranks starts+1 .. ends
    out = np.empty(len(x), dtype=np.float64)
    out[order] = avg[group]
    return out


def spearman(x: NDArray[np.floating], y: NDArray[np.floating]) -> float | None:
    """Spearman's rho: Pearson's r of the average ranks."""
    if len(x) < 2:
        return None
    rx, ry = average_ranks(x), average_ranks(y)
    rx -= rx.mean()
    ry -= ry.mean()
    den = float(np.sqrt((rx * rx).sum() * (ry * ry).sum()))
    return float((rx * ry).sum() / den) if den > 0 else None


def skewness(x: NDArray[np.floating]) -> float:
    """The sample skewness m3 / m2^1.5 (population moments, as ``scipy.stats.skew`` with ``bias=True``)."""
    v = np.asarray(x, dtype=np.float64)
    d = v - v.mean()
    m2 = float((d * d).mean())
    m3 = float((d * d * d).mean())
    return m3 / m2**1.5 if m2 > 0 else 0.0


def sample_pairs(candidates: NDArray[np.int64], count: int, seed: int) -> NDArray[np.int64]:
    """``count`` seeded pairs ``(i, j)``, ``i != j``, drawn uniformly from ``candidates``; shape ``(count, 2)``."""
    rng = np.random.default_rng(seed)
    n = len(candidates)
    if n < 2:
        return np.empty((0, 2), dtype=np.int64)
    a = rng.integers(0, n, count)
    b = rng.integers(0, n - 1, count)
    b = b + (b >= a)  # uniform over the other n - 1
    return np.stack([candidates[a], candidates[b]], axis=1)


def knn_blocks(
    vs: VectorSet,
    queries: NDArray[np.int64],
    k: int,
    allowed: NDArray[np.bool_] | None = None,
    *,
    progress: ProgressFn | None = None,
    stage: str = "neighbours",
    cancel: CancelFn | None = None,
) -> Iterator[tuple[int, NDArray[np.int64]]]:
    """Exact k nearest neighbours of query rows, a block at a time: yields ``(offset, rows (block, k))``, best
    first. A query never answers itself; zero rows and rows not ``allowed`` never answer.

    One matrix product per block over the memory-mapped unit matrix, into one reused buffer. The top k of a row
    is found without partitioning the whole row: the k-th best score among a fixed sample of columns is a lower
    bound for the row's k-th best, so only the columns at or above it (about k x n / sample of them) are sorted.
    Exact, not an approximation: every column that can be in the top k passes the bound.
    """
    n = vs.n
    blocked = np.zeros(n, dtype=bool) if allowed is None else ~allowed
    if len(vs.zero_rows):
        blocked[vs.zero_rows] = True
    bad = np.flatnonzero(blocked)
    k = min(k, n - 1)
    unit = np.asarray(vs.unit)
    buf = np.empty((min(BLOCK, max(1, len(queries))), n), dtype=np.float32)
    open_cols = np.flatnonzero(~blocked)
    sample = np.sort(np.random.default_rng(7).choice(open_cols, min(len(open_cols), SAMPLE_COLUMNS), replace=False))
    for s in range(0, len(queries), BLOCK):
        check(cancel)
        q = queries[s : s + BLOCK]
        m = len(q)
        scores = buf[:m]
        np.dot(unit[q], unit.T, out=scores)
        if len(bad):
            scores[:, bad] = -np.inf
        scores[np.arange(m), q] = -np.inf
        rows = np.empty((m, k), dtype=np.int64)
        sub = scores[:, sample]
        # k + 1: a query's own column may be in the sample (it is -inf there), so take one more to stay a bound.
        kk = min(k + 1, sub.shape[1])
        bound = np.partition(sub, sub.shape[1] - kk, axis=1)[:, sub.shape[1] - kk]
        for i in range(m):
            row = scores[i]
            if np.isfinite(bound[i]):
                cand = np.flatnonzero(row >= bound[i])
            else:
                cand = np.flatnonzero(np.isfinite(row))
            if len(cand) < k:  # too few above the bound (many blocked columns): take the whole row
                cand = np.argpartition(row, n - k)[n - k :]
            vals = row[cand]
            top = np.argsort(-vals, kind="stable")[:k]
            rows[i] = cand[top]
        yield s, rows
        if progress is not None:
            progress(min(s + BLOCK, len(queries)), len(queries), stage)
