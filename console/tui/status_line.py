"""The status line: which vector set is open and how queries are answered (exact / index building n% / ready)."""

from __future__ import annotations

from rich.cells import cell_len, set_cell_size
from rich.text import Text
from textual.app import ComposeResult
from textual.containers import Horizontal
from textual.reactive import reactive
from textual.widgets import ProgressBar, Static

from wordkin.console.formats.safe_text import visible


def _elide(name: str, cells: int) -> str:
    """``name`` cut in the middle to ``cells`` cells (both ends say most about a file name)."""
    if cell_len(name) <= cells:
        return name
    keep = max(cells - 1, 2)
    head = set_cell_size(name, (keep + 1) // 2)
    tail = name[::-1]
    tail = set_cell_size(tail, keep // 2)[::-1]
    return head + "…" + tail


def status_parts(
    source: str, counts: tuple[int, int] | None, against: str, mode: str, width: int
) -> tuple[str, str, str]:
    """``(source, middle, mode)`` of the status line, shortened to ``width`` cells in this order: the counts go
    compact (``12,000 × 48``), then the file names are cut in the middle, so that how queries are answered (the
    mode) always shows whole while the line is wide enough for it."""
    source, against = visible(source), visible(against)

    def middle(compact: bool, vs: str) -> str:
        out = ""
        if counts is not None:
            n, d = counts
            out = f"  · {n:,} × {d}" if compact else f"  · {n:,} words · {d} dims"
        return out + (f" · vs {vs}" if vs else "")

    def total(src: str, mid: str) -> int:
        return cell_len(src) + cell_len(mid) + len(SEP) + cell_len(mode)

    mid = middle(False, against)
    if total(source, mid) <= width:
        return source, mid, mode
    mid = middle(True, against)
    spare = width - total(source, mid)
    if spare >= 0:
        return source, mid, mode
    names = cell_len(source) + cell_len(against)
    room = max(names + spare, 12)  # the names share what is left, each at least a few cells
    if against:
        a_room = max(room * cell_len(against) // names, 6)
        against = _elide(against, a_room)
        source = _elide(source, max(room - cell_len(against), 6))
    else:
        source = _elide(source, room)
    return source, middle(True, against), mode


SEP = "  ·  "


class StatusLine(Horizontal):
    """``source · words · dims · vs other · mode · notice``, with a progress bar while something slow runs. Too
    narrow a terminal shortens the counts and the file names before the mode (see ``status_parts``)."""

    source: reactive[str] = reactive("")
    counts: reactive[tuple[int, int] | None] = reactive(None)
    against: reactive[str] = reactive("")
    mode: reactive[str] = reactive("loading…")
    notice: reactive[str] = reactive("")

    def compose(self) -> ComposeResult:
        yield Static(id="status-text")
        yield ProgressBar(total=None, show_eta=False, id="status-bar")

    def on_mount(self) -> None:
        self._refresh()

    def on_resize(self) -> None:
        self._refresh()

    def watch_source(self) -> None:
        self._refresh()

    def watch_counts(self) -> None:
        self._refresh()

    def watch_against(self) -> None:
        self._refresh()

    def watch_mode(self) -> None:
        self._refresh()

    def watch_notice(self) -> None:
        self._refresh()

    def progress(self, done: int, total: int) -> None:
        bar = self.query_one(ProgressBar)
        bar.display = True
        bar.update(total=total or None, progress=done)
        self._refresh()

    def idle(self) -> None:
        self.query_one(ProgressBar).display = False
        self._refresh()

    def _refresh(self) -> None:
        if not self.is_mounted:
            return
        text = self.query_one("#status-text", Static)
        bar = self.query_one(ProgressBar)
        # The line's own width less the bar's (as styled), not the text's last laid-out width: that lags a change.
        bar_cells = int(bar.styles.width.value) if bar.display and bar.styles.width is not None else 0
        width = (self.size.width or 80) - bar_cells
        source, middle, mode = status_parts(self.source, self.counts, self.against, self.mode, width)
        t = Text(no_wrap=True, overflow="ellipsis")
        t.append(source, style="bold")
        t.append(middle)
        t.append(SEP)
        t.append(mode, style="bold cyan")
        if self.notice:
            t.append(SEP + visible(self.notice), style="yellow")
        text.update(t)
