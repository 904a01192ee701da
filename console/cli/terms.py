"""``wordkin terms``: term lists from the command line, the twin of the console's Terms pane.

```
wordkin terms new NB NAME WORD [WORD ...]
wordkin terms suggest FILE NB NAME [-k 20] [--gamma 0.15] [--top N] [--support-k 25] [--hide-forms]
                      [--include RE] [--exclude RE] [--exact] [--json] [--save]
wordkin terms keep|drop|aside NB NAME WORD [WORD ...] [--note TEXT]
wordkin terms undo NB NAME
wordkin terms show NB [NAME] [--json]
wordkin terms export NB NAME --format words|synonyms|csv|json [-o OUT] [--force]
```
"""

from __future__ import annotations

import argparse
import sys
import uuid
from pathlib import Path
from typing import Any

from wordkin.console.cli.options import add_options, option_argv, option_values
from wordkin.console.cli.registry import Command, register, shared_arguments
from wordkin.console.formats.safe_text import visible
from wordkin.index.errors import UnknownWordError, UsageError
from wordkin.index.kinds import Query, TermsResult, TermSuggest

VERBS = ("new", "suggest", "keep", "drop", "aside", "undo", "show", "export")


def _arguments(p: argparse.ArgumentParser) -> None:
    verbs = p.add_subparsers(dest="verb", required=True, metavar="VERB")

    v = verbs.add_parser("new", help="a new list seeded with WORDs (exit 2 if NAME exists)")
    v.add_argument("notebook", metavar="NB")
    v.add_argument("name", metavar="NAME")
    v.add_argument("words", nargs="+", metavar="WORD")
    v.add_argument("--debug", action="store_true")

    v = verbs.add_parser("suggest", help="candidates for the list from vector file FILE")
    v.add_argument("file")
    v.add_argument("notebook", metavar="NB")
    v.add_argument("name", metavar="NAME")
    add_options(v, TermSuggest)
    v.add_argument("--json", action="store_true")
    v.add_argument("--save", action="store_true", help="also save the candidate table as a notebook entry")
    shared_arguments(v)

    for verb, what in (("keep", "kept"), ("drop", "dropped"), ("aside", "set aside for later")):
        v = verbs.add_parser(verb, help=f"record WORDs as {what}")
        v.add_argument("notebook", metavar="NB")
        v.add_argument("name", metavar="NAME")
        v.add_argument("words", nargs="+", metavar="WORD")
        v.add_argument("--note", default="", metavar="TEXT")
        v.add_argument("--debug", action="store_true")

    v = verbs.add_parser("undo", help="undo the list's latest decision")
    v.add_argument("notebook", metavar="NB")
    v.add_argument("name", metavar="NAME")
    v.add_argument("--debug", action="store_true")

    v = verbs.add_parser("show", help="every list, or one list with every decision")
    v.add_argument("notebook", metavar="NB")
    v.add_argument("name", metavar="NAME", nargs="?")
    v.add_argument("--json", action="store_true")
    v.add_argument("--debug", action="store_true")

    v = verbs.add_parser("export", help="the list as words, synonym rules, CSV or JSON")
    v.add_argument("notebook", metavar="NB")
    v.add_argument("name", metavar="NAME")
    v.add_argument("--format", required=True, choices=("words", "synonyms", "csv", "json"))
    v.add_argument("-o", "--output", metavar="OUT", help="file to write (default: standard output; - too)")
    v.add_argument("--force", action="store_true", help="replace OUT if it exists")
    v.add_argument("--debug", action="store_true")


def cmd_terms(args: argparse.Namespace) -> int:
    return int(HANDLERS[args.verb](args))


def _notebook(args: argparse.Namespace, *, create: bool = False) -> Any:
    from wordkin.console.store.notebook import Notebook

    return Notebook.open(args.notebook, create=create)


def _check_words(tl: Any, words: list[str]) -> None:
    """Words of a decision must be in the vocabulary of the set the list's suggestions came from (when known)."""
    path = tl.vector_set.get("path")
    if not path:
        return
    from pathlib import Path

    from wordkin.index.vectors import open_vectors

    if not Path(path).is_file():
        return
    vs = open_vectors(path)
    if vs.fingerprint != tl.vector_set.get("fingerprint"):
        return
    for w in words:
        vs.word_vector(w)  # UnknownWordError with close matches (a fastText model builds it from n-grams)


def t_new(args: argparse.Namespace) -> int:
    from wordkin.console.store.term_lists import create_list

    with _notebook(args, create=True) as nb:
        tl = create_list(nb, args.name, list(args.words))
    _say(f"term list {tl.name!r} created in {args.notebook} with {len(tl.seeds)} seeds")
    return 0


