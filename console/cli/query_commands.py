"""``near``, ``calc`` and ``sim``: the commands that ask one query of one vector set. Their arguments, the query
value they build and the command line a query value becomes again are all derived from the options declared on
the query's fields (``options``); a test walks every kind and every combination of its options through them.

One path: arguments -> query value -> ``query.run(session)`` -> a renderer (``text_tables`` or the result's JSON)
-> optionally the notebook.
"""

from __future__ import annotations

import argparse
import sys
from collections.abc import Callable
from pathlib import Path

from wordkin.console.cli.io import emit_json, note, open_session
from wordkin.console.cli.options import add_query_arguments, inputs_argv, option_argv, query_from_args
from wordkin.console.cli.registry import Command, register, save_arguments
from wordkin.console.formats.safe_text import visible
from wordkin.console.formats.text_tables import result_text
from wordkin.index.errors import UsageError
from wordkin.index.expressions import ExprError
from wordkin.index.kinds import Arithmetic, Neighbours, Query, Similarity
from wordkin.index.kinds.base import Result
from wordkin.index.search import MAX_K
from wordkin.index.session import Session

#: The command of each query kind it answers.
_KIND_OF: dict[str, type[Query]] = {"near": Neighbours, "calc": Arithmetic, "sim": Similarity}


def cmd_query(args: argparse.Namespace) -> int:
    """Build the query from the arguments, answer it, print it, maybe save it."""
    query = query_from_args(args, _KIND_OF[args.cmd])
    session = open_session(args, want_index=not getattr(args, "exact", False))
    k = getattr(args, "k", None)
    if k is not None and k > MAX_K:
        raise UsageError(f"-k is at most {MAX_K:,}, not {k:,} (the vocabulary has {session.vectors.n:,} words)")
    try:
        res = query.run(session)
    except ExprError as exc:
        from rich.cells import cell_len

        text = exc.text.replace("\n", " ").replace("\t", " ")
        caret = " " * cell_len(visible(text[: exc.column])) + "^"
        print(f"wordkin: expression, column {exc.column + 1}: {visible(exc.expected)}", file=sys.stderr)
        print(f"  {visible(text)}\n  {caret}", file=sys.stderr)
        return exc.exit_code
    emit_json(res.to_json()) if args.json else sys.stdout.write(result_text(res))
    maybe_save(args, session, res)
    return 0


def maybe_save(args: argparse.Namespace, session: Session, res: Result) -> None:
    """``--save NB [--note TEXT]``: the query and its result as a notebook entry."""
    if not getattr(args, "save", None):
        return
    from wordkin.console.store.notebook import Entry, Notebook

    with Notebook.open(args.save) as nb:
        entry_id = nb.add(Entry.of(res, session.vectors, note=args.note))
    note(f"saved as entry {entry_id} in {args.save}")


def _arguments(cls: type[Query]) -> Callable[[argparse.ArgumentParser], None]:
    def add(p: argparse.ArgumentParser) -> None:
        p.add_argument("file")
        add_query_arguments(p, cls)
        p.add_argument("--json", action="store_true")
        save_arguments(p)

    return add


def _to_argv(name: str) -> Callable[[Query, str, Path], list[str]]:
    def to_argv(q: Query, file: str, scratch: Path) -> list[str]:
        return [name, file, *option_argv(q), *inputs_argv(q)]

    return to_argv


for _name, _help, _order in (
    ("near", "nearest neighbours of WORD", 40),
    ("calc", "words nearest an expression (arithmetic or a : b :: c : ?)", 41),
    ("sim", "pairwise cosines of a list of words, and the odd one out", 42),
):
    _cls = _KIND_OF[_name]
    register(Command(_name, _help, cmd_query, _arguments(_cls), _order, kind=_cls.kind, to_argv=_to_argv(_name)))
