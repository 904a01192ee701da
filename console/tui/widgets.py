"""Shared pieces of the console: safe text, similarity bars, vocabulary completion and a results table.

Words from a vector file are untrusted. They are only ever shown as ``rich.text.Text`` objects built from
``visible(word)``: Text is never parsed as markup, and ``visible`` has replaced every control character.
"""

from __future__ import annotations

import bisect
from collections.abc import Sequence
from typing import Any

import numpy as np
from rich.text import Text
from textual.binding import Binding
from textual.message import Message
from textual.suggester import Suggester
from textual.widgets import DataTable, Input

from wordkin.console.formats.safe_text import visible, visible_word
from wordkin.index.errors import UnknownWordError, UsageError, WordkinError
from wordkin.index.kinds.rows import Neighbour

BAR_WIDTH = 16
_BLOCKS = " ▏▎▍▌▋▊▉█"


def word_text(word: str, style: str = "") -> Text:
    """A word as plain text: no markup, no control characters."""
    return Text(visible_word(word), style=style, no_wrap=True, overflow="ellipsis")


def bar(value: float, width: int = BAR_WIDTH) -> Text:
    """A horizontal bar for a cosine in [-1, 1]; negative values get an empty bar."""
    v = max(0.0, min(1.0, value)) * width
    full = int(v)
    part = int((v - full) * 8)
    s = "█" * full + (_BLOCKS[part] if full < width and part else "")
    return Text(s.ljust(width), style="bold")


class VocabSuggester(Suggester):
    """Completion from the vocabulary by bisection over a sorted list: O(log n) a keystroke, not a scan.

    Most frequent words are preferred among words sharing the prefix only through the sort key's tie order,
    which keeps this cheap; it suggests the alphabetically first completion.
    """

    def __init__(self, sorted_shown: Sequence[str]) -> None:
        """``sorted_shown``: the vocabulary as displayed (``visible``), sorted; see ``completion_list``."""
        super().__init__(use_cache=True, case_sensitive=True)
        self._sorted = sorted_shown

    async def get_suggestion(self, value: str) -> str | None:
        if not value:
            return None
        i = bisect.bisect_left(self._sorted, value)
        while i < len(self._sorted):
            cand = self._sorted[i]
            if not cand.startswith(value):
                return None
            if cand != value:
                return cand
            i += 1
        return None


def error_text(err: WordkinError) -> Text:
    """A query error for a pane's message line; an unknown word lists its close matches."""
    if isinstance(err, UnknownWordError):
        t = Text.assemble(word_text(err.word, "bold"), (" is not in the vocabulary", "red"))
        if err.suggestions:
            t.append("; close matches: ")
            for i, s in enumerate(err.suggestions):
                if i:
                    t.append(", ")
                t.append_text(word_text(s, "bold"))
        return t
    return Text(visible(err.message), style="bold red")


def int_option(box: Input, name: str, default: int | None) -> int | None:
    """The whole number typed in an option box (``default`` when empty); ``UsageError`` naming the option."""
    text = box.value.strip()
    if not text:
        return default
    try:
        return int(text)
    except ValueError:
        raise UsageError(f"{name} must be a whole number, not {text!r}") from None


def int_value(box: Input, name: str, default: int) -> int:
    """Like ``int_option`` for an option that always has a value."""
    v = int_option(box, name, default)
    return default if v is None else v


class Completions:
    """Prefix completion over the displayable vocabulary: candidates come out most frequent first.

    Built once in the load worker (sorting a million words takes a while); a keystroke costs a bisection and a
    sort of at most ``SPAN`` frequency ranks.
    """

    SPAN = 5000

    def __init__(self, words: Sequence[str]) -> None:
        pairs = sorted((visible(w), i) for i, w in enumerate(words) if w)
        self.words = [w for w, _ in pairs]
        self.ranks = np.fromiter((i for _, i in pairs), dtype=np.int64, count=len(pairs))

    def candidates(self, prefix: str, limit: int = 6) -> list[str]:
        if not prefix:
            return []
        lo = bisect.bisect_left(self.words, prefix)
        hi = bisect.bisect_left(self.words, prefix + "\U0010ffff", lo, min(len(self.words), lo + self.SPAN))
        order = lo + np.argsort(self.ranks[lo:hi], kind="stable")
        return [self.words[i] for i in order if self.words[i] != prefix][:limit]


