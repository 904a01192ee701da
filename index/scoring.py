"""Benchmark scoring: analogy questions (accuracy per section) and word pairs (Spearman's rho, Pearson's r).

Analogy files use the standard format (``: section`` headers, four words a line: a b c d, meaning a : b :: c : d),
as in ``questions-words.txt`` (Mikolov et al. 2013). Pair files hold two words and a human score a line, tab- or
space-separated, ``#`` comments, as in WordSim-353 (Finkelstein et al. 2002) and SimLex-999 (Hill et al. 2015).

The protocol follows gensim's ``evaluate_word_analogies`` / ``evaluate_word_pairs`` (tests check the counts and
rho against gensim): only the ``top`` most frequent words are used, both as the vocabulary a question may use and
as the candidate answers; with ``case_fold`` words compare upper-cased and each folded word stands for its most
frequent variant; the three question words are excluded from the answers, and of the five best answers the first
that is not a case variant of a question word is the prediction. Whole sections are answered as matrix products.
"""

from __future__ import annotations

import re
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from wordkin.index.analogy import EPSILON
from wordkin.index.errors import UnreadableFileError, UsageError
from wordkin.index.progress import CancelFn, ProgressFn, check
from wordkin.index.vectors import VectorSet

CHUNK = 128


@dataclass(frozen=True)
class Section:
    name: str
    total: int
    answered: int
    correct: int

    @property
    def accuracy(self) -> float | None:
        return self.correct / self.answered if self.answered else None


@dataclass(frozen=True)
class AnalogyScore:
    path: str
    method: str
    top: int
    case_fold: bool
    sections: tuple[Section, ...]
    elapsed_s: float = 0.0

    @property
    def total(self) -> int:
        return sum(s.total for s in self.sections)

    @property
    def answered(self) -> int:
        return sum(s.answered for s in self.sections)

    @property
    def correct(self) -> int:
        return sum(s.correct for s in self.sections)

    @property
    def accuracy(self) -> float | None:
        return self.correct / self.answered if self.answered else None

    def to_json(self) -> dict[str, Any]:
        return {
            "kind": "analogies",
            "total": self.total,
            "answered": self.answered,
            "correct": self.correct,
            "accuracy": self.accuracy,
            "oov": self.total - self.answered,
            "sections": [
                {"name": s.name, "answered": s.answered, "correct": s.correct, "accuracy": s.accuracy}
                for s in self.sections
            ],
        }


@dataclass(frozen=True)
class PairScore:
    path: str
    pairs: int
    used: int
    spearman: float | None
    pearson: float | None
    details: tuple[tuple[str, str, float, float | None], ...] = field(default=(), repr=False)
    skipped_lines: int = 0  # malformed lines skipped
    first_skipped: int | None = None

    def to_json(self) -> dict[str, Any]:
        return {
            "kind": "pairs",
            "pairs": self.pairs,
            "used": self.used,
            "oov": self.pairs - self.used,
            "spearman": self.spearman,
            "pearson": self.pearson,
            "skipped_lines": self.skipped_lines,
            "first_skipped_line": self.first_skipped,
        }


def _check_top(top: int) -> None:
    if top < 1:
        raise UsageError(f"--top must be a positive whole number, not {top}")


def vocabulary(vs: VectorSet, top: int, case_fold: bool) -> tuple[dict[str, int], np.ndarray]:
    """``(key -> row, fold id per row)`` over the first ``top`` rows; folded keys map to the most frequent row."""
    lim = min(top, vs.n)
    words = vs.words[:lim]
    if not case_fold:
        return {w: i for i, w in enumerate(words)}, np.arange(lim)
    ok: dict[str, int] = {}
    for i in range(lim - 1, -1, -1):
        ok[words[i].upper()] = i
    ids: dict[str, int] = {}
    fid = np.fromiter((ids.setdefault(w.upper(), len(ids)) for w in words), dtype=np.int64, count=lim)
    return ok, fid


