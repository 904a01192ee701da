"""The arithmetic pane: an expression or an analogy in, the nearest words out; parse errors shown as you type."""

from __future__ import annotations

from typing import ClassVar

from rich.cells import cell_len
from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.widgets import Checkbox, DataTable, Input, Select, Static

from wordkin.console.formats.safe_text import visible
from wordkin.console.tui.option_widgets import OptionCheckbox, OptionSelect, labelled
from wordkin.console.tui.panes.base import QueryPane
from wordkin.console.tui.widgets import NeighbourTable, error_text, word_text
from wordkin.index.errors import UsageError, WordkinError
from wordkin.index.expressions import ExprError, parse, to_text, words_of
from wordkin.index.kinds import Arithmetic, CalcResult, Neighbours, Query, Result


class ArithmeticPane(QueryPane):
    """``paris - france + italy``, ``0.5*harbour + quay``, ``man : king :: woman : ?``."""

    kind: ClassVar[type[Query]] = Arithmetic

    BINDINGS = [
        Binding("ctrl+s", "save", "Save to notebook", id="arith.save"),
        Binding("ctrl+t", "toggle_method", "add/mul", id="arith.method"),
        Binding("escape", "focus_input", "Edit the expression", show=False, id="arith.focus"),
    ]

    def compose(self) -> ComposeResult:
        yield Input(placeholder="e.g.  paris - france + italy   or   hotel : hotels :: inn : ?", id="ar-expr")
        yield Static("", id="ar-check", classes="check")
        with Horizontal(classes="options"):
            yield OptionSelect(Arithmetic, "method", id="ar-method")
            yield from labelled(Arithmetic, "k", id="ar-k", classes="small")
            yield from labelled(Arithmetic, "top", id="ar-top", classes="small")
            yield OptionCheckbox(Arithmetic, "keep_inputs", id="ar-keep")
            yield OptionCheckbox(Arithmetic, "exact", id="ar-exact")
        yield Static("", id="ar-message", classes="message")
        yield NeighbourTable(id="ar-table", mutual=False)

    # -- the query value -------------------------------------------------------------------------------

    def current_query(self) -> Arithmetic:
        text = self.query_one("#ar-expr", Input).value
        if not text.strip():
            raise UsageError("type an expression")
        return Arithmetic(expression=text, **self.option_values())

    def load_query(self, query: Query) -> None:
        assert isinstance(query, Arithmetic)
        self.show_options(query)
        box = self.query_one("#ar-expr", Input)
        if box.value != query.expression:
            box.value = query.expression
        self.ask(query)

    # -- actions and events ----------------------------------------------------------------------------

    def action_focus_input(self) -> None:
        self.query_one("#ar-expr", Input).focus()

    def action_toggle_method(self) -> None:
        sel = self.query_one("#ar-method", Select)
        sel.value = "mul" if sel.value == "add" else "add"

    @on(Input.Changed, "#ar-expr")
    def _check(self, event: Input.Changed) -> None:
        self.query_one("#ar-check", Static).update(self.check_text(event.value))

    def check_text(self, text: str) -> Text:
        """What is wrong with ``text`` so far, with a caret under the column; or what it will compute."""
        if not text.strip():
            return Text("")
        try:
            tree = parse(text)
        except ExprError as exc:
            # The input text starts three cells in (border and padding); the caret lines up under the column.
            pad = cell_len(visible(text[: exc.column])) + 3
            return Text(" " * pad + "^ " + visible(exc.expected), style="bold red", no_wrap=True)
        if self.session is not None:
            vs = self.session.vectors
            missing = [w for w in words_of(tree) if vs.find(self.word(w)) is None]
            if missing and vs.subwords is not None and self.subwords:
                return Text("≈ built from character n-grams: " + ", ".join(visible(w) for w in missing), style="yellow")
            if missing:
                t = Text("not in the vocabulary: ", style="yellow")
                for i, w in enumerate(missing):
                    if i:
                        t.append(", ")
                    t.append_text(word_text(w, "bold"))
                return t
        return Text("✓ " + visible(to_text(tree)), style="green", no_wrap=True, overflow="ellipsis")

    @on(Input.Submitted, "#ar-expr, #ar-k, #ar-top")
    def _submitted(self, event: Input.Submitted) -> None:
        self.submit()

    @on(Select.Changed, "#ar-method")
    @on(Checkbox.Changed, "#ar-keep, #ar-exact")
    def _option_changed(self) -> None:
        if self.query_one("#ar-expr", Input).value.strip():
            self.submit()

    @on(DataTable.RowSelected, "#ar-table")
    def _open_word(self, event: DataTable.RowSelected) -> None:
        """Enter on an answer opens that word's neighbours."""
        res = self.result
        if isinstance(res, CalcResult):
            i = int(str(event.row_key.value))
            if i < len(res.rows):
                self.post_message(self.OpenRequested(Neighbours(word=res.rows[i].word, subwords=res.query.subwords)))

    # -- showing ---------------------------------------------------------------------------------------

    def show_result(self, result: Result) -> None:
        assert isinstance(result, CalcResult)
        self.query_one("#ar-table", NeighbourTable).show(result.rows)
        opts = ", ".join(result.query.options())
        how = "index" if result.mode == "ann" else "exact"
        t = Text.assemble((visible(result.expression), "bold"), (f"  ·  {opts}  ·  {how}", "dim"))
        for sw in result.subwords:
            t.append("\n" + visible(sw.note()), style="yellow")
        if result.excluded:
            t.append("\nexcluded: ", style="dim")
            t.append(", ".join(visible(w) for w in result.excluded))
        if result.target is not None:
            t.append("\n")
            t.append_text(word_text(result.target, "bold"))
            if result.target_rank is None:
                t.append(" is one of the excluded words")
            else:
                t.append(
                    f" ranks {result.target_rank}, score {result.target_similarity:.3f}",
                    style="green" if result.target_rank == 1 else "yellow",
                )
        self.show_message(t)

    def show_failure(self, error: WordkinError) -> None:
        self.query_one("#ar-table", NeighbourTable).clear()
        self.show_message(error_text(error))

    def show_message(self, text: Text) -> None:
        self.query_one("#ar-message", Static).update(text)
