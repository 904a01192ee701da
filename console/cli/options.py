"""A query kind's options on the command line, derived from their declaration on the query's fields
(``option_field``: flag, label, help): the argparse arguments, the query value built from the parsed arguments,
and the flags that ask a query value again (``to_argv``). Nothing here names an option."""

from __future__ import annotations

import argparse
import types
import typing
from typing import Any

from wordkin.index.errors import UsageError
from wordkin.index.kinds import Query
from wordkin.index.kinds.base import input_fields, option_fields


def _value_type(cls: type[Query], name: str) -> Any:
    hint = typing.get_type_hints(cls)[name]
    if typing.get_origin(hint) in (types.UnionType, typing.Union):
        hint = next(a for a in typing.get_args(hint) if a is not type(None))
    return hint


def add_inputs(p: argparse.ArgumentParser, cls: type[Query]) -> None:
    """The query's own inputs (the word, the expression, the words) as positional arguments."""
    for f in input_fields(cls):
        many = typing.get_origin(_value_type(cls, f.name)) is tuple
        p.add_argument(f.name, metavar=f.metadata["metavar"], nargs="+" if many else None, help=f.metadata["help"])


def add_options(p: argparse.ArgumentParser | Any, cls: type[Query], skip: tuple[str, ...] = ()) -> None:
    """Every option of ``cls`` as a flag (``skip``: options the command declares itself)."""
    for f in option_fields(cls):
        if f.name in skip:
            continue
        md = f.metadata
        kind = _value_type(cls, f.name)
        if kind is bool:
            action = "store_false" if f.default else "store_true"
            p.add_argument(md["flag"], dest=f.name, action=action, help=md["help"])
            continue
        default_said = "" if f.default in (None, "") else f" (default {md['show'].format(f.default)})"
        p.add_argument(
            md["flag"],
            dest=f.name,
            type=kind,
            default=f.default,
            metavar=md["metavar"],
            choices=md["allowed"],
            help=md["help"] + default_said,
        )


def add_query_arguments(p: argparse.ArgumentParser, cls: type[Query]) -> None:
    add_inputs(p, cls)
    add_options(p, cls)


def option_values(args: argparse.Namespace, cls: type[Query], skip: tuple[str, ...] = ()) -> dict[str, Any]:
    """The options of ``cls`` as parsed, checked in the flags' own names (``-k must be a positive whole number``)."""
    out: dict[str, Any] = {}
    for f in option_fields(cls):
        if f.name in skip:
            continue
        value = getattr(args, f.name)
        if f.metadata["positive"] and value is not None and value < 1:
            raise UsageError(f"{f.metadata['flag']} must be a positive whole number, not {value}")
        out[f.name] = value
    return out


def query_from_args(args: argparse.Namespace, cls: type[Query]) -> Query:
    """The query value the parsed arguments ask (inputs and options, by keyword)."""
    inputs = {f.name: getattr(args, f.name) for f in input_fields(cls)}
    inputs = {k: tuple(v) if isinstance(v, list) else v for k, v in inputs.items()}
    return cls(**inputs, **option_values(args, cls))


def option_argv(q: Query, skip: tuple[str, ...] = ()) -> list[str]:
    """The flags that ask ``q``'s options again (an option at its default is left out)."""
    out: list[str] = []
    for f in option_fields(type(q)):
        value = getattr(q, f.name)
        if f.name in skip or value == f.default:
            continue
        out += [f.metadata["flag"]] if isinstance(value, bool) else [f.metadata["flag"], str(value)]
    return out


def inputs_argv(q: Query) -> list[str]:
    out: list[str] = []
    for f in input_fields(type(q)):
        value = getattr(q, f.name)
        out += list(value) if isinstance(value, tuple) else [str(value)]
    return out
