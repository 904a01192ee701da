"""Term suggestions: candidates for a term list, from its seeds and the decisions made so far.

The list's state (seeds, kept and dropped words) is part of the query value, so a suggestion is self-contained: it
can be saved, re-run and exported like any query. Candidates are ranked by cosine to a Rocchio-style
relevance-feedback vector (Rocchio 1971; Manning, Raghavan & Schütze 2008, section 9.1.1)::

    q = mean(unit(seeds ∪ kept)) − γ · mean(unit(dropped))        γ = 0.15 by default (their conventional value)

Words already decided (seeds, kept, dropped, set aside) are never candidates. Beside each score, **support**: how
many of the list's members (seeds and kept words) have the candidate among their own ``support_k`` nearest
neighbours, so that a candidate close to one member only can be told from one close to all. Optional filters: hide
forms of the members (``forms``), a ``top`` frequency cap, include / exclude regular expressions.
"""

from __future__ import annotations

import re
import threading
import time
from collections import OrderedDict
from dataclasses import dataclass
from typing import Any, ClassVar

import numpy as np
from numpy.typing import NDArray

from wordkin.index.errors import UsageError
from wordkin.index.forms import is_form_of
from wordkin.index.kinds.base import (
    Diff,
    Query,
    Result,
    Table,
    exact_search_option,
    exact_word_option,
    option_field,
    rank_diff,
    register,
    subwords_option,
    top_option,
)
from wordkin.index.kinds.rows import SubwordWord
from wordkin.index.search import check_k, check_top, top_for_vector, unit_query
from wordkin.index.session import Session
from wordkin.index.vectors import WordVector

DEFAULT_GAMMA = 0.15
DEFAULT_SUPPORT_K = 25
MAX_MEMBERS = 2_000


@dataclass(frozen=True)
class Candidate:
    rank: int
    word: str
    score: float  # exact cosine to the feedback vector
    support: int  # members that have the word among their support_k nearest neighbours


@dataclass(frozen=True)
class TermsResult(Result):
    """Candidates for the list ``query.name``; ``members`` is how many words support can count up to."""

    query: TermSuggest
    mode: str
    rows: tuple[Candidate, ...]
    members: int
    elapsed_ms: float = 0.0
    subwords: tuple[SubwordWord, ...] = ()  # list words a fastText model built from their n-grams

    def to_json(self) -> dict[str, Any]:
        q = self.query
        return {
            "list": q.name,
            "seeds": list(q.seeds),
            "kept": list(q.kept),
            "dropped": list(q.dropped),
            "gamma": q.gamma,
            "mode": self.mode,
            "members": self.members,
            "options": q.to_json(),
            "query_vector": "subwords" if self.subwords else "vocabulary",
            "subwords": [s.to_json() for s in self.subwords],
            "candidates": [{"rank": c.rank, "word": c.word, "score": c.score, "support": c.support} for c in self.rows],
        }

    @classmethod
    def from_json(cls, d: dict[str, Any], query: Query) -> TermsResult:
        assert isinstance(query, TermSuggest)
        rows = tuple(
            Candidate(int(c["rank"]), str(c["word"]), float(c["score"]), int(c["support"])) for c in d["candidates"]
        )
        subwords = tuple(SubwordWord.from_json(x) for x in d.get("subwords", []))
        return cls(query, str(d["mode"]), rows, int(d.get("members", len(query.members))), subwords=subwords)

    def table(self) -> Table:
        return Table(
            ("rank", "word", "score", "support"),
            tuple((c.rank, c.word, c.score, c.support) for c in self.rows),
            (True, False, True, True),
        )

    def records(self) -> list[dict[str, Any]]:
        return [{"rank": c.rank, "word": c.word, "score": c.score, "support": c.support} for c in self.rows]

    def notes(self) -> list[str]:
        q = self.query
        out = [
            f"list {q.name}: seeds {', '.join(q.seeds)}",
            f"support: how many of the list's {self.members} words have the candidate among their {q.support_k}"
            " nearest neighbours",
        ]
        out.extend(s.note() for s in self.subwords)
        if q.kept:
            out.append("kept: " + ", ".join(q.kept))
        if q.dropped:
            out.append("dropped: " + ", ".join(q.dropped))
        return out

    def diff(self, newer: Result) -> Diff:
        assert isinstance(newer, TermsResult)
        return rank_diff([(c.word, c.rank) for c in self.rows], [(c.word, c.rank) for c in newer.rows])


