"""The release panes: the check-up of the open set (F8) and its comparison with the set it replaces (F7, with
``wordkin open NEW --against OLD``). Both are slow on large sets: they run in a cancellable worker that reports
its progress, and show their figures, histograms and (comparison) the most changed words; Enter on one of those
shows both of its neighbour lists."""

from __future__ import annotations

from typing import Any, ClassVar

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, VerticalScroll
from textual.widgets import DataTable, Input, Label, Static

from wordkin.console.formats.plots import histogram_lines
from wordkin.console.formats.safe_text import visible
from wordkin.console.formats.text_tables import table_lines
from wordkin.console.tui.option_widgets import labelled
from wordkin.console.tui.panes.base import QueryPane
from wordkin.console.tui.widgets import error_text, word_text
from wordkin.index.errors import WordkinError
from wordkin.index.kinds import Checkup, CheckupResult, Compare, CompareResult, Query, Result


def _paths(text: str) -> tuple[str, ...]:
    return tuple(p.strip() for p in text.split(",") if p.strip())


class ComparePane(QueryPane):
    """The open set against the one it replaces: overlap, aligned cosine, bands, the most changed words."""

    kind: ClassVar[type[Query]] = Compare
    slow: ClassVar[bool] = True

    BINDINGS = [
        Binding("ctrl+r", "run", "Compare", id="compare.run"),
        Binding("ctrl+s", "save", "Save to notebook", id="compare.save"),
    ]

    def __init__(self, **kw: Any) -> None:
        super().__init__(**kw)
        self.words: tuple[str, ...] = ()
        self.pairs: tuple[str, ...] = ()
        self.analogies: tuple[str, ...] = ()

    def compose(self) -> ComposeResult:
        with Horizontal(classes="options"):
            yield from labelled(Compare, "k", id="cmp-k", classes="small")
            yield from labelled(Compare, "top", id="cmp-top", classes="small")
            yield from labelled(Compare, "most", id="cmp-most", classes="small")
        yield Static("", id="cmp-message", classes="message")
        with VerticalScroll(id="cmp-summary-box"):
            yield Static("", id="cmp-summary")
        yield DataTable(id="cmp-table", cursor_type="row", zebra_stripes=True)
        yield Static("", id="cmp-detail", classes="message")

    def on_mount(self) -> None:
        t = self.query_one("#cmp-table", DataTable)
        t.add_column(Text("most changed"), key="word")
        t.add_column(Text("overlap"), key="overlap", width=7)
        t.add_column(Text("aligned"), key="aligned", width=7)
        t.add_column(Text("new neighbours"), key="new")

    def session_ready(self) -> None:
        if self.session is not None and self.session.against is None:
            self.show_message(
                Text("open with --against OLD to compare this set with the one it replaces", style="italic")
            )
        elif self.session is not None and self.result is None:
            src = self.session.against.source.name if self.session.against else ""
            self.show_message(Text(f"Ctrl+R compares with {visible(src)}", style="italic"))

    def current_query(self) -> Compare:
        return Compare(words=self.words, pairs=self.pairs, analogies=self.analogies, **self.option_values())

    def load_query(self, query: Query) -> None:
        assert isinstance(query, Compare)
        self.show_options(query)
        self.words, self.pairs, self.analogies = query.words, query.pairs, query.analogies
        self.ask(query)

    def action_run(self) -> None:
        self.submit()

    @on(Input.Submitted, "#cmp-k, #cmp-top, #cmp-most")
    def _submitted(self, event: Input.Submitted) -> None:
        self.submit()

    def on_query_pane_progress(self, msg: QueryPane.Progress) -> None:
        pct = f" {100 * msg.done // msg.total}%" if msg.total else ""
        self.show_message(Text(f"comparing… {msg.stage}{pct}  (a new Ctrl+R starts over)", style="italic"))

    def show_result(self, result: Result) -> None:
        assert isinstance(result, CompareResult)
        lines = table_lines(result.summary_table())
        lines += [visible(n) for n in result.notes()]
        for title, h in result.histograms():
            lines += [""] + histogram_lines(title, h, width=30)
        self.query_one("#cmp-summary", Static).update(Text("\n".join(lines)))
        t = self.query_one("#cmp-table", DataTable)
        t.clear()
        for i, c in enumerate(result.most_changed):
            t.add_row(
                word_text(c.word),
                Text(f"{c.overlap:.2f}", justify="right"),
                Text("-" if c.aligned_cosine is None else f"{c.aligned_cosine:.3f}", justify="right"),
                Text(visible(" ".join(c.new[:4])), no_wrap=True, overflow="ellipsis"),
                key=str(i),
            )
        self.show_message(
            Text(
                f"{result.compared:,} words compared · {', '.join(result.query.options())} · "
                f"{result.elapsed_ms / 1000:.1f} s",
                style="dim",
            )
        )

    @on(DataTable.RowSelected, "#cmp-table")
    def _both_lists(self, event: DataTable.RowSelected) -> None:
        res = self.result
        if not isinstance(res, CompareResult):
            return
        c = res.most_changed[int(str(event.row_key.value))]
        t = Text.assemble(word_text(c.word, "bold"), "\nold: ")
        t.append(visible(", ".join(c.old)))
        t.append("\nnew: ")
        t.append(visible(", ".join(c.new)))
        self.query_one("#cmp-detail", Static).update(t)

    def show_failure(self, error: WordkinError) -> None:
        self.query_one("#cmp-table", DataTable).clear()
        self.query_one("#cmp-summary", Static).update("")
        self.show_message(error_text(error))

    def show_message(self, text: Text) -> None:
        self.query_one("#cmp-message", Static).update(text)


