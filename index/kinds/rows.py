"""The row of every ranked answer, and its JSON form. Each kind of query keeps its own result class in its
``kind_*`` module; they share these rows."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any


@dataclass(frozen=True)
class Neighbour:
    rank: int
    word: str
    similarity: float  # an exact cosine (or, for 3CosMul, its score), never an index's estimate


def rows_to_json(rows: tuple[Neighbour, ...]) -> list[dict[str, Any]]:
    return [{"rank": r.rank, "word": r.word, "similarity": r.similarity} for r in rows]


def rows_from_json(rows: Any) -> tuple[Neighbour, ...]:
    """Rows stored by ``rows_to_json``; ``ValueError`` when they are not."""
    if not isinstance(rows, list):
        raise ValueError("results must be a list")
    out = []
    for r in rows:
        if not isinstance(r, dict):
            raise ValueError("a result row must be an object")
        out.append(Neighbour(int(r["rank"]), str(r["word"]), float(r["similarity"])))
    return tuple(out)


def ranked(rows: tuple[Neighbour, ...]) -> list[tuple[str, int]]:
    return [(r.word, r.rank) for r in rows]


@dataclass(frozen=True)
class SubwordWord:
    """A query word that is not in the vocabulary and was built from its character n-grams (fastText)."""

    word: str
    known: int  # of its n-grams, how many the model's vocabulary has (so were trained)
    ngrams: int
    close: tuple[str, ...] = ()  # close matches in the vocabulary

    def note(self) -> str:
        out = f"≈ {self.word}: not in the vocabulary; built from its character n-grams"
        out += f" ({self.known} of {self.ngrams} known)"
        return out + (f"; close matches: {', '.join(self.close)}" if self.close else "")

    def to_json(self) -> dict[str, Any]:
        return {
            "word": self.word,
            "ngrams": {"known": self.known, "total": self.ngrams},
            "close_matches": list(self.close),
        }

    @classmethod
    def from_json(cls, d: dict[str, Any]) -> SubwordWord:
        n = d.get("ngrams", {})
        return cls(str(d["word"]), int(n.get("known", 0)), int(n.get("total", 0)), tuple(d.get("close_matches", [])))


def variant_note(typed: str, matched: str, how: str) -> str:
    return f"{typed}: not in the vocabulary as typed; answered as {matched} ({how})"
