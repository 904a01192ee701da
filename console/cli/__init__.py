"""The ``wordkin`` command. Headless commands import no textual; data goes to stdout, progress and warnings to
stderr. Exit codes: 0 done, 2 usage, 3 unknown word, 4 unreadable/malformed file, 1 anything else."""

from __future__ import annotations

import argparse
import os
import sys
from collections.abc import Sequence

from wordkin.console.cli.query_commands import COMMANDS
from wordkin.console.cli.release import add_parsers as add_release_parsers
from wordkin.console.cli.terms import add_parser as add_terms_parser
from wordkin.console.formats.safe_text import visible
from wordkin.index.errors import UsageError, WordkinError


def _shared(p: argparse.ArgumentParser) -> None:
    p.add_argument("--cache", metavar="DIR", help="cache directory (default: $WORDKIN_CACHE or the user cache dir)")
    p.add_argument("--no-cache", action="store_true", help="parse the file and keep nothing on disk")
    p.add_argument("--trust-pickle", action="store_true", help="allow loading a pickled gensim model (runs its code)")
    p.add_argument("--debug", action="store_true", help="show a traceback on unexpected errors")


def _save_opts(p: argparse.ArgumentParser) -> None:
    p.add_argument("--save", metavar="NB", help="save the query and its result to notebook NB")
    p.add_argument("--note", metavar="TEXT", default="", help="a note to store with the saved entry")


def build_parser() -> argparse.ArgumentParser:
    ap = argparse.ArgumentParser(prog="wordkin", description="Look inside word-vector sets from the terminal.")
    sub = ap.add_subparsers(dest="cmd", required=True, metavar="COMMAND")

    p = sub.add_parser("demo", help="console on the bundled demo set")
    p.add_argument("--path", action="store_true", help="print the demo vector file's path and exit")
    p.add_argument("--fasttext", action="store_true", help="the demo's fastText model (any word gets a vector)")
    p.add_argument("--notebook", metavar="NB")
    _shared(p)

    p = sub.add_parser("open", help="console on FILE")
    p.add_argument("file")
    p.add_argument("--notebook", metavar="NB")
    p.add_argument("--against", metavar="OLD", help="compare FILE with the set it replaces (neighbours, Compare pane)")
    _shared(p)

    p = sub.add_parser("prepare", help="build the cache and the index now, then print a summary")
    p.add_argument("file")
    p.add_argument("--trees", type=int, metavar="N", help="annoy trees (default chosen by set size)")
    _shared(p)

    p = sub.add_parser("info", help="words, dims, format, cache and index state")
    p.add_argument("file")
    p.add_argument("--json", action="store_true")
    _shared(p)

    for qc in COMMANDS:
        if qc.add_arguments is None:
            continue  # a command with a parser of its own
        p = sub.add_parser(qc.name, help=qc.help)
        p.add_argument("file")
        qc.add_arguments(p)
        p.add_argument("--json", action="store_true")
        _save_opts(p)
        _shared(p)

    p = sub.add_parser("score", help="score on an analogy or word-pair benchmark")
    p.add_argument("file")
    g = p.add_mutually_exclusive_group(required=True)
    g.add_argument("--analogies", metavar="PATH")
    g.add_argument("--pairs", metavar="PATH")
    p.add_argument("--method", choices=("add", "mul"), default="add")
    p.add_argument("--top", type=int, metavar="N", default=300_000)
    p.add_argument("--case-fold", action="store_true")
    p.add_argument("--json", action="store_true")
    _shared(p)

    p = sub.add_parser("export", help="export a notebook to text, Markdown, CSV or JSON")
    p.add_argument("notebook", metavar="NB")
    p.add_argument("--format", choices=("text", "md", "csv", "json"), default="text")
    p.add_argument("-o", "--output", metavar="OUT")
    p.add_argument("--force", action="store_true", help="overwrite OUT if it exists")
    p.add_argument("--debug", action="store_true")

    add_terms_parser(sub, _shared)
    add_release_parsers(sub, _shared, _save_opts)

    p = sub.add_parser("import", help="import a JSON export (notebook or term list) into a notebook")
    p.add_argument("json_file", metavar="JSON")
    p.add_argument("notebook", metavar="NB")
    p.add_argument("--debug", action="store_true")
    return ap


def main(argv: Sequence[str] | None = None) -> int:
    ap = build_parser()
    args = ap.parse_args(argv)
    try:
        from wordkin.console.cli.commands import HANDLERS

        return int(HANDLERS[args.cmd](args) or 0)
    except UsageError as exc:
        print(f"wordkin: {visible(exc.message)}", file=sys.stderr)
        return exc.exit_code
    except WordkinError as exc:
        print(f"wordkin: {exc.title}: {visible(exc.message)}", file=sys.stderr)
        return exc.exit_code
    except KeyboardInterrupt:
        print("wordkin: interrupted", file=sys.stderr)
        return 1
    except BrokenPipeError:
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 0
    except Exception as exc:  # noqa: BLE001 - the contract: a short message, no traceback unless --debug
        if getattr(args, "debug", False):
            raise
        print(
            f"wordkin: unexpected error: {type(exc).__name__}: {visible(str(exc))} (run with --debug)",
            file=sys.stderr,
        )
        return 1
