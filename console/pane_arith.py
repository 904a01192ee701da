"""The arithmetic pane: an expression or an analogy in, the nearest words out; parse errors shown as you type."""

from __future__ import annotations

from rich.cells import cell_len
from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.message import Message
from textual.widgets import Input, Label, Select, Static

from index.analogy import calc
from index.errors import WordkinError
from index.expr import ExprError, parse, words_of
from index.results import CalcResult

from .safe_text import visible
from .widgets import NeighbourTable, error_text, word_text


class ArithmeticPane(Vertical):
    """``paris - france + italy``, ``0.5*harbour + quay``, ``man : king :: woman : ?``."""

    BINDINGS = [
        Binding("ctrl+s", "save", "Save to notebook", id="arith.save"),
        Binding("ctrl+t", "toggle_method", "add/mul", id="arith.method"),
        Binding("escape", "focus_input", "Edit the expression", show=False, id="arith.focus"),
    ]

    class CalcDone(Message):
        def __init__(self, result: CalcResult) -> None:
            super().__init__()
            self.result = result

    class CalcFailed(Message):
        def __init__(self, error: WordkinError) -> None:
            super().__init__()
            self.error = error

    def __init__(self, **kw) -> None:  # type: ignore[no-untyped-def]
        super().__init__(**kw)
        self.result: CalcResult | None = None

    def compose(self) -> ComposeResult:
        yield Input(placeholder="e.g.  paris - france + italy   or   hotel : hotels :: inn : ?", id="ar-expr")
        yield Static("", id="ar-check", classes="check")
        with Horizontal(classes="options"):
            yield Label("method")
            yield Select([("3CosAdd", "add"), ("3CosMul", "mul")], value="add", allow_blank=False, id="ar-method")
            yield Label("k")
            yield Input("10", id="ar-k", type="integer", classes="small")
        yield Static("", id="ar-message", classes="message")
        yield NeighbourTable(id="ar-table")

    def action_focus_input(self) -> None:
        self.query_one("#ar-expr", Input).focus()

    def action_toggle_method(self) -> None:
        sel = self.query_one("#ar-method", Select)
        sel.value = "mul" if sel.value == "add" else "add"

    def action_save(self) -> None:
        if self.result is not None:
            self.app.save_to_notebook(self.result)  # type: ignore[attr-defined]

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
        vs = self.app.vectors  # type: ignore[attr-defined]
        if vs is not None:
            missing = [w for w in words_of(tree) if vs.find(self.app.word_from_display(w)) is None]  # type: ignore[attr-defined]
            if missing:
                t = Text("not in the vocabulary: ", style="yellow")
                for i, w in enumerate(missing):
                    if i:
                        t.append(", ")
                    t.append_text(word_text(w, "bold"))
                return t
        return Text("✓ " + visible(_canonical(tree)), style="green", no_wrap=True, overflow="ellipsis")

    @on(Input.Submitted, "#ar-expr, #ar-k")
    def _submitted(self, event: Input.Submitted) -> None:
        text = self.query_one("#ar-expr", Input).value
        if not text.strip():
            return
        if self.app.vectors is None:  # type: ignore[attr-defined]
            self._message(Text("the vectors are still loading…", style="italic"))
            return
        try:
            k = int(self.query_one("#ar-k", Input).value or 10)
        except ValueError:
            k = 10
        method = str(self.query_one("#ar-method", Select).value)
        self.compute(text, k, method)

    @on(Select.Changed, "#ar-method")
    def _method_changed(self, event: Select.Changed) -> None:
        if self.result is not None:
            self._submitted(None)  # type: ignore[arg-type]

    @work(thread=True, exclusive=True, exit_on_error=False, group="arith", description="expression")
    def compute(self, text: str, k: int, method: str) -> None:
        try:
            res = calc(self.app.vectors, text, k, method=method, ann=self.app.ann)  # type: ignore[attr-defined]
        except WordkinError as exc:
            self.post_message(self.CalcFailed(exc))
            return
        self.post_message(self.CalcDone(res))

    def on_arithmetic_pane_calc_done(self, msg: CalcDone) -> None:
        res = msg.result
        self.result = res
        self.query_one("#ar-table", NeighbourTable).show(res.results)
        t = Text.assemble((visible(res.expression), "bold"), (f"  ·  {res.method}  ·  {res.mode}", "dim"))
        if res.excluded:
            t.append("\nexcluded: ", style="dim")
            t.append(", ".join(visible(w) for w in res.excluded))
        if res.target is not None:
            t.append("\n")
            t.append_text(word_text(res.target, "bold"))
            if res.target_rank is None:
                t.append(" is one of the excluded words")
            else:
                t.append(
                    f" ranks {res.target_rank}, score {res.target_similarity:.3f}",
                    style="green" if res.target_rank == 1 else "yellow",
                )
        self._message(t)

    def on_arithmetic_pane_calc_failed(self, msg: CalcFailed) -> None:
        self._message(error_text(msg.error))

    def _message(self, text: Text) -> None:
        self.query_one("#ar-message", Static).update(text)


def _canonical(tree) -> str:  # type: ignore[no-untyped-def]
    from index.expr import to_text

    return to_text(tree)