def completion_list(words: Sequence[str]) -> Completions:
    """The vocabulary's completions: slow for big sets, so built in the load worker."""
    return Completions(words)


class WordInput(Input):
    """The query box: Tab (or Right at the end) takes the first completion, Down goes to the results."""

    BINDINGS = [
        Binding("tab", "accept", "Complete", show=False, id="input.complete"),
        Binding("down", "to_results", "To the results", show=False, id="input.results"),
    ]

    class ToResults(Message):
        """Down was pressed in the box."""

    def __init__(self, *args: Any, **kw: Any) -> None:
        super().__init__(*args, **kw)
        self.completions: Completions | None = None

    def first_candidate(self) -> str | None:
        if self.completions is None:
            return None
        c = self.completions.candidates(self.value.strip(), 1)
        return c[0] if c else None

    def action_accept(self) -> None:
        first = self.first_candidate()
        if first is None:
            self.screen.focus_next()
            return
        self.value = first
        self.cursor_position = len(first)

    def action_cursor_right(self, select: bool = False) -> None:
        if self.cursor_at_end and not select and self.first_candidate() is not None:
            self.action_accept()
            return
        super().action_cursor_right(select)

    def action_to_results(self) -> None:
        self.post_message(self.ToResults())


class NeighbourTable(DataTable[Text]):
    """Rank, word, score and a bar; a mark column (mutual neighbours) where ``mutual``."""

    def __init__(self, *args: Any, mutual: bool = True, **kw: Any) -> None:
        super().__init__(*args, **kw)
        self.mutual = mutual

    def on_mount(self) -> None:
        self.cursor_type = "row"
        self.zebra_stripes = True
        self.add_column(Text("rank"), key="rank", width=4)
        self.add_column(Text("word"), key="word")
        self.add_column(Text("score"), key="score", width=7)
        self.add_column(Text(""), key="bar", width=BAR_WIDTH)
        if self.mutual:
            self.add_column(Text("mutual"), key="mark", width=6)

    def show(self, rows: Sequence[Neighbour], marks: Sequence[bool] | None = None) -> None:
        self.clear()
        for i, r in enumerate(rows):
            mark = Text("")
            if marks is not None and i < len(marks) and marks[i]:
                mark = Text("↔", style="bold green")
            self.add_row(
                Text(str(r.rank), justify="right"),
                word_text(r.word),
                Text(f"{r.similarity:.3f}", justify="right"),
                bar(r.similarity),
                *([mark] if self.mutual else []),
                *([Text(""), Text("")] if "change" in self.columns else []),
                key=str(i),
            )
        if rows:
            self.move_cursor(row=0)

    def add_comparison_columns(self) -> None:
        """Two more columns when a second set is open: how each row moved, and the old set's list."""
        if "change" not in self.columns:
            self.add_column(Text("Δ old"), key="change", width=6)
            self.add_column(Text("old list"), key="old")

    def set_comparison(self, changes: Sequence[Text], old_words: Sequence[str]) -> None:
        for i in range(self.row_count):
            self.update_cell(str(i), "change", changes[i] if i < len(changes) else Text(""))
            self.update_cell(str(i), "old", word_text(old_words[i]) if i < len(old_words) else Text(""))

    def set_marks(self, marks: Sequence[bool]) -> None:
        for i, m in enumerate(marks):
            if i < self.row_count:
                self.update_cell(str(i), "mark", Text("↔", style="bold green") if m else Text(""))
