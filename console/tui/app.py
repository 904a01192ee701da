"""The wordkin console (Textual). Thin on purpose: it loads the vectors and the index in workers, holds the
session (vectors, index, index state) and publishes it to the panes with ``SessionChanged``, passes save requests
to the notebook, and owns the global keys. The panes come from one table (``panes.PANES``)."""

from __future__ import annotations

import argparse
import os
from pathlib import Path
from typing import Any

from textual import work
from textual.app import App, ComposeResult
from textual.binding import Binding
from textual.css.query import NoMatches
from textual.message import Message
from textual.widgets import Footer, TabbedContent, TabPane
from textual.worker import Worker, WorkerState, get_current_worker

from wordkin.console.formats.safe_text import visible
from wordkin.console.tui.help import HelpScreen, binding_rows
from wordkin.console.tui.keymap import binding_ids, load_keymap
from wordkin.console.tui.panes import BY_ID, PANES
from wordkin.console.tui.panes.base import QueryPane, SessionChanged, VocabView
from wordkin.console.tui.panes.notebook import NotebookPane, NoteInput
from wordkin.console.tui.status_line import StatusLine
from wordkin.console.tui.widgets import WordInput, completion_list
from wordkin.index.ann.annoy_file import AnnIndex, IndexState, load
from wordkin.index.ann.build import build
from wordkin.index.errors import CancelledError, WordkinError
from wordkin.index.session import Session
from wordkin.index.vectors import open_vectors