def t_suggest(args: argparse.Namespace) -> int:
    from wordkin.console.cli.io import emit_json, open_session
    from wordkin.console.formats.text_tables import result_text
    from wordkin.console.store.notebook import Entry, vector_set_info
    from wordkin.console.store.term_lists import get_list, record_shown

    options = option_values(args, TermSuggest)
    if not 0 <= args.gamma <= 1:
        raise UsageError(f"--gamma must be between 0 and 1, not {args.gamma:g}")
    with _notebook(args) as nb:
        tl = get_list(nb, args.name)
    session = open_session(args, want_index=not args.exact)
    q = tl.query(**options)
    res = q.run(session)
    assert isinstance(res, TermsResult)
    with _notebook(args) as nb:
        record_shown(nb, res, vector_set_info(session.vectors))
        if args.save:
            entry_id = nb.add(Entry.of(res, session.vectors))
            _say(f"saved as entry {entry_id} in {args.notebook}")
    emit_json(res.to_json()) if args.json else sys.stdout.write(result_text(res))
    return 0


def _decide(args: argparse.Namespace, state: str) -> int:
    from wordkin.console.store.term_lists import decide, get_list

    with _notebook(args) as nb:
        _check_words(get_list(nb, args.name), list(args.words))
        out = decide(nb, args.name, list(args.words), state, note=args.note)
    _say(out.message(state))
    return 0


def t_undo(args: argparse.Namespace) -> int:
    from wordkin.console.store.term_lists import undo

    with _notebook(args) as nb:
        d = undo(nb, args.name)
    _say("nothing to undo" if d is None else f"undone: {d.word} {d.state}")
    return 0


def t_show(args: argparse.Namespace) -> int:
    from wordkin.console.cli.io import emit_json
    from wordkin.console.store.term_lists import all_lists, get_list

    with _notebook(args) as nb:
        lists = [get_list(nb, args.name)] if args.name else all_lists(nb)
    if args.json:
        emit_json(lists[0].to_json() if args.name else {"lists": [t.to_json() for t in lists]})
        return 0
    if not lists:
        sys.stdout.write("no term lists yet (`wordkin terms new NB NAME WORD ...`)\n")
    for tl in lists:
        sys.stdout.write(show_text(tl, full=bool(args.name)))
    return 0


def show_text(tl: Any, *, full: bool) -> str:
    out = [
        f"{visible(tl.name)}: {len(tl.terms)} terms, {len(tl.dropped)} dropped, {len(tl.aside)} set aside",
        "  seeds:   " + ", ".join(visible(w) for w in tl.seeds),
    ]
    if tl.kept:
        out.append("  kept:    " + ", ".join(visible(w) for w in tl.kept))
    if tl.dropped:
        out.append("  dropped: " + ", ".join(visible(w) for w in tl.dropped))
    if tl.aside:
        out.append("  aside:   " + ", ".join(visible(w) for w in tl.aside))
    if full and tl.history:
        out.append("  decisions (oldest first):")
        for d in tl.history:
            score = "" if d.score is None else f" score {d.score:.3f}, support {d.support}"
            undone = " (undone)" if d.undone else ""
            note = f"  note: {visible(d.note)}" if d.note else ""
            out.append(f"    {d.decided}  {visible(d.by)}  {d.state:<7} {visible(d.word)}{score}{undone}{note}")
    return "\n".join(out) + "\n"


def t_export(args: argparse.Namespace) -> int:
    from wordkin.console.cli.io import emit_output
    from wordkin.console.formats.term_list_export import render
    from wordkin.console.store.notebook import Notebook, now
    from wordkin.console.store.term_lists import get_list

    with Notebook.open(args.notebook, create=False) as nb:
        tl = get_list(nb, args.name)
    emit_output(args, render(tl, args.format, now()))
    return 0


def _say(msg: str) -> None:
    print(f"wordkin: {visible(msg)}", file=sys.stderr)


HANDLERS = {
    "new": t_new,
    "suggest": t_suggest,
    "keep": lambda a: _decide(a, "kept"),
    "drop": lambda a: _decide(a, "dropped"),
    "aside": lambda a: _decide(a, "aside"),
    "undo": t_undo,
    "show": t_show,
    "export": t_export,
}


def _to_argv(q: Query, file: str, scratch: Path) -> list[str]:
    """``terms suggest`` reads the list's state from a notebook: a new one is written in ``scratch`` with it."""
    assert isinstance(q, TermSuggest)
    from wordkin.console.store.notebook import Notebook
    from wordkin.console.store.term_lists import create_list, decide

    nb = scratch / f"terms-{uuid.uuid4().hex}.wkn"
    with Notebook.open(nb) as book:
        create_list(book, q.name, list(q.seeds))
        for state, words in (("kept", q.kept), ("dropped", q.dropped), ("aside", q.aside)):
            if words:
                decide(book, q.name, list(words), state)
    return ["terms", "suggest", file, str(nb), q.name, *option_argv(q)]


register(
    Command(
        "terms",
        "term lists: seed, suggest, keep or drop, export",
        cmd_terms,
        _arguments,
        70,
        shared="none",
        kind=TermSuggest.kind,
        to_argv=_to_argv,
    )
)

__all__ = ["cmd_terms", "UnknownWordError"]
