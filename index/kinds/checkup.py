"""Check-up of one vector set before it ships: vocabulary, norms, anisotropy, hubness and benchmarks.

- Vocabulary: words, dims, duplicates dropped at load, all-zero rows, words that differ only by case, tokens that
  are not words (punctuation only, digits only, markup-looking), the longest word.
- Norms: minimum, quartiles, maximum, and Spearman's rho of norm against frequency rank (file order).
- Anisotropy: the mean cosine of seeded random pairs of words (Ethayarajh 2019 measures it for contextual models;
  for a static set a clearly positive mean flags a direction that all vectors share).
- Hubness: the skewness of the k-occurrence distribution N_k (how often each word is among the k = 10 nearest
  neighbours of the others; Radovanović, Nanopoulos & Ivanović 2010), with every word as a query up to 50,000
  words and a seeded sample of 10,000 queries above that, and the strongest hubs.
- Benchmarks: each pair and analogy file scored as ``wordkin score`` does, with its coverage.
"""

from __future__ import annotations

import re
import time
from dataclasses import dataclass
from typing import Any, ClassVar

import numpy as np

from wordkin.index.kinds.base import (
    Diff,
    Query,
    Result,
    Table,
    option_field,
    register,
)
from wordkin.index.progress import CancelFn, ProgressFn
from wordkin.index.session import Session
from wordkin.index.statistics import Histogram, histogram, knn_blocks, quartiles, sample_pairs, skewness, spearman

ALL_QUERIES_UP_TO = 50_000
QUERY_SAMPLE = 10_000
PAIR_SAMPLE = 10_000
SEED = 2026
HUBS = 20
EXAMPLES = 8

_PUNCT = re.compile(r"^[\W_]+$")
_DIGITS = re.compile(r"^[+-]?\d+([.,:/-]\d+)*$")
_MARKUP = re.compile(r"^<[^>]*>$|&[a-zA-Z]+;|&#\d+;|^\[\[|\]\]$|^\{\{|\}\}$|https?://|^www\.|\.(com|org|net)$")


