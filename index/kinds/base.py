"""What every kind of query and result has in common, and the registry of kinds.

A query is a frozen dataclass holding every input and option of one question (``Neighbours``, ``Arithmetic``,
``Similarity``, ...); ``run(session)`` answers it with a frozen result that carries the query. The command line,
the console's panes, the notebook (which stores ``query.to_json()`` and ``result.to_json()``), the re-run and the
exporters all work through this interface, so a new kind is one module that registers itself here; nothing else
branches on the kind.

Results describe themselves for the exporters in a neutral way: a ``Table`` (columns and rows of plain values),
``notes()`` (extra lines), ``records()`` (one flat dict per row, for CSV) and ``diff(other)`` (what changed between
two answers to the same query).
"""

from __future__ import annotations

import dataclasses
import types
import typing
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any, ClassVar, TypeVar

#: A table cell: text, a whole number, a float (shown with 3 decimals) or empty.
Cell = str | int | float | None


@dataclass(frozen=True)
class Table:
    """Columns and rows of plain values. ``numeric[i]`` says whether column i is right-aligned."""

    columns: tuple[str, ...]
    rows: tuple[tuple[Cell, ...], ...]
    numeric: tuple[bool, ...] = ()


@dataclass(frozen=True)
class Diff:
    """What changed between a saved answer and a new answer to the same query."""

    gained: tuple[tuple[str, int], ...] = ()  # (word, new rank)
    lost: tuple[tuple[str, int], ...] = ()  # (word, old rank)
    moved: tuple[tuple[str, int, int], ...] = ()  # (word, old rank, new rank)
    cells: tuple[tuple[str, str, float, float], ...] = ()  # (row, column, old value, new value)
    same: int = 0

    @property
    def changed(self) -> bool:
        return bool(self.gained or self.lost or self.moved or self.cells)


def rank_diff(before: list[tuple[str, int]], after: list[tuple[str, int]]) -> Diff:
    """Gained, lost and moved words between two ranked lists of ``(word, rank)``."""
    old = dict(before)
    new = dict(after)
    gained = tuple((w, r) for w, r in after if w not in old)
    moved = tuple((w, old[w], r) for w, r in after if w in old and old[w] != r)
    same = sum(1 for w, r in after if old.get(w) == r)
    lost = tuple((w, r) for w, r in before if w not in new)
    return Diff(gained=gained, lost=lost, moved=moved, same=same)


class Result:
    """Base of every result: a frozen dataclass whose first field is ``query``."""

    query: Query
    mode: str  # how it was answered: "ann" (index candidates, exact re-rank), "exact", or "-" where not searched

    def to_json(self) -> dict[str, Any]:
        raise NotImplementedError

    def table(self) -> Table:
        raise NotImplementedError

    def tables(self) -> list[tuple[str, Table]]:
        """Every table of the result with its caption (the first, uncaptioned, is ``table()``)."""
        return [("", self.table())]

    def notes(self) -> list[str]:
        return []

    def histograms(self) -> list[tuple[str, Any]]:
        """``(title, release_stats.Histogram)`` pairs: the pictures of the result (none for most kinds)."""
        return []

    def records(self) -> list[dict[str, Cell]]:
        """One flat dict per table row (the CSV export)."""
        t = self.table()
        return [dict(zip(t.columns, row, strict=True)) for row in t.rows]

    def diff(self, newer: Result) -> Diff:
        raise NotImplementedError


class Query:
    """Base of every query kind: a frozen dataclass of inputs and options with ``kind``, ``run`` and JSON."""

    kind: ClassVar[str]
    #: The result class this kind answers with (``result_class.from_json(d, query)`` reads a stored one back).
    result_class: ClassVar[type[Any]]
    #: True for kinds that compare the open set with a second one (the session's ``against``).
    needs_against: ClassVar[bool] = False

    def run(self, session: Any) -> Result:
        raise NotImplementedError

    def title(self) -> str:
        raise NotImplementedError

    @classmethod
    def example(cls, words: list[str]) -> Query:
        """A sample query over a vocabulary's frequent ``words`` (placeholders, and the tests' walk of every kind)."""
        raise NotImplementedError

    def options(self) -> list[str]:
        """Every option that shapes the answer, in words (``k 10``, ``top all``, ``hide forms``...)."""
        return option_labels(self)

    def with_mode(self, mode: str) -> Query:
        """The same query pinned to how a saved answer was found (``exact`` stays exact on a re-run)."""
        if mode == "exact" and any(f.name == "exact" for f in dataclasses.fields(self)):  # type: ignore[arg-type]
            return dataclasses.replace(self, exact=True)  # type: ignore[type-var]
        return self

    def to_json(self) -> dict[str, Any]:
        out: dict[str, Any] = {"kind": self.kind}
        for f in dataclasses.fields(self):  # type: ignore[arg-type]
            v = getattr(self, f.name)
            out[f.name] = list(v) if isinstance(v, tuple) else v
        return out

    @classmethod
    def from_json(cls, d: dict[str, Any]) -> Query:
        """The query stored by ``to_json``. Missing options take their defaults; a wrong type is ``ValueError``."""
        if not isinstance(d, dict):
            raise ValueError("a query must be a JSON object")
        hints = typing.get_type_hints(cls)
        kw: dict[str, Any] = {}
        for f in dataclasses.fields(cls):  # type: ignore[arg-type]
            if f.name not in d:
                if f.default is dataclasses.MISSING and f.default_factory is dataclasses.MISSING:
                    raise ValueError(f"{cls.kind} query without {f.name!r}")
                continue
            kw[f.name] = _coerce(d[f.name], hints[f.name], f.name)
        return cls(**kw)


