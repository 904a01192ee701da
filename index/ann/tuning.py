"""Choosing annoy's ``search_k`` and candidate count by measurement: the smallest pair on the ladders whose
recall@10 (after the exact re-rank) reaches the target on two seeded samples, and a separate search_k for
combined vectors (analogies). No timing decides anything here: the same vectors give the same choice."""

from __future__ import annotations

import math
import time
from dataclasses import dataclass
from statistics import NormalDist
from typing import Any

import numpy as np

from wordkin.index.ann.annoy_file import (
    CANDIDATE_LADDER,
    RECALL_MARGIN,
    RECALL_SAMPLE,
    SEARCH_K_LADDER,
    TARGET_RECALL,
    AnnIndex,
    worthwhile,
)
from wordkin.index.errors import CancelledError
from wordkin.index.progress import CancelFn
from wordkin.index.search import exact_top, rerank, unit_query


@dataclass(frozen=True)
class RecallEstimate:
    """recall@k of the index after the exact re-rank, on two seeded samples of vocabulary words as queries: the
    most frequent words (file order), which people actually type, and words drawn uniformly, which are mostly rare;
    and the share of queries that lose at least one true neighbour."""

    search_k: int
    frequent: float
    random: float
    missing: float
    p50_ms: float
    candidates: int = CANDIDATE_LADDER[0]

    @property
    def worst(self) -> float:
        return min(self.frequent, self.random)


def recall_samples(vs: Any, size: int = RECALL_SAMPLE) -> tuple[np.ndarray, np.ndarray]:
    """``(frequent, random)`` query rows: the first ``size`` non-zero rows, and ``size`` drawn (seeded) from the
    rest. Deterministic given the vectors."""
    ok = np.ones(vs.n, dtype=bool)
    ok[vs.zero_rows] = False
    pool = np.flatnonzero(ok)
    frequent = pool[:size]
    rest = pool[size:]
    rng = np.random.default_rng(12345)
    random = np.sort(rng.choice(rest, size=min(size, len(rest)), replace=False)) if len(rest) else rest
    return frequent, random


def _pause(i: int) -> None:
    """Let a console's UI thread run between queries: the GIL at every query, and a millisecond of the CPU every 25
    (BLAS threads of back-to-back matrix products would otherwise keep both cores of a small machine busy)."""
    time.sleep(0.001 if i % 25 == 24 else 0)


def _truth(vs: Any, rows: np.ndarray, k: int) -> list[set[int]]:
    out = []
    for n, i in enumerate(rows):
        _pause(n)
        out.append(set(exact_top(vs, vs.unit[i], k, exclude=[int(i)])[0].tolist()))
    return out


def measure_recall(
    vs: Any,
    ann: AnnIndex,
    search_k: int,
    samples: tuple[np.ndarray, np.ndarray],
    truth: tuple[list[set[int]], ...],
    k: int = 10,
    candidates: int | None = None,
) -> RecallEstimate:
    """recall@k at ``search_k`` (and ``candidates`` re-ranked) on both samples (``truth``: each query's exact top
    k)."""
    n = candidates or ann.n_candidates or CANDIDATE_LADDER[0]
    return _measure(vs, ann, search_k, samples, truth, k, (n,))[0]


def _measure(
    vs: Any,
    ann: AnnIndex,
    search_k: int,
    samples: tuple[np.ndarray, np.ndarray],
    truth: tuple[list[set[int]], ...],
    k: int,
    counts: tuple[int, ...],
) -> list[RecallEstimate]:
    """One estimate per candidate count in ``counts``, from one annoy query per sample word (annoy returns its
    candidates best first, so each count re-ranks a prefix of the same list)."""
    want = max(max(counts), k + 11)
    hits = np.zeros((len(counts), len(samples)), dtype=np.int64)
    missing = np.zeros(len(counts), dtype=np.int64)
    times: list[float] = []
    for si, (rows, wanted) in enumerate(zip(samples, truth, strict=True)):
        for n, (i, t) in enumerate(zip(rows, wanted, strict=True)):
            _pause(n)
            q = vs.unit[i]
            t1 = time.perf_counter()
            cands = np.asarray(ann.index.get_nns_by_vector(ann.project(q), want, search_k=search_k), np.int64)
            got, _ = rerank(vs, q, cands[: counts[0]], k, [int(i)])
            times.append(time.perf_counter() - t1)
            for ci, c in enumerate(counts):
                if ci:
                    got, _ = rerank(vs, q, cands[:c], k, [int(i)])
                h = len(t.intersection(got.tolist()))
                hits[ci, si] += h
                missing[ci] += h < len(t)
    sizes = [max(1, sum(len(t) for t in w)) for w in truth]
    total = max(1, sum(len(r) for r in samples))
    p50 = float(np.median(times) * 1000) if times else 0.0
    out = []
    for ci, c in enumerate(counts):
        rec = [hits[ci, si] / sizes[si] for si in range(len(samples))]
        out.append(RecallEstimate(search_k, rec[0], rec[1] if len(rec) > 1 else rec[0], missing[ci] / total, p50, c))
    return out


