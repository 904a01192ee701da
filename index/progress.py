"""Progress and cancellation for slow work: a callback ``(done, total, stage)`` and a zero-argument cancel check."""

from __future__ import annotations

from collections.abc import Callable

from wordkin.index.errors import CancelledError

#: ``progress(done, total, stage)``: ``total`` is 0 when the amount of work is unknown (an indeterminate stage).
ProgressFn = Callable[[int, int, str], None]
CancelFn = Callable[[], bool]


def no_progress(done: int, total: int, stage: str) -> None:
    """The default callback: reports nothing."""


def never_cancel() -> bool:
    return False


def check(cancel: CancelFn | None) -> None:
    """Raise ``CancelledError`` if ``cancel`` says so."""
    if cancel is not None and cancel():
        raise CancelledError("cancelled")
