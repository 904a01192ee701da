"""A user keymap: ``keymap.toml`` in the platform's user config directory (``~/.config/wordkin/`` on Linux;
``$WORDKIN_CONFIG`` overrides the folder). It maps binding ids (the help lists them) to keys::

    [keys]
    "neighbours.back" = "ctrl+p"
    "app.help" = "f1,question_mark"

Keys are Textual's key names, comma-separated for several; the footer and the help show whatever is in force.
An unknown id or a key that is not a key name is left out and said in one warning at start.
"""

from __future__ import annotations

import tomllib
import unicodedata
from collections.abc import Iterable
from pathlib import Path

from textual.binding import Binding, BindingType
from textual.keys import Keys

from wordkin.index import locations

MODIFIERS = {"ctrl", "alt", "shift", "super", "meta", "hyper"}
_NAMED = {k.value for k in Keys}


def is_key(key: str) -> bool:
    """A Textual key name: modifiers then a character, a named key (f5, up, escape) or a character's name."""
    *mods, base = key.strip().lower().split("+")
    if not base or any(m not in MODIFIERS for m in mods):
        return False
    if len(base) == 1 or base in _NAMED:
        return True
    try:
        unicodedata.lookup(base.replace("_", " "))
    except KeyError:
        return False
    return True


def binding_ids(groups: Iterable[Iterable[BindingType]]) -> set[str]:
    return {b.id for g in groups for b in g if isinstance(b, Binding) and b.id}


def load_keymap(known_ids: set[str], path: Path | None = None) -> tuple[dict[str, str], str]:
    """``(keymap, warning)``: the valid entries of the user's file, and one line about what was left out."""
    p = path or locations.keymap_path()
    if not p.is_file():
        return {}, ""
    try:
        data = tomllib.loads(p.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError) as exc:
        return {}, f"{p}: not read ({exc}); the default keys are in force"
    keys = data.get("keys", data)
    if not isinstance(keys, dict):
        return {}, f"{p}: expected a [keys] table of binding id = keys"
    good: dict[str, str] = {}
    bad: list[str] = []
    for ident, value in keys.items():
        if ident not in known_ids:
            bad.append(f"unknown id {ident!r}")
        elif not isinstance(value, str) or not all(is_key(k) for k in value.split(",")):
            bad.append(f"{ident}: {value!r} is not a key")
        else:
            good[ident] = ",".join(k.strip() for k in value.split(","))
    warning = f"{p}: left out " + "; ".join(bad) if bad else ""
    return good, warning
