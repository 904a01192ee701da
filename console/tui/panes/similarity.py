"""The similarity pane: a word list in, a heat-map of pairwise cosines out, the odd one out marked."""

from __future__ import annotations

import re
from typing import ClassVar

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.widgets import DataTable, Input, Static

from wordkin.console.formats.safe_text import visible_word
from wordkin.console.tui.panes.base import QueryPane
from wordkin.console.tui.widgets import error_text, word_text
from wordkin.index.errors import UsageError, WordkinError
from wordkin.index.kinds import Query, Result, Similarity, SimilarityResult

# 256-colour ramp from low to high cosine; the number is always printed, so NO_COLOR loses nothing but shade.
RAMP = [236, 238, 240, 60, 61, 62, 25, 26, 31, 37, 43, 49]
CELL = 7


def shade(v: float) -> str:
    i = int(round((max(-1.0, min(1.0, v)) + 1) / 2 * (len(RAMP) - 1)))
    return f"color({RAMP[i]})"


def split_words(text: str) -> list[str]:
    """Words separated by commas (when there is one) or by whitespace; double quotes keep spaces in a word."""
    if '"' in text:
        return [a or b for a, b in re.findall(r'"([^"]*)"|([^\s,]+)', text)]
    parts = text.split(",") if "," in text else text.split()
    return [p.strip() for p in parts if p.strip()]


class SimilarityPane(QueryPane):
    """Pairwise cosines of a word list; move over a cell to see how the two words rank for each other."""

    kind: ClassVar[type[Query]] = Similarity

    BINDINGS = [
        Binding("ctrl+s", "save", "Save to notebook", id="similarity.save"),
        Binding("escape", "focus_input", "Edit the list", show=False, id="similarity.focus"),
    ]

    def compose(self) -> ComposeResult:
        yield Input(placeholder="words to compare, e.g.  hotel inn hostel ferry", id="sm-words")
        yield Static("", id="sm-message", classes="message")
        yield Static("", id="sm-pair", classes="message")
        yield DataTable(id="sm-table", cursor_type="cell")

    def current_query(self) -> Similarity:
        words = tuple(self.word(w) for w in split_words(self.query_one("#sm-words", Input).value))
        if not words:
            raise UsageError("type two or more words")
        return Similarity(words=words, **self.option_values())

    def load_query(self, query: Query) -> None:
        assert isinstance(query, Similarity)
        self.show_options(query)
        self.query_one("#sm-words", Input).value = " ".join(
            f'"{visible_word(w)}"' if (" " in w or "," in w) else visible_word(w) for w in query.words
        )
        self.ask(query)

    def action_focus_input(self) -> None:
        self.query_one("#sm-words", Input).focus()

    @on(Input.Submitted, "#sm-words")
    def _submitted(self, event: Input.Submitted) -> None:
        self.submit()

    def show_result(self, result: Result) -> None:
        assert isinstance(result, SimilarityResult)
        res = result
        table = self.query_one("#sm-table", DataTable)
        table.clear(columns=True)
        table.add_column(Text(""), key="word")
        for j, w in enumerate(res.words):
            name = visible_word(w)
            head = name if len(name) <= CELL else name[: CELL - 1] + "…"  # cut with an ellipsis, not silently
            table.add_column(Text(head, no_wrap=True), key=f"c{j}", width=CELL)
        for i, w in enumerate(res.words):
            odd = w == res.odd_one_out
            label = Text("◆ " if odd else "  ", style="bold magenta")
            label.append_text(word_text(w, "bold magenta" if odd else "bold"))
            cells = [label]
            for j, v in enumerate(res.matrix[i]):
                style = f"bold white on {shade(v)}" if i != j else "dim"
                cells.append(Text(f"{v:6.3f}", style=style, justify="right"))
            table.add_row(*cells, key=f"r{i}")
        t = Text(f"{len(res.words)} words")
        for sw in res.subwords:
            t.append("\n" + visible_word(sw.note()), style="yellow")
        if res.odd_one_out is not None:
            i = res.words.index(res.odd_one_out)
            t.append("  ·  odd one out: ◆ ")
            t.append_text(word_text(res.odd_one_out, "bold magenta"))
            t.append(f" (cosine {res.odd_scores[i]:.3f} to the mean of the others)")
        self.show_message(t)
        table.focus()
        # The first cell off the diagonal: row 0, column 2 (column 0 holds the words).
        table.move_cursor(row=0, column=2 if len(res.words) > 1 else 1)

    @on(DataTable.CellHighlighted, "#sm-table")
    def _pair(self, event: DataTable.CellHighlighted) -> None:
        res = self.result
        if not isinstance(res, SimilarityResult):
            return
        table = self.query_one("#sm-table", DataTable)
        i, j = table.cursor_coordinate.row, table.cursor_coordinate.column - 1
        if j < 0:  # the words' column is a label, not a cell: arrows move between cells only
            table.move_cursor(row=i, column=1)
            return
        pair = self.query_one("#sm-pair", Static)
        if j < 0 or i >= len(res.words) or j >= len(res.words) or i == j or not res.pair_ranks:
            pair.update("")
            return
        a, b = res.words[i], res.words[j]
        t = Text.assemble(word_text(a, "bold"), " · ", word_text(b, "bold"), f": cosine {res.matrix[i][j]:.3f}; ")
        t.append_text(word_text(b, "bold"))
        t.append(f" ranks {res.pair_ranks[i][j]} among the neighbours of ")
        t.append_text(word_text(a, "bold"))
        t.append(f", and the reverse rank is {res.pair_ranks[j][i]}")
        pair.update(t)

    def show_failure(self, error: WordkinError) -> None:
        self.query_one("#sm-table", DataTable).clear(columns=True)
        self.query_one("#sm-pair", Static).update("")
        self.show_message(error_text(error))

    def show_message(self, text: Text) -> None:
        self.query_one("#sm-message", Static).update(text)
