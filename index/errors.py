"""Typed errors. Every error the user can cause is a ``WordkinError`` carrying a one-line message and a short title.

The CLI prints ``title: message`` and exits with ``exit_code``; the console shows the same text in its status line.
"""

from __future__ import annotations


class WordkinError(Exception):
    """Base class: ``message`` is one line saying what and where; ``title`` is a short heading."""

    exit_code = 1
    title = "error"

    def __init__(self, message: str, *, title: str | None = None) -> None:
        super().__init__(message)
        self.message = message
        if title is not None:
            self.title = title

    def __str__(self) -> str:
        return self.message


class UsageError(WordkinError):
    """A request that cannot be made: bad option value, bad expression, too many words."""

    exit_code = 2
    title = "usage"


class UnreadableFileError(WordkinError):
    """A vector, benchmark or notebook file that cannot be read or is malformed."""

    exit_code = 4
    title = "unreadable file"

    def __init__(
        self,
        path: str,
        problem: str,
        *,
        line: int | None = None,
        column: int | None = None,
        word: str | None = None,
    ) -> None:
        where = str(path)
        if line is not None:
            where += f", line {line}"
        if column is not None:
            where += f", column {column}"
        if word is not None:
            where += f" (word {word!r})"
        super().__init__(f"{where}: {problem}")
        self.path = str(path)
        self.problem = problem
        self.line = line
        self.column = column
        self.word = word


class PickleRefusedError(UnreadableFileError):
    """A pickled file was offered without ``--trust-pickle``: unpickling an untrusted file runs code."""

    title = "pickle refused"


class DimensionMismatchError(WordkinError):
    """Two things that must have the same number of dimensions do not."""

    exit_code = 4
    title = "dimension mismatch"


class UnknownWordError(WordkinError):
    """A word is not in the vocabulary; ``suggestions`` holds close matches, best first."""

    exit_code = 3
    title = "unknown word"

    def __init__(self, word: str, suggestions: list[str] | tuple[str, ...] = ()) -> None:
        msg = f"{word!r} is not in the vocabulary"
        if suggestions:
            msg += "; close matches: " + ", ".join(suggestions)
        super().__init__(msg)
        self.word = word
        self.suggestions = tuple(suggestions)


class CancelledError(WordkinError):
    """Slow work was cancelled by its caller (quit during a load or a build)."""

    title = "cancelled"
