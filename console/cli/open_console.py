"""``wordkin demo`` and ``wordkin open``: the full-screen console. The only command module that imports the TUI
(an import-linter contract in ``pyproject.toml`` allows it here and nowhere else in the command line)."""

from __future__ import annotations

import argparse

from wordkin.console.cli.registry import Command, register


def cmd_open(args: argparse.Namespace) -> int:
    from wordkin.console.tui.app import run_console

    return run_console(args.file, args)


def cmd_demo(args: argparse.Namespace) -> int:
    from wordkin.demo_vectors import demo_path, fasttext_path

    path = fasttext_path() if args.fasttext else demo_path()
    if args.path:
        print(path)
        return 0
    from wordkin.console.tui.app import run_console

    return run_console(str(path), args)


def _demo_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("--path", action="store_true", help="print the demo vector file's path and exit")
    p.add_argument("--fasttext", action="store_true", help="the demo's fastText model (any word gets a vector)")
    p.add_argument("--notebook", metavar="NB")


def _open_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("file")
    p.add_argument("--notebook", metavar="NB")
    p.add_argument("--against", metavar="OLD", help="compare FILE with the set it replaces (neighbours, Compare pane)")


register(Command("demo", "console on the bundled demo set", cmd_demo, _demo_arguments, 10))
register(Command("open", "console on FILE", cmd_open, _open_arguments, 11))
