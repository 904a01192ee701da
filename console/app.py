"""The wordkin console (Textual). Thin on purpose: it loads the vectors and the index in workers, owns the shared
state (the open ``VectorSet`` and its annoy index) and the global keys; each pane lives in its own module."""

from __future__ import annotations

import argparse
import os
from pathlib import Path
from typing import Any

from textual import work
from textual.app import App, ComposeResult
from textual.binding import Binding
from textual.message import Message
from textual.widgets import Footer, TabbedContent, TabPane
from textual.worker import Worker, WorkerState, get_current_worker

from index import ann as ann_mod
from index.errors import CancelledError, WordkinError
from index.store import VectorSet, open_vectors

from .help_screen import HelpScreen, binding_rows
from .pane_arith import ArithmeticPane
from .pane_neighbours import NeighboursPane
from .pane_notebook import NotebookPane
from .pane_similarity import SimilarityPane
from .safe_text import visible
from .status_line import StatusLine
from .widgets import completion_list


class WordkinApp(App[int]):
    """Neighbours, arithmetic, similarity and the notebook over one vector set."""

    CSS_PATH = "app.tcss"
    TITLE = "wordkin"
    ENABLE_COMMAND_PALETTE = False

    BINDINGS = [
        Binding("f1,question_mark", "help", "Help", id="app.help"),
        Binding("f2", "pane('neighbours')", "Neighbours", id="app.neighbours"),
        Binding("f3", "pane('arith')", "Arithmetic", id="app.arith"),
        Binding("f4", "pane('similarity')", "Similarity", id="app.similarity"),
        Binding("f5", "pane('notebook')", "Notebook", id="app.notebook"),
        Binding("f12", "screenshot_svg", "Screenshot", show=False, id="app.screenshot"),
        Binding("ctrl+q", "quit", "Quit", priority=True, id="app.quit"),
    ]

    class LoadProgress(Message):
        def __init__(self, done: int, total: int, stage: str) -> None:
            super().__init__()
            self.done, self.total, self.stage = done, total, stage

        def can_replace(self, message: Message) -> bool:
            return isinstance(message, WordkinApp.LoadProgress)

    class VectorsLoaded(Message):
        def __init__(self, vectors: VectorSet, escaped: dict[str, str], completion: list[str]) -> None:
            super().__init__()
            self.vectors, self.escaped, self.completion = vectors, escaped, completion

    class LoadFailed(Message):
        def __init__(self, error: WordkinError) -> None:
            super().__init__()
            self.error = error

    class IndexProgress(LoadProgress):
        def can_replace(self, message: Message) -> bool:
            return isinstance(message, WordkinApp.IndexProgress)

    class IndexReady(Message):
        def __init__(self, index: ann_mod.AnnIndex) -> None:
            super().__init__()
            self.index = index

    class IndexFailed(Message):
        def __init__(self, reason: str) -> None:
            super().__init__()
            self.reason = reason

    def __init__(
        self,
        path: str,
        *,
        cache: str | None = None,
        use_cache: bool = True,
        trust_pickle: bool = False,
        notebook: str | None = None,
        build_index: bool = True,
    ) -> None:
        super().__init__()
        self.path = path
        self.cache = cache
        self.use_cache = use_cache
        self.trust_pickle = trust_pickle
        self.notebook_path = notebook
        self.build_index = build_index
        self.vectors: VectorSet | None = None
        self.ann: ann_mod.AnnIndex | None = None
        self.escaped: dict[str, str] = {}
        self.index_state = ann_mod.IndexState.EMPTY

    def compose(self) -> ComposeResult:
        with TabbedContent(initial="neighbours"):
            with TabPane("Neighbours F2", id="neighbours"):
                yield NeighboursPane()
            with TabPane("Arithmetic F3", id="arith"):
                yield ArithmeticPane()
            with TabPane("Similarity F4", id="similarity"):
                yield SimilarityPane()
            with TabPane("Notebook F5", id="notebook"):
                yield NotebookPane(self.notebook_path)
        yield StatusLine()
        yield Footer()

    def on_mount(self) -> None:
        status = self.query_one(StatusLine)
        status.source = os.path.basename(self.path)
        status.mode = "loading…"
        self.query_one("#nb-word").focus()
        self.load_vectors()

    # -- loading ---------------------------------------------------------------------------------------

    @work(thread=True, exclusive=True, exit_on_error=False, group="load", description="load vectors")
    def load_vectors(self) -> None:
        worker = get_current_worker()
        try:
            vs = open_vectors(
                self.path,
                cache_root=self.cache,
                use_cache=self.use_cache,
                trust_pickle=self.trust_pickle,
                progress=self._report_load,
                cancel=lambda: worker.is_cancelled,
            )
            vs.lookup()
            escaped = {}
            for w in vs.words:
                v = visible(w)
                if v != w:
                    escaped[v] = w
            completion = completion_list(vs.words)
        except CancelledError:
            return
        except WordkinError as exc:
            self.post_message(self.LoadFailed(exc))
            return
        self.post_message(self.VectorsLoaded(vs, escaped, completion))

    def _report_load(self, done: int, total: int, stage: str) -> None:
        self.post_message(self.LoadProgress(done, total, stage))

    def _report_index(self, done: int, total: int, stage: str) -> None:
        self.post_message(self.IndexProgress(done, total, stage))

    def _show_progress(self, msg: LoadProgress, prefix: str = "") -> None:
        status = self.query_one(StatusLine)
        pct = f" {100 * msg.done // msg.total}%" if msg.total else ""
        status.mode = f"{prefix}{msg.stage}{pct}"
        status.progress(msg.done, msg.total)

    def on_wordkin_app_load_progress(self, msg: LoadProgress) -> None:
        self._show_progress(msg)

    def on_wordkin_app_vectors_loaded(self, msg: VectorsLoaded) -> None:
        vs = msg.vectors
        self.vectors = vs
        self.escaped = msg.escaped
        status = self.query_one(StatusLine)
        status.summary = f"· {vs.n:,} words · {vs.dims} dims"
        status.notice = "; ".join(vs.warnings)[:200]
        status.idle()
        self.query_one(NeighboursPane).on_vectors_ready(msg.completion)
        idx = ann_mod.load(vs)
        if idx is not None:
            self.post_message(self.IndexReady(idx))
        elif vs.cache_dir is not None and self.build_index:
            status.mode = "exact · building index…"
            self.index_state = ann_mod.IndexState.BUILDING
            self.build_ann()
        else:
            status.mode = "exact" + (" (no cache: no index)" if vs.cache_dir is None else "")

    def on_wordkin_app_load_failed(self, msg: LoadFailed) -> None:
        status = self.query_one(StatusLine)
        status.idle()
        status.mode = "not loaded"
        status.notice = msg.error.message
        self.notify(visible(msg.error.message), title=msg.error.title, severity="error", timeout=30, markup=False)

    @work(thread=True, exclusive=True, exit_on_error=False, group="index", description="build annoy index")
    def build_ann(self) -> None:
        worker = get_current_worker()
        try:
            idx = ann_mod.build(
                self.vectors,
                progress=self._report_index,
                cancel=lambda: worker.is_cancelled,
            )
        except CancelledError:
            return
        except (WordkinError, OSError) as exc:
            self.post_message(self.IndexFailed(str(exc)))
            return
        self.post_message(self.IndexReady(idx))

    def on_wordkin_app_index_progress(self, msg: IndexProgress) -> None:
        self._show_progress(msg, "exact · ")

    def on_wordkin_app_index_ready(self, msg: IndexReady) -> None:
        self.ann = msg.index
        self.index_state = ann_mod.IndexState.READY
        status = self.query_one(StatusLine)
        status.idle()
        vs = self.vectors
        exact_anyway = vs is not None and vs.n < ann_mod.EXACT_BELOW_WORDS
        status.mode = f"index ready, recall@10 {msg.index.recall_at_10:.3f}" + (
            " · exact (small set)" if exact_anyway else ""
        )

    def on_wordkin_app_index_failed(self, msg: IndexFailed) -> None:
        self.index_state = ann_mod.IndexState.FAILED
        status = self.query_one(StatusLine)
        status.idle()
        status.mode = "exact (index failed)"
        status.notice = msg.reason

    def on_worker_state_changed(self, event: Worker.StateChanged) -> None:
        """The one place unexpected worker errors surface: shown, never swallowed."""
        if event.state == WorkerState.ERROR and event.worker.error is not None:
            err = event.worker.error
            text = f"{event.worker.description or event.worker.name}: {type(err).__name__}: {err}"
            self.query_one(StatusLine).notice = text
            self.notify(visible(text), title="unexpected error", severity="error", timeout=30, markup=False)

    # -- shared helpers for the panes -----------------------------------------------------------------

    def word_from_display(self, text: str) -> str:
        """The vocabulary word behind ``text`` as shown (words with control characters are shown escaped)."""
        vs = self.vectors
        if vs is not None and vs.find(text) is None and text in self.escaped:
            return self.escaped[text]
        return text

    def save_to_notebook(self, result: Any, note: str = "") -> None:
        self.query_one(NotebookPane).save(result, note)

    # -- actions ---------------------------------------------------------------------------------------

    def action_pane(self, pane: str) -> None:
        self.query_one(TabbedContent).active = pane
        focus = {
            "neighbours": "#nb-word",
            "arith": "#ar-expr",
            "similarity": "#sm-words",
            "notebook": "#nbk-list",
        }
        # Synchronously: Widget.focus() defers, and keys typed right after F2-F5 would go to the hidden pane.
        self.screen.set_focus(self.query_one(focus[pane]))

    def action_help(self) -> None:
        scopes = [
            ("global", self.BINDINGS),
            ("neighbours", NeighboursPane.BINDINGS),
            ("arithmetic", ArithmeticPane.BINDINGS),
            ("similarity", SimilarityPane.BINDINGS),
            ("notebook", NotebookPane.BINDINGS),
            ("help", HelpScreen.BINDINGS),
        ]
        self.push_screen(HelpScreen(binding_rows(scopes)))

    def action_screenshot_svg(self) -> None:
        path = self.save_screenshot(path=os.environ.get("WORDKIN_SCREENSHOTS", "."))
        self.notify(f"saved {path}", markup=False)


def create_app(path: str, args: argparse.Namespace | None = None, **kw: Any) -> WordkinApp:
    """The one factory for the console: the CLI and the tests build the app through it."""
    if args is not None:
        kw.setdefault("cache", getattr(args, "cache", None))
        kw.setdefault("use_cache", not getattr(args, "no_cache", False))
        kw.setdefault("trust_pickle", getattr(args, "trust_pickle", False))
        kw.setdefault("notebook", getattr(args, "notebook", None))
    return WordkinApp(str(Path(path)), **kw)


def run_console(path: str, args: argparse.Namespace) -> int:
    from index.formats import detect

    detect(path, trust_pickle=args.trust_pickle)  # fail fast, before the screen opens, on an unreadable file
    app = create_app(path, args)
    app.run()
    return app.return_code or 0