def choose_search_k(vs: Any, ann: AnnIndex, *, cancel: CancelFn | None = None, k: int = 10) -> RecallEstimate:
    """The smallest ``search_k`` on the ladder, then the fewest candidates, whose recall@k clears the target on both
    samples (frequent and random words), or the best pair found. Deterministic given the vectors."""
    samples = recall_samples(vs)
    truth = (_truth(vs, samples[0], k), _truth(vs, samples[1], k))
    best: RecallEstimate | None = None
    trees = max(1, ann.index.get_n_trees())
    for sk in SEARCH_K_LADDER:
        if cancel is not None and cancel():
            raise CancelledError("cancelled")
        for est in _measure(vs, ann, sk, samples, truth, k, CANDIDATE_LADDER):
            if best is None or est.worst > best.worst:
                best = est
            if est.worst >= TARGET_RECALL + RECALL_MARGIN:
                return est
        if sk >= 2 * vs.n * trees:
            break
    assert best is not None
    return best


#: Analogy triples in the sample. A search_k is taken only when the one-sided 95% lower bound of its agreement
#: (Wilson score interval) clears the target: at most 1 of 600 answers may differ from the exact scan's. (A plain
#: 99.5% rule, 3 of 600, let through a search_k that measured 0.980 on the harness's own 400 triples at 1M words.)
CALC_SAMPLE = 600
#: z of a one-sided 95% bound.
CALC_Z = NormalDist().inv_cdf(0.95)
#: The frequent half of the triples comes from this many most frequent words.
FREQUENT_WORDS = 2000
TARGET_AGREEMENT = 0.99


def choose_calc_search_k(vs: Any, ann: AnnIndex, *, cancel: CancelFn | None = None) -> tuple[int | None, float]:
    """search_k for ``b - a + c`` vectors: the smallest multiple of ``ann.search_k`` (up to 8) whose top answer
    agrees with an exact scan on a seeded sample of triples (half of frequent words, half of any) well enough that
    the agreement's lower bound (``agreement_lower_bound``) is at least 99%. ``(None, best agreement)`` when none
    does while the index is still worth its work (``ann.worthwhile``): expressions are then answered exactly. No
    timing decides (the same vectors, the same choice)."""
    rng = np.random.default_rng(54321)
    ok = np.ones(vs.n, dtype=bool)
    ok[vs.zero_rows] = False
    pool = np.flatnonzero(ok)
    if len(pool) < 3:
        return None, 0.0
    # Half the triples from the most frequent words (file order), which analogies are mostly made of and where the
    # index is weakest (dense neighbourhoods), half from the whole vocabulary.
    frequent = pool[: max(3, min(len(pool), FREQUENT_WORDS))]
    triples = [rng.choice(frequent if i % 2 == 0 else pool, 3, replace=False) for i in range(CALC_SAMPLE)]
    queries = [unit_query(np.asarray(vs.unit[b] - vs.unit[a] + vs.unit[c], dtype=np.float32)) for a, b, c in triples]
    truth = []
    for n, ((a, b, c), q) in enumerate(zip(triples, queries, strict=True)):
        _pause(n)
        rows, _ = exact_top(vs, q, 1, [int(a), int(b), int(c)])
        truth.append(int(rows[0]) if len(rows) else -1)
    best = 0.0
    for mult in (1, 2, 4, 8):
        if cancel is not None and cancel():
            raise CancelledError("cancelled")
        sk = ann.search_k * mult
        if not worthwhile(sk, vs.n):
            # annoy would examine so much of the set, one vector at a time, that one matrix product over the whole
            # set is faster (a rule on the amount of work, measured by the harness: see ann.EXAMINE_COST_ROWS).
            break
        probe = ann.with_search(sk)
        agree = 0
        for n, ((a, b, c), q, want) in enumerate(zip(triples, queries, truth, strict=True)):
            _pause(n)
            cands = np.asarray(probe.candidates(q, 23), dtype=np.int64)
            rows, _ = rerank(vs, q, cands, 1, [int(a), int(b), int(c)])
            agree += bool(len(rows)) and int(rows[0]) == want
        frac = agree / len(triples)
        best = max(best, frac)
        if agreement_lower_bound(agree, len(triples)) >= TARGET_AGREEMENT:
            return sk, frac
    return None, best


def agreement_lower_bound(agree: int, n: int, z: float = CALC_Z) -> float:
    """Lower end of the Wilson score interval for ``agree`` successes in ``n`` trials (E. B. Wilson, 1927; the
    tests check it against scipy's ``binomtest(...).proportion_ci(method="wilson")``)."""
    if n == 0:
        return 0.0
    p = agree / n
    z2 = z * z
    centre = p + z2 / (2 * n)
    spread = z * math.sqrt(p * (1 - p) / n + z2 / (4 * n * n))
    return (centre - spread) / (1 + z2 / n)


def ann_top(vs: Any, ann: AnnIndex, q: np.ndarray, k: int, exclude: list[int]) -> tuple[np.ndarray, np.ndarray]:
    cands = ann.candidates(q, k + len(exclude) + 10)
    return rerank(vs, q, np.asarray(cands, dtype=np.int64), k, exclude)
