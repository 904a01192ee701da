"""What every query pane shares: the session it is handed, asking a query value in a worker, the answer or the
failure as messages, and the save request.

The app posts ``SessionChanged`` to every pane when the session changes; a pane keeps that value and hands it to
its workers as an argument, so a worker never reads state that changes under it. A pane never calls the app: it
posts ``SaveRequested`` and the app passes it on to the notebook.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, ClassVar

from rich.text import Text
from textual import work
from textual.binding import Binding
from textual.containers import Vertical
from textual.message import Message
from textual.worker import get_current_worker

from wordkin.console.tui.option_widgets import OPTION_WIDGETS
from wordkin.index.errors import CancelledError, UsageError, WordkinError
from wordkin.index.kinds.base import Query, Result, option_fields
from wordkin.index.session import Session


@dataclass(frozen=True)
class VocabView:
    """The vocabulary as the console shows it: words with control characters appear escaped (``visible``), so a
    typed escape maps back to the word (``escaped``); ``completion`` is the sorted displayable vocabulary."""

    escaped: dict[str, str]
    completion: Any  # widgets.Completions (the vocabulary's prefix completion)

    def word(self, session: Session, text: str) -> str:
        """The vocabulary word behind ``text`` as typed or shown."""
        if session.vectors.find(text) is None and text in self.escaped:
            return self.escaped[text]
        return text


class SessionChanged(Message):
    """Posted by the app to every pane: the vectors loaded, or the index changed state."""

    bubble = False

    def __init__(self, session: Session, vocab: VocabView) -> None:
        super().__init__()
        self.session = session
        self.vocab = vocab


class QueryPane(Vertical):
    """Base of the panes that answer one kind of query (``kind``)."""

    kind: ClassVar[type[Query]]
    #: The kind's ``run`` takes ``progress`` and ``cancel`` (slow work: shown as it goes, cancelled by a new ask).
    slow: ClassVar[bool] = False

    BINDINGS = [
        # Not in the footer (it is short at 80 columns): the help (F1) lists them.
        Binding("ctrl+g", "toggle_subwords", "Subwords on/off", show=False, id="query.subwords"),
        Binding("ctrl+y", "toggle_exact_word", "Word variants on/off", show=False, id="query.variants"),
    ]

    class Answered(Message):
        """A query was answered (posted by the pane's worker)."""

        def __init__(self, result: Result) -> None:
            super().__init__()
            self.result = result

    class Failed(Message):
        """A query could not be answered: ``error`` says why; nothing is left to save."""

        def __init__(self, query: Query | None, error: WordkinError) -> None:
            super().__init__()
            self.query = query
            self.error = error

    class Progress(Message):
        """Slow work (a check-up, a comparison) moved on: ``total`` 0 means an unknown amount."""

        def __init__(self, done: int, total: int, stage: str) -> None:
            super().__init__()
            self.done, self.total, self.stage = done, total, stage

        def can_replace(self, message: Message) -> bool:
            return isinstance(message, QueryPane.Progress)

    class OpenRequested(Message):
        """The user asked to see ``query`` in the pane of its kind (Enter on an answer of another pane)."""

        def __init__(self, query: Query) -> None:
            super().__init__()
            self.query = query

    class SaveRequested(Message):
        """The user asked to save the result on screen to the notebook."""

        def __init__(self, result: Result, session: Session) -> None:
            super().__init__()
            self.result = result
            self.session = session

    def __init__(self, **kw: object) -> None:
        super().__init__(**kw)  # type: ignore[arg-type]
        self.session: Session | None = None
        self.vocab: VocabView | None = None
        self.result: Result | None = None
        self.asked: Query | None = None
        #: fastText models: build words not in the vocabulary from their character n-grams (every query kind's
        #: ``subwords`` option; Ctrl+G turns it off and on).
        self.subwords = True
        #: Look words up only as typed (every kind's ``exact_word``; Ctrl+Y): no NFC, case or spaces-as-_ variants.
        self.exact_word = False

    # -- the options, read and set through the option widgets (``option_widgets``) -----------------------------

    def option_values(self) -> dict[str, Any]:
        """Every option of the pane's kind that its widgets (and the Ctrl+G / Ctrl+Y toggles) hold, by name."""
        names = {f.name for f in option_fields(self.kind)}
        out: dict[str, Any] = {}
        for w in self.query("*"):
            if isinstance(w, OPTION_WIDGETS) and w.option in names:
                out[w.option] = w.option_value()
        for name in ("subwords", "exact_word"):
            if name in names:
                out[name] = getattr(self, name)
        return out

    def show_options(self, query: Query) -> None:
        """Set every option widget (and the toggles) to ``query``'s values."""
        for w in self.query("*"):
            if isinstance(w, OPTION_WIDGETS) and hasattr(query, w.option):
                w.show_value(getattr(query, w.option))
        for name in ("subwords", "exact_word"):
            if hasattr(query, name):
                setattr(self, name, getattr(query, name))

    # -- to be provided by each pane -------------------------------------------------------------------------

    def current_query(self) -> Query:
        """The query the pane's widgets describe now; ``UsageError`` when they do not describe one."""
        raise NotImplementedError

    def load_query(self, query: Query) -> None:
        """Set the pane's widgets to ``query`` (every option) and ask it."""
        raise NotImplementedError

    def show_result(self, result: Result) -> None:
        raise NotImplementedError

    def show_failure(self, error: WordkinError) -> None:
        raise NotImplementedError

    def show_message(self, text: Text) -> None:
        raise NotImplementedError

    def session_ready(self) -> None:
        """Called when a new session arrives."""

    # -- shared behaviour ------------------------------------------------------------------------------------

    def on_session_changed(self, msg: SessionChanged) -> None:
        self.session = msg.session
        self.vocab = msg.vocab
        self.session_ready()

    def word(self, text: str) -> str:
        if self.session is None or self.vocab is None:
            return text
        return self.vocab.word(self.session, text)

    def submit(self) -> None:
        """Ask the query the widgets describe."""
        try:
            q = self.current_query()
        except UsageError as exc:
            self.post_message(self.Failed(None, exc))
            return
        self.ask(q)

    def ask(self, query: Query) -> None:
        self.asked = query
        if self.session is None:
            self.show_message(Text("the vectors are still loading…", style="italic"))
            return
        self.answer(query, self.session)

    @work(thread=True, exclusive=True, exit_on_error=False, group="query", description="answer a query")
    def answer(self, query: Query, session: Session) -> None:
        worker = get_current_worker()
        try:
            if self.slow:
                res = query.run(  # type: ignore[call-arg]
                    session,
                    progress=lambda d, t, st: self.post_message(self.Progress(d, t, st)),
                    cancel=lambda: worker.is_cancelled,
                )
            else:
                res = query.run(session)
        except CancelledError:
            return
        except WordkinError as exc:
            self.post_message(self.Failed(query, exc))
            return
        self.post_message(self.Answered(res))

    def on_query_pane_answered(self, msg: Answered) -> None:
        if msg.result.query != self.asked:
            return  # an older question's answer, overtaken by a newer one
        self.result = msg.result
        self.show_result(msg.result)

    def on_query_pane_failed(self, msg: Failed) -> None:
        if msg.query is not None and msg.query != self.asked:
            return
        self.result = None  # nothing stale stays on screen, and nothing is left to save
        self.show_failure(msg.error)

    def action_toggle_subwords(self) -> None:
        self.subwords = not self.subwords
        state = "on" if self.subwords else "off: words not in the vocabulary are errors"
        self.notify(f"subwords {state}", markup=False)
        if self.asked is not None:
            self.submit()

    def action_toggle_exact_word(self) -> None:
        self.exact_word = not self.exact_word
        state = "off: words are looked up as typed" if self.exact_word else "on (NFC, case, spaces as _)"
        self.notify(f"word variants {state}", markup=False)
        if self.asked is not None:
            self.submit()

    def action_save(self) -> None:
        if self.result is not None and self.session is not None:
            self.post_message(self.SaveRequested(self.result, self.session))
        else:
            self.show_message(Text("nothing to save: ask a query first", style="italic"))
