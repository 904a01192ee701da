"""Comparison of a vector set with the one it replaces: vocabulary, neighbour overlap, aligned similarity, the most
changed words and benchmark deltas.

- Vocabulary: shared, added, removed (counts and the most frequent examples).
- Neighbour overlap: for each compared word, the share of its k nearest neighbours that both sets agree on, the
  neighbours restricted to the shared vocabulary in both sets (so that added words do not count as change). The
  compared words are the ``top`` most frequent shared words (by the old set's order) or a given list.
- Aligned similarity: the orthogonal Procrustes rotation (Schönemann 1966; used to compare embeddings by Hamilton,
  Leskovec & Jurafsky 2016) from NEW to OLD fitted on the ``top`` most frequent shared words, then each word's
  cosine between its old vector and its rotated new one. Dimensions must match.
- Most changed: lowest overlap, then lowest aligned cosine, each with both neighbour lists.
- Benchmarks: the pair and analogy files scored on both sets over the questions both sets cover.
"""

from __future__ import annotations

import time
from dataclasses import dataclass
from pathlib import Path
from typing import Any, ClassVar

import numpy as np
from numpy.typing import NDArray

from wordkin.index.errors import DimensionMismatchError, UsageError
from wordkin.index.kinds.base import (
    Diff,
    Query,
    Result,
    Table,
    option_field,
    option_labels,
    register,
)
from wordkin.index.progress import CancelFn, ProgressFn
from wordkin.index.session import Session
from wordkin.index.statistics import Histogram, histogram, knn_blocks, quartiles
from wordkin.index.vectors import VectorSet

EXAMPLES = 10
BANDS = ((1, 1_000), (1_001, 5_000), (5_001, 10_000), (10_001, 50_000), (50_001, None))


def procrustes(new: NDArray[np.float32], old: NDArray[np.float32]) -> NDArray[np.float64]:
    """The orthogonal R minimising ||new R - old|| (Schönemann 1966): R = U V^T from the SVD of new^T old."""
    u, _, vt = np.linalg.svd(np.asarray(new, dtype=np.float64).T @ np.asarray(old, dtype=np.float64))
    rotation: NDArray[np.float64] = u @ vt
    return rotation


@dataclass(frozen=True)
class Changed:
    word: str
    overlap: float
    aligned_cosine: float | None
    old: tuple[str, ...]
    new: tuple[str, ...]

    def to_json(self) -> dict[str, Any]:
        return {
            "word": self.word,
            "overlap": self.overlap,
            "aligned_cosine": self.aligned_cosine,
            "old": list(self.old),
            "new": list(self.new),
        }