@dataclass(frozen=True)
class AnalogyFile:
    """An analogy file as read: its name and its sections of ``(line number, (a, b, c, d))``."""

    source: str
    sections: tuple[tuple[str, tuple[tuple[int, tuple[str, ...]], ...]], ...]

    def covered_by(self, words: set[str]) -> AnalogyFile:
        """Only the questions whose four words are all in ``words`` (every section kept, perhaps empty)."""
        return AnalogyFile(
            self.source,
            tuple((name, tuple(q for q in qs if all(w in words for w in q[1]))) for name, qs in self.sections),
        )

    @property
    def questions(self) -> int:
        return sum(len(qs) for _, qs in self.sections)


@dataclass(frozen=True)
class PairFile:
    """A word-pair file as read: ``(line number, a, b, human score)`` per usable line, and the lines skipped."""

    source: str
    pairs: tuple[tuple[int, str, str, float], ...]
    skipped: int = 0
    first_skipped: int | None = None

    def covered_by(self, words: set[str]) -> PairFile:
        """Only the pairs whose two words are both in ``words`` (nothing skipped: those lines were read)."""
        return PairFile(self.source, tuple(p for p in self.pairs if p[1] in words and p[2] in words))


def read_analogies(path: str | Path) -> AnalogyFile:
    """Sections of ``(line number, (a, b, c, d))``."""
    p = Path(path)
    try:
        text = p.read_bytes().decode("utf-8", "replace")
    except OSError as exc:
        raise UnreadableFileError(str(p), f"cannot read: {exc.strerror or exc}") from None
    sections: list[tuple[str, list[tuple[int, list[str]]]]] = []
    for no, line in enumerate(text.splitlines(), 1):
        s = line.strip()
        if not s or s.startswith("#"):
            continue
        if s.startswith(":"):
            sections.append((s[1:].strip() or f"section at line {no}", []))
            continue
        parts = s.split()
        if len(parts) != 4:
            raise UnreadableFileError(str(p), f"expected four words (a b c d), found {len(parts)}", line=no)
        if not sections:
            sections.append(("(no section)", []))
        sections[-1][1].append((no, parts))
    return AnalogyFile(str(path), tuple((name, tuple((no, tuple(q)) for no, q in qs)) for name, qs in sections))


def score_analogies(
    vs: VectorSet,
    questions: AnalogyFile,
    *,
    method: str = "add",
    top: int = 300_000,
    case_fold: bool = False,
    epsilon: float = EPSILON,
    progress: ProgressFn | None = None,
    cancel: CancelFn | None = None,
) -> AnalogyScore:
    t0 = time.perf_counter()
    _check_top(top)
    if method not in ("add", "mul"):
        raise UsageError(f"--method is add or mul, not {method!r}")
    sections = questions.sections
    ok, fid = vocabulary(vs, top, case_fold)
    lim = len(fid)
    cand = np.asarray(vs.unit[:lim], dtype=np.float32)
    zero = vs.zero_rows[vs.zero_rows < lim]
    total_q = questions.questions
    done = 0
    out: list[Section] = []
    for name, section in sections:
        idx = []
        for _no, words in section:
            keys = [w.upper() for w in words] if case_fold else list(words)
            rows = [ok.get(k) for k in keys]
            if None not in rows:
                idx.append(rows)
        correct = 0
        q = np.asarray(idx, dtype=np.int64).reshape(-1, 4)
        for s in range(0, len(q), CHUNK):
            check(cancel)
            correct += _answer_chunk(cand, fid, zero, q[s : s + CHUNK], method, epsilon)
            if progress is not None:
                progress(done + min(s + CHUNK, len(q)), total_q, f"scoring {name}")
        done += len(section)
        out.append(Section(name, len(section), len(q), correct))
    if progress is not None:
        progress(total_q, total_q, "scored")
    return AnalogyScore(questions.source, method, top, case_fold, tuple(out), time.perf_counter() - t0)


