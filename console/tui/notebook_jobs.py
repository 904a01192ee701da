"""Reads and writes of a notebook file off the UI thread: operations queued by a widget and run one at a time, in
order, by one worker thread; each ends with a message back to the widget (``Done`` or ``Failed``), whose handler
runs the operation's follow-up on the UI thread. A notebook locked by another writer only delays the operation;
``pending`` lets the widget say "waiting for the notebook…"."""

from __future__ import annotations

import queue
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from textual import work
from textual.message import Message
from textual.widget import Widget
from textual.worker import get_current_worker

from wordkin.console.store.notebook import Notebook
from wordkin.index.errors import WordkinError

#: After this long without an answer, the widget says it is waiting for the notebook.
BUSY_AFTER = 0.25


@dataclass(frozen=True)
class Job:
    op: Callable[[Notebook], Any]  # runs in the worker thread with the open notebook
    then: Callable[[Any], None]  # runs on the UI thread with op's value
    failed_title: str


class NotebookJobs:
    """The queue of one widget's notebook operations."""

    class Done(Message):
        def __init__(self, job: Job, value: Any) -> None:
            super().__init__()
            self.job = job
            self.value = value

    class Failed(Message):
        def __init__(self, job: Job, error: WordkinError) -> None:
            super().__init__()
            self.job = job
            self.error = error

    def __init__(self, owner: Widget, path: str | None) -> None:
        self.owner = owner
        self.path = path
        self.pending = 0
        self._jobs: queue.Queue[Job] = queue.Queue()

    def submit(self, op: Callable[[Notebook], Any], then: Callable[[Any], None], failed_title: str) -> None:
        self.pending += 1
        self._jobs.put(Job(op, then, failed_title))

    def finished(self) -> None:
        self.pending = max(0, self.pending - 1)

    def serve(self, cancelled: Callable[[], bool]) -> None:
        """The worker's loop (call it from a thread worker of the owner): one operation at a time, in order."""
        while not cancelled():
            try:
                job = self._jobs.get(timeout=0.2)
            except queue.Empty:
                continue
            try:
                with Notebook.open(self.path) as nb:
                    value = job.op(nb)
            except WordkinError as exc:
                self.owner.post_message(self.Failed(job, exc))
                continue
            except OSError as exc:
                what = exc.filename or self.path or "the notebook"
                self.owner.post_message(self.Failed(job, WordkinError(f"{what}: {exc.strerror or exc}")))
                continue
            except Exception as exc:  # noqa: BLE001 - the loop must outlive any one operation; said, not swallowed
                self.owner.post_message(self.Failed(job, WordkinError(f"{type(exc).__name__}: {exc}")))
                continue
            self.owner.post_message(self.Done(job, value))


class NotebookJobsHost:
    """Mixin for a widget with a ``jobs`` queue: the worker that serves it and the handler of what it finishes.
    The widget handles ``NotebookJobs.Failed`` itself (where to say it differs from pane to pane)."""

    jobs: NotebookJobs

    @work(thread=True, exit_on_error=False, group="notebook-io", description="notebook reads and writes")
    def notebook_io(self) -> None:
        worker = get_current_worker()
        self.jobs.serve(lambda: worker.is_cancelled)

    def on_notebook_jobs_done(self, msg: NotebookJobs.Done) -> None:
        self.jobs.finished()
        msg.job.then(msg.value)
