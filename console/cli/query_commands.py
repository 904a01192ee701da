"""The commands that answer a query (``near``, ``calc``, ``sim``, ``terms suggest``): one row of a table per query
kind, holding its arguments, how they become a query value and how a query value becomes a command line again.

Every option of a kind is an argument of its command: ``argv_for(query, ...)`` then the command gives the same
answer as the query itself (a test walks every kind of the registry and every combination of its options).
"""

from __future__ import annotations

import argparse
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path

from wordkin.index.errors import UsageError
from wordkin.index.kinds import KINDS, Arithmetic, Checkup, Compare, Neighbours, Query, Similarity, TermSuggest


@dataclass(frozen=True)
class QueryCommand:
    """``add_arguments`` and ``build`` are None for a command with a parser of its own (``terms suggest``)."""

    name: str
    kind: str
    help: str
    add_arguments: Callable[[argparse.ArgumentParser], None] | None
    build: Callable[[argparse.Namespace], Query] | None
    #: The whole command line for a query: (query, vector file, a scratch folder for any notebook it needs).
    to_argv: Callable[[Query, str, Path], list[str]]


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
    _subwords_arg(p)


def _subwords_arg(p: argparse.ArgumentParser) -> None:
    p.add_argument(
        "--exact-word",
        action="store_true",
        help="look words up only as typed (not as NFC, case-folded or with spaces as _)",
    )
    p.add_argument(
        "--no-subwords",
        dest="subwords",
        action="store_false",
        help="fastText .bin: a word not in the vocabulary is an error, not built from its character n-grams",
    )


def _check_k_top(a: argparse.Namespace) -> None:
    """The engine checks these too, in words for any front end; here they are named as the flags they are."""
    if a.k < 1:
        raise UsageError(f"-k must be a positive whole number, not {a.k}")
    if a.top is not None and a.top < 1:
        raise UsageError(f"--top must be a positive whole number, not {a.top}")


def _near(a: argparse.Namespace) -> Query:
    _check_k_top(a)
    return Neighbours(a.word, a.k, a.top, a.hide_forms, a.fold_case, a.exact, a.subwords, a.exact_word)


def _near_argv(q: Query, file: str, scratch: Path) -> list[str]:
    assert isinstance(q, Neighbours)
    return [
        "near",
        file,
        q.word,
        "-k",
        str(q.k),
        *_opt(q.top, "--top"),
        *_flag(q.hide_forms, "--hide-forms"),
        *_flag(q.fold_case, "--fold-case"),
        *_flag(q.exact, "--exact"),
        *_flag(not q.subwords, "--no-subwords"),
        *_flag(q.exact_word, "--exact-word"),
    ]


def _calc_args(p: argparse.ArgumentParser) -> None:
    p.add_argument("expr")
    p.add_argument("-k", type=int, default=10, help="how many answers (default 10)")
    p.add_argument("--method", choices=("add", "mul"), default="add", help="3CosAdd (add) or 3CosMul (mul)")
    p.add_argument("--top", type=int, metavar="N", help="only the N most frequent words may be answers")
    p.add_argument("--keep-inputs", action="store_true", help="do not exclude the expression's words")
    p.add_argument("--exact", action="store_true", help="scan every word instead of using the index")
    _subwords_arg(p)


def _calc(a: argparse.Namespace) -> Query:
    _check_k_top(a)
    return Arithmetic(a.expr, a.k, a.method, a.top, a.keep_inputs, a.exact, a.subwords, a.exact_word)


def _calc_argv(q: Query, file: str, scratch: Path) -> list[str]:
    assert isinstance(q, Arithmetic)
    return [
        "calc",
        file,
        q.expression,
        "-k",
        str(q.k),
        "--method",
        q.method,
        *_opt(q.top, "--top"),
        *_flag(q.keep_inputs, "--keep-inputs"),
        *_flag(q.exact, "--exact"),
        *_flag(not q.subwords, "--no-subwords"),
        *_flag(q.exact_word, "--exact-word"),
    ]