@dataclass(frozen=True)
class CheckupResult(Result):
    query: Checkup
    mode: str
    words: int
    dims: int
    duplicates: int
    zero_rows: int
    case_groups: int
    case_examples: tuple[tuple[str, ...], ...]
    non_words: dict[str, Any]  # kind -> {"count", "examples"}
    longest: str
    norms: dict[str, float | None]  # min, q1, median, q3, max, spearman_rank
    norm_histogram: Histogram
    anisotropy: float
    anisotropy_pairs: int
    hubness: dict[str, Any]  # k, skewness, queries, sampled, hubs [{"word", "n_k"}]
    nk_histogram: Histogram
    benchmarks: tuple[dict[str, Any], ...]
    elapsed_ms: float = 0.0

    def to_json(self) -> dict[str, Any]:
        return {
            "words": self.words,
            "dims": self.dims,
            "duplicates": self.duplicates,
            "zero_rows": self.zero_rows,
            "case_variants": {"groups": self.case_groups, "examples": [list(g) for g in self.case_examples]},
            "non_words": self.non_words,
            "longest_word": self.longest,
            "anisotropy": self.anisotropy,
            "anisotropy_pairs": self.anisotropy_pairs,
            "norms": {**self.norms, "histogram": self.norm_histogram.to_json()},
            "hubness": {**self.hubness, "histogram": self.nk_histogram.to_json()},
            "benchmarks": list(self.benchmarks),
            "options": self.query.to_json(),
        }

    @classmethod
    def from_json(cls, d: dict[str, Any], query: Query) -> CheckupResult:
        assert isinstance(query, Checkup)
        norms = {k: v for k, v in d["norms"].items() if k != "histogram"}
        hub = {k: v for k, v in d["hubness"].items() if k != "histogram"}
        return cls(
            query,
            "exact",
            int(d["words"]),
            int(d["dims"]),
            int(d["duplicates"]),
            int(d["zero_rows"]),
            int(d["case_variants"]["groups"]),
            tuple(tuple(g) for g in d["case_variants"]["examples"]),
            dict(d["non_words"]),
            str(d["longest_word"]),
            norms,
            Histogram.from_json(d["norms"]["histogram"]),
            float(d["anisotropy"]),
            int(d["anisotropy_pairs"]),
            hub,
            Histogram.from_json(d["hubness"]["histogram"]),
            tuple(d["benchmarks"]),
        )

    def table(self) -> Table:
        n = self.norms
        rows: list[tuple[str, Any]] = [
            ("words", self.words),
            ("dimensions", self.dims),
            ("duplicates dropped", self.duplicates),
            ("all-zero vectors", self.zero_rows),
            ("case-variant groups", self.case_groups),
            *((f"{k} tokens", v["count"]) for k, v in self.non_words.items()),
            ("longest word (characters)", len(self.longest)),
            ("norm min / median / max", f"{n['min']:.3f} / {n['median']:.3f} / {n['max']:.3f}"),
            ("norm quartiles", f"{n['q1']:.3f} / {n['median']:.3f} / {n['q3']:.3f}"),
            (
                "Spearman rho, norm vs frequency rank",
                "-" if n["spearman_rank"] is None else f"{n['spearman_rank']:.3f}",
            ),
            (f"anisotropy (mean cosine, {self.anisotropy_pairs:,} random pairs)", f"{self.anisotropy:.4f}"),
            (f"hubness: skewness of N_{self.hubness['k']}", f"{self.hubness['skewness']:.3f}"),
        ]
        for b in self.benchmarks:
            rows.append((f"benchmark {b['name']}", b["summary"]))
        return Table(("measure", "value"), tuple(rows), (False, True))

    def histograms(self) -> list[tuple[str, Any]]:
        return [
            ("vector norms", self.norm_histogram),
            (
                f"N_{self.hubness['k']}: how often a word is among the others' {self.hubness['k']} nearest",
                self.nk_histogram,
            ),
        ]

    def notes(self) -> list[str]:
        out = []
        if self.case_examples:
            out.append("case variants, most frequent first: " + "; ".join(" ".join(g) for g in self.case_examples))
        for kind, v in self.non_words.items():
            if v["examples"]:
                out.append(f"{kind} tokens, e.g.: " + " ".join(v["examples"]))
        hubs = ", ".join(f"{h['word']} ({h['n_k']})" for h in self.hubness["hubs"][:10])
        how = f"a seeded sample of {self.hubness['queries']:,} queries" if self.hubness["sampled"] else "every word"
        out.append(f"strongest hubs (N_{self.hubness['k']} over {how}): {hubs}")
        out.append(f"longest word: {self.longest}")
        return out

    def diff(self, newer: Result) -> Diff:
        assert isinstance(newer, CheckupResult)
        cells = []
        for name, a, b in (
            ("anisotropy", self.anisotropy, newer.anisotropy),
            ("hubness skewness", self.hubness["skewness"], newer.hubness["skewness"]),
        ):
            if abs(a - b) > 5e-4:
                cells.append((name, "", a, b))
        return Diff(cells=tuple(cells), same=2 - len(cells))


