"""Similarity: the pairwise cosines of a word list, the odd one out, and where each word ranks among the
neighbours of each other word ("is ``inn`` in ``hotel``'s top 50?")."""

from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Any, ClassVar

import numpy as np

from wordkin.index.errors import UsageError
from wordkin.index.kinds.base import (
    Diff,
    Query,
    Result,
    Table,
    exact_word_option,
    input_field,
    register,
    subwords_option,
)
from wordkin.index.kinds.rows import SubwordWord, variant_note
from wordkin.index.session import Session

MAX_WORDS = 500


@dataclass(frozen=True)
class SimilarityResult(Result):
    """``matrix[i][j]``: cosine of words i and j; ``pair_ranks[i][j]``: rank of word j among word i's neighbours."""

    query: Similarity
    words: tuple[str, ...]
    matrix: tuple[tuple[float, ...], ...]
    odd_one_out: str | None
    odd_scores: tuple[float, ...]  # each word's cosine to the mean of the others
    pair_ranks: tuple[tuple[int | None, ...], ...] = ()
    elapsed_ms: float = 0.0
    mode: str = "exact"
    subwords: tuple[SubwordWord, ...] = ()  # words a fastText model built from their n-grams
    #: words answered by a variant: (as typed, the vocabulary word, how) — see ``VectorSet.find_variant``
    variants: tuple[tuple[str, str, str], ...] = ()

    def to_json(self) -> dict[str, Any]:
        return {
            "words": list(self.words),
            "matrix": [list(r) for r in self.matrix],
            "odd_one_out": self.odd_one_out,
            "odd_scores": list(self.odd_scores),
            "pair_ranks": [list(r) for r in self.pair_ranks],
            "options": self.query.to_json(),
            "query_vector": "subwords" if self.subwords else "vocabulary",
            "variants": [list(v) for v in self.variants],
            "subwords": [s.to_json() for s in self.subwords],
        }

    @classmethod
    def from_json(cls, d: dict[str, Any], query: Query) -> SimilarityResult:
        assert isinstance(query, Similarity)
        return cls(
            query,
            tuple(str(w) for w in d["words"]),
            tuple(tuple(float(x) for x in r) for r in d["matrix"]),
            d.get("odd_one_out"),
            tuple(float(x) for x in d.get("odd_scores", [])),
            tuple(tuple(None if x is None else int(x) for x in r) for r in d.get("pair_ranks", [])),
            variants=tuple(tuple(v) for v in d.get("variants", [])),
            subwords=tuple(SubwordWord.from_json(x) for x in d.get("subwords", [])),
        )

    def table(self) -> Table:
        return Table(
            ("", *self.words),
            tuple((w, *row) for w, row in zip(self.words, self.matrix, strict=True)),
            (False, *([True] * len(self.words))),
        )

    def tables(self) -> list[tuple[str, Table]]:
        out = [("", self.table())]
        if self.pair_ranks:
            ranks = Table(
                ("", *self.words),
                tuple((w, *row) for w, row in zip(self.words, self.pair_ranks, strict=True)),
                (False, *([True] * len(self.words))),
            )
            out.append(("neighbour ranks (where the column word ranks among the row word's neighbours):", ranks))
        return out

    def notes(self) -> list[str]:
        out = [s.note() for s in self.subwords]
        out += [variant_note(*v) for v in self.variants]
        if self.odd_one_out is None:
            return out
        i = self.words.index(self.odd_one_out)
        return out + [f"odd one out: {self.odd_one_out} (cosine {self.odd_scores[i]:.3f} to the mean of the others)"]

    def records(self) -> list[dict[str, Any]]:
        out: list[dict[str, Any]] = []
        for i, a in enumerate(self.words):
            for j, b in enumerate(self.words):
                if i < j:
                    out.append({"word": a, "other_word": b, "cosine": self.matrix[i][j]})
        return out

    def diff(self, newer: Result, tolerance: float = 5e-4) -> Diff:
        assert isinstance(newer, SimilarityResult)
        cells = []
        same = 0
        for i, a in enumerate(self.words):
            for j, b in enumerate(self.words):
                if i < j:
                    o, n = self.matrix[i][j], newer.matrix[i][j]
                    if abs(o - n) > tolerance:
                        cells.append((a, b, o, n))
                    else:
                        same += 1
        return Diff(cells=tuple(cells), same=same)


@register
@dataclass(frozen=True)
class Similarity(Query):
    """Pairwise cosines of ``words`` (2 to 500 different words)."""

    kind: ClassVar[str] = "similarity"
    result_class: ClassVar[type[Any]] = SimilarityResult

    words: tuple[str, ...] = input_field(metavar="WORD")
    subwords: bool = subwords_option()
    exact_word: bool = exact_word_option()

    def title(self) -> str:
        return "similarity of " + ", ".join(self.words)

    @classmethod
    def example(cls, words: list[str]) -> Similarity:
        return cls(tuple(words[2:6]))

    def run(self, session: Session, *, ranks: bool = True) -> SimilarityResult:
        """The odd one out is the word least similar to the mean of the others (3 words or more)."""
        vs = session.vectors
        words = list(self.words)
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
        # Unknown words: a variant, n-grams (fastText) or close matches.
        found = [vs.word_vector(w, subwords=self.subwords, variants=not self.exact_word) for w in words]
        rows: list[int | None] = [wv.row for wv in found]
        m = np.stack([wv.vector for wv in found]).astype(np.float32)
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
                if ri is not None:
                    col[ri] = -np.inf
                row_ranks: list[int | None] = []
                for j, rj in enumerate(rows):
                    # A word built from n-grams has no row: nothing ranks it among a word's neighbours.
                    if i == j or rj is None or vs.is_zero(rj) or (ri is not None and vs.is_zero(ri)):
                        row_ranks.append(None)
                        continue
                    t = col[rj]
                    row_ranks.append(int(np.count_nonzero(col > t)) + int(np.count_nonzero(col[:rj] == t)) + 1)
                pair_ranks.append(row_ranks)
        return SimilarityResult(
            self,
            tuple(words),
            tuple(tuple(float(x) for x in r) for r in mat),
            odd,
            tuple(odd_scores),
            tuple(tuple(r) for r in pair_ranks),
            (time.perf_counter() - t0) * 1000,
            subwords=tuple(SubwordWord(wv.word, wv.known, wv.ngrams, wv.close) for wv in found if wv.row is None),
            variants=tuple((wv.word, wv.matched, wv.form) for wv in found if wv.form),
        )
