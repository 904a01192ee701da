"""The one query model: every registered kind, with every combination of its options, round-trips through JSON,
is answered the same by the command line, the console pane and the engine, and re-runs with zero changes.

The walk reads the registry and each option's ``choices`` (field metadata), so a new kind or a new option is covered
without editing this file; a kind without a command or a pane fails here.
"""

from __future__ import annotations

import asyncio
import dataclasses
import itertools
import json

import pytest

from wordkin.console.cli import main as cli_main
from wordkin.console.cli.registry import argv_for, missing_kinds
from wordkin.console.store.notebook import Entry, Notebook
from wordkin.console.store.rerun import rerun
from wordkin.console.tui.app import create_app
from wordkin.console.tui.panes import PANES
from wordkin.console.tui.panes.base import QueryPane
from wordkin.demo_vectors import demo_path
from wordkin.index.kinds import KINDS, Query, query_from_json, result_from_json
from wordkin.index.vectors import open_vectors

from .conftest import session_of
from .test_console import SIZE, wait_for


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    return open_vectors(demo_path(), cache_root=tmp_path_factory.mktemp("c"))


def combinations(kind: type[Query], words: list[str]) -> list[Query]:
    """The kind's example query with every combination of its options' choices."""
    base = kind.example(words)
    opts = [f for f in dataclasses.fields(base) if "choices" in f.metadata]
    out = []
    for values in itertools.product(*(f.metadata["choices"] for f in opts)):
        out.append(dataclasses.replace(base, **{f.name: v for f, v in zip(opts, values, strict=True)}))
    return out


def all_queries(vs) -> list[Query]:
    words = vs.words[:200]
    return [q for kind in KINDS.values() for q in combinations(kind, words)]


def test_every_kind_has_a_command_and_a_pane():
    assert missing_kinds() == set()
    panes = {spec.make(None).__class__ for spec in PANES}
    kinds_with_pane = {p.kind.kind for p in panes if issubclass(p, QueryPane)}
    assert set(KINDS) <= kinds_with_pane


def test_json_round_trip_and_rerun_without_changes(demo, tmp_path):
    session = dataclasses.replace(session_of(demo), against=demo)  # the kinds that compare get a second set
    queries = all_queries(demo)
    assert len(queries) >= 3 * 2 * 2 * 2 * 2  # neighbours alone: k x top x hide forms x fold case x exact
    with Notebook.open(tmp_path / "nb.wkn") as nb:
        for q in queries:
            assert query_from_json(json.loads(json.dumps(q.to_json()))) == q
            res = q.run(session)
            assert res.query == q
            back = result_from_json(q, json.loads(json.dumps(res.to_json())))
            assert back.table() == res.table() and back.notes() == res.notes()
            nb.add(Entry.of(res, demo))
        saved = nb.entries()
    assert [e.query for e in saved] == queries  # the whole query value is stored
    for e in saved:
        _, d = rerun(e, session)
        assert not d.changed, (e.query, d)


def test_command_line_gives_the_engine_rows(demo, capsys, tmp_path):
    session = dataclasses.replace(session_of(demo), against=demo)
    for q in all_queries(demo):
        rc = cli_main([*argv_for(q, str(demo_path()), tmp_path), "--json"])
        captured = capsys.readouterr()
        assert rc == 0, captured.err
        got = json.loads(captured.out)
        want = json.loads(json.dumps(q.run(session).to_json()))
        assert got == want, q


def test_pane_describes_and_answers_every_query(demo, tmp_path):
    queries = all_queries(demo)
    session = dataclasses.replace(session_of(demo), against=demo)
    seen: list = []

    async def main():
        against = str(demo_path()) if any(k.needs_against for k in KINDS.values()) else None
        app = create_app(str(demo_path()), notebook=str(tmp_path / "nb.wkn"), build_index=False, against=against)
        async with app.run_test(size=SIZE, message_hook=seen.append) as pilot:
            await wait_for(pilot, lambda: app.session is not None)
            panes = {p.kind.kind: p for p in app.query(QueryPane)}
            for q in queries:
                pane = panes[q.kind]
                seen.clear()
                pane.load_query(q)
                failed = [m for m in seen if isinstance(m, QueryPane.Failed)]
                await wait_for(
                    pilot,
                    lambda p=pane, q=q: (
                        (p.result is not None and p.result.query == q)
                        or any(isinstance(m, QueryPane.Failed) for m in seen)
                    ),
                    timeout=60,
                )
                failed = [m for m in seen if isinstance(m, QueryPane.Failed)]
                assert not failed, (q, failed[0].error.message)
                assert pane.current_query() == q  # every option has a widget, and the widgets say it back
                assert pane.result.table() == q.run(session).table()

    asyncio.run(main())


def test_near_hide_forms_on_the_command_line(capsys):
    rc = cli_main(["near", str(demo_path()), "hotel", "--hide-forms", "--json"])
    assert rc == 0
    out = json.loads(capsys.readouterr().out)
    words = [r["word"] for r in out["results"]]
    assert "hotels" not in words and len(words) == 10
    assert out["options"]["hide_forms"] is True and out["options"]["fold_case"] is False
    rc = cli_main(["near", str(demo_path()), "hotel", "--json"])
    assert "hotels" in [r["word"] for r in json.loads(capsys.readouterr().out)["results"]]


def test_fold_case_answers_the_folded_word(capsys):
    rc = cli_main(["near", str(demo_path()), "HOTEL", "--fold-case", "--json"])
    assert rc == 0
    out = json.loads(capsys.readouterr().out)
    assert out["query"] == "HOTEL" and out["word"] == "hotel"
    assert cli_main(["near", str(demo_path()), "HOTEL", "--exact-word"]) == 3
    capsys.readouterr()
    assert cli_main(["near", str(demo_path()), "HOTEL", "--json"]) == 0  # a variant: case-folded
    assert json.loads(capsys.readouterr().out)["word"] == "hotel"
