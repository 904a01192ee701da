"""``wordkin export`` and ``wordkin import``: a notebook to text, Markdown, CSV or JSON, and a JSON export back."""

from __future__ import annotations

import argparse

from wordkin.console.cli.io import note
from wordkin.console.cli.registry import Command, register


def cmd_export(args: argparse.Namespace) -> int:
    from wordkin.console.cli.io import emit_output
    from wordkin.console.formats.notebook_export import export_command

    emit_output(args, export_command(args))
    return 0


def cmd_import(args: argparse.Namespace) -> int:
    """A notebook export or a term-list export, read and checked whole before the notebook is opened or created."""
    from wordkin.console.formats import notebook_export as export
    from wordkin.console.formats import term_list_export as terms_export
    from wordkin.console.store import term_lists as terms
    from wordkin.console.store.notebook import Notebook
    from wordkin.index.errors import UnreadableFileError

    doc = export.read_export(args.json_file)
    fmt = doc.get("format")
    if fmt == export.JSON_FORMAT:
        entries = export.read_entries(args.json_file, doc)
        with Notebook.open(args.notebook) as nb:
            n = export.add_entries(nb, entries)
        note(f"imported {n} entr{'y' if n == 1 else 'ies'} into {args.notebook}")
    elif fmt == terms_export.JSON_FORMAT:
        tl = terms_export.read_json(args.json_file, doc)
        with Notebook.open(args.notebook) as nb:
            terms.import_list(nb, tl)
        note(f"imported term list {tl.name!r} ({len(tl.terms)} terms) into {args.notebook}")
    else:
        raise UnreadableFileError(
            args.json_file, 'not a wordkin export (its "format" is neither a notebook nor a term list)'
        )
    return 0


def _export_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("notebook", metavar="NB")
    p.add_argument("--format", choices=("text", "md", "csv", "json"), default="text")
    p.add_argument("-o", "--output", metavar="OUT")
    p.add_argument("--force", action="store_true", help="overwrite OUT if it exists")


def _import_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("json_file", metavar="JSON")
    p.add_argument("notebook", metavar="NB")


register(
    Command(
        "export", "export a notebook to text, Markdown, CSV or JSON", cmd_export, _export_arguments, 60, shared="debug"
    )
)
register(
    Command(
        "import",
        "import a JSON export (notebook or term list) into a notebook",
        cmd_import,
        _import_arguments,
        90,
        shared="debug",
    )
)
