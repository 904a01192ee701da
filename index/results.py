"""Plain, immutable result objects. The CLI, the console, the notebook and the exports all render these."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any


@dataclass(frozen=True)
class Neighbour:
    rank: int
    word: str
    similarity: float  # exact cosine, always


@dataclass(frozen=True)
class NeighbourResult:
    """Nearest neighbours of ``query``. ``mode`` is "ann" (annoy candidates, exact re-rank) or "exact"."""

    query: str
    k: int
    mode: str
    results: tuple[Neighbour, ...]
    top: int | None = None
    elapsed_ms: float = 0.0

    def to_json(self) -> dict[str, Any]:
        return {
            "query": self.query,
            "k": self.k,
            "mode": self.mode,
            "results": [{"rank": r.rank, "word": r.word, "similarity": r.similarity} for r in self.results],
        }


@dataclass(frozen=True)
class CalcResult:
    """The words nearest an expression's vector. ``target`` is set for ``a : b :: c : d`` (where d ranks)."""

    expression: str
    method: str
    excluded: tuple[str, ...]
    results: tuple[Neighbour, ...]
    k: int
    mode: str = "exact"
    top: int | None = None
    target: str | None = None
    target_rank: int | None = None  # 1-based rank of ``target`` among all candidates, None if excluded
    target_similarity: float | None = None
    elapsed_ms: float = 0.0

    def to_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {
            "expression": self.expression,
            "method": self.method,
            "excluded": list(self.excluded),
            "results": [{"rank": r.rank, "word": r.word, "similarity": r.similarity} for r in self.results],
        }
        if self.target is not None:
            out["target"] = {
                "word": self.target,
                "rank": self.target_rank,
                "similarity": self.target_similarity,
            }
        return out


@dataclass(frozen=True)
class SimilarityResult:
    """Pairwise cosines of ``words``; ``pair_ranks[i][j]`` is the rank of word j among word i's neighbours."""

    words: tuple[str, ...]
    matrix: tuple[tuple[float, ...], ...]
    odd_one_out: str | None
    odd_scores: tuple[float, ...]  # each word's cosine to the mean of the others
    pair_ranks: tuple[tuple[int | None, ...], ...] = field(default=())
    elapsed_ms: float = 0.0

    def to_json(self) -> dict[str, Any]:
        return {
            "words": list(self.words),
            "matrix": [list(r) for r in self.matrix],
            "odd_one_out": self.odd_one_out,
            "odd_scores": list(self.odd_scores),
            "pair_ranks": [list(r) for r in self.pair_ranks],
        }
