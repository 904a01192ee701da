"""Re-run a saved entry against the session now open: the new entry and its difference from the saved one
(``formats.rerun_report`` says it in words)."""

from __future__ import annotations

from wordkin.console.store.notebook import Entry
from wordkin.index.kinds.base import Diff
from wordkin.index.session import Session


def rerun(entry: Entry, session: Session) -> tuple[Entry, Diff]:
    """The saved query, with every option it was saved with, answered again; pinned to exact search where the
    saved answer was exact. Returns the new entry (not saved) and its difference from the saved one."""
    res = entry.query.with_mode(entry.result.mode).run(session)
    new = Entry.of(res, session.vectors, note=entry.note)
    return new, entry.result.diff(res)
