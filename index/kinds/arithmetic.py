"""Arithmetic: the words nearest an expression's vector, or the answer to an analogy ``a : b :: c : ?``.

Options: ``method`` (``add``: 3CosAdd, Mikolov et al. 2013; ``mul``: 3CosMul, Levy and Goldberg 2014), ``k``,
``top``, ``keep_inputs`` (do not exclude the expression's own words, which published evaluations exclude) and
``exact``. The grammar is in ``expr``; the vector arithmetic in ``analogy``.
"""

from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Any, ClassVar

from wordkin.index.analogy import EPSILON, as_expression, mul_scores, mul_top, vector_of
from wordkin.index.errors import UsageError
from wordkin.index.expressions import Analogy, parse, quote_word, signed_words, to_text, words_of
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
from wordkin.index.kinds.rows import Neighbour, SubwordWord, ranked, rows_from_json, rows_to_json, variant_note
from wordkin.index.search import check_k, check_top, rank_in, rank_of, top_for_vector, unit_query
from wordkin.index.session import Session

METHODS = ("add", "mul")


@dataclass(frozen=True)
class CalcResult(Result):
    """The answer to ``query``; ``target`` is set for ``a : b :: c : d`` (where ``d`` ranks)."""

    query: Arithmetic
    expression: str  # canonical text of the parsed expression
    mode: str
    rows: tuple[Neighbour, ...]
    k: int
    excluded: tuple[str, ...] = ()
    target: str | None = None
    target_rank: int | None = None  # 1-based rank of ``target`` among all candidates, None if excluded
    target_similarity: float | None = None
    elapsed_ms: float = 0.0
    subwords: tuple[SubwordWord, ...] = ()  # input words a fastText model built from their n-grams
    #: words answered by a variant: (as typed, the vocabulary word, how) — see ``VectorSet.find_variant``
    variants: tuple[tuple[str, str, str], ...] = ()

    @property
    def score_label(self) -> str:
        return "cosine" if self.query.method == "add" else "3CosMul"

    def to_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {
            "expression": self.expression,
            "method": self.query.method,
            "k": self.k,
            "mode": self.mode,
            "excluded": list(self.excluded),
            "options": self.query.to_json(),
            "query_vector": "subwords" if self.subwords else "vocabulary",
            "variants": [list(v) for v in self.variants],
            "results": rows_to_json(self.rows),
        }
        if self.subwords:
            out["subwords"] = [s.to_json() for s in self.subwords]
        if self.target is not None:
            out["target"] = {"word": self.target, "rank": self.target_rank, "similarity": self.target_similarity}
        return out

    @classmethod
    def from_json(cls, d: dict[str, Any], query: Query) -> CalcResult:
        assert isinstance(query, Arithmetic)
        t = d.get("target") or {}
        return cls(
            query,
            str(d["expression"]),
            str(d["mode"]),
            rows_from_json(d["results"]),
            int(d["k"]),
            tuple(str(w) for w in d.get("excluded", [])),
            t.get("word"),
            t.get("rank"),
            t.get("similarity"),
            variants=tuple(tuple(v) for v in d.get("variants", [])),
            subwords=tuple(SubwordWord.from_json(x) for x in d.get("subwords", [])),
        )

    def table(self) -> Table:
        return Table(
            ("rank", "word", self.score_label),
            tuple((r.rank, r.word, r.similarity) for r in self.rows),
            (True, False, True),
        )

    def notes(self) -> list[str]:
        out = [s.note() for s in self.subwords]
        out += [variant_note(*v) for v in self.variants]
        if self.excluded:
            out.append("excluded: " + ", ".join(self.excluded))
        if self.target is not None:
            if self.target_rank is None:
                out.append(f"expected answer {self.target}: not ranked (one of the excluded words)")
            else:
                out.append(
                    f"expected answer {self.target}: rank {self.target_rank}, score {self.target_similarity:.3f}"
                )
        return out

    def diff(self, newer: Result) -> Diff:
        assert isinstance(newer, CalcResult)
        return rank_diff(ranked(self.rows), ranked(newer.rows))