def _sim_args(p: argparse.ArgumentParser) -> None:
    p.add_argument("words", nargs="+", metavar="WORD")
    _subwords_arg(p)


def _sim(a: argparse.Namespace) -> Query:
    return Similarity(tuple(a.words), a.subwords, a.exact_word)


def _sim_argv(q: Query, file: str, scratch: Path) -> list[str]:
    assert isinstance(q, Similarity)
    return ["sim", file, *_flag(not q.subwords, "--no-subwords"), *_flag(q.exact_word, "--exact-word"), *q.words]


def _terms_argv(q: Query, file: str, scratch: Path) -> list[str]:
    """``terms suggest`` reads the list's state from a notebook: one is written in ``scratch`` with that state."""
    assert isinstance(q, TermSuggest)
    from wordkin.console.store.notebook import Notebook
    from wordkin.console.store.term_lists import create_list, decide

    nb = scratch / "terms.wkn"
    with Notebook.open(nb) as book:
        book.con.execute("DELETE FROM term_shown")
        book.con.execute("DELETE FROM term_decisions")
        book.con.execute("DELETE FROM term_lists")
        create_list(book, q.name, list(q.seeds))
        for state, words in (("kept", q.kept), ("dropped", q.dropped), ("aside", q.aside)):
            if words:
                decide(book, q.name, list(words), state)
    return [
        "terms",
        "suggest",
        file,
        str(nb),
        q.name,
        "-k",
        str(q.k),
        "--gamma",
        repr(q.gamma),
        "--support-k",
        str(q.support_k),
        *_opt(q.top, "--top"),
        *_flag(q.hide_forms, "--hide-forms"),
        *(["--include", q.include] if q.include else []),
        *(["--exclude", q.exclude] if q.exclude else []),
        *_flag(q.exact, "--exact"),
        *_flag(not q.subwords, "--no-subwords"),
        *_flag(q.exact_word, "--exact-word"),
    ]


def _checkup_argv(q: Query, file: str, scratch: Path) -> list[str]:
    assert isinstance(q, Checkup)
    return [
        "checkup",
        file,
        "-k",
        str(q.k),
        *[x for p in q.pairs for x in ("--pairs", p)],
        *[x for a in q.analogies for x in ("--analogies", a)],
    ]


def _compare_argv(q: Query, file: str, scratch: Path) -> list[str]:
    """The same file as OLD and NEW (a test walks every kind on one vector file)."""
    assert isinstance(q, Compare)
    words: list[str] = []
    if q.words:
        f = scratch / "compare-words.txt"
        f.write_text("\n".join(q.words) + "\n", encoding="utf-8")
        words = ["--words", str(f)]
    return [
        "compare",
        file,
        file,
        "-k",
        str(q.k),
        *(words or ["--top", str(q.top)]),
        "--most",
        str(q.most),
        *[x for p in q.pairs for x in ("--pairs", p)],
        *[x for a in q.analogies for x in ("--analogies", a)],
    ]


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
    QueryCommand("terms suggest", TermSuggest.kind, "candidates for a term list", None, None, _terms_argv),
    QueryCommand("checkup", Checkup.kind, "a check-up of one vector set", None, None, _checkup_argv),
    QueryCommand("compare", Compare.kind, "a set against the one it replaces", None, None, _compare_argv),
)
BY_NAME = {c.name: c for c in COMMANDS}
BY_KIND = {c.kind: c for c in COMMANDS}


def argv_for(q: Query, file: str, scratch: Path) -> list[str]:
    """The command line that asks ``q`` of vector file ``file`` (options may follow it)."""
    return BY_KIND[q.kind].to_argv(q, file, scratch)


def missing_kinds() -> set[str]:
    """Registered query kinds that have no command (a test keeps this empty)."""
    return set(KINDS) - set(BY_KIND)
