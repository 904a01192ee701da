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

#: Keys that are not bindings but that people need to know: Enter on tables, completion, the map's arrows.
OTHER_KEYS = [
    ("near", "Enter (on a result)", "that word's neighbours (drill down); Ctrl+B comes back to the row"),
    ("near", "Tab, → (in the box)", "take the first completion shown under the box"),
    ("near", "↓ (in the box)", "to the results"),
    ("calc", "Enter (on a result)", "that word's neighbours, in the Near pane"),
    ("sim", "arrows (on the map)", "move between cells: the pair's cosine and ranks above the map"),
    ("compare", "Enter (on a word)", "its old and new neighbour lists"),
    ("notebook", "Esc (in the note)", "cancel the edit; moving away saves it"),
    ("all", "Tab, Shift+Tab", "next / previous box"),
]


def binding_rows(
    scopes: Iterable[tuple[str, Iterable[BindingType]]], keymap: dict[str, str] | None = None
) -> list[tuple[str, str, str]]:
    """``(where, keys, what)`` for every binding with a description, in declaration order, with the keys in force
    (``keymap``: binding id -> keys, the user's remapping)."""
    rows = []
    for where, bindings in scopes:
        for b in bindings:
            if not isinstance(b, Binding):
                b = Binding(*b)
            desc = b.description or b.action
            key = (keymap or {}).get(b.id or "", b.key)
            keys = ", ".join(key_name(k.strip()) for k in key.split(","))
            rows.append((where, keys, desc))
    return rows + OTHER_KEYS


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
