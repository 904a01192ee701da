"""The commands that answer a query (``near``, ``calc``, ``sim``): one row of a table per query kind, holding its
arguments, how they become a query value and how a query value becomes arguments again.

Every option of a kind is an argument of its command: ``to_argv(query)`` followed by ``build(args)`` gives the same
query back (a test walks every kind of the registry and every combination of its options through both).
"""

from __future__ import annotations

import argparse
from collections.abc import Callable
from dataclasses import dataclass

from wordkin.index.errors import UsageError
from wordkin.index.queries import KINDS, Arithmetic, Neighbours, Query, Similarity


@dataclass(frozen=True)
class QueryCommand:
    name: str
    kind: str
    help: str
    add_arguments: Callable[[argparse.ArgumentParser], None]
    build: Callable[[argparse.Namespace], Query]
    to_argv: Callable[[Query], list[str]]


def _flag(on: bool, name: str) -> list[str]:
    return [name] if on else []


def _opt(value: object, name: str) -> list[str]:
    return [] if value is None else [name, str(value)]


def _near_args(p: argparse.ArgumentParser) -> None:
    p.add_argument("word")
    p.add_argument("-k", type=int, default=10, help="how many neighbours (default 10)")
    p.add_argument("--top", type=int, metavar="N", help="only the N most frequent words may be answers")
    p.add_argument(
        "--hide-forms", action="store_true", help="drop answers that contain the word or are contained in it"
    )
    p.add_argument("--fold-case", action="store_true", help="look the word up case-insensitively")
    p.add_argument("--exact", action="store_true", help="scan every word instead of using the index")


def _check_k_top(a: argparse.Namespace) -> None:
    """The engine checks these too, in words for any front end; here they are named as the flags they are."""
    from wordkin.index.search import MAX_K

    if a.k < 1:
        raise UsageError(f"-k must be a positive whole number, not {a.k}")
    if a.k > MAX_K:
        raise UsageError(f"-k is at most {MAX_K:,}, not {a.k:,}")
    if a.top is not None and a.top < 1:
        raise UsageError(f"--top must be a positive whole number, not {a.top}")


def _near(a: argparse.Namespace) -> Query:
    _check_k_top(a)
    return Neighbours(a.word, a.k, a.top, a.hide_forms, a.fold_case, a.exact)


def _near_argv(q: Query) -> list[str]:
    assert isinstance(q, Neighbours)
    return [
        "near",
        q.word,
        "-k",
        str(q.k),
        *_opt(q.top, "--top"),
        *_flag(q.hide_forms, "--hide-forms"),
        *_flag(q.fold_case, "--fold-case"),
        *_flag(q.exact, "--exact"),
    ]


def _calc_args(p: argparse.ArgumentParser) -> None:
    p.add_argument("expr")
    p.add_argument("-k", type=int, default=10, help="how many answers (default 10)")
    p.add_argument("--method", choices=("add", "mul"), default="add", help="3CosAdd (add) or 3CosMul (mul)")
    p.add_argument("--top", type=int, metavar="N", help="only the N most frequent words may be answers")
    p.add_argument("--keep-inputs", action="store_true", help="do not exclude the expression's words")
    p.add_argument("--exact", action="store_true", help="scan every word instead of using the index")


def _calc(a: argparse.Namespace) -> Query:
    _check_k_top(a)
    return Arithmetic(a.expr, a.k, a.method, a.top, a.keep_inputs, a.exact)


def _calc_argv(q: Query) -> list[str]:
    assert isinstance(q, Arithmetic)
    return [
        "calc",
        q.expression,
        "-k",
        str(q.k),
        "--method",
        q.method,
        *_opt(q.top, "--top"),
        *_flag(q.keep_inputs, "--keep-inputs"),
        *_flag(q.exact, "--exact"),
    ]


def _sim_args(p: argparse.ArgumentParser) -> None:
    p.add_argument("words", nargs="+", metavar="WORD")


def _sim(a: argparse.Namespace) -> Query:
    return Similarity(tuple(a.words))


def _sim_argv(q: Query) -> list[str]:
    assert isinstance(q, Similarity)
    return ["sim", "--", *q.words]


COMMANDS = (
    QueryCommand("near", Neighbours.kind, "nearest neighbours of WORD", _near_args, _near, _near_argv),
    QueryCommand(
        "calc",
        Arithmetic.kind,
        "words nearest an expression (arithmetic or a : b :: c : ?)",
        _calc_args,
        _calc,
        _calc_argv,
    ),
    QueryCommand(
        "sim", Similarity.kind, "pairwise cosines of a list of words, and the odd one out", _sim_args, _sim, _sim_argv
    ),
)
BY_NAME = {c.name: c for c in COMMANDS}
BY_KIND = {c.kind: c for c in COMMANDS}


def argv_for(q: Query) -> list[str]:
    """The command line that asks ``q`` (without the vector file)."""
    return BY_KIND[q.kind].to_argv(q)


def missing_kinds() -> set[str]:
    """Registered query kinds that have no command (a test keeps this empty)."""
    return set(KINDS) - set(BY_KIND)
