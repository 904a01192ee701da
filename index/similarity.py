"""Pairwise similarity of a word list: the cosine matrix, the odd one out and each pair's neighbour rank."""

from __future__ import annotations

import time

import numpy as np

from .errors import UsageError
from .results import SimilarityResult
from .store import VectorSet

MAX_WORDS = 500


def similarity(vs: VectorSet, words: list[str], *, ranks: bool = True) -> SimilarityResult:
    """Cosines between ``words``; the odd one out is the word least similar to the mean of the others.

    ``pair_ranks[i][j]`` is where word j ranks among word i's neighbours (1 = nearest; the word itself and zero
    rows are not counted), the curator's question "is b in a's top 50?".
    """
    t0 = time.perf_counter()
    if len(words) < 2:
        raise UsageError("give at least two words to compare")
    if len(words) > MAX_WORDS:
        raise UsageError(f"at most {MAX_WORDS} words can be compared at once, not {len(words)}")
    seen: set[str] = set()
    for w in words:
        if w in seen:
            raise UsageError(f"{w!r} is listed twice")
        seen.add(w)
    rows = [vs.row(w) for w in words]
    m = np.asarray(vs.unit[rows], dtype=np.float32)
    mat = m @ m.T
    odd: str | None = None
    odd_scores: list[float] = []
    if len(words) >= 3:
        total = m.sum(axis=0)
        for i in range(len(words)):
            others = (total - m[i]) / (len(words) - 1)
            nrm = float(np.linalg.norm(others))
            odd_scores.append(float(m[i] @ others / nrm) if nrm > 0 else 0.0)
        odd = words[int(np.argmin(odd_scores))]
    pair_ranks: list[list[int | None]] = []
    if ranks:
        scores = np.asarray(vs.unit @ m.T)  # (n_words, len(words)): one product for every list word at once
        if len(vs.zero_rows):
            scores[vs.zero_rows] = -np.inf
        for i, ri in enumerate(rows):
            col = scores[:, i].copy()
            col[ri] = -np.inf
            row_ranks: list[int | None] = []
            for j, rj in enumerate(rows):
                if i == j or vs.is_zero(rj) or vs.is_zero(ri):
                    row_ranks.append(None)
                    continue
                t = col[rj]
                row_ranks.append(int(np.count_nonzero(col > t)) + int(np.count_nonzero(col[:rj] == t)) + 1)
            pair_ranks.append(row_ranks)
    return SimilarityResult(
        words=tuple(words),
        matrix=tuple(tuple(float(x) for x in r) for r in mat),
        odd_one_out=odd,
        odd_scores=tuple(odd_scores),
        pair_ranks=tuple(tuple(r) for r in pair_ranks),
        elapsed_ms=(time.perf_counter() - t0) * 1000,
    )
