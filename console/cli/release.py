"""``wordkin checkup`` and ``wordkin compare``: is this vector set ready to ship, and how does it differ from the one
it replaces. Progress on stderr; the report on stdout (text laid out for a terminal and an e-mail, or ``--json``);
``--plot DIR`` writes the histograms as SVG files; ``--save NB`` keeps the result in a notebook."""

from __future__ import annotations

import argparse
import sys
from pathlib import Path

from wordkin.console.cli.options import add_options, option_argv, option_values
from wordkin.console.cli.query_commands import maybe_save
from wordkin.console.cli.registry import Command, register, save_arguments
from wordkin.index.errors import UsageError
from wordkin.index.kinds import Checkup, Compare
from wordkin.index.kinds.base import Query, Result, option_fields
from wordkin.index.session import Session


def _checkup_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("file")
    p.add_argument("--pairs", action="append", default=[], metavar="PATH", help="a word-pair file to score")
    p.add_argument("--analogies", action="append", default=[], metavar="PATH", help="an analogy file to score")
    add_options(p, Checkup)
    p.add_argument("--plot", metavar="DIR", help="also write the histograms as SVG files into DIR")
    p.add_argument("--json", action="store_true")
    save_arguments(p)


def _compare_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("old", metavar="OLD")
    p.add_argument("new", metavar="NEW")
    add_options(p, Compare, skip=("top",))
    g = p.add_mutually_exclusive_group()
    add_options(g, Compare, skip=tuple(f.name for f in option_fields(Compare) if f.name != "top"))
    g.add_argument("--words", metavar="PATH", help="compare the words listed in PATH (one a line)")
    p.add_argument("--pairs", action="append", default=[], metavar="PATH", help="a word-pair file to score on both")
    p.add_argument("--analogies", action="append", default=[], metavar="PATH", help="an analogy file, on both")
    p.add_argument("--plot", metavar="DIR", help="also write the histograms as SVG files into DIR")
    p.add_argument("--json", action="store_true")
    save_arguments(p)


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
    maybe_save(args, session, res)
    return 0


def _run(q: Query, session: Session) -> Result:
    from wordkin.console.cli.progress_bar import stderr_progress

    with stderr_progress() as report:
        return q.run(session, progress=report)  # type: ignore[call-arg]


def cmd_checkup(args: argparse.Namespace) -> int:
    from wordkin.console.cli.io import open_set

    q = Checkup(pairs=tuple(args.pairs), analogies=tuple(args.analogies), **option_values(args, Checkup))
    session = Session(open_set(args))
    return _finish(args, _run(q, session), session)


def cmd_compare(args: argparse.Namespace) -> int:
    from wordkin.console.cli.io import open_set
    from wordkin.index.kinds.compare import check_dims

    if args.k < 1 or args.top < 1 or args.most < 1:
        raise UsageError("-k, --top and --most are positive whole numbers")
    words = _words_file(args.words) if args.words else ()
    q = Compare(words=words, pairs=tuple(args.pairs), analogies=tuple(args.analogies), **option_values(args, Compare))
    old = open_set(args, args.old)
    new = open_set(args, args.new)
    check_dims(old, new)
    session = Session(new, against=old)
    return _finish(args, _run(q, session), session)


def _benchmarks_argv(q: Checkup | Compare) -> list[str]:
    return [*[x for p in q.pairs for x in ("--pairs", p)], *[x for a in q.analogies for x in ("--analogies", a)]]


def _checkup_argv(q: Query, file: str, scratch: Path) -> list[str]:
    assert isinstance(q, Checkup)
    return ["checkup", file, *option_argv(q), *_benchmarks_argv(q)]


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
        *option_argv(q, skip=("top",)),
        *(words or ["--top", str(q.top)]),
        *_benchmarks_argv(q),
    ]


register(
    Command(
        "checkup",
        "a check-up of one vector set: vocabulary, norms, anisotropy, hubness",
        cmd_checkup,
        _checkup_arguments,
        80,
        kind=Checkup.kind,
        to_argv=_checkup_argv,
    )
)
register(
    Command(
        "compare",
        "compare a vector set (NEW) with the one it replaces (OLD)",
        cmd_compare,
        _compare_arguments,
        81,
        kind=Compare.kind,
        to_argv=_compare_argv,
    )
)
