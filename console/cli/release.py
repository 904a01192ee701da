"""``wordkin checkup`` and ``wordkin compare``: is this vector set ready to ship, and how does it differ from the one
it replaces. Progress on stderr; the report on stdout (text laid out for a terminal and an e-mail, or ``--json``);
``--plot DIR`` writes the histograms as SVG files; ``--save NB`` keeps the result in a notebook."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path
from typing import Any

from wordkin.index.errors import UsageError
from wordkin.index.kinds.base import Query, Result
from wordkin.index.session import Session


def add_parsers(sub: Any, shared: Any, save_opts: Any) -> None:
    p = sub.add_parser("checkup", help="a check-up of one vector set: vocabulary, norms, anisotropy, hubness")
    p.add_argument("file")
    p.add_argument("--pairs", action="append", default=[], metavar="PATH", help="a word-pair file to score")
    p.add_argument("--analogies", action="append", default=[], metavar="PATH", help="an analogy file to score")
    p.add_argument("-k", type=int, default=10, help="neighbours counted for hubness (default 10)")
    p.add_argument("--plot", metavar="DIR", help="also write the histograms as SVG files into DIR")
    p.add_argument("--json", action="store_true")
    save_opts(p)
    shared(p)

    p = sub.add_parser("compare", help="compare a vector set (NEW) with the one it replaces (OLD)")
    p.add_argument("old", metavar="OLD")
    p.add_argument("new", metavar="NEW")
    p.add_argument("-k", type=int, default=10, help="neighbours compared per word (default 10)")
    g = p.add_mutually_exclusive_group()
    g.add_argument("--top", type=int, default=10_000, metavar="N", help="compare the N most frequent shared words")
    g.add_argument("--words", metavar="PATH", help="compare the words listed in PATH (one a line)")
    p.add_argument("--most", type=int, default=20, metavar="N", help="how many most-changed words to show")
    p.add_argument("--pairs", action="append", default=[], metavar="PATH", help="a word-pair file to score on both")
    p.add_argument("--analogies", action="append", default=[], metavar="PATH", help="an analogy file, on both")
    p.add_argument("--plot", metavar="DIR", help="also write the histograms as SVG files into DIR")
    p.add_argument("--json", action="store_true")
    save_opts(p)
    shared(p)


def _words_file(path: str) -> tuple[str, ...]:
    from wordkin.index.errors import UnreadableFileError

    try:
        text = Path(path).read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise UnreadableFileError(path, f"cannot read the word list ({exc})") from None
    words = tuple(dict.fromkeys(w.strip() for w in text.splitlines() if w.strip() and not w.startswith("#")))
    if not words:
        raise UnreadableFileError(path, "the word list is empty")
    return words


def _finish(args: argparse.Namespace, res: Result, session: Session) -> int:
    from wordkin.console.cli.io import emit_json, note
    from wordkin.console.formats.plots import write_svgs
    from wordkin.console.formats.text_tables import result_text

    if args.plot:
        for p in write_svgs(res, args.plot):
            note(f"wrote {p}")
    emit_json(res.to_json()) if args.json else sys.stdout.write(result_text(res))
    if args.save:
        from wordkin.console.store.notebook import Entry, Notebook

        with Notebook.open(args.save) as nb:
            entry_id = nb.add(Entry.of(res, session.vectors, note=args.note))
        note(f"saved as entry {entry_id} in {args.save}")
    return 0


def _run(q: Query, session: Session) -> Result:
    from wordkin.console.cli.progress_bar import stderr_progress

    with stderr_progress() as report:
        return q.run(session, progress=report)  # type: ignore[call-arg]


def cmd_checkup(args: argparse.Namespace) -> int:
    from wordkin.console.cli.io import open_set
    from wordkin.index.kinds import Checkup

    q = Checkup(tuple(args.pairs), tuple(args.analogies), args.k)
    session = Session(open_set(args))
    return _finish(args, _run(q, session), session)


def cmd_compare(args: argparse.Namespace) -> int:
    from wordkin.console.cli.io import open_set
    from wordkin.index.kinds import Compare
    from wordkin.index.kinds.compare import check_dims

    if args.k < 1 or args.top < 1 or args.most < 1:
        raise UsageError("-k, --top and --most are positive whole numbers")
    words = _words_file(args.words) if args.words else ()
    q = Compare(args.k, args.top, words, args.most, tuple(args.pairs), tuple(args.analogies))
    old = open_set(args, args.old)
    new = open_set(args, args.new)
    check_dims(old, new)
    session = Session(new, against=old)
    return _finish(args, _run(q, session), session)