@register
@dataclass(frozen=True)
class Arithmetic(Query):
    """Words nearest ``expression`` (see ``expr`` for the grammar)."""

    kind: ClassVar[str] = "arithmetic"
    result_class: ClassVar[type[Any]] = CalcResult

    expression: str = input_field(metavar="EXPR")
    k: int = option_field((3, 10), default=10, flag="-k", label="k", positive=True, help="how many answers")
    method: str = option_field(
        METHODS,
        default="add",
        flag="--method",
        label="method",
        allowed=METHODS,
        names={"add": "3CosAdd", "mul": "3CosMul"},
        help="3CosAdd (add) or 3CosMul (mul)",
    )
    top: int | None = top_option((None, 60), "answers")
    keep_inputs: bool = option_field(
        (False, True),
        default=False,
        flag="--keep-inputs",
        label="keep inputs",
        help="do not exclude the expression's words",
    )
    exact: bool = exact_search_option()
    subwords: bool = subwords_option()
    exact_word: bool = exact_word_option()

    def title(self) -> str:
        return self.expression

    @classmethod
    def example(cls, words: list[str]) -> Arithmetic:
        a, b, c = (quote_word(w) for w in words[3:6])
        return cls(f"{a} : {b} :: {c} : ?")

    def run(self, session: Session, *, epsilon: float = EPSILON) -> CalcResult:
        """``epsilon`` is 3CosMul's (the paper's 0.001; gensim's ``most_similar_cosmul`` uses 1e-6)."""
        t0 = time.perf_counter()
        vs = session.vectors
        if self.method not in METHODS:
            raise UsageError(f"the method is add (3CosAdd) or mul (3CosMul), not {self.method!r}")
        tree = parse(self.expression)
        k = check_k(self.k, vs)
        top = check_top(self.top, vs)
        words = words_of(tree)
        # Unknown words fail here with close matches, or (fastText models) are built from their n-grams.
        found_words = {w: vs.word_vector(w, subwords=self.subwords, variants=not self.exact_word) for w in words}
        rows = [wv.row for wv in found_words.values() if wv.row is not None]
        exclude = [] if self.keep_inputs else rows
        target = tree.d.text if isinstance(tree, Analogy) and tree.d is not None else None
        # The expected answer ranks among vocabulary words, so it must be one (UnknownWordError otherwise).
        target_row = vs.row(target) if target is not None else None
        expr = as_expression(tree)
        ann = session.ann(self.exact)
        # Combined vectors use their own measured search_k, or an exact scan where the index is not good enough.
        ann = ann.for_expressions() if ann is not None else None
        mode = "exact" if self.exact else "auto"
        q = unit_query(vector_of(expr, lambda w: found_words[w].vector, vs.dims))
        t_rank = None
        t_sim = None
        if self.method == "add":
            top_rows, scores, used = top_for_vector(vs, q, k, exclude, ann=ann, mode=mode, top=top)
            if target_row is not None:
                t_rank = rank_of(vs, q, target_row, exclude, top)
                t_sim = float(vs.unit[target_row] @ q)
        else:
            sw = signed_words(expr)
            if sw is None:
                raise UsageError("3CosMul takes unweighted + and - words only (no weights, groups or centroids)")
            pos = [found_words[w].vector for w in sw[0]]
            neg = [found_words[w].vector for w in sw[1]]
            top_rows, scores, used = mul_top(vs, q, pos, neg, k, exclude, top, ann, mode, epsilon)
            if target_row is not None:
                all_scores = mul_scores(vs, pos, neg, epsilon=epsilon)
                t_sim = float(all_scores[target_row])
                t_rank = rank_in(vs, all_scores, target_row, exclude, top)
        found = tuple(
            Neighbour(i + 1, vs.words[int(r)], float(s)) for i, (r, s) in enumerate(zip(top_rows, scores, strict=True))
        )
        from_subwords = tuple(
            SubwordWord(w, wv.known, wv.ngrams, wv.close) for w, wv in found_words.items() if wv.source == "subwords"
        )
        return CalcResult(
            self,
            to_text(tree),
            used,
            found,
            k,
            tuple(words) if not self.keep_inputs else (),
            target,
            t_rank,
            t_sim,
            (time.perf_counter() - t0) * 1000,
            from_subwords,
            tuple((w, wv.matched, wv.form) for w, wv in found_words.items() if wv.form),
        )
