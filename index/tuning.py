"""Choosing annoy's ``search_k`` by measurement: the smallest value on a ladder whose recall@10 (after the exact
re-rank) reaches the target on a seeded sample, and a separate value for combined vectors (analogies)."""

from __future__ import annotations

import time
from typing import Any

import numpy as np

from .ann import RECALL_MARGIN, RECALL_SAMPLE, SEARCH_K_LADDER, TARGET_RECALL, AnnIndex
from .errors import CancelledError
from .progress import CancelFn
from .search import exact_top, rerank, unit_query


def choose_search_k(vs: Any, idx: Any, *, cancel: CancelFn | None = None, k: int = 10) -> tuple[int, float, float]:
    """Smallest ``search_k`` on the ladder whose recall@k (after exact re-rank) reaches the target.

    Recall is measured on a seeded sample of non-zero rows as queries, against the exact top-k that excludes the
    query itself. Returns ``(search_k, recall, p50 query ms)``.
    """
    rng = np.random.default_rng(12345)
    ok = np.ones(vs.n, dtype=bool)
    ok[vs.zero_rows] = False
    pool = np.flatnonzero(ok)
    sample = rng.choice(pool, size=min(RECALL_SAMPLE, len(pool)), replace=False)
    truth = []
    for i in sample:
        time.sleep(0)
        truth.append(set(exact_top(vs, vs.unit[i], k, exclude=[int(i)])[0].tolist()))
    best = (SEARCH_K_LADDER[-1], 0.0, 0.0)
    for sk in SEARCH_K_LADDER:
        if cancel is not None and cancel():
            raise CancelledError("cancelled")
        ann = AnnIndex(idx, 0, sk, 1.0, None)
        hits = 0
        times = []
        for i, t in zip(sample, truth, strict=True):
            time.sleep(0)  # let a console's UI thread run between samples
            t1 = time.perf_counter()
            rows, _ = ann_top(vs, ann, vs.unit[i], k, exclude=[int(i)])
            times.append(time.perf_counter() - t1)
            hits += len(t.intersection(rows.tolist()))
        recall = hits / (k * len(sample))
        p50 = float(np.median(times) * 1000)
        if recall > best[1]:
            best = (sk, recall, p50)
        if recall >= TARGET_RECALL + RECALL_MARGIN:
            return sk, recall, p50
        if sk >= 2 * vs.n * max(1, idx.get_n_trees()):
            break
    return best


CALC_SAMPLE = 150
TARGET_AGREEMENT = 0.99


def choose_calc_search_k(
    vs: Any, idx: Any, search_k: int, *, cancel: CancelFn | None = None
) -> tuple[int | None, float]:
    """search_k for ``b - a + c`` vectors: the smallest multiple of ``search_k`` whose top answer agrees with an
    exact scan on a seeded sample of random triples at least 99% of the time and is still faster than the scan.
    ``(None, best agreement)`` when no multiple qualifies: expressions are then answered exactly."""
    rng = np.random.default_rng(54321)
    ok = np.ones(vs.n, dtype=bool)
    ok[vs.zero_rows] = False
    pool = np.flatnonzero(ok)
    if len(pool) < 3:
        return None, 0.0
    triples = [rng.choice(pool, 3, replace=False) for _ in range(CALC_SAMPLE)]
    queries = [unit_query(np.asarray(vs.unit[b] - vs.unit[a] + vs.unit[c], dtype=np.float32)) for a, b, c in triples]
    truth, t_exact = [], []
    for (a, b, c), q in zip(triples, queries, strict=True):
        time.sleep(0)
        t0 = time.perf_counter()
        rows, _ = exact_top(vs, q, 1, [int(a), int(b), int(c)])
        t_exact.append(time.perf_counter() - t0)
        truth.append(int(rows[0]) if len(rows) else -1)
    exact_ms = float(np.median(t_exact))
    best = 0.0
    for mult in (1, 2, 4, 8):
        if cancel is not None and cancel():
            raise CancelledError("cancelled")
        sk = search_k * mult
        agree, times = 0, []
        for (a, b, c), q, want in zip(triples, queries, truth, strict=True):
            time.sleep(0)
            t0 = time.perf_counter()
            cands = np.asarray(idx.get_nns_by_vector(q, 23, search_k=sk), dtype=np.int64)
            rows, _ = rerank(vs, q, cands, 1, [int(a), int(b), int(c)])
            times.append(time.perf_counter() - t0)
            agree += bool(len(rows)) and int(rows[0]) == want
        frac = agree / len(triples)
        best = max(best, frac)
        if float(np.median(times)) >= exact_ms:
            break
        if frac >= TARGET_AGREEMENT:
            return sk, frac
    return None, best


def ann_top(vs: Any, ann: AnnIndex, q: np.ndarray, k: int, exclude: list[int]) -> tuple[np.ndarray, np.ndarray]:
    cands = ann.candidates(q, k + len(exclude) + 10)
    return rerank(vs, q, np.asarray(cands, dtype=np.int64), k, exclude)