class WordkinApp(App[int]):
    """Neighbours, arithmetic, similarity and the notebook over one vector set."""

    CSS_PATH = "app.tcss"
    TITLE = "wordkin"
    ENABLE_COMMAND_PALETTE = False

    BINDINGS = [
        Binding("f1,question_mark", "help", "Help", id="app.help"),
        *(p.binding() for p in PANES),
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
        """The vectors are open; ``session`` says whether a cached index came with them (or was rejected)."""

        def __init__(self, session: Session, vocab: VocabView) -> None:
            super().__init__()
            self.session, self.vocab = session, vocab

    class LoadFailed(Message):
        def __init__(self, error: WordkinError) -> None:
            super().__init__()
            self.error = error

    class IndexProgress(LoadProgress):
        def can_replace(self, message: Message) -> bool:
            return isinstance(message, WordkinApp.IndexProgress)

    class IndexReady(Message):
        def __init__(self, index: AnnIndex) -> None:
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
        against: str | None = None,
    ) -> None:
        super().__init__()
        self.path = path
        self.against = against
        self.cache = cache
        self.use_cache = use_cache
        self.trust_pickle = trust_pickle
        self.notebook_path = notebook
        self.build_index = build_index
        self.session: Session | None = None
        self.keymap_in_force: dict[str, str] = {}
        self.keymap_warning = ""
        self.vocab = VocabView({}, None)

    def compose(self) -> ComposeResult:
        with TabbedContent(initial=PANES[0].id):
            for spec in PANES:
                with TabPane(spec.tab_label, id=spec.id):
                    pane = spec.make(self.notebook_path)
                    pane.id = f"pane-{spec.id}"
                    yield pane
        yield StatusLine()
        yield Footer()

    def on_mount(self) -> None:
        status = self.query_one(StatusLine)
        status.source = os.path.basename(self.path)
        status.mode = "loading…"
        self.apply_keymap()
        self.query_one(PANES[0].focus).focus()
        self.load_vectors()

    # -- the session -----------------------------------------------------------------------------------

    def publish(self, session: Session) -> None:
        """Make ``session`` current: every pane gets it, the status line says how queries are answered."""
        self.session = session
        status = self.status()
        if status is None:
            return
        for spec in PANES:
            self.query_one(f"#pane-{spec.id}").post_message(SessionChanged(session, self.vocab))
        status.mode = session.answering()

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
            vocab = VocabView(escaped, completion_list(vs.words))
            old = None
            if self.against is not None:
                old = open_vectors(
                    self.against,
                    cache_root=self.cache,
                    use_cache=self.use_cache,
                    trust_pickle=self.trust_pickle,
                    progress=lambda d, t, st: self._report_load(d, t, "the set it replaces: " + st),
                    cancel=lambda: worker.is_cancelled,
                )
                old.lookup()
            # load() also asks, here off the UI thread, whether the index file is in memory (a cold one is read in
            # after the load).
            session = Session.from_load(vs, load(vs), against=old)
        except CancelledError:
            return
        except WordkinError as exc:
            self.post_message(self.LoadFailed(exc))
            return
        self.post_message(self.VectorsLoaded(session, vocab))

    def _report_load(self, done: int, total: int, stage: str) -> None:
        self.post_message(self.LoadProgress(done, total, stage))

    def _report_index(self, done: int, total: int, stage: str) -> None:
        self.post_message(self.IndexProgress(done, total, stage))

    def status(self) -> StatusLine | None:
        """The status line, or None while the app is not (or no longer) composed: a worker's last message can
        arrive while the app shuts down."""
        try:
            return self.query_one(StatusLine)
        except NoMatches:
            return None

    def _show_progress(self, msg: LoadProgress, prefix: str = "") -> None:
        status = self.status()
        if status is None:
            return
        pct = f" {100 * msg.done // msg.total}%" if msg.total else ""
        status.mode = f"{prefix}{msg.stage}{pct}"
        status.progress(msg.done, msg.total)

    def on_wordkin_app_load_progress(self, msg: LoadProgress) -> None:
        self._show_progress(msg)

    def on_wordkin_app_vectors_loaded(self, msg: VectorsLoaded) -> None:
        session = msg.session
        vs = session.vectors
        self.vocab = msg.vocab
        status = self.status()
        if status is None:
            return
        status.counts = (vs.n, vs.dims)
        if session.against is not None:
            status.against = os.path.basename(str(session.against.source))
        notices = ([self.keymap_warning] if self.keymap_warning else []) + list(vs.warnings)
        if session.state is IndexState.REJECTED:
            notices.append(f"index rejected ({session.reason}); rebuilding it")
        status.notice = "; ".join(notices)[:200]
        status.idle()
        if session.state is not IndexState.READY and vs.cache_dir is not None and self.build_index:
            session = session.with_state(IndexState.BUILDING, reason=session.reason)
            self.publish(session)
            self.build_ann(session)
        else:
            self.publish(session)
            if session.index is not None and session.index.warm is False:
                self.warm_index(session.index)

    def on_wordkin_app_load_failed(self, msg: LoadFailed) -> None:
        status = self.status()
        if status is None:
            return
        status.idle()
        status.mode = "not loaded"
        status.notice = msg.error.message
        self.notify(visible(msg.error.message), title=msg.error.title, severity="error", timeout=30, markup=False)

    @work(thread=True, exclusive=True, exit_on_error=False, group="index", description="build annoy index")
    def build_ann(self, session: Session) -> None:
        worker = get_current_worker()
        try:
            idx = build(session.vectors, progress=self._report_index, cancel=lambda: worker.is_cancelled)
        except CancelledError:
            return
        except (WordkinError, OSError) as exc:
            self.post_message(self.IndexFailed(str(exc)))
            return
        self.post_message(self.IndexReady(idx))

    @work(thread=True, exclusive=True, exit_on_error=False, group="index", description="read the index in")
    def warm_index(self, index: AnnIndex) -> None:
        """Read a cold index file into the page cache (queries are answered exactly meanwhile), then say so."""
        from wordkin.index.ann.residency import read_in

        worker = get_current_worker()
        if index.path is None:
            return
        try:
            done = read_in(
                index.path,
                lambda d, t: self._report_index(d, t, "index: reading it into memory"),
                lambda: worker.is_cancelled,
            )
        except OSError as exc:
            self.post_message(self.IndexFailed(f"the index file could not be read ({exc})"))
            return
        if done:
            index.warm = True
            self.post_message(self.IndexReady(index))

    def on_wordkin_app_index_progress(self, msg: IndexProgress) -> None:
        self._show_progress(msg, "exact search · ")

    def on_wordkin_app_index_ready(self, msg: IndexReady) -> None:
        status = self.status()
        if status is None:
            return
        status.idle()
        if self.session is not None:
            notices = ([self.keymap_warning] if self.keymap_warning else []) + list(self.session.vectors.warnings)
            status.notice = "; ".join(notices)[:200]
            self.publish(self.session.with_state(IndexState.READY, msg.index))

    def on_wordkin_app_index_failed(self, msg: IndexFailed) -> None:
        status = self.status()
        if status is None:
            return
        status.idle()
        if self.session is not None:
            self.publish(self.session.with_state(IndexState.FAILED, reason=msg.reason))

    def on_worker_state_changed(self, event: Worker.StateChanged) -> None:
        """The one place unexpected worker errors surface: shown, never swallowed."""
        if event.state == WorkerState.ERROR and event.worker.error is not None:
            err = event.worker.error
            text = f"{event.worker.description or event.worker.name}: {type(err).__name__}: {err}"
            status = self.status()
            if status is not None:
                status.notice = text
            self.notify(visible(text), title="unexpected error", severity="error", timeout=30, markup=False)

    def on_query_pane_open_requested(self, msg: QueryPane.OpenRequested) -> None:
        for spec in PANES:
            pane = self.query_one(f"#pane-{spec.id}")
            if isinstance(pane, QueryPane) and pane.kind.kind == msg.query.kind:
                self.action_pane(spec.id)
                pane.load_query(msg.query)
                return

    def on_query_pane_save_requested(self, msg: QueryPane.SaveRequested) -> None:
        self.query_one(NotebookPane).save(msg.result, msg.session)

    # -- actions ---------------------------------------------------------------------------------------

    def action_pane(self, pane: str) -> None:
        self.query_one(TabbedContent).active = pane
        # Synchronously: Widget.focus() defers, and keys typed right after a pane key would go to the hidden pane.
        self.screen.set_focus(self.query_one(BY_ID[pane].focus))

    def binding_scopes(self) -> list[tuple[str, Any]]:
        scopes: list[tuple[str, Any]] = [("global", self.BINDINGS)]
        scopes += [(p.label.lower(), p.bindings) for p in PANES]
        scopes += [("query panes", QueryPane.BINDINGS), ("boxes", WordInput.BINDINGS + NoteInput.BINDINGS)]
        return scopes + [("help", HelpScreen.BINDINGS)]

    def apply_keymap(self) -> None:
        """The user's keymap file, if any: applied, and anything left out of it said once."""
        keymap, warning = load_keymap(binding_ids(b for _, b in self.binding_scopes()))
        self.keymap_in_force = keymap
        self.keymap_warning = warning
        if keymap:
            self.set_keymap(keymap)
        if warning:
            self.query_one(StatusLine).notice = warning
            self.notify(visible(warning), title="keymap", severity="warning", timeout=15, markup=False)

    def action_help(self) -> None:
        self.push_screen(HelpScreen(binding_rows(self.binding_scopes(), self.keymap_in_force)))

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
        kw.setdefault("against", getattr(args, "against", None))
    return WordkinApp(str(Path(path)), **kw)


def run_console(path: str, args: argparse.Namespace) -> int:
    from wordkin.index.readers.detect import detect

    detect(path, trust_pickle=args.trust_pickle)  # fail fast, before the screen opens, on an unreadable file
    if getattr(args, "against", None):
        detect(args.against, trust_pickle=args.trust_pickle)
    app = create_app(path, args)
    app.run()
    return app.return_code or 0