@dataclass(frozen=True)
class CompareResult(Result):
    query: Compare
    mode: str
    old: dict[str, Any]  # words, dims, source
    new: dict[str, Any]
    shared: int
    added: int
    removed: int
    added_examples: tuple[str, ...]
    removed_examples: tuple[str, ...]
    k: int
    compared: int
    missing: tuple[str, ...]  # given words not in both sets
    overlap: dict[str, Any]  # mean, quartiles
    aligned: dict[str, Any] | None  # mean, quartiles, anchors
    bands: tuple[dict[str, Any], ...]
    most_changed: tuple[Changed, ...]
    overlap_histogram: Histogram
    aligned_histogram: Histogram | None
    benchmarks: tuple[dict[str, Any], ...] = ()
    elapsed_ms: float = 0.0

    def to_json(self) -> dict[str, Any]:
        return {
            "old": self.old,
            "new": self.new,
            "shared": self.shared,
            "added": self.added,
            "removed": self.removed,
            "added_examples": list(self.added_examples),
            "removed_examples": list(self.removed_examples),
            "k": self.k,
            "compared": self.compared,
            "missing": list(self.missing),
            "overlap": {**self.overlap, "histogram": self.overlap_histogram.to_json()},
            "aligned_cosine": None
            if self.aligned is None or self.aligned_histogram is None
            else {**self.aligned, "histogram": self.aligned_histogram.to_json()},
            "bands": list(self.bands),
            "most_changed": [c.to_json() for c in self.most_changed],
            "benchmarks": list(self.benchmarks),
            "options": self.query.to_json(),
        }

    @classmethod
    def from_json(cls, d: dict[str, Any], query: Query) -> CompareResult:
        assert isinstance(query, Compare)
        al = d.get("aligned_cosine")
        return cls(
            query,
            "exact",
            dict(d["old"]),
            dict(d["new"]),
            int(d["shared"]),
            int(d["added"]),
            int(d["removed"]),
            tuple(d["added_examples"]),
            tuple(d["removed_examples"]),
            int(d["k"]),
            int(d["compared"]),
            tuple(d.get("missing", [])),
            {k: v for k, v in d["overlap"].items() if k != "histogram"},
            None if al is None else {k: v for k, v in al.items() if k != "histogram"},
            tuple(d["bands"]),
            tuple(
                Changed(c["word"], float(c["overlap"]), c["aligned_cosine"], tuple(c["old"]), tuple(c["new"]))
                for c in d["most_changed"]
            ),
            Histogram.from_json(d["overlap"]["histogram"]),
            None if al is None else Histogram.from_json(al["histogram"]),
            tuple(d.get("benchmarks", [])),
        )

    def table(self) -> Table:
        return Table(
            ("word", "overlap", "aligned cosine", "old neighbours", "new neighbours"),
            tuple(
                (c.word, c.overlap, c.aligned_cosine, " ".join(c.old[:5]), " ".join(c.new[:5]))
                for c in self.most_changed
            ),
            (False, True, True, False, False),
        )

    def summary_table(self) -> Table:
        rows: list[tuple[Any, ...]] = [
            ("words (old / new)", f"{self.old['words']:,} / {self.new['words']:,}"),
            ("shared / added / removed", f"{self.shared:,} / {self.added:,} / {self.removed:,}"),
            ("compared words", f"{self.compared:,}"),
            (f"neighbour overlap @{self.k}, mean", f"{self.overlap['mean']:.3f}"),
            ("overlap quartiles", " / ".join(f"{x:.3f}" for x in self.overlap["quartiles"])),
        ]
        if self.aligned is not None:
            rows.append(("aligned cosine, mean", f"{self.aligned['mean']:.4f}"))
            rows.append(("aligned cosine quartiles", " / ".join(f"{x:.4f}" for x in self.aligned["quartiles"])))
        for b in self.bands:
            hi = "" if b["to"] is None else f"{b['to']:,}"
            al = "-" if b["aligned_cosine"] is None else f"{b['aligned_cosine']:.4f}"
            rows.append(
                (
                    f"frequency ranks {b['from']:,}-{hi}",
                    f"{b['words']:,} words, overlap {b['overlap']:.3f}, aligned {al}",
                )
            )
        for b in self.benchmarks:
            rows.append((f"benchmark {b['name']}", b["summary"]))
        return Table(("measure", "value"), tuple(rows), (False, True))

    def tables(self) -> list[tuple[str, Table]]:
        return [("", self.summary_table()), ("most changed words:", self.table())]

    def records(self) -> list[dict[str, Any]]:
        return [
            {
                "word": c.word,
                "overlap": c.overlap,
                "aligned_cosine": c.aligned_cosine,
                "old": " ".join(c.old),
                "new": " ".join(c.new),
            }
            for c in self.most_changed
        ]

    def histograms(self) -> list[tuple[str, Any]]:
        out: list[tuple[str, Any]] = [(f"neighbour overlap @{self.k}", self.overlap_histogram)]
        if self.aligned_histogram is not None:
            out.append(("aligned cosine", self.aligned_histogram))
        return out

    def notes(self) -> list[str]:
        out = []
        if self.added_examples:
            out.append("added, most frequent first: " + " ".join(self.added_examples))
        if self.removed_examples:
            out.append("removed, most frequent first: " + " ".join(self.removed_examples))
        if self.missing:
            out.append(f"{len(self.missing)} listed words are not in both sets: " + " ".join(self.missing[:EXAMPLES]))
        if self.aligned is None:
            out.append("aligned cosine: not computed (the sets have different dimensions)")
        return out

    def diff(self, newer: Result) -> Diff:
        assert isinstance(newer, CompareResult)
        a, b = self.overlap["mean"], newer.overlap["mean"]
        cells = (("overlap mean", "", a, b),) if abs(a - b) > 5e-4 else ()
        return Diff(cells=cells, same=1 - len(cells))


