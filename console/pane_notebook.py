"""The notebook pane: saved entries as a list, the selected one in full, its note, delete/undo, move, re-run, export."""

from __future__ import annotations

from pathlib import Path
from typing import Any

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.message import Message
from textual.widgets import DataTable, Input, Label, Select, Static

from index.errors import WordkinError

from .export import FORMATS, render, write_file
from .notebook import Entry, Notebook, entry_from_result, now
from .notebook_diff import diff, diff_text, rerun
from .safe_text import visible


class NotebookPane(Vertical):
    """Entries of the notebook file; every change is committed before the pane shows it."""

    BINDINGS = [
        Binding("n", "edit_note", "Edit note", id="notebook.note"),
        Binding("d,delete", "delete", "Delete", id="notebook.delete"),
        Binding("u,ctrl+z", "undo", "Undo delete", id="notebook.undo"),
        Binding("r", "rerun", "Re-run", id="notebook.rerun"),
        Binding("x", "export", "Export", id="notebook.export"),
        Binding("ctrl+up,left_square_bracket", "move(-1)", "Move up", id="notebook.up"),
        Binding("ctrl+down,right_square_bracket", "move(1)", "Move down", id="notebook.down"),
    ]

    class EntrySaved(Message):
        def __init__(self, entry_id: int) -> None:
            super().__init__()
            self.entry_id = entry_id

    class NotebookFailed(Message):
        def __init__(self, error: WordkinError) -> None:
            super().__init__()
            self.error = error

    def __init__(self, path: str | None = None, **kw: Any) -> None:
        super().__init__(**kw)
        self.path = path
        self.entries: list[Entry] = []
        self.undo_stack: list[int] = []

    def compose(self) -> ComposeResult:
        yield Static("", id="nbk-head", classes="message")
        yield DataTable(id="nbk-list", cursor_type="row", zebra_stripes=True)
        with VerticalScroll(id="nbk-detail-box"):
            yield Static("", id="nbk-detail")
        yield Input(placeholder="note for the selected entry (Enter saves)", id="nbk-note")
        with Horizontal(classes="options"):
            yield Label("export")
            yield Select([(f, f) for f in FORMATS], value="md", allow_blank=False, id="nbk-format")
            yield Input("", id="nbk-out", placeholder="file to write (x exports)", classes="wide")

    def on_mount(self) -> None:
        t = self.query_one("#nbk-list", DataTable)
        t.add_column(Text("#"), key="n", width=3)
        t.add_column(Text("kind"), key="kind", width=10)
        t.add_column(Text("query"), key="query", width=30)
        t.add_column(Text("note"), key="note")
        self.reload()

    # -- the store -------------------------------------------------------------------------------------

    def _open(self) -> Notebook:
        return Notebook.open(self.path)

    def reload(self, select: int | None = None) -> None:
        try:
            with self._open() as nb:
                self.entries = nb.entries()
                where = nb.path
        except WordkinError as exc:
            self.query_one("#nbk-head", Static).update(Text(visible(exc.message), style="bold red"))
            return
        t = self.query_one("#nbk-list", DataTable)
        t.clear()
        for i, e in enumerate(self.entries, 1):
            t.add_row(
                Text(str(i)),
                Text(e.kind),
                Text(visible(e.title), no_wrap=True, overflow="ellipsis"),
                Text(visible(e.note.splitlines()[0] if e.note else ""), no_wrap=True, overflow="ellipsis"),
                key=str(e.id),
            )
        head = Text.assemble(("notebook ", "dim"), (visible(str(where)), "bold"), f"  ·  {len(self.entries)} entries")
        self.query_one("#nbk-head", Static).update(head)
        if self.entries:
            row = 0
            if select is not None:
                ids = [e.id for e in self.entries]
                row = ids.index(select) if select in ids else min(len(ids) - 1, max(0, t.cursor_row))
            t.move_cursor(row=row)
            self._show(self.entries[row])
        else:
            self.query_one("#nbk-detail", Static).update(
                Text("no entries yet: press Ctrl+S in a pane to save one", style="italic")
            )

    def selected(self) -> Entry | None:
        t = self.query_one("#nbk-list", DataTable)
        if not self.entries or t.cursor_row < 0 or t.cursor_row >= len(self.entries):
            return None
        return self.entries[t.cursor_row]

    def _show(self, e: Entry, extra: str = "") -> None:
        from .export import text_entry

        body = text_entry(e, self.entries.index(e) + 1 if e in self.entries else 0)
        self.query_one("#nbk-detail", Static).update(Text(body + ("\n" + extra if extra else "")))
        note = self.query_one("#nbk-note", Input)
        with note.prevent(Input.Changed):
            note.value = visible(e.note)

    def save(self, result: Any, note: str = "") -> None:
        """Save an engine result as a new entry (called by the other panes' save key)."""
        vs = self.app.vectors  # type: ignore[attr-defined]
        try:
            with self._open() as nb:
                entry_id = nb.add(entry_from_result(result, vs, note))
        except WordkinError as exc:
            self.app.notify(visible(exc.message), title="not saved", severity="error", markup=False)
            return
        self.post_message(self.EntrySaved(entry_id))

    def on_notebook_pane_entry_saved(self, msg: EntrySaved) -> None:
        self.reload(select=msg.entry_id)
        self.app.notify(f"saved as entry {len(self.entries)} in the notebook (F5)", markup=False)

    # -- events and actions ---------------------------------------------------------------------------

    @on(DataTable.RowHighlighted, "#nbk-list")
    def _highlight(self, event: DataTable.RowHighlighted) -> None:
        e = self.selected()
        if e is not None:
            self._show(e)

    def action_edit_note(self) -> None:
        self.query_one("#nbk-note", Input).focus()

    @on(Input.Submitted, "#nbk-note")
    def _note(self, event: Input.Submitted) -> None:
        e = self.selected()
        if e is None or e.id is None:
            return
        with self._open() as nb:
            nb.set_note(e.id, event.value)
        self.reload(select=e.id)
        self.query_one("#nbk-list", DataTable).focus()

    def action_delete(self) -> None:
        e = self.selected()
        if e is None or e.id is None:
            return
        with self._open() as nb:
            nb.delete(e.id)
        self.undo_stack.append(e.id)
        self.reload()
        self.app.notify("entry deleted: u undoes", markup=False)

    def action_undo(self) -> None:
        if not self.undo_stack:
            return
        entry_id = self.undo_stack.pop()
        with self._open() as nb:
            nb.undelete(entry_id)
        self.reload(select=entry_id)

    def action_move(self, offset: int) -> None:
        e = self.selected()
        if e is None or e.id is None:
            return
        with self._open() as nb:
            nb.move(e.id, offset)
        self.reload(select=e.id)

    def action_rerun(self) -> None:
        e = self.selected()
        if e is None or self.app.vectors is None:  # type: ignore[attr-defined]
            return
        self.rerun_entry(e)

    @work(thread=True, exclusive=True, exit_on_error=False, group="notebook", description="re-run entry")
    def rerun_entry(self, e: Entry) -> None:
        try:
            new = rerun(e, self.app.vectors, self.app.ann)  # type: ignore[attr-defined]
            text = diff_text(diff(e, new), e.vector_set, new.vector_set)
        except WordkinError as exc:
            text = "re-run failed: " + exc.message
        self.app.call_from_thread(self._show, e, text)

    def action_export(self) -> None:
        fmt = str(self.query_one("#nbk-format", Select).value)
        out = self.query_one("#nbk-out", Input).value.strip()
        if not out:
            self.query_one("#nbk-out", Input).focus()
            self.app.notify("type the file to write, then press Enter", markup=False)
            return
        try:
            with self._open() as nb:
                text = render(nb, fmt, now())
            p = write_file(Path(out).expanduser(), text)
        except WordkinError as exc:
            self.app.notify(visible(exc.message), title="not exported", severity="error", markup=False)
            return
        self.app.notify(f"exported {len(self.entries)} entries to {visible(str(p))}", markup=False)

    @on(Input.Submitted, "#nbk-out")
    def _export_submitted(self, event: Input.Submitted) -> None:
        self.action_export()
