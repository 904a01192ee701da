"""The Terms pane: a workbench for growing a term list from a few seed words.

The list's terms stand on one line at the top; below, the candidates as a table (word, score, support, a bar),
ranked for the list's current state. Single keys act on the highlighted candidate: keep it, drop it, or set it
aside for later; undo takes the last decision back. After each decision the candidates are asked again and the
cursor stays on the same row, so a curator can work down the table. Lists are created, renamed and chosen here;
every decision is committed to the notebook file (in the notebook worker, off the UI thread) before it is shown.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any, ClassVar

from rich.text import Text
from textual import on
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal
from textual.widgets import Checkbox, DataTable, Input, Label, Select, Static

from wordkin.console.formats.output_file import FileExistsUsageError
from wordkin.console.formats.safe_text import visible
from wordkin.console.formats.term_list_export import FORMATS, render
from wordkin.console.store.notebook import Notebook, now, vector_set_info
from wordkin.console.store.term_lists import (
    TermList,
    all_lists,
    create_list,
    decide,
    get_list,
    record_shown,
    rename_list,
    undo,
)
from wordkin.console.tui.notebook_jobs import BUSY_AFTER, NotebookJobs, NotebookJobsHost
from wordkin.console.tui.option_widgets import OptionCheckbox, labelled
from wordkin.console.tui.panes.base import QueryPane
from wordkin.console.tui.widgets import bar, error_text, word_text
from wordkin.index.errors import UsageError, WordkinError
from wordkin.index.kinds import Query, Result, TermsResult, TermSuggest


class TermsPane(NotebookJobsHost, QueryPane):
    """Term lists: seeds, candidates with support, keep / drop / aside / undo, export."""

    kind: ClassVar[type[Query]] = TermSuggest

    BINDINGS = [
        Binding("k,plus", "decide('kept')", "Keep", id="terms.keep"),
        Binding("d,minus", "decide('dropped')", "Drop", id="terms.drop"),
        Binding("a", "decide('aside')", "Aside", id="terms.aside"),
        Binding("u,ctrl+z", "undo", "Undo", id="terms.undo"),
        Binding("n", "new_list", "New list", id="terms.new"),
        Binding("r", "rename_list", "Rename", id="terms.rename"),
        Binding("x", "export", "Export", id="terms.export"),
        Binding("ctrl+s", "save", "Save to notebook", id="terms.save"),
        Binding("escape", "focus_table", "Candidates", show=False, id="terms.table"),
    ]

    def __init__(self, notebook: str | None = None, **kw: Any) -> None:
        super().__init__(**kw)
        self.notebook = notebook
        self.jobs = NotebookJobs(self, notebook)
        self.term_list: TermList | None = None  # the list as stored, when it is stored
        self.state: TermSuggest | None = None  # seeds and decisions of the list shown (stored or from a query)
        self.box_mode = "new"  # what Enter in the name box does: "new" or "rename"
        self.cursor_row = 0
        #: The candidates as the table shows them now: a decision takes its row out at once, so that keys pressed
        #: in quick succession act on the next candidates before the refreshed table arrives.
        self.shown: list[str] = []
        #: An export file that exists and that a second x (or Enter) replaces.
        self.replace_ok: str | None = None

    def compose(self) -> ComposeResult:
        with Horizontal(classes="options"):
            yield Label("list")
            yield Select([], prompt="(no lists yet)", id="tm-list", allow_blank=True)
            yield Input(placeholder="n: new list  NAME: seed seed …", id="tm-name", classes="wide")
        yield Static("", id="tm-terms", classes="line")
        with Horizontal(classes="options"):
            yield from labelled(TermSuggest, "k", id="tm-k", classes="small")
            yield from labelled(TermSuggest, "gamma", id="tm-gamma", classes="small")
            yield from labelled(TermSuggest, "top", id="tm-top", classes="small")
            yield from labelled(TermSuggest, "support_k", id="tm-support", classes="small")
        with Horizontal(classes="options"):
            yield OptionCheckbox(TermSuggest, "hide_forms", id="tm-hide")
            yield OptionCheckbox(TermSuggest, "exact", id="tm-exact")
            yield from labelled(TermSuggest, "include", id="tm-include", placeholder="regex", classes="small")
            yield from labelled(TermSuggest, "exclude", id="tm-exclude", placeholder="regex", classes="small")
        yield Static("", id="tm-message", classes="message")
        yield DataTable(id="tm-table", cursor_type="row", zebra_stripes=True)
        with Horizontal(classes="options"):
            yield Label("export")
            yield Select([(f, f) for f in FORMATS], value="synonyms", allow_blank=False, id="tm-format")
            yield Input("", id="tm-out", placeholder="file to write (x, then Enter)", classes="wide")

    def on_mount(self) -> None:
        t = self.query_one("#tm-table", DataTable)
        t.add_column(Text("rank"), key="rank", width=4)
        t.add_column(Text("word"), key="word")
        t.add_column(Text("score"), key="score", width=6)
        t.add_column(Text("support"), key="support", width=7)
        t.add_column(Text(""), key="bar", width=12)
        self.notebook_io()
        self.jobs.submit(all_lists, self._lists_loaded, "term lists unreadable")

    def session_ready(self) -> None:
        if self.state is not None:
            self._refresh()

    # -- the notebook, off the UI thread ----------------------------------------------------------------------

    def on_notebook_jobs_failed(self, msg: NotebookJobs.Failed) -> None:
        self.jobs.finished()
        self.show_message(error_text(msg.error))
        if isinstance(msg.error, FileExistsUsageError):
            self.replace_ok = str(Path(self.query_one("#tm-out", Input).value.strip()).expanduser())
        self.notify(visible(msg.error.message), title=msg.job.failed_title, severity="error", markup=False)

    def job(self, op: Any, then: Any, title: str) -> None:
        """Queue a notebook operation (see ``NotebookJobs``)."""
        self.jobs.submit(op, then, title)
        self.set_timer(BUSY_AFTER, self._busy)

    def _busy(self) -> None:
        if self.jobs.pending:
            self.show_message(Text("waiting for the notebook…", style="bold yellow"))

    def _lists_loaded(self, lists: list[TermList], select: str | None = None) -> None:
        sel = self.query_one("#tm-list", Select)
        names = [t.name for t in lists]
        with sel.prevent(Select.Changed):
            sel.set_options([(visible(n), n) for n in names])
        want = select or (self.term_list.name if self.term_list and self.term_list.name in names else None)
        if want is None and names:
            want = names[0]
        if want is not None:
            with sel.prevent(Select.Changed):
                sel.value = want
            self._show_list(next(t for t in lists if t.name == want))
        else:
            self.show_message(Text("no term lists yet: n, then NAME: seed seed … and Enter", style="italic"))

    def _show_list(self, tl: TermList) -> None:
        """Show the stored list ``tl`` and ask for its candidates."""
        self.term_list = tl
        self.state = tl.query()
        self._terms_line()
        self._refresh()

    def _terms_line(self) -> None:
        st = self.state
        line = Text(no_wrap=True, overflow="ellipsis")
        if st is None:
            self.query_one("#tm-terms", Static).update(line)
            return
        terms = st.members
        line.append(visible(st.name), style="bold")
        line.append(f" · {len(terms)} terms: ", style="dim")
        line.append(", ".join(visible(w) for w in terms), style="green")
        line.append(f" · dropped {len(st.dropped)} · aside {len(st.aside)}", style="dim")
        self.query_one("#tm-terms", Static).update(line)

    def _refresh(self) -> None:
        if self.state is None:
            return
        try:
            q = self.current_query()
        except UsageError as exc:
            self.show_failure(exc)
            return
        self.ask(q)

    # -- the query value -------------------------------------------------------------------------------------

    def current_query(self) -> TermSuggest:
        st = self.state
        if st is None:
            raise UsageError("choose a term list, or make one: n, then NAME: seed seed …")
        return TermSuggest(st.name, st.seeds, st.kept, st.dropped, st.aside, **self.option_values())

    def load_query(self, query: Query) -> None:
        """Show a saved suggestion: its list's state and every option (decisions need the list in the notebook)."""
        assert isinstance(query, TermSuggest)
        self.show_options(query)
        self.state = query
        self._terms_line()
        self.ask(query)

    # -- events ----------------------------------------------------------------------------------------------

    @on(Select.Changed, "#tm-list")
    def _chosen(self, event: Select.Changed) -> None:
        if isinstance(event.value, str):
            name = event.value
            self.job(lambda nb: get_list(nb, name), self._show_list, "term list unreadable")

    @on(Input.Submitted, "#tm-k, #tm-gamma, #tm-top, #tm-support, #tm-include, #tm-exclude")
    def _options_submitted(self, event: Input.Submitted) -> None:
        self._refresh()
        self.query_one("#tm-table", DataTable).focus()

    @on(Checkbox.Changed, "#tm-hide, #tm-exact")
    def _option_changed(self, event: Checkbox.Changed) -> None:
        self._refresh()

    @on(Input.Submitted, "#tm-name")
    def _name_submitted(self, event: Input.Submitted) -> None:
        text = event.value.strip()
        if not text:
            return
        if self.box_mode == "rename" and self.term_list is not None:
            old, new = self.term_list.name, text

            def op(nb: Notebook) -> tuple[list[TermList], str]:
                rename_list(nb, old, new)
                return all_lists(nb), new

            self.job(op, lambda v: self._lists_loaded(*v), "not renamed")
        else:
            self._create(text)
        self.box_mode = "new"
        box = self.query_one("#tm-name", Input)
        box.value = ""
        box.placeholder = "n: new list  NAME: seed seed …"
        self.query_one("#tm-table", DataTable).focus()

    def _create(self, text: str) -> None:
        name, _, rest = text.partition(":") if ":" in text else (text.split()[0], "", " ".join(text.split()[1:]))
        seeds = [self.word(w) for w in rest.split()]
        if not seeds:
            self.show_failure(UsageError("give the list a name and its seed words:  NAME: seed seed …"))
            return
        if self.session is not None:
            try:
                for w in seeds:
                    self.session.vectors.word_vector(w, subwords=self.subwords)
            except WordkinError as exc:
                self.show_failure(exc)
                return

        def op(nb: Notebook) -> tuple[list[TermList], str]:
            tl = create_list(nb, name, seeds)
            return all_lists(nb), tl.name

        self.job(op, lambda v: self._lists_loaded(*v), "list not created")

    # -- actions ---------------------------------------------------------------------------------------------

    def action_focus_table(self) -> None:
        self.query_one("#tm-table", DataTable).focus()

    def action_new_list(self) -> None:
        self.box_mode = "new"
        box = self.query_one("#tm-name", Input)
        box.placeholder = "NAME: seed seed …  then Enter"
        self.screen.set_focus(box)  # at once: keys typed right after n must reach the box

    def action_rename_list(self) -> None:
        if self.term_list is None:
            return
        self.box_mode = "rename"
        box = self.query_one("#tm-name", Input)
        box.value = self.term_list.name
        box.placeholder = "new name, then Enter"
        self.screen.set_focus(box)

    def highlighted(self) -> str | None:
        t = self.query_one("#tm-table", DataTable)
        if not self.shown or t.cursor_row < 0 or t.cursor_row >= len(self.shown):
            return None
        return self.shown[t.cursor_row]

    def action_decide(self, state: str) -> None:
        word = self.highlighted()
        if word is None:
            return
        if self.term_list is None:
            self.show_failure(UsageError("this list is not in the notebook: make it with n to record decisions"))
            return
        name = self.term_list.name
        table = self.query_one("#tm-table", DataTable)
        self.cursor_row = table.cursor_row
        table.remove_row(word)
        self.shown.remove(word)
        if self.shown:
            table.move_cursor(row=min(self.cursor_row, len(self.shown) - 1))

        def op(nb: Notebook) -> TermList:
            decide(nb, name, [word], state)
            return get_list(nb, name)

        self.job(op, self._show_list, "decision not saved")

    def action_undo(self) -> None:
        if self.term_list is None:
            return
        name = self.term_list.name

        def op(nb: Notebook) -> TermList:
            undo(nb, name)
            return get_list(nb, name)

        self.job(op, self._show_list, "not undone")

    def action_export(self) -> None:
        out = self.query_one("#tm-out", Input)
        if not out.value.strip() or not out.has_focus:
            self.screen.set_focus(out)
            return
        if self.term_list is None:
            return
        name, fmt = self.term_list.name, str(self.query_one("#tm-format", Select).value)
        path = str(Path(out.value.strip()).expanduser())
        force = self.replace_ok == path  # asked a second time for the same existing file: replace it
        self.replace_ok = None

        def op(nb: Notebook) -> str:
            from wordkin.console.formats.notebook_export import write_file

            tl = get_list(nb, name)
            p = write_file(path, render(tl, fmt, now()), force=force, how_to_force="press x again")
            return f"exported {len(tl.terms)} terms of {tl.name} as {fmt} to {p}"

        self.job(op, lambda said: self.notify(visible(said), markup=False), "not exported")

    @on(Input.Submitted, "#tm-out")
    def _export_submitted(self, event: Input.Submitted) -> None:
        self.action_export()

    # -- showing ---------------------------------------------------------------------------------------------

    def show_result(self, result: Result) -> None:
        assert isinstance(result, TermsResult)
        t = self.query_one("#tm-table", DataTable)
        t.clear()
        self.shown = [c.word for c in result.rows]
        for c in result.rows:
            t.add_row(
                Text(str(c.rank), justify="right"),
                word_text(c.word),
                Text(f"{c.score:.3f}", justify="right"),
                Text(f"{c.support}/{result.members}", justify="right"),
                bar(c.score, 12),
                key=c.word,
            )
        if result.rows:
            t.move_cursor(row=min(self.cursor_row, len(result.rows) - 1))
        # The table measures its new cells when idle; repaint after that, or a terminal can keep showing the words
        # cut to the width of the column's header (seen under tmux on a new list's first candidates).
        self.call_after_refresh(t.refresh)
        how = "index" if result.mode == "ann" else "exact"
        opts = ", ".join(result.query.options())
        self.show_message(Text(f"candidates · {opts} · {how} · {result.elapsed_ms:.0f} ms", style="dim"))
        if self.term_list is not None and self.session is not None and self.term_list.name == result.query.name:
            info = vector_set_info(self.session.vectors)
            self.job(lambda nb: record_shown(nb, result, info), lambda _: None, "candidates not recorded")

    def show_failure(self, error: WordkinError) -> None:
        self.query_one("#tm-table", DataTable).clear()
        self.shown = []
        self.show_message(error_text(error))

    def show_message(self, text: Text) -> None:
        self.query_one("#tm-message", Static).update(text)
