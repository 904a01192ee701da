"""The notebook pane: saved entries as a list, the selected one in full, its note, delete/undo, move, re-run, export.

Every read and write of the notebook file runs in one worker thread that takes operations from a queue in order
and ends each with a message (``NotebookJobs``); the UI thread never touches SQLite. When the file is locked
by another writer (a ``wordkin near --save`` in another shell), the pane says "waiting for the notebook…" and the
console goes on; the operation completes when the lock goes.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path
from typing import Any

from rich.text import Text
from textual import on, work
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical, VerticalScroll
from textual.message import Message
from textual.widgets import DataTable, Input, Label, Select, Static

from wordkin.console.formats.notebook_export import FORMATS, render, text_entry, write_file
from wordkin.console.formats.output_file import FileExistsUsageError
from wordkin.console.formats.rerun_report import diff_text
from wordkin.console.formats.safe_text import visible
from wordkin.console.store.notebook import Entry, Notebook, now
from wordkin.console.store.rerun import rerun
from wordkin.console.tui.notebook_jobs import BUSY_AFTER, NotebookJobs, NotebookJobsHost
from wordkin.console.tui.panes.base import SessionChanged
from wordkin.index.errors import WordkinError
from wordkin.index.kinds.base import Result
from wordkin.index.session import Session

#: An operation on the open notebook; returns the id of the entry to select afterwards (or None) and what to say.
Operation = Callable[[Notebook], tuple[int | None, str]]


class NoteInput(Input):
    """The note box: Esc drops the edit."""

    BINDINGS = [Binding("escape", "cancel", "Cancel the edit", id="notebook.note_cancel")]

    def action_cancel(self) -> None:
        for pane in self.ancestors:
            if isinstance(pane, NotebookPane):
                pane.cancel_note()
                return


class NotebookPane(NotebookJobsHost, Vertical):
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

    class Rerun(Message):
        """A saved entry was answered again; ``text`` says what changed."""

        def __init__(self, entry: Entry, text: str) -> None:
            super().__init__()
            self.entry = entry
            self.text = text

    def __init__(self, path: str | None = None, **kw: Any) -> None:
        super().__init__(**kw)
        self.path = path
        self.entries: list[Entry] = []
        self.undo_stack: list[int] = []
        self.session: Session | None = None
        self.where: Path | None = None
        self.jobs = NotebookJobs(self, path)
        #: An export file that exists and that a second x (or Enter) replaces.
        self.replace_ok: str | None = None
        self.note_entry: int | None = None  # the entry whose note is in the note box
        self.note_dirty = False

    def compose(self) -> ComposeResult:
        yield Static("", id="nbk-head", classes="message")
        yield DataTable(id="nbk-list", cursor_type="row", zebra_stripes=True)
        with VerticalScroll(id="nbk-detail-box"):
            yield Static("", id="nbk-detail")
        yield NoteInput(placeholder="note for the selected entry (Enter saves, Esc cancels)", id="nbk-note")
        with Horizontal(classes="options"):
            yield Label("export")
            yield Select([(f, f) for f in FORMATS], value="md", allow_blank=False, id="nbk-format")
            yield Input("", id="nbk-out", placeholder="file to write (x exports)", classes="wide")

    def on_mount(self) -> None:
        t = self.query_one("#nbk-list", DataTable)
        t.add_column(Text("id"), key="n", width=4)
        t.add_column(Text("kind"), key="kind", width=10)
        t.add_column(Text("query"), key="query", width=30)
        t.add_column(Text("note"), key="note")
        self.notebook_io()
        self.submit(lambda nb: (None, ""), "notebook unreadable")

    def on_session_changed(self, msg: SessionChanged) -> None:
        self.session = msg.session

    # -- the notebook, off the UI thread ----------------------------------------------------------------------

    def submit(self, op: Operation, failed_title: str) -> None:
        """Queue ``op``; then read the entries back and show them with the entry ``op`` names selected."""

        def run(nb: Notebook) -> tuple[list[Entry], Path, int | None, str]:
            select, said = op(nb)
            return nb.entries(), nb.path, select, said

        self.jobs.submit(run, self._loaded, failed_title)
        self.set_timer(BUSY_AFTER, self._head)

    def on_notebook_jobs_failed(self, msg: NotebookJobs.Failed) -> None:
        self.jobs.finished()
        self._head()
        if isinstance(msg.error, FileExistsUsageError):
            self.replace_ok = str(Path(self.query_one("#nbk-out", Input).value.strip()).expanduser())
        self.notify(visible(msg.error.message), title=msg.job.failed_title, severity="error", markup=False, timeout=15)

    def save(self, result: Result, session: Session) -> None:
        """Save ``result`` as a new entry (the other panes' save key reaches here through the app)."""
        entry = Entry.of(result, session.vectors)

        def op(nb: Notebook) -> tuple[int | None, str]:
            entry_id = nb.add(entry)
            return entry_id, f"saved as entry {entry_id} in the notebook (F5)"

        self.submit(op, "not saved")

    def _loaded(self, value: tuple[list[Entry], Path, int | None, str]) -> None:
        entries, where, select, said = value
        self.entries = entries
        self.where = where
        t = self.query_one("#nbk-list", DataTable)
        keep_row = t.cursor_row
        t.clear()
        for e in self.entries:
            t.add_row(
                Text(str(e.id), justify="right"),
                Text(e.kind),
                Text(visible(e.title), no_wrap=True, overflow="ellipsis"),
                Text(visible(e.note.splitlines()[0] if e.note else ""), no_wrap=True, overflow="ellipsis"),
                key=str(e.id),
            )
        self._head()
        if self.entries:
            ids = [e.id for e in self.entries]
            row = ids.index(select) if select in ids else min(len(ids) - 1, max(0, keep_row))
            t.move_cursor(row=row)
            self._show(self.entries[row])
        else:
            self.query_one("#nbk-detail", Static).update(
                Text("no entries yet: press Ctrl+S in a pane to save one", style="italic")
            )
        if said:
            self.notify(visible(said), markup=False)

    def _head(self) -> None:
        head = Text("notebook ", style="dim")
        head.append(visible(str(self.where or self.path or "")), style="bold")
        n = len(self.entries)
        head.append(f"  ·  {n} entr{'y' if n == 1 else 'ies'}")
        if self.jobs.pending:
            head.append("  ·  waiting for the notebook…", style="bold yellow")
        self.query_one("#nbk-head", Static).update(head)

    # -- showing ---------------------------------------------------------------------------------------------

    def selected(self) -> Entry | None:
        t = self.query_one("#nbk-list", DataTable)
        if not self.entries or t.cursor_row < 0 or t.cursor_row >= len(self.entries):
            return None
        return self.entries[t.cursor_row]

    def _show(self, e: Entry, extra: str = "") -> None:
        # The result first (at 80x24 its rows must show), then where it came from; long lines are cut, not wrapped.
        body = text_entry(e, e.id or 0, result_first=True)
        lines = (body + ("\n" + extra if extra else "")).splitlines()
        detail = Text("\n").join(Text(x) for x in lines)
        detail.no_wrap = True
        detail.overflow = "ellipsis"
        self.query_one("#nbk-detail", Static).update(detail)
        note = self.query_one("#nbk-note", Input)
        with note.prevent(Input.Changed):
            note.value = visible(e.note)
        self.note_entry = e.id
        self.note_dirty = False

    @on(DataTable.RowHighlighted, "#nbk-list")
    def _highlight(self, event: DataTable.RowHighlighted) -> None:
        self._save_pending_note()
        e = self.selected()
        if e is not None:
            self._show(e)

    @on(Input.Changed, "#nbk-note")
    def _note_edited(self, event: Input.Changed) -> None:
        self.note_dirty = True

    def _save_pending_note(self) -> None:
        """A note typed but not saved is saved when the selection moves, and said (never dropped silently)."""
        if not self.note_dirty or self.note_entry is None:
            return
        entry_id, text = self.note_entry, self.query_one("#nbk-note", Input).value
        self.note_dirty = False

        def op(nb: Notebook) -> tuple[int | None, str]:
            nb.set_note(entry_id, text)
            return None, f"note of entry {entry_id} saved"

        self.submit(op, "note not saved")

    def cancel_note(self) -> None:
        """Esc in the note box: the edit is dropped, the stored note comes back."""
        e = self.selected()
        if e is not None:
            self._show(e)
        self.query_one("#nbk-list", DataTable).focus()

    def check_action(self, action: str, parameters: tuple[object, ...]) -> bool | None:
        """The letter keys act on the list: while a text box has the focus they are its letters, not shown."""
        if action in {"edit_note", "delete", "undo", "rerun", "export"} and isinstance(self.app.focused, Input):
            return False
        return True

    # -- actions ---------------------------------------------------------------------------------------------

    def action_edit_note(self) -> None:
        self.query_one("#nbk-note", Input).focus()

    @on(Input.Submitted, "#nbk-note")
    def _note(self, event: Input.Submitted) -> None:
        e = self.selected()
        if e is None or e.id is None:
            return
        entry_id, text = e.id, event.value
        self.note_dirty = False

        def op(nb: Notebook) -> tuple[int | None, str]:
            nb.set_note(entry_id, text)
            return entry_id, ""

        self.submit(op, "note not saved")
        self.query_one("#nbk-list", DataTable).focus()

    def action_delete(self) -> None:
        e = self.selected()
        if e is None or e.id is None:
            return
        entry_id = e.id

        def op(nb: Notebook) -> tuple[int | None, str]:
            nb.delete(entry_id)
            return None, f"entry {entry_id} deleted: u undoes"

        self.undo_stack.append(entry_id)
        self.submit(op, "not deleted")

    def action_undo(self) -> None:
        if not self.undo_stack:
            return
        entry_id = self.undo_stack.pop()

        def op(nb: Notebook) -> tuple[int | None, str]:
            nb.undelete(entry_id)
            return entry_id, f"entry {entry_id} restored"

        self.submit(op, "not restored")

    def action_move(self, offset: int) -> None:
        e = self.selected()
        if e is None or e.id is None:
            return
        entry_id = e.id

        def op(nb: Notebook) -> tuple[int | None, str]:
            nb.move(entry_id, offset)
            return entry_id, ""

        self.submit(op, "not moved")

    def action_rerun(self) -> None:
        e = self.selected()
        if e is None or self.session is None:
            return
        self.rerun_entry(e, self.session)

    @work(thread=True, exclusive=True, exit_on_error=False, group="rerun", description="re-run entry")
    def rerun_entry(self, e: Entry, session: Session) -> None:
        try:
            new, d = rerun(e, session)
            text = diff_text(d, e.vector_set, new.vector_set)
        except WordkinError as exc:
            text = "re-run failed: " + exc.message
        self.post_message(self.Rerun(e, text))

    def on_notebook_pane_rerun(self, msg: Rerun) -> None:
        if self.selected() is msg.entry:
            self._show(msg.entry, msg.text)

    def action_export(self) -> None:
        fmt = str(self.query_one("#nbk-format", Select).value)
        out = self.query_one("#nbk-out", Input).value.strip()
        if not out:
            self.query_one("#nbk-out", Input).focus()
            self.notify("type the file to write, then press Enter", markup=False)
            return

        target = str(Path(out).expanduser())
        force = self.replace_ok == target  # asked a second time for the same existing file: replace it
        self.replace_ok = None

        def op(nb: Notebook) -> tuple[int | None, str]:
            entries = nb.entries()
            p = write_file(target, render(nb, fmt, now()), force=force, how_to_force="press x again")
            n = len(entries)
            return None, f"exported {n} entr{'y' if n == 1 else 'ies'} to {p}"

        self.submit(op, "not exported")

    @on(Input.Submitted, "#nbk-out")
    def _export_submitted(self, event: Input.Submitted) -> None:
        self.action_export()