class CheckupPane(QueryPane):
    """Is this set ready to ship: vocabulary, norms, anisotropy, hubness, benchmarks."""

    kind: ClassVar[type[Query]] = Checkup
    slow: ClassVar[bool] = True

    BINDINGS = [
        Binding("ctrl+r", "run", "Check up", id="checkup.run"),
        Binding("ctrl+s", "save", "Save to notebook", id="checkup.save"),
    ]

    def compose(self) -> ComposeResult:
        with Horizontal(classes="options"):
            yield from labelled(Checkup, "k", id="chk-k", classes="small")
            yield Label("pairs")
            yield Input("", id="chk-pairs", placeholder="files, comma-separated", classes="wide")
        with Horizontal(classes="options"):
            yield Label("analogies")
            yield Input("", id="chk-analogies", placeholder="files, comma-separated", classes="wide")
        yield Static(Text("Ctrl+R runs the check-up", style="italic"), id="chk-message", classes="message")
        with VerticalScroll(id="chk-report-box"):
            yield Static("", id="chk-report")

    def current_query(self) -> Checkup:
        return Checkup(
            pairs=_paths(self.query_one("#chk-pairs", Input).value),
            analogies=_paths(self.query_one("#chk-analogies", Input).value),
            **self.option_values(),
        )

    def load_query(self, query: Query) -> None:
        assert isinstance(query, Checkup)
        self.show_options(query)
        self.query_one("#chk-pairs", Input).value = ", ".join(query.pairs)
        self.query_one("#chk-analogies", Input).value = ", ".join(query.analogies)
        self.ask(query)

    def action_run(self) -> None:
        self.submit()

    @on(Input.Submitted, "#chk-k, #chk-pairs, #chk-analogies")
    def _submitted(self, event: Input.Submitted) -> None:
        self.submit()

    def on_query_pane_progress(self, msg: QueryPane.Progress) -> None:
        pct = f" {100 * msg.done // msg.total}%" if msg.total else ""
        self.show_message(Text(f"checking… {msg.stage}{pct}", style="italic"))

    def show_result(self, result: Result) -> None:
        assert isinstance(result, CheckupResult)
        lines = table_lines(result.table()) + [visible(n) for n in result.notes()]
        for title, h in result.histograms():
            lines += [""] + histogram_lines(title, h, width=30)
        self.query_one("#chk-report", Static).update(Text("\n".join(lines)))
        self.show_message(
            Text(f"check-up · {', '.join(result.query.options())} · {result.elapsed_ms / 1000:.1f} s", style="dim")
        )

    def show_failure(self, error: WordkinError) -> None:
        self.query_one("#chk-report", Static).update("")
        self.show_message(error_text(error))

    def show_message(self, text: Text) -> None:
        self.query_one("#chk-message", Static).update(text)