def _coerce(value: Any, hint: Any, name: str) -> Any:
    origin = typing.get_origin(hint)
    args = typing.get_args(hint)
    if origin in (types.UnionType, typing.Union):
        if value is None and type(None) in args:
            return None
        inner = [a for a in args if a is not type(None)]
        return _coerce(value, inner[0], name)
    if origin is tuple:
        if not isinstance(value, list | tuple):
            raise ValueError(f"{name}: expected a list")
        item = args[0] if args else Any
        return tuple(_coerce(v, item, name) for v in value)
    if hint is bool:
        if not isinstance(value, bool):
            raise ValueError(f"{name}: expected true or false")
        return value
    if hint is int:
        if isinstance(value, bool) or not isinstance(value, int):
            raise ValueError(f"{name}: expected a whole number")
        return value
    if hint is float:
        if isinstance(value, bool) or not isinstance(value, int | float):
            raise ValueError(f"{name}: expected a number")
        return float(value)
    if hint is str:
        if not isinstance(value, str):
            raise ValueError(f"{name}: expected text")
        return value
    return value


KINDS: dict[str, type[Query]] = {}

Q = TypeVar("Q", bound=type[Query])


def register(cls: Q) -> Q:
    """Class decorator: add a query kind to the registry (its ``kind`` must be new)."""
    if cls.kind in KINDS and KINDS[cls.kind] is not cls:
        raise ValueError(f"query kind {cls.kind!r} registered twice")
    KINDS[cls.kind] = cls
    return cls


def query_from_json(d: dict[str, Any]) -> Query:
    kind = d.get("kind") if isinstance(d, dict) else None
    if kind not in KINDS:
        raise ValueError(f"unknown query kind {kind!r}")
    return KINDS[str(kind)].from_json(d)


def result_from_json(query: Query, d: dict[str, Any]) -> Result:
    reader: Callable[[dict[str, Any], Query], Result] = query.result_class.from_json
    return reader(d, query)


def option_field(
    choices: tuple[Any, ...],
    *,
    default: Any,
    flag: str,
    label: str,
    help: str,
    short: str = "",
    metavar: str | None = None,
    allowed: tuple[Any, ...] | None = None,
    show: str = "{}",
    names: dict[Any, str] | None = None,
    none: str | None = None,
    positive: bool = False,
) -> Any:
    """A dataclass field of an option, declared once: every front end is derived from this.

    ``choices``: the values a test walks through. ``flag``: the command-line flag (a bool option whose default is
    True is switched off by its flag, ``--no-subwords``). ``label``: the option in words, as ``options()`` lists it
    (``k 10``, ``hide forms``; a bool is listed when it differs from its default); ``short``: the label on the
    console's widget where it differs. ``help``: the flag's help. ``metavar``, ``allowed`` (argparse choices),
    ``show`` (how the value is written, a format string), ``names`` (words for values: ``add`` -> ``3CosAdd``),
    ``none`` (the word for None: ``all``), ``positive`` (a whole number of at least 1, checked by the front ends
    in the flag's name).
    """
    meta = {
        "choices": choices,
        "flag": flag,
        "label": label,
        "short": short or label,
        "help": help,
        "metavar": metavar,
        "allowed": allowed,
        "show": show,
        "names": names or {},
        "none": none,
        "positive": positive,
    }
    return field(default=default, metadata=meta, kw_only=True)


def input_field(*, metavar: str, help: str = "") -> Any:
    """A dataclass field of the question itself (the word, the expression): a positional argument of its command."""
    return field(metadata={"input": True, "metavar": metavar, "help": help})


def option_fields(cls: type[Query]) -> list[dataclasses.Field[Any]]:
    """The option fields of a kind, in declaration order."""
    return [f for f in dataclasses.fields(cls) if "flag" in f.metadata]  # type: ignore[arg-type]


def input_fields(cls: type[Query]) -> list[dataclasses.Field[Any]]:
    """The fields a command takes as positional arguments, in declaration order."""
    return [f for f in dataclasses.fields(cls) if f.metadata.get("input")]  # type: ignore[arg-type]


def option_text(f: dataclasses.Field[Any], value: Any) -> str | None:
    """One option in words (``k 10``, ``top all``, ``hide forms``), or None where it is not worth saying."""
    md = f.metadata
    if isinstance(value, bool):
        return str(md["label"]) if value != f.default else None
    if value is None:
        return f"{md['label']} {md['none']}" if md["none"] is not None else None
    if value == "" and f.default == "":
        return None
    shown = md["names"].get(value, md["show"].format(value))
    return f"{md['label']} {shown}"


def option_labels(query: Query, skip: tuple[str, ...] = ()) -> list[str]:
    """Every option of ``query`` in words, in declaration order (``skip`` names options a kind says itself)."""
    out = []
    for f in option_fields(type(query)):
        if f.name not in skip and (text := option_text(f, getattr(query, f.name))) is not None:
            out.append(text)
    return out


# The options several kinds share, declared once.


def exact_search_option() -> Any:
    return option_field(
        (False, True),
        default=False,
        flag="--exact",
        label="exact search",
        short="exact",
        help="scan every word instead of using the index",
    )


def subwords_option() -> Any:
    return option_field(
        (True, False),
        default=True,
        flag="--no-subwords",
        label="no subwords",
        help="fastText .bin: a word not in the vocabulary is an error, not built from its character n-grams",
    )


def exact_word_option() -> Any:
    return option_field(
        (False, True),
        default=False,
        flag="--exact-word",
        label="exact words",
        help="look words up only as typed (not as NFC, case-folded or with spaces as _)",
    )


def top_option(choices: tuple[Any, ...], what: str) -> Any:
    return option_field(
        choices,
        default=None,
        flag="--top",
        label="top",
        none="all",
        metavar="N",
        positive=True,
        help=f"only the N most frequent words may be {what}",
    )
