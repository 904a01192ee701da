"""The ``wordkin`` commands as one registry: each command is one ``Command`` record (its arguments, its handler
and, for a command that asks a query, how a query value becomes its command line again), registered once by the
module of its group. ``build_parser`` and ``argv_for`` read only this registry, so adding a command touches the
one module that registers it.
"""

from __future__ import annotations

import argparse
import importlib
import pkgutil
from collections.abc import Callable
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Literal

from wordkin.index.kinds import KINDS, Query

#: Modules of this package that register no command.
_NOT_COMMANDS = frozenset({"__main__", "registry", "options", "io", "progress_bar"})


@dataclass(frozen=True)
class Command:
    """One subcommand. ``arguments`` adds its arguments (a group adds its own sub-parsers there); ``shared``: "all"
    adds ``--cache``, ``--no-cache``, ``--trust-pickle`` and ``--debug``, "debug" only ``--debug``, "none" nothing
    (a group whose verbs add their own); ``order`` is its
    place in ``wordkin --help``. A command that asks a query of one ``kind`` has ``to_argv``: the whole command
    line for a query value (query, vector file, a scratch folder for any file it needs)."""

    name: str
    help: str
    handler: Callable[[argparse.Namespace], int]
    arguments: Callable[[argparse.ArgumentParser], None]
    order: int
    shared: Literal["all", "debug", "none"] = "all"
    kind: str | None = None
    to_argv: Callable[[Query, str, Path], list[str]] | None = None


COMMANDS: dict[str, Command] = {}


def register(command: Command) -> Command:
    if command.name in COMMANDS:
        raise ValueError(f"command {command.name!r} registered twice")
    COMMANDS[command.name] = command
    return command


def load_commands() -> dict[str, Command]:
    """Every command, after importing each command module of this package (each registers its own)."""
    package = importlib.import_module(__name__.rsplit(".", 1)[0])
    for info in pkgutil.iter_modules(package.__path__):
        if info.name not in _NOT_COMMANDS:
            importlib.import_module(f"{package.__name__}.{info.name}")
    return COMMANDS


def shared_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("--cache", metavar="DIR", help="cache directory (default: $WORDKIN_CACHE or the user cache dir)")
    p.add_argument("--no-cache", action="store_true", help="parse the file and keep nothing on disk")
    p.add_argument("--trust-pickle", action="store_true", help="allow loading a pickled gensim model (runs its code)")
    debug_argument(p)


def debug_argument(p: argparse.ArgumentParser) -> None:
    p.add_argument("--debug", action="store_true", help="show a traceback on unexpected errors")


def save_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("--save", metavar="NB", help="save the query and its result to notebook NB")
    p.add_argument("--note", metavar="TEXT", default="", help="a note to store with the saved entry")


def build_parser() -> argparse.ArgumentParser:
    ap = argparse.ArgumentParser(prog="wordkin", description="Look inside word-vector sets from the terminal.")
    sub = ap.add_subparsers(dest="cmd", required=True, metavar="COMMAND")
    for cmd in sorted(load_commands().values(), key=lambda c: c.order):
        p = sub.add_parser(cmd.name, help=cmd.help)
        cmd.arguments(p)
        if cmd.shared == "all":
            shared_arguments(p)
        elif cmd.shared == "debug":
            debug_argument(p)
    return ap


def by_kind() -> dict[str, Command]:
    return {c.kind: c for c in load_commands().values() if c.kind is not None}


def argv_for(q: Query, file: str, scratch: Path) -> list[str]:
    """The command line that asks ``q`` of vector file ``file`` (options may follow it)."""
    to_argv: Any = by_kind()[q.kind].to_argv
    return list(to_argv(q, file, scratch))


def missing_kinds() -> set[str]:
    """Registered query kinds that have no command (a test keeps this empty)."""
    return set(KINDS) - set(by_kind())