def _answer_chunk(cand: np.ndarray, fid: np.ndarray, zero: np.ndarray, q: np.ndarray, method: str, eps: float) -> int:
    a, b, c, d = cand[q[:, 0]], cand[q[:, 1]], cand[q[:, 2]], q[:, 3]
    if method == "add":
        s = (b - a + c) @ cand.T
    else:
        s = ((1 + b @ cand.T) / 2) * ((1 + c @ cand.T) / 2) / ((1 + a @ cand.T) / 2 + np.float32(eps))
    r = np.arange(len(q))
    for j in range(3):
        s[r, q[:, j]] = -np.inf
    if len(zero):
        s[:, zero] = -np.inf
    k = min(5, s.shape[1])
    # The five best per row by repeated argmax: several times faster than argpartition over 300k columns.
    top5 = np.empty((len(q), k), dtype=np.int64)
    for j in range(k):
        best = np.argmax(s, axis=1)
        top5[:, j] = best
        s[r, best] = -np.inf
    f = fid[top5]
    ignored = (f == fid[q[:, 0], None]) | (f == fid[q[:, 1], None]) | (f == fid[q[:, 2], None])
    first_ok = np.where(ignored.all(axis=1), k - 1, np.argmax(~ignored, axis=1))
    pred = top5[r, first_ok]
    return int(np.count_nonzero(fid[pred] == fid[d]))


def read_pairs(path: str | Path) -> PairFile:
    """The usable pairs with the count and first number of the skipped lines. Fields are separated by runs of tabs
    (the RG-65 file as commonly distributed has doubled tabs) or, without a tab, by spaces. A line that still has
    the wrong number of fields, or a score that is not a finite number, is skipped and counted; a file with no
    usable line at all is an error naming its first bad line."""
    p = Path(path)
    try:
        text = p.read_bytes().decode("utf-8", "replace")
    except OSError as exc:
        raise UnreadableFileError(str(p), f"cannot read: {exc.strerror or exc}") from None
    out = []
    skipped = 0
    first_bad: tuple[int, str] | None = None
    for no, line in enumerate(text.splitlines(), 1):
        s = line.strip()
        if not s or s.startswith("#"):
            continue
        parts = [x.strip() for x in (re.split(r"\t+", s) if "\t" in s else s.split())]
        problem = None
        score = 0.0
        if len(parts) != 3:
            problem = f"expected two words and a score, found {len(parts)} fields"
        else:
            try:
                score = float(parts[2])
                if not np.isfinite(score):
                    problem = f"the score {parts[2]!r} is not a finite number"
            except ValueError:
                problem = f"the score {parts[2][:40]!r} is not a number"
        if problem is not None:
            skipped += 1
            first_bad = first_bad or (no, problem)
            continue
        out.append((no, parts[0], parts[1], score))
    if not out and first_bad is not None:
        raise UnreadableFileError(str(p), first_bad[1] + " (and no line of the file is usable)", line=first_bad[0])
    return PairFile(str(path), tuple(out), skipped, first_bad[0] if first_bad else None)


def score_pairs(vs: VectorSet, data: PairFile, *, top: int = 300_000, case_fold: bool = False) -> PairScore:
    _check_top(top)
    pairs = data.pairs
    ok, _ = vocabulary(vs, top, case_fold)
    gold: list[float] = []
    model: list[float] = []
    details: list[tuple[str, str, float, float | None]] = []
    for _no, a, b, human in pairs:
        ka, kb = (a.upper(), b.upper()) if case_fold else (a, b)
        ra, rb = ok.get(ka), ok.get(kb)
        if ra is None or rb is None:
            details.append((a, b, human, None))
            continue
        # float64 dot: float32 rounding makes near-equal cosines tie, which moves Spearman ranks.
        cos = float(np.dot(vs.unit[ra].astype(np.float64), vs.unit[rb].astype(np.float64)))
        gold.append(human)
        model.append(cos)
        details.append((a, b, human, cos))
    rho = r = None
    if len(gold) >= 2 and np.ptp(gold) > 0 and np.ptp(model) > 0:
        from scipy import stats

        rho = float(stats.spearmanr(gold, model).statistic)
        r = float(stats.pearsonr(gold, model).statistic)
    return PairScore(data.source, len(pairs), len(gold), rho, r, tuple(details), data.skipped, data.first_skipped)
