"""An option is declared once, on its query field: the command-line flag, the command line that asks a query
again, the option's words, the JSON and the console's widget all follow from that declaration. Shown with a
throw-away option added to a kind here (not registered, so no other test sees it)."""

from __future__ import annotations

import argparse
from dataclasses import dataclass
from typing import ClassVar

import pytest

from wordkin.console.cli.options import add_query_arguments, option_argv, query_from_args
from wordkin.index.errors import UsageError
from wordkin.index.kinds import Neighbours
from wordkin.index.kinds.base import option_field


@dataclass(frozen=True)
class LoudNeighbours(Neighbours):
    kind: ClassVar[str] = "loud-neighbours"

    shout: bool = option_field(
        (False, True), default=False, flag="--shout", label="shout", short="loud", help="a throw-away option"
    )
    volume: int = option_field((1, 11), default=1, flag="--volume", label="volume", positive=True, help="how loud")


def _parse(*argv: str) -> argparse.Namespace:
    p = argparse.ArgumentParser()
    add_query_arguments(p, LoudNeighbours)
    return p.parse_args(argv)


def test_the_flag_the_argv_the_words_and_the_json_follow_the_field():
    q = query_from_args(_parse("harbour", "--shout", "--volume", "11", "-k", "3"), LoudNeighbours)
    assert q == LoudNeighbours(word="harbour", k=3, shout=True, volume=11)
    assert option_argv(q) == ["-k", "3", "--shout", "--volume", "11"]
    assert query_from_args(_parse(*option_argv(q), "harbour"), LoudNeighbours) == q
    assert q.options() == ["k 3", "top all", "shout", "volume 11"]
    assert LoudNeighbours.from_json(q.to_json()) == q and q.to_json()["shout"] is True
    assert query_from_args(_parse("harbour"), LoudNeighbours) == LoudNeighbours(word="harbour")


def test_the_declared_check_is_said_in_the_flags_name():
    with pytest.raises(UsageError, match="--volume must be a positive whole number, not 0"):
        query_from_args(_parse("harbour", "--volume", "0"), LoudNeighbours)


async def test_the_console_widget_takes_its_label_and_default_from_the_field():
    from textual.app import App, ComposeResult

    from wordkin.console.tui.option_widgets import OptionBox, OptionCheckbox

    class Bare(App[None]):
        def compose(self) -> ComposeResult:
            yield OptionCheckbox(LoudNeighbours, "shout", id="shout")
            yield OptionBox(LoudNeighbours, "volume", id="volume")

    async with Bare().run_test() as pilot:
        box = pilot.app.query_one("#shout", OptionCheckbox)
        assert str(box.label) == "loud" and box.value is False and box.option == "shout"
        vol = pilot.app.query_one("#volume", OptionBox)
        assert vol.value == "1" and vol.option_value() == 1
        vol.show_value(11)
        assert vol.value == "11" and vol.option_value() == 11
        vol.value = "x"
        with pytest.raises(UsageError, match="volume must be a whole number"):
            vol.option_value()
