"""The help screen: every key of the console, generated from the bindings of the app and its panes."""

from __future__ import annotations

from collections.abc import Iterable

from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding, BindingType
from textual.containers import Vertical
from textual.keys import format_key
from textual.screen import ModalScreen
from textual.widgets import DataTable, Static


def binding_rows(scopes: Iterable[tuple[str, Iterable[BindingType]]]) -> list[tuple[str, str, str]]:
    """``(where, keys, what)`` for every binding with a description, in declaration order."""
    rows = []
    for where, bindings in scopes:
        for b in bindings:
            if not isinstance(b, Binding):
                b = Binding(*b)
            desc = b.description or b.action
            keys = ", ".join(key_name(k.strip()) for k in b.key.split(","))
            rows.append((where, keys, desc))
    return rows


def key_name(key: str) -> str:
    """A key as people write it: ``?``, ``[``, ``Ctrl+S``, ``Alt+1``, ``F2`` (not ``question_mark``)."""
    *mods, base = key.split("+")
    shown = format_key(base)
    if len(shown) == 1 and mods:
        shown = shown.upper()
    elif len(shown) > 1:
        shown = shown.upper() if shown.lower().startswith("f") and shown[1:].isdigit() else shown.capitalize()
    return "+".join([m.capitalize() for m in mods] + [shown])


class HelpScreen(ModalScreen[None]):
    """Lists the keys; Escape, q or F1 closes it."""

    BINDINGS = [Binding("escape,q,f1", "dismiss", "Close help", id="help.close")]

    def __init__(self, rows: list[tuple[str, str, str]]) -> None:
        super().__init__()
        self.rows = rows

    def compose(self) -> ComposeResult:
        with Vertical(id="help-box"):
            yield Static(Text("wordkin keys  (Escape closes)", style="bold"))
            table: DataTable[Text] = DataTable(id="help-table", cursor_type="row", zebra_stripes=True)
            table.add_columns("where", "keys", "what")
            for where, keys, what in self.rows:
                table.add_row(Text(where), Text(keys, style="bold"), Text(what))
            yield table

    def action_dismiss(self, result: None = None) -> None:  # type: ignore[override]
        self.dismiss(None)
