"""What every headless command shares: opening the vector set (with progress on stderr), the session with its
index, warnings on stderr and JSON on stdout. Kept apart from ``cli`` so that the commands and the parser do not
import each other."""

from __future__ import annotations

import argparse
import json
import sys
from typing import Any

from wordkin.console.cli.progress_bar import stderr_progress
from wordkin.console.formats.safe_text import visible
from wordkin.index.ann.annoy_file import IndexState, load
from wordkin.index.session import Session
from wordkin.index.vectors import VectorSet, open_vectors


def warn(msg: str) -> None:
    print(f"wordkin: warning: {visible(msg)}", file=sys.stderr)


def note(msg: str) -> None:
    print(f"wordkin: {visible(msg)}", file=sys.stderr)


def open_set(args: argparse.Namespace, path: str | None = None) -> VectorSet:
    with stderr_progress() as report:
        vs = open_vectors(
            path or args.file,
            cache_root=args.cache,
            use_cache=not args.no_cache,
            trust_pickle=args.trust_pickle,
            progress=report,
        )
    for w in vs.warnings:
        warn(w)
    return vs


def open_session(args: argparse.Namespace, *, want_index: bool = True) -> Session:
    """The vector set and, unless ``want_index`` is false, its cached index; a rejected index is said on stderr."""
    vs = open_set(args)
    if not want_index:
        return Session(vs)
    loaded = load(vs)
    if loaded.state is IndexState.REJECTED:
        warn(f"index rejected: {loaded.reason}; answering by exact search (`wordkin prepare` rebuilds it)")
    return Session.from_load(vs, loaded)


def emit_json(obj: dict[str, Any]) -> None:
    sys.stdout.write(json.dumps(obj, ensure_ascii=False) + "\n")


def emit_output(args: argparse.Namespace, text: str) -> None:
    """An export's text: to ``-o OUT`` by the output-file rules (``--force`` replaces), else to standard output."""
    from wordkin.console.formats.output_file import write_output

    if args.output and args.output != "-":
        note(f"wrote {write_output(args.output, text, force=args.force, how_to_force='pass --force')}")
    else:
        sys.stdout.write(text)