@register
@dataclass(frozen=True)
class TermSuggest(Query):
    """Candidates for term list ``name`` in its current state."""

    kind: ClassVar[str] = "terms"
    result_class: ClassVar[type[Any]] = TermsResult

    name: str
    seeds: tuple[str, ...]
    kept: tuple[str, ...] = ()
    dropped: tuple[str, ...] = ()
    #: Words set aside for later: not candidates, not members.
    aside: tuple[str, ...] = ()
    k: int = option_field((5, 20), default=20, flag="-k", label="k", positive=True, help="how many candidates")
    gamma: float = option_field(
        (0.0, DEFAULT_GAMMA),
        default=DEFAULT_GAMMA,
        flag="--gamma",
        label="gamma",
        show="{:g}",
        help=f"weight of the dropped words (default {DEFAULT_GAMMA:g})",
    )
    support_k: int = option_field(
        (DEFAULT_SUPPORT_K,),
        default=DEFAULT_SUPPORT_K,
        flag="--support-k",
        label="support k",
        help="neighbours counted for support",
    )
    top: int | None = top_option((None, 500), "candidates")
    hide_forms: bool = option_field(
        (False, True),
        default=False,
        flag="--hide-forms",
        label="hide forms",
        help="leave out forms of the list's words",
    )
    include: str = option_field(
        ("", "^[a-z]"),
        default="",
        flag="--include",
        label="include",
        short="only",
        show="/{}/",
        metavar="RE",
        help="only candidates matching this regular expression",
    )
    exclude: str = option_field(
        ("", "s$"),
        default="",
        flag="--exclude",
        label="exclude",
        short="not",
        show="/{}/",
        metavar="RE",
        help="no candidates matching this regular expression",
    )
    exact: bool = exact_search_option()
    subwords: bool = subwords_option()
    exact_word: bool = exact_word_option()

    @property
    def members(self) -> tuple[str, ...]:
        return self.seeds + tuple(w for w in self.kept if w not in self.seeds)

    @property
    def decided(self) -> set[str]:
        return set(self.seeds) | set(self.kept) | set(self.dropped) | set(self.aside)

    def title(self) -> str:
        return f"term list {self.name}: candidates"

    @classmethod
    def example(cls, words: list[str]) -> TermSuggest:
        return cls("example", tuple(words[10:12]), kept=(words[12],), dropped=(words[13],))

    def run(self, session: Session) -> TermsResult:
        t0 = time.perf_counter()
        vs = session.vectors
        if not self.seeds:
            raise UsageError("a term list needs at least one seed word")
        if len(self.members) + len(self.dropped) > MAX_MEMBERS:
            raise UsageError(f"at most {MAX_MEMBERS:,} decided words are used for suggestions")
        if not 0.0 <= self.gamma <= 1.0:
            raise UsageError(f"gamma must be between 0 and 1, not {self.gamma:g}")
        k = check_k(self.k, vs)
        sk = check_k(self.support_k, vs)
        top = check_top(self.top, vs)
        include = _regex(self.include, "include")
        exclude = _regex(self.exclude, "exclude")
        # Unknown words: UnknownWordError with close matches, or (fastText) built from their character n-grams.
        members_v = [vs.word_vector(w, subwords=self.subwords, variants=not self.exact_word) for w in self.members]
        dropped_v = [vs.word_vector(w, subwords=self.subwords, variants=not self.exact_word) for w in self.dropped]
        decided_rows = sorted({r for r in (vs.find(w) for w in self.decided) if r is not None})
        q = feedback_vector([m.vector for m in members_v], [d.vector for d in dropped_v], self.gamma)
        ann = session.ann(self.exact)
        ann = ann.for_expressions() if ann is not None else None  # a centroid, like an expression's vector
        mode = "exact" if self.exact else "auto"
        members = list(self.members)
        filtering = bool(self.hide_forms or include or exclude)
        want = k + (40 if filtering else 0)
        limit = (top or vs.n) - len(decided_rows)
        while True:
            rows, scores, used = top_for_vector(
                vs, q, max(1, min(want, limit)), decided_rows, ann=ann, mode=mode, top=top
            )
            kept_pairs = [
                (int(r), float(s))
                for r, s in zip(rows, scores, strict=True)
                if _passes(vs.words[int(r)], members, self.hide_forms, include, exclude)
            ]
            if len(kept_pairs) >= k or want >= limit:
                break
            want = min(limit, want * 4)
        kept_pairs = kept_pairs[:k]
        support = support_counts(session, members_v, [r for r, _ in kept_pairs], sk)
        found = tuple(Candidate(i + 1, vs.words[r], s, support[i]) for i, (r, s) in enumerate(kept_pairs))
        subwords = tuple(SubwordWord(m.word, m.known, m.ngrams, m.close) for m in members_v if m.row is None)
        return TermsResult(self, used, found, len(members_v), (time.perf_counter() - t0) * 1000, subwords)


