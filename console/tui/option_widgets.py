"""Widgets for a query kind's options, each bound to one option field by name: its label, its default and the
word for an empty box come from the field's declaration (``option_field``), and the pane reads and sets them all
at once (``QueryPane.option_values`` / ``show_options``). Adding an option to a kind then touches the field and
the one widget that shows it."""

from __future__ import annotations

import dataclasses
import typing
from collections.abc import Iterator
from typing import Any

from textual.widget import Widget
from textual.widgets import Checkbox, Input, Label, Select

from wordkin.index.errors import UsageError
from wordkin.index.kinds import Query
from wordkin.index.kinds.base import option_fields


def option_field_of(kind: type[Query], name: str) -> dataclasses.Field[Any]:
    for f in option_fields(kind):
        if f.name == name:
            return f
    raise KeyError(f"{kind.kind} has no option {name!r}")


def _base_type(kind: type[Query], name: str) -> Any:
    hint = typing.get_type_hints(kind)[name]
    args = [a for a in typing.get_args(hint) if a is not type(None)]
    return args[0] if args else hint


class OptionCheckbox(Checkbox):
    """A yes/no option, labelled as its field says (``hide forms``, ``exact``)."""

    def __init__(self, kind: type[Query], option: str, **kw: Any) -> None:
        f = option_field_of(kind, option)
        super().__init__(f.metadata["short"], bool(f.default), **kw)
        self.option = option

    def option_value(self) -> bool:
        return self.value

    def show_value(self, value: Any) -> None:
        if self.value != value:
            with self.prevent(Checkbox.Changed):
                self.value = bool(value)


class OptionBox(Input):
    """A number or text option; an empty box means the field's default (``all`` for ``top``)."""

    def __init__(self, kind: type[Query], option: str, *, placeholder: str = "", **kw: Any) -> None:
        f = option_field_of(kind, option)
        self.option = option
        self.field = f
        self.value_type = _base_type(kind, option)
        kind_of_box = {int: "integer", float: "number"}.get(self.value_type, "text")
        super().__init__(
            self._text(f.default),
            placeholder=placeholder or (f.metadata["none"] or ""),
            type=kind_of_box,  # type: ignore[arg-type]
            **kw,
        )

    def _text(self, value: Any) -> str:
        if value is None:
            return ""
        return f"{value:g}" if isinstance(value, float) else str(value)

    def option_value(self) -> Any:
        text = self.value.strip()
        if not text:
            return self.field.default
        label = self.field.metadata["short"]
        if self.value_type is int:
            try:
                return int(text)
            except ValueError:
                raise UsageError(f"{label} must be a whole number, not {text!r}") from None
        if self.value_type is float:
            try:
                return float(text)
            except ValueError:
                raise UsageError(f"{label} must be a number, not {text!r}") from None
        return self.value

    def show_value(self, value: Any) -> None:
        text = self._text(value)
        if self.value != text:
            with self.prevent(Input.Changed):
                self.value = text


class OptionSelect(Select[Any]):
    """An option with a few allowed values, each shown by its name (``3CosAdd``)."""

    def __init__(self, kind: type[Query], option: str, **kw: Any) -> None:
        f = option_field_of(kind, option)
        names = f.metadata["names"]
        choices = [(names.get(v, str(v)), v) for v in f.metadata["allowed"]]
        super().__init__(choices, value=f.default, allow_blank=False, **kw)
        self.option = option

    def option_value(self) -> Any:
        return self.value

    def show_value(self, value: Any) -> None:
        if self.value != value:
            with self.prevent(Select.Changed):
                self.value = value


OPTION_WIDGETS = (OptionCheckbox, OptionBox, OptionSelect)


def labelled(kind: type[Query], option: str, **kw: Any) -> Iterator[Widget]:
    """A label with the option's name, then its box."""
    yield Label(option_field_of(kind, option).metadata["short"])
    yield OptionBox(kind, option, **kw)
