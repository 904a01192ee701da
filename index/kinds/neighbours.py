"""Neighbours: the ``k`` words nearest one word by cosine, with the query-side filters.

Options: ``top`` (only the N most frequent words may answer), ``hide_forms`` (drop answers that are forms of the
query word, see ``forms``), ``fold_case`` (look the word up case-insensitively: ``Harbour`` answers as
``harbour``) and ``exact`` (scan every row instead of asking the index).
"""

from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Any, ClassVar

import numpy as np

from wordkin.index.forms import is_form_of
from wordkin.index.kinds.base import (
    Diff,
    Query,
    Result,
    Table,
    exact_search_option,
    exact_word_option,
    input_field,
    option_field,
    rank_diff,
    register,
    subwords_option,
    top_option,
)
from wordkin.index.kinds.rows import Neighbour, SubwordWord, ranked, rows_from_json, rows_to_json
from wordkin.index.search import check_k, check_top, top_for_vector
from wordkin.index.session import Session


@dataclass(frozen=True)
class NeighbourResult(Result):
    """The answer to ``query``: ``word`` is the vocabulary word that answered (it differs with ``fold_case``)."""

    query: Neighbours
    word: str
    mode: str
    rows: tuple[Neighbour, ...]
    k: int
    elapsed_ms: float = 0.0
    #: Set when the word is not in the vocabulary and a fastText model built it from its character n-grams.
    subword: SubwordWord | None = None

    def to_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {
            "query": self.query.word,
            "word": self.word,
            "k": self.k,
            "mode": self.mode,
            "options": self.query.to_json(),
            "query_vector": "subwords" if self.subword else "vocabulary",
            "results": rows_to_json(self.rows),
        }
        if self.subword is not None:
            out["subwords"] = self.subword.to_json()
        return out

    @classmethod
    def from_json(cls, d: dict[str, Any], query: Query) -> NeighbourResult:
        assert isinstance(query, Neighbours)
        sw = d.get("subwords")
        return cls(
            query,
            str(d["word"]),
            str(d["mode"]),
            rows_from_json(d["results"]),
            int(d["k"]),
            subword=SubwordWord.from_json(sw) if isinstance(sw, dict) else None,
        )

    def table(self) -> Table:
        return Table(
            ("rank", "word", "cosine"),
            tuple((r.rank, r.word, r.similarity) for r in self.rows),
            (True, False, True),
        )

    def notes(self) -> list[str]:
        out = [self.subword.note()] if self.subword is not None else []
        if self.word != self.query.word and self.subword is None:
            how = "fold case" if self.query.fold_case else "a variant: NFC, case or spaces as _"
            out.append(f"{self.query.word}: answered as {self.word} ({how})")
        if not self.rows:
            out.append("no neighbours: the word's vector is all zeros")
        return out

    def diff(self, newer: Result) -> Diff:
        assert isinstance(newer, NeighbourResult)
        return rank_diff(ranked(self.rows), ranked(newer.rows))


@register
@dataclass(frozen=True)
class Neighbours(Query):
    """The ``k`` nearest neighbours of ``word``."""

    kind: ClassVar[str] = "neighbours"
    result_class: ClassVar[type[Any]] = NeighbourResult

    word: str = input_field(metavar="WORD")
    k: int = option_field((3, 10), default=10, flag="-k", label="k", positive=True, help="how many neighbours")
    top: int | None = top_option((None, 60), "answers")
    hide_forms: bool = option_field(
        (False, True),
        default=False,
        flag="--hide-forms",
        label="hide forms",
        help="drop answers that contain the word or are contained in it",
    )
    fold_case: bool = option_field(
        (False, True), default=False, flag="--fold-case", label="fold case", help="look the word up case-insensitively"
    )
    exact: bool = exact_search_option()
    subwords: bool = subwords_option()
    exact_word: bool = exact_word_option()

    def title(self) -> str:
        return f"neighbours of {self.word}"

    @classmethod
    def example(cls, words: list[str]) -> Neighbours:
        return cls(words[min(5, len(words) - 1)])

    def run(self, session: Session) -> NeighbourResult:
        t0 = time.perf_counter()
        vs = session.vectors
        k = check_k(self.k, vs)
        top = check_top(self.top, vs)
        r = vs.find_folded(self.word) if self.fold_case else vs.find(self.word)
        subword = None
        if r is None:
            # Not as typed: a variant (NFC, case, spaces as _), built from its n-grams (fastText), or
            # UnknownWordError with close matches.
            wv = vs.word_vector(self.word, subwords=self.subwords, variants=not self.exact_word)
            if wv.row is not None:
                r = wv.row
            else:
                q, word, exclude = wv.vector, self.word, []
                subword = SubwordWord(wv.word, wv.known, wv.ngrams, wv.close)
        if subword is None:
            assert r is not None
            if vs.is_zero(r):
                return NeighbourResult(self, vs.words[r], "exact", (), k, (time.perf_counter() - t0) * 1000)
            q, word, exclude = np.asarray(vs.unit[r], dtype=np.float32), vs.words[r], [r]
        ann = session.ann(self.exact)
        mode = "exact" if self.exact else "auto"
        limit = (top or vs.n) - len(exclude)
        want = k + (20 if self.hide_forms else 0)
        while True:
            rows, scores, used = top_for_vector(vs, q, min(want, max(1, limit)), exclude, ann=ann, mode=mode, top=top)
            pairs = [(int(i), float(s)) for i, s in zip(rows, scores, strict=True)]
            if self.hide_forms:
                pairs = [(i, s) for i, s in pairs if not is_form_of(vs.words[i], [word])]
            if len(pairs) >= k or want >= limit:
                break
            want = min(limit, want * 4)
        found = tuple(Neighbour(n + 1, vs.words[i], s) for n, (i, s) in enumerate(pairs[:k]))
        return NeighbourResult(self, word, used, found, k, (time.perf_counter() - t0) * 1000, subword)