def feedback_vector(
    members: list[NDArray[np.float32]], dropped: list[NDArray[np.float32]], gamma: float
) -> NDArray[np.float32]:
    """``unit(mean(members) − γ · mean(dropped))`` of unit vectors."""
    q: NDArray[np.float32] = np.stack(members).mean(axis=0).astype(np.float32)
    if dropped and gamma:
        q = (q - np.float32(gamma) * np.stack(dropped).mean(axis=0)).astype(np.float32)
    return unit_query(q)


def _regex(pattern: str, name: str) -> re.Pattern[str] | None:
    if not pattern:
        return None
    try:
        return re.compile(pattern)
    except re.error as exc:
        raise UsageError(f"{name} is not a valid regular expression ({exc})") from None


def _passes(
    word: str, members: list[str], hide_forms: bool, include: re.Pattern[str] | None, exclude: re.Pattern[str] | None
) -> bool:
    if hide_forms and is_form_of(word, members):
        return False
    if include is not None and not include.search(word):
        return False
    return not (exclude is not None and exclude.search(word))


# Each member's neighbour set is the same from one suggestion to the next (a decision adds or removes one member),
# so they are kept, per vector set and support k, in a small LRU: a refresh after a decision computes one list.
_NEIGHBOURS: OrderedDict[tuple[str, str, int], frozenset[int]] = OrderedDict()
_NEIGHBOURS_MAX = 4096
_LOCK = threading.Lock()


def member_neighbours(session: Session, member: WordVector, k: int) -> frozenset[int]:
    """The rows of the ``k`` nearest neighbours of a list word (itself excluded), from the index where ready."""
    vs = session.vectors
    ann = session.ann()
    key = (vs.fingerprint if vs.cache_dir is not None else f"memory-{id(vs)}", member.word, k)
    with _LOCK:
        hit = _NEIGHBOURS.get(key)
        if hit is not None:
            _NEIGHBOURS.move_to_end(key)
            return hit
    exclude = [member.row] if member.row is not None else []
    rows, _, _ = top_for_vector(vs, member.vector, k, exclude, ann=ann)
    found = frozenset(int(r) for r in rows)
    with _LOCK:
        _NEIGHBOURS[key] = found
        while len(_NEIGHBOURS) > _NEIGHBOURS_MAX:
            _NEIGHBOURS.popitem(last=False)
    return found


def support_counts(session: Session, members: list[WordVector], candidates: list[int], k: int) -> list[int]:
    """For each candidate row: how many list words have it among their ``k`` nearest neighbours."""
    vs = session.vectors
    sets = [member_neighbours(session, m, k) for m in members if m.row is None or not vs.is_zero(m.row)]
    return [sum(1 for s in sets if c in s) for c in candidates]