@register
@dataclass(frozen=True)
class Compare(Query):
    """The open set (new) against the set it replaces (the session's ``against``)."""

    kind: ClassVar[str] = "compare"
    result_class: ClassVar[type[Any]] = CompareResult
    needs_against: ClassVar[bool] = True

    k: int = option_field((10, 5), default=10, flag="-k", label="k", help="neighbours compared per word")
    top: int = option_field(
        (10_000, 500),
        default=10_000,
        flag="--top",
        label="top",
        show="{:,}",
        metavar="N",
        help="compare the N most frequent shared words",
    )
    words: tuple[str, ...] = ()
    most: int = option_field(
        (20,), default=20, flag="--most", label="most", metavar="N", help="how many most-changed words to show"
    )
    pairs: tuple[str, ...] = ()
    analogies: tuple[str, ...] = ()

    def title(self) -> str:
        return "comparison with the previous set"

    @classmethod
    def example(cls, words: list[str]) -> Compare:
        return cls()

    def options(self) -> list[str]:
        # ``most`` only shortens the list shown; ``top`` gives way to the listed words when there are some.
        out = option_labels(self, skip=("top", "most"))
        out.append(f"{len(self.words)} listed words" if self.words else f"top {self.top:,}")
        return out + [f"pairs {p}" for p in self.pairs] + [f"analogies {a}" for a in self.analogies]

    def run(
        self, session: Session, *, progress: ProgressFn | None = None, cancel: CancelFn | None = None
    ) -> CompareResult:
        t0 = time.perf_counter()
        new, old = session.vectors, session.against
        if old is None:
            raise UsageError(
                "a comparison needs the set it replaces (wordkin compare OLD NEW, or open NEW --against OLD)"
            )
        check_dims(old, new)
        if not 1 <= self.k <= 1000 or self.top < 1 or self.most < 1:
            raise UsageError("k is 1 to 1,000 and top and most are positive whole numbers")
        old_rows = {w: i for i, w in enumerate(old.words) if not old.is_zero(i)}
        new_lookup = new.lookup()
        shared_old = np.fromiter(
            (i for w, i in old_rows.items() if w in new_lookup and not new.is_zero(new_lookup[w])), dtype=np.int64
        )
        shared_old.sort()
        if len(shared_old) <= self.k:
            raise UsageError(f"the two sets share {len(shared_old)} words; a comparison needs more than k ({self.k})")
        shared_words = [old.words[i] for i in shared_old]
        shared_new = np.fromiter((new_lookup[w] for w in shared_words), dtype=np.int64, count=len(shared_words))
        shared_set = set(shared_words)
        added = [w for w in new.words if w not in old_rows]
        removed = [w for w in old.words if w not in new_lookup]
        if self.words:
            compared_pos = [i for i, w in enumerate(shared_words) if w in set(self.words)]
            missing = tuple(w for w in self.words if w not in shared_set)
            if not compared_pos:
                raise UsageError("none of the listed words is in both sets")
        else:
            compared_pos = list(range(min(self.top, len(shared_words))))
            missing = ()
        pos = np.asarray(compared_pos, dtype=np.int64)
        k = self.k
        # Neighbours restricted to the shared vocabulary, in each set, as positions in the shared list.
        old_pos = np.full(old.n, -1, dtype=np.int64)
        old_pos[shared_old] = np.arange(len(shared_old))
        new_pos = np.full(new.n, -1, dtype=np.int64)
        new_pos[shared_new] = np.arange(len(shared_new))
        allow_old = old_pos >= 0
        allow_new = new_pos >= 0
        nn_old = np.empty((len(pos), k), dtype=np.int64)
        nn_new = np.empty((len(pos), k), dtype=np.int64)
        for s, rows in knn_blocks(
            old, shared_old[pos], k, allow_old, progress=progress, stage="old set: neighbours", cancel=cancel
        ):
            nn_old[s : s + len(rows)] = old_pos[rows]
        for s, rows in knn_blocks(
            new, shared_new[pos], k, allow_new, progress=progress, stage="new set: neighbours", cancel=cancel
        ):
            nn_new[s : s + len(rows)] = new_pos[rows]
        overlap = np.array([len(set(a) & set(b)) / k for a, b in zip(nn_old, nn_new, strict=True)])
        # Aligned cosine after the orthogonal Procrustes rotation, fitted on the most frequent shared words.
        aligned_cos: NDArray[np.float64] | None = None
        aligned = None
        if old.dims == new.dims:
            anchors = np.arange(min(self.top, len(shared_words)))
            rot = procrustes(np.asarray(new.unit[shared_new[anchors]]), np.asarray(old.unit[shared_old[anchors]]))
            x = np.asarray(new.unit[shared_new[pos]], dtype=np.float64) @ rot
            y = np.asarray(old.unit[shared_old[pos]], dtype=np.float64)
            aligned_cos = np.einsum("ij,ij->i", x, y) / (np.linalg.norm(x, axis=1) * np.linalg.norm(y, axis=1))
            aligned = {
                "mean": float(aligned_cos.mean()),
                "quartiles": list(quartiles(aligned_cos)),
                "anchors": len(anchors),
            }
        order = np.lexsort((aligned_cos if aligned_cos is not None else np.zeros(len(pos)), overlap))
        most = tuple(
            Changed(
                shared_words[pos[i]],
                float(overlap[i]),
                None if aligned_cos is None else float(aligned_cos[i]),
                tuple(shared_words[j] for j in nn_old[i]),
                tuple(shared_words[j] for j in nn_new[i]),
            )
            for i in order[: self.most]
        )
        bands = []
        for lo, hi in BANDS:
            sel = (pos + 1 >= lo) & ((pos + 1 <= hi) if hi is not None else True)
            if np.any(sel):
                bands.append(
                    {
                        "from": lo,
                        "to": hi,
                        "words": int(sel.sum()),
                        "overlap": float(overlap[sel].mean()),
                        "aligned_cosine": None if aligned_cos is None else float(aligned_cos[sel].mean()),
                    }
                )
        return CompareResult(
            self,
            "exact",
            {"words": old.n, "dims": old.dims, "source": str(old.source)},
            {"words": new.n, "dims": new.dims, "source": str(new.source)},
            len(shared_words),
            len(added),
            len(removed),
            tuple(added[:EXAMPLES]),
            tuple(removed[:EXAMPLES]),
            k,
            len(pos),
            missing,
            {"mean": float(overlap.mean()), "quartiles": list(quartiles(overlap))},
            aligned,
            tuple(bands),
            most,
            histogram(overlap, bins=k + 1, lo=-0.5 / k, hi=1.0 + 0.5 / k),  # one bin per possible share
            None if aligned_cos is None else histogram(aligned_cos, bins=20, hi=1.0 + 1e-9),
            tuple(_benchmark_deltas(old, new, self.pairs, self.analogies)),
            (time.perf_counter() - t0) * 1000,
        )


