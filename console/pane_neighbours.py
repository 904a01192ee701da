"""The neighbours pane: type a word, get its nearest neighbours; Enter on a result drills down to it."""

from __future__ import annotations

from dataclasses import dataclass

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.message import Message
from textual.widgets import Checkbox, DataTable, Input, Label, Static

from index.errors import WordkinError
from index.results import Neighbour, NeighbourResult
from index.search import mutual, neighbours

from .safe_text import visible
from .widgets import NeighbourTable, VocabSuggester, error_text, word_text


@dataclass(frozen=True)
class NeighbourQuery:
    word: str
    k: int = 10
    top: int | None = None
    hide_forms: bool = False
    fold_case: bool = False


def hide_forms(query: str, rows: list[Neighbour], k: int) -> list[Neighbour]:
    """Drop results that merely contain the query or are contained in it (inflections, plurals, case variants)."""
    q = query.casefold()
    kept = [r for r in rows if q not in r.word.casefold() and r.word.casefold() not in q]
    return [Neighbour(i + 1, r.word, r.similarity) for i, r in enumerate(kept[:k])]


class NeighboursPane(Vertical):
    """Nearest neighbours of a word, with drill-down and back/forward history."""

    BINDINGS = [
        Binding("ctrl+b", "back", "Back", id="neighbours.back"),
        Binding("ctrl+f", "forward", "Forward", id="neighbours.forward"),
        Binding("ctrl+s", "save", "Save to notebook", id="neighbours.save"),
        Binding("escape", "focus_input", "Edit the query", show=False, id="neighbours.focus"),
    ]

    class NeighboursFound(Message):
        def __init__(self, query: NeighbourQuery, result: NeighbourResult, query_row: int) -> None:
            super().__init__()
            self.query = query
            self.result = result
            self.query_row = query_row

    class MutualMarked(Message):
        def __init__(self, result: NeighbourResult, marks: list[bool]) -> None:
            super().__init__()
            self.result = result
            self.marks = marks

    class QueryFailed(Message):
        def __init__(self, error: WordkinError) -> None:
            super().__init__()
            self.error = error

    def __init__(self, **kw) -> None:  # type: ignore[no-untyped-def]
        super().__init__(**kw)
        self.history: list[NeighbourQuery] = []
        self.position = -1
        self.result: NeighbourResult | None = None
        self.marks: list[bool] = []

    def compose(self) -> ComposeResult:
        yield Input(placeholder="a word, then Enter  (e.g. harbour)", id="nb-word")
        with Horizontal(classes="options"):
            yield Label("k")
            yield Input("10", id="nb-k", type="integer", classes="small")
            yield Label("top")
            yield Input("", id="nb-top", type="integer", placeholder="all", classes="small")
            yield Checkbox("hide forms", id="nb-hide")
            yield Checkbox("fold case", id="nb-fold")
        yield Static("", id="nb-message", classes="message")
        yield NeighbourTable(id="nb-table")

    def on_vectors_ready(self, completion: list[str]) -> None:
        """``completion``: the sorted displayable vocabulary (built off the UI thread)."""
        self.query_one("#nb-word", Input).suggester = VocabSuggester(completion)

    # -- actions ---------------------------------------------------------------------------------------

    def action_focus_input(self) -> None:
        self.query_one("#nb-word", Input).focus()

    def action_back(self) -> None:
        if self.position > 0:
            self.position -= 1
            self._run(self.history[self.position], record=False)

    def action_forward(self) -> None:
        if self.position < len(self.history) - 1:
            self.position += 1
            self._run(self.history[self.position], record=False)

    def action_save(self) -> None:
        if self.result is not None:
            self.app.save_to_notebook(self.result)  # type: ignore[attr-defined]

    # -- events ----------------------------------------------------------------------------------------

    @on(Input.Submitted, "#nb-word, #nb-k, #nb-top")
    def _submitted(self, event: Input.Submitted) -> None:
        text = self.query_one("#nb-word", Input).value.strip()
        if text:
            self.ask(text)

    @on(DataTable.RowSelected, "#nb-table")
    def _drill(self, event: DataTable.RowSelected) -> None:
        if self.result is None:
            return
        i = int(str(event.row_key.value))
        if i < len(self.result.results):
            self.ask(self.result.results[i].word, raw=True)

    def ask(self, text: str, raw: bool = False) -> None:
        """Query ``text`` (as typed, or a raw vocabulary word when ``raw``) with the options now set."""
        word = text if raw else self.app.word_from_display(text)  # type: ignore[attr-defined]
        try:
            k = int(self.query_one("#nb-k", Input).value or 10)
            top_s = self.query_one("#nb-top", Input).value.strip()
            top = int(top_s) if top_s else None
        except ValueError:
            self._message(Text("k and top must be whole numbers", style="bold red"))
            return
        q = NeighbourQuery(
            word,
            k,
            top,
            self.query_one("#nb-hide", Checkbox).value,
            self.query_one("#nb-fold", Checkbox).value,
        )
        self._run(q, record=True)

    def _run(self, q: NeighbourQuery, record: bool) -> None:
        if record:
            del self.history[self.position + 1 :]
            self.history.append(q)
            self.position = len(self.history) - 1
        box = self.query_one("#nb-word", Input)
        shown = visible(q.word)
        if box.value != shown:
            with box.prevent(Input.Changed):
                box.value = shown
        if self.app.vectors is None:  # type: ignore[attr-defined]
            self._message(Text("the vectors are still loading…", style="italic"))
            return
        self.find(q)

    @work(thread=True, exclusive=True, exit_on_error=False, group="neighbours", description="neighbour query")
    def find(self, q: NeighbourQuery) -> None:
        vs = self.app.vectors  # type: ignore[attr-defined]
        ann = self.app.ann  # type: ignore[attr-defined]
        try:
            word = q.word
            if q.fold_case:
                r = vs.find_folded(word)
                if r is not None:
                    word = vs.words[r]
            extra = 40 if q.hide_forms else 0
            res = neighbours(vs, word, q.k + extra, ann=ann, top=q.top)
            if q.hide_forms:
                rows = hide_forms(word, list(res.results), q.k)
                res = NeighbourResult(res.query, q.k, res.mode, tuple(rows), res.top, res.elapsed_ms)
            row = vs.row(word)
        except WordkinError as exc:
            self.post_message(self.QueryFailed(exc))
            return
        self.post_message(self.NeighboursFound(q, res, row))
        marks = mutual(vs, row, [vs.row(n.word) for n in res.results], res.k)
        self.post_message(self.MutualMarked(res, marks))

    def on_neighbours_pane_neighbours_found(self, msg: NeighboursFound) -> None:
        self.result = msg.result
        self.marks = []
        self.query_one(NeighbourTable).show(msg.result.results)
        res = msg.result
        head = Text.assemble(
            ("neighbours of ", ""),
            word_text(res.query, "bold"),
            (
                f"  ·  {res.mode}  ·  k {res.k}"
                + (f"  ·  top {res.top}" if res.top else "")
                + f"  ·  {res.elapsed_ms:.1f} ms",
                "dim",
            ),
        )
        self._message(head)

    def on_neighbours_pane_mutual_marked(self, msg: MutualMarked) -> None:
        if msg.result is self.result:
            self.marks = msg.marks
            self.query_one(NeighbourTable).set_marks(msg.marks)

    def on_neighbours_pane_query_failed(self, msg: QueryFailed) -> None:
        self._message(error_text(msg.error))

    def _message(self, text: Text) -> None:
        self.query_one("#nb-message", Static).update(text)
