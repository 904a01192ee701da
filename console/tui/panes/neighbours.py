"""The neighbours pane: type a word, get its nearest neighbours; Enter on a result drills down to it."""

from __future__ import annotations

import dataclasses
from typing import ClassVar

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.message import Message
from textual.timer import Timer
from textual.widgets import Checkbox, DataTable, Input, Static

from wordkin.console.formats.safe_text import visible
from wordkin.console.tui.option_widgets import OptionCheckbox, labelled
from wordkin.console.tui.panes.base import QueryPane
from wordkin.console.tui.widgets import NeighbourTable, WordInput, error_text, word_text
from wordkin.index.errors import UsageError, WordkinError
from wordkin.index.kinds import NeighbourResult, Neighbours, Query, Result
from wordkin.index.search import mutual
from wordkin.index.session import Session


class NeighboursPane(QueryPane):
    """Nearest neighbours of a word, with drill-down and back/forward history."""

    kind: ClassVar[type[Query]] = Neighbours

    BINDINGS = [
        Binding("ctrl+b", "back", "Back", id="neighbours.back"),
        Binding("ctrl+f", "forward", "Forward", id="neighbours.forward"),
        Binding("ctrl+s", "save", "Save to notebook", id="neighbours.save"),
        Binding("escape", "focus_input", "Edit the query", show=False, id="neighbours.focus"),
    ]

    class Compared(Message):
        """The same query answered by the set the open one replaces: ``old`` (None if the word is not there)."""

        def __init__(self, result: NeighbourResult, old: NeighbourResult | None, error: str = "") -> None:
            super().__init__()
            self.result = result
            self.old = old
            self.error = error

    class MutualMarked(Message):
        """Which rows of ``result`` are mutual neighbours (the query is in their top k too)."""

        def __init__(self, result: NeighbourResult, marks: list[bool]) -> None:
            super().__init__()
            self.result = result
            self.marks = marks

    def __init__(self, **kw: object) -> None:
        super().__init__(**kw)
        self.history: list[Neighbours] = []
        #: For each history entry, the results row the user drilled down from (Back puts the cursor there).
        self.drilled_from: list[int | None] = []
        self.position = -1
        self.marks: list[bool] = []
        self.restore_row: int | None = None
        self._rerun_timer: Timer | None = None

    def compose(self) -> ComposeResult:
        yield WordInput(placeholder="a word, then Enter  (e.g. harbour)", id="nb-word")
        yield Static("", id="nb-complete", classes="line")
        with Horizontal(classes="options"):
            yield from labelled(Neighbours, "k", id="nb-k", classes="small")
            yield from labelled(Neighbours, "top", id="nb-top", classes="small")
            yield OptionCheckbox(Neighbours, "hide_forms", id="nb-hide")
            yield OptionCheckbox(Neighbours, "fold_case", id="nb-fold")
            yield OptionCheckbox(Neighbours, "exact", id="nb-exact")
        yield Static("", id="nb-message", classes="message")
        compare_line = Static("", id="nb-compare", classes="line")
        compare_line.display = False  # shown when a second set is open (--against)
        yield compare_line
        yield NeighbourTable(id="nb-table")

    def session_ready(self) -> None:
        if self.session is not None and self.session.against is not None:
            self.query_one(NeighbourTable).add_comparison_columns()
            self.query_one("#nb-compare", Static).display = True
        if self.vocab is not None:
            self.query_one("#nb-word", WordInput).completions = self.vocab.completion

    # -- the query value -------------------------------------------------------------------------------

    def current_query(self) -> Neighbours:
        text = self.query_one("#nb-word", Input).value.strip()
        if not text:
            raise UsageError("type a word")
        return Neighbours(word=self.word(text), **self.option_values())

    def load_query(self, query: Query) -> None:
        assert isinstance(query, Neighbours)
        self._set_widgets(query)
        self._record(query)
        self.ask(query)

    def _set_widgets(self, q: Neighbours) -> None:
        self.show_options(q)
        box = self.query_one("#nb-word", Input)
        if box.value != visible(q.word):
            with box.prevent(Input.Changed):
                box.value = visible(q.word)

    def _record(self, q: Neighbours, from_row: int | None = None) -> None:
        del self.history[self.position + 1 :]
        del self.drilled_from[self.position + 1 :]
        if self.position >= 0 and from_row is not None:
            self.drilled_from[self.position] = from_row
        self.history.append(q)
        self.drilled_from.append(None)
        self.position = len(self.history) - 1

    # -- actions ---------------------------------------------------------------------------------------

    def action_focus_input(self) -> None:
        self.query_one("#nb-word", Input).focus()

    def action_back(self) -> None:
        if self.position > 0:
            self.position -= 1
            self.restore_row = self.drilled_from[self.position]
            self._set_widgets(self.history[self.position])
            self.ask(self.history[self.position])

    def action_forward(self) -> None:
        if self.position < len(self.history) - 1:
            self.position += 1
            self._set_widgets(self.history[self.position])
            self.ask(self.history[self.position])

    # -- events ----------------------------------------------------------------------------------------

    @on(Input.Submitted, "#nb-word, #nb-k, #nb-top")
    def _submitted(self, event: Input.Submitted) -> None:
        try:
            q = self.current_query()
        except UsageError as exc:
            self.post_message(self.Failed(None, exc))
            return
        self._record(q)
        self.ask(q)

    @on(Checkbox.Changed, "#nb-hide, #nb-fold, #nb-exact")
    def _option_changed(self, event: Checkbox.Changed) -> None:
        if self.query_one("#nb-word", Input).value.strip():
            self._submitted(None)  # type: ignore[arg-type]

    @on(Input.Changed, "#nb-k, #nb-top")
    def _number_changed(self, event: Input.Changed) -> None:
        """Editing k or top asks again after a short pause (no Enter needed)."""
        if self.result is None:
            return
        if self._rerun_timer is not None:
            self._rerun_timer.stop()
        self._rerun_timer = self.set_timer(0.4, lambda: self._submitted(None))  # type: ignore[arg-type]

    @on(Input.Changed, "#nb-word")
    def _complete(self, event: Input.Changed) -> None:
        box = self.query_one("#nb-word", WordInput)
        cands = box.completions.candidates(event.value.strip()) if box.completions is not None else []
        line = Text(no_wrap=True, overflow="ellipsis")
        if cands:
            line.append("Tab: ", style="dim")
            line.append(cands[0], style="bold")
            for c in cands[1:]:
                line.append("  ·  ", style="dim")
                line.append(c)
        self.query_one("#nb-complete", Static).update(line)

    @on(WordInput.ToResults)
    def _to_results(self, event: WordInput.ToResults) -> None:
        table = self.query_one(NeighbourTable)
        if table.row_count:
            table.focus()

    @on(DataTable.RowSelected, "#nb-table")
    def _drill(self, event: DataTable.RowSelected) -> None:
        res = self.result
        if not isinstance(res, NeighbourResult):
            return
        i = int(str(event.row_key.value))
        if i < len(res.rows):
            # the same options, the drilled-to word as it stands in the vocabulary
            q = dataclasses.replace(res.query, word=res.rows[i].word, fold_case=False)
            self._set_widgets(q)
            self._record(q, from_row=i)
            self.ask(q)

    # -- showing ---------------------------------------------------------------------------------------

    def show_result(self, result: Result) -> None:
        assert isinstance(result, NeighbourResult)
        self.marks = []
        table = self.query_one(NeighbourTable)
        table.show(result.rows)
        self.query_one("#nb-complete", Static).update("")
        if self.restore_row is not None and self.restore_row < table.row_count:
            table.move_cursor(row=self.restore_row)
            table.focus()
        self.restore_row = None
        opts = ", ".join(result.query.options())
        how = "index" if result.mode == "ann" else "exact"
        head = Text.assemble(
            ("neighbours of ", ""),
            ("≈ " if result.subword else "", "bold yellow"),
            word_text(result.word, "bold"),
            (f"  ·  {opts}  ·  {how}  ·  {result.elapsed_ms:.1f} ms", "dim"),
        )
        if result.subword is not None:
            head.append("\n" + visible(result.subword.note()), style="yellow")
        self.show_message(head)
        if self.session is not None and result.rows and result.subword is None:
            self.mark_mutual(result, self.session)
        if self.session is not None and self.session.against is not None:
            self.compare_with_old(result, self.session)

    @work(thread=True, exclusive=True, exit_on_error=False, group="against", description="neighbours in the old set")
    def compare_with_old(self, result: NeighbourResult, session: Session) -> None:
        assert session.against is not None
        q = dataclasses.replace(result.query, exact=True)
        try:
            old = q.run(Session(session.against))
        except WordkinError as exc:
            self.post_message(self.Compared(result, None, exc.message))
            return
        self.post_message(self.Compared(result, old))

    def on_neighbours_pane_compared(self, msg: Compared) -> None:
        if msg.result is not self.result:
            return
        table = self.query_one(NeighbourTable)
        if msg.old is None:
            table.set_comparison([], [])
            self.show_message(Text(f"old set: {visible(msg.error)}", style="yellow"))
            return
        old_rank = {r.word: r.rank for r in msg.old.rows}
        changes = []
        for r in msg.result.rows:
            was = old_rank.get(r.word)
            if was is None:
                changes.append(Text("new", style="bold green"))
            elif was == r.rank:
                changes.append(Text("=", style="dim"))
            else:
                changes.append(Text(f"{'↑' if was > r.rank else '↓'}{abs(was - r.rank)}", style="yellow"))
        table.set_comparison(changes, [r.word for r in msg.old.rows])
        new_words = {r.word for r in msg.result.rows}
        lost = [r.word for r in msg.old.rows if r.word not in new_words]
        if lost:
            t = Text("lost since the old set: ", style="red")
            t.append(visible(", ".join(lost)))
            self.query_one("#nb-compare", Static).update(t)
        else:
            self.query_one("#nb-compare", Static).update(Text("the old set had the same words", style="dim"))

    @work(thread=True, exclusive=True, exit_on_error=False, group="mutual", description="mutual neighbours")
    def mark_mutual(self, result: NeighbourResult, session: Session) -> None:
        vs = session.vectors
        rows = [vs.row(n.word) for n in result.rows]
        marks = mutual(vs, vs.row(result.word), rows, result.k)
        self.post_message(self.MutualMarked(result, marks))

    def on_neighbours_pane_mutual_marked(self, msg: MutualMarked) -> None:
        if msg.result is self.result:
            self.marks = msg.marks
            self.query_one(NeighbourTable).set_marks(msg.marks)

    def show_failure(self, error: WordkinError) -> None:
        self.query_one(NeighbourTable).clear()
        self.show_message(error_text(error))

    def show_message(self, text: Text) -> None:
        self.query_one("#nb-message", Static).update(text)