def check_dims(old: VectorSet, new: VectorSet) -> None:
    if old.dims != new.dims:
        raise DimensionMismatchError(
            f"the old set has {old.dims} dimensions and the new one {new.dims}: the aligned similarity needs the same"
        )


def _benchmark_deltas(old: VectorSet, new: VectorSet, pairs: tuple[str, ...], analogies: tuple[str, ...]) -> list[Any]:
    """Each file scored on both sets over the questions both cover."""
    from wordkin.index.scoring import read_analogies, read_pairs, score_analogies, score_pairs

    out: list[dict[str, Any]] = []
    both = set(old.words) & set(new.words)
    for p in pairs:
        kept = read_pairs(p).covered_by(both)
        o, n = score_pairs(old, kept), score_pairs(new, kept)
        delta = None if o.spearman is None or n.spearman is None else n.spearman - o.spearman
        out.append(
            {
                "name": Path(p).name,
                "kind": "pairs",
                "covered": len(kept.pairs),
                "old": o.spearman,
                "new": n.spearman,
                "delta": delta,
                "summary": f"Spearman {_f(o.spearman)} -> {_f(n.spearman)} on {len(kept.pairs)} pairs both cover",
            }
        )
    for a in analogies:
        questions = read_analogies(a).covered_by(both)
        o2, n2 = score_analogies(old, questions), score_analogies(new, questions)
        delta = None if o2.accuracy is None or n2.accuracy is None else n2.accuracy - o2.accuracy
        count = questions.questions
        out.append(
            {
                "name": Path(a).name,
                "kind": "analogies",
                "covered": count,
                "old": o2.accuracy,
                "new": n2.accuracy,
                "delta": delta,
                "summary": f"accuracy {_f(o2.accuracy)} -> {_f(n2.accuracy)} on {count} questions both cover",
            }
        )
    return out


def _f(x: float | None) -> str:
    return "-" if x is None else f"{x:.4f}"
