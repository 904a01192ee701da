"""The status line: which vector set is open and how queries are answered (exact / index building n% / ready)."""

from __future__ import annotations

from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.reactive import reactive
from textual.widgets import ProgressBar, Static

from .safe_text import visible


class StatusLine(Horizontal):
    """``source · words · dims · mode``, with a progress bar while something slow runs."""

    source: reactive[str] = reactive("")
    summary: reactive[str] = reactive("")
    mode: reactive[str] = reactive("loading…")
    notice: reactive[str] = reactive("")

    def compose(self) -> ComposeResult:
        yield Static(id="status-text")
        yield ProgressBar(total=None, show_eta=False, id="status-bar")

    def on_mount(self) -> None:
        self._refresh()

    def watch_source(self) -> None:
        self._refresh()

    def watch_summary(self) -> None:
        self._refresh()

    def watch_mode(self) -> None:
        self._refresh()

    def watch_notice(self) -> None:
        self._refresh()

    def progress(self, done: int, total: int) -> None:
        bar = self.query_one(ProgressBar)
        bar.display = True
        bar.update(total=total or None, progress=done)

    def idle(self) -> None:
        self.query_one(ProgressBar).display = False

    def _refresh(self) -> None:
        if not self.is_mounted:
            return
        t = Text(no_wrap=True, overflow="ellipsis")
        t.append(visible(self.source), style="bold")
        if self.summary:
            t.append("  " + self.summary)
        t.append("  ·  ")
        t.append(self.mode, style="bold cyan")
        if self.notice:
            t.append("  ·  " + visible(self.notice), style="yellow")
        self.query_one("#status-text", Static).update(t)