@register
@dataclass(frozen=True)
class Checkup(Query):
    """A check-up of the open vector set (and the benchmark files given)."""

    kind: ClassVar[str] = "checkup"
    result_class: ClassVar[type[Any]] = CheckupResult

    pairs: tuple[str, ...] = ()
    analogies: tuple[str, ...] = ()
    k: int = option_field((10, 5), default=10, flag="-k", label="k", help="neighbours counted for hubness")

    def title(self) -> str:
        return "check-up"

    @classmethod
    def example(cls, words: list[str]) -> Checkup:
        return cls()

    def options(self) -> list[str]:
        return super().options() + [f"pairs {p}" for p in self.pairs] + [f"analogies {a}" for a in self.analogies]

    def run(
        self, session: Session, *, progress: ProgressFn | None = None, cancel: CancelFn | None = None
    ) -> CheckupResult:
        from wordkin.index.errors import UsageError

        t0 = time.perf_counter()
        vs = session.vectors
        if not 1 <= self.k <= 100:
            raise UsageError(f"k is between 1 and 100 for the check-up, not {self.k}")
        if vs.n < 3:
            raise UsageError("a check-up needs at least three words")
        words = vs.words
        # Vocabulary.
        groups: dict[str, list[int]] = {}
        for i, w in enumerate(words):
            groups.setdefault(w.casefold(), []).append(i)
        multi = [g for g in groups.values() if len(g) > 1]
        multi.sort(key=lambda g: g[0])
        case_examples = tuple(tuple(words[i] for i in g) for g in multi[:EXAMPLES])
        non_words: dict[str, Any] = {}
        for kind, rx in (("punctuation-only", _PUNCT), ("digits-only", _DIGITS), ("markup-looking", _MARKUP)):
            hits = [w for w in words if w and rx.search(w)]
            non_words[kind] = {"count": len(hits), "examples": hits[:EXAMPLES]}
        longest = max(words, key=len)
        # Norms and their relation to frequency rank.
        norms = np.asarray(vs.norms, dtype=np.float64)
        q1, med, q3 = quartiles(norms)
        norm_stats: dict[str, float | None] = {
            "min": float(norms.min()),
            "q1": q1,
            "median": med,
            "q3": q3,
            "max": float(norms.max()),
            "spearman_rank": spearman(norms, np.arange(vs.n, dtype=np.float64)),
        }
        # Anisotropy.
        nonzero = np.flatnonzero(np.asarray(vs.norms) > 0).astype(np.int64)
        pairs = sample_pairs(nonzero, PAIR_SAMPLE, SEED)
        cos = np.einsum("ij,ij->i", np.asarray(vs.unit[pairs[:, 0]]), np.asarray(vs.unit[pairs[:, 1]]))
        anisotropy = float(cos.mean()) if len(cos) else 0.0
        # Hubness.
        hub_info, nk = hubness(vs, nonzero, self.k, progress=progress, cancel=cancel)
        width = max(1, -(-(int(nk.max()) + 1) // 30))  # whole-number bins, at most 30 of them
        counts, edges = np.histogram(nk[nonzero], bins=np.arange(0, int(nk.max()) + width + 1, width))
        nk_hist = Histogram(tuple(float(e) for e in edges), tuple(int(c) for c in counts))
        benchmarks = tuple(_benchmarks(vs, self.pairs, self.analogies))
        return CheckupResult(
            self,
            "exact",
            vs.n,
            vs.dims,
            vs.meta.duplicates,
            len(vs.zero_rows),
            len(multi),
            case_examples,
            non_words,
            longest,
            norm_stats,
            histogram(norms, bins=20),
            anisotropy,
            len(pairs),
            hub_info,
            nk_hist,
            benchmarks,
            (time.perf_counter() - t0) * 1000,
        )


def hubness(
    vs: Any,
    candidates: np.ndarray,
    k: int,
    *,
    progress: ProgressFn | None = None,
    cancel: CancelFn | None = None,
) -> tuple[dict[str, Any], np.ndarray]:
    """N_k over all words as queries (up to 50,000) or a seeded sample of 10,000 queries, and its skewness over
    the non-zero words. Returns ``(summary, N_k per row)``."""
    sampled = len(candidates) > ALL_QUERIES_UP_TO
    queries = (
        np.sort(np.random.default_rng(SEED).choice(candidates, QUERY_SAMPLE, replace=False)) if sampled else candidates
    )
    nk = np.zeros(vs.n, dtype=np.int64)
    for _, rows in knn_blocks(vs, queries, k, progress=progress, stage="hubness: nearest neighbours", cancel=cancel):
        nk += np.bincount(rows.ravel(), minlength=vs.n)
    top = np.argsort(-nk, kind="stable")[:HUBS]
    summary = {
        "k": k,
        "skewness": skewness(nk[candidates]),
        "queries": len(queries),
        "sampled": sampled,
        "hubs": [{"word": vs.words[int(i)], "n_k": int(nk[i])} for i in top],
    }
    return summary, nk


def _benchmarks(vs: Any, pairs: tuple[str, ...], analogies: tuple[str, ...]) -> list[dict[str, Any]]:
    from pathlib import Path

    from wordkin.index.scoring import read_analogies, read_pairs, score_analogies, score_pairs

    out: list[dict[str, Any]] = []
    results: list[tuple[str, Any]] = [(p, score_pairs(vs, read_pairs(p))) for p in pairs]
    results += [(a, score_analogies(vs, read_analogies(a))) for a in analogies]
    for path, res in results:
        d = res.to_json()
        if d["kind"] == "pairs":
            rho = "-" if d["spearman"] is None else f"{d['spearman']:.4f}"
            summary = f"Spearman {rho}, {d['used']} of {d['pairs']} pairs covered"
        else:
            acc = "-" if d["accuracy"] is None else f"{d['accuracy']:.3f}"
            summary = f"accuracy {acc}, {d['answered']} of {d['total']} questions covered"
        out.append({"name": Path(path).name, "path": str(path), "summary": summary, **d})
    return out
