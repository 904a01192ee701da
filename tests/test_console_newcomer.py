"""The console as a newcomer meets it (Pilot, 80x24, the demo set): no stale results after an error, options that
re-run, keys from the box to the results and back to the row, completion, the similarity map, arithmetic answers
that open their neighbours, the notebook's notes and layout, a user keymap, variant lookup and failed imports."""

from __future__ import annotations

import asyncio
import json

from textual.widgets import DataTable, Input, Static

from wordkin.console.store.notebook import Notebook
from wordkin.console.tui.app import create_app
from wordkin.console.tui.panes.arithmetic import ArithmeticPane
from wordkin.console.tui.panes.base import QueryPane
from wordkin.console.tui.panes.neighbours import NeighboursPane
from wordkin.console.tui.panes.notebook import NotebookPane
from wordkin.console.tui.panes.similarity import SimilarityPane
from wordkin.demo_vectors import demo_path
from wordkin.index.vectors import from_arrays

from .conftest import run_cli, session_of
from .test_console import SIZE, table_words, wait_for

DEMO = str(demo_path())


def _app(tmp_path, **kw):
    return create_app(DEMO, notebook=str(tmp_path / "nb.wkn"), build_index=False, **kw)


async def _ready(pilot):
    await wait_for(pilot, lambda: pilot.app.session is not None)


def test_error_leaves_nothing_stale_and_nothing_to_save(tmp_path):
    async def main():
        app = _app(tmp_path)
        async with app.run_test(size=SIZE) as pilot:
            await _ready(pilot)
            pane = app.query_one(NeighboursPane)
            await pilot.press(*"hotel", "enter")
            await wait_for(pilot, lambda: pane.result is not None)
            box = app.query_one("#nb-word", Input)
            box.value = "hotl"
            await pilot.press("enter")
            await wait_for(pilot, lambda: pane.result is None)
            assert app.query_one("#nb-table", DataTable).row_count == 0
            assert "not in the vocabulary" in str(app.query_one("#nb-message", Static).render())
            await pilot.press("ctrl+s")
            await pilot.pause(0.5)
            assert app.query_one(NotebookPane).entries == []

    asyncio.run(main())


def test_options_rerun_and_the_header_says_them(tmp_path):
    async def main():
        app = _app(tmp_path)
        async with app.run_test(size=SIZE) as pilot:
            await _ready(pilot)
            pane = app.query_one(NeighboursPane)
            await pilot.press(*"hotel", "enter")
            await wait_for(pilot, lambda: pane.result is not None)
            assert "hotels" in table_words(app.query_one("#nb-table", DataTable))
            app.query_one("#nb-hide").value = True  # a checkbox: no Enter needed
            await wait_for(pilot, lambda: pane.result is not None and pane.result.query.hide_forms)
            assert "hotels" not in table_words(app.query_one("#nb-table", DataTable))
            assert "hide forms" in str(app.query_one("#nb-message", Static).render())
            app.query_one("#nb-k", Input).value = "4"  # editing k asks again after a pause
            await wait_for(pilot, lambda: pane.result.query.k == 4)
            assert app.query_one("#nb-table", DataTable).row_count == 4

    asyncio.run(main())


def test_down_to_results_back_to_the_row_and_completion(tmp_path):
    async def main():
        app = _app(tmp_path)
        async with app.run_test(size=SIZE) as pilot:
            await _ready(pilot)
            pane = app.query_one(NeighboursPane)
            box = app.query_one("#nb-word", Input)
            assert box.suggester is None  # no dim suggestion left in the box after Enter
            await pilot.press(*"harbou")
            line = str(app.query_one("#nb-complete", Static).render())
            cands = line.replace("Tab: ", "").split("  ·  ")
            assert len(cands) >= 2 and all(c.startswith("harbou") for c in cands)
            await pilot.press("tab")
            assert box.value == cands[0]
            await pilot.press("enter")
            await wait_for(pilot, lambda: pane.result is not None and pane.result.query.word == cands[0])
            await pilot.press("down")  # from the box to the results
            table = app.query_one("#nb-table", DataTable)
            assert app.focused is table
            first = pane.result
            await pilot.press("down", "down", "enter")  # drill down from row 2
            await wait_for(pilot, lambda: pane.result is not first)
            await pilot.press("ctrl+b")
            await wait_for(pilot, lambda: pane.result.query.word == cands[0])
            await pilot.pause(0.2)
            assert table.cursor_row == 2 and app.focused is table

    asyncio.run(main())


def test_similarity_map_and_arithmetic_answers(tmp_path):
    async def main():
        app = _app(tmp_path)
        async with app.run_test(size=SIZE) as pilot:
            await _ready(pilot)
            await pilot.press("f4", *"hotel inn hostel ferry", "enter")
            sim = app.query_one(SimilarityPane)
            await wait_for(pilot, lambda: sim.result is not None)
            table = app.query_one("#sm-table", DataTable)
            await pilot.pause(0.1)
            assert app.focused is table and (table.cursor_row, table.cursor_column) == (0, 2)
            assert "ranks" in str(app.query_one("#sm-pair", Static).render())
            await pilot.press("left", "left", "left")  # never onto the words' column, never out of the map
            assert table.cursor_column == 1 and app.focused is table
            ordered = [w.id for w in sim.children]
            assert ordered.index("sm-pair") < ordered.index("sm-table")  # the pair's ranks next to the map
            await pilot.press("f3", *"hotel : hotels :: ferry : ?", "enter")
            ar = app.query_one(ArithmeticPane)
            await wait_for(pilot, lambda: ar.result is not None)
            assert "mark" not in app.query_one("#ar-table", DataTable).columns
            atable = app.query_one("#ar-table", DataTable)
            atable.focus()
            await pilot.press("enter")
            near = app.query_one(NeighboursPane)
            await wait_for(pilot, lambda: near.result is not None and near.result.query.word == ar.result.rows[0].word)
            assert app.query_one("TabbedContent").active == "neighbours"

    asyncio.run(main())


def test_notebook_notes_layout_and_ids(tmp_path):
    nb = tmp_path / "nb.wkn"
    for w in ("hotel", "inn", "ferry", "harbour", "quay", "storm", "beach"):
        assert run_cli("near", DEMO, w, "--save", str(nb)).returncode == 0

    async def main():
        app = _app(tmp_path)
        async with app.run_test(size=SIZE) as pilot:
            await _ready(pilot)
            pane = app.query_one(NotebookPane)
            await pilot.press("f5")
            await wait_for(pilot, lambda: len(pane.entries) == 7)
            lst = app.query_one("#nbk-list", DataTable)
            assert lst.size.height >= 7  # header and at least 6 entries at 80x24
            detail = app.query_one("#nbk-detail-box")
            assert detail.size.height >= 8
            text = str(app.query_one("#nbk-detail", Static).render()).splitlines()
            assert sum(1 for ln in text[: detail.size.height] if ln.strip()[:1].isdigit()) >= 6  # 6 result rows
            assert lst.get_row_at(0)[0].plain == "1"  # the stored id
            # A note typed and not saved is saved when the selection moves, and Esc drops an edit.
            await pilot.press("n", *"keep it")
            await pilot.press("down")
            lst.focus()
            await pilot.press("down")
            await wait_for(pilot, lambda: pane.entries and pane.entries[0].note == "keep it")
            await pilot.press("n", *"drop this")
            await pilot.press("escape")
            assert app.focused is lst and app.query_one("#nbk-note", Input).value == pane.selected().note
            # Delete: the selection stays where it was.
            lst.move_cursor(row=3)
            await pilot.press("d")
            await wait_for(pilot, lambda: len(pane.entries) == 6)
            assert lst.cursor_row == 3

    asyncio.run(main())
    with Notebook.open(nb) as book:
        assert len(book.entries()) == 6


def test_user_keymap_changes_footer_and_help(tmp_path, monkeypatch):
    cfg = tmp_path / "cfg"
    cfg.mkdir()
    (cfg / "keymap.toml").write_text('[keys]\n"neighbours.back" = "ctrl+p"\n"app.help" = "f9"\n', encoding="utf-8")
    monkeypatch.setenv("WORDKIN_CONFIG", str(cfg))

    async def main():
        app = _app(tmp_path)
        async with app.run_test(size=(140, 30)) as pilot:
            await _ready(pilot)
            from textual.widgets._footer import FooterKey

            await pilot.pause(0.2)
            shown = {(k.key, k.description) for k in app.query(FooterKey)}
            assert ("ctrl+p", "Back") in shown  # the footer shows the remapped key
            await pilot.press("f9")
            await pilot.pause(0.3)
            table = app.screen.query_one("#help-table", DataTable)
            rows = [tuple(c.plain for c in table.get_row_at(i)) for i in range(table.row_count)]
            assert ("neighbours", "Ctrl+P", "Back") in rows and any(r[1] == "F9" and r[2] == "Help" for r in rows)
            assert not any(r[1] in ("question_mark", "left_square_bracket") for r in rows)

    asyncio.run(main())
    (cfg / "keymap.toml").write_text('[keys]\n"no.such" = "ctrl+p"\n"app.help" = "ctrl+nonsense"\n', encoding="utf-8")
    notes: list = []

    async def bad():
        app = _app(tmp_path)
        async with app.run_test(size=SIZE) as pilot:
            await pilot.pause(0.3)
            notes.extend(n.message for n in app._notifications)
            assert "left out" in app.query_one("StatusLine").notice

    asyncio.run(bad())
    assert len([n for n in notes if "keymap" in n or "left out" in n]) == 1


def test_variant_lookup_and_exact_word(tmp_path):
    words = ["new_york", "paris", "Café", "harbour"]
    import numpy as np

    vs = from_arrays(words, np.random.default_rng(3).standard_normal((4, 6)).astype(np.float32))
    from wordkin.index.kinds import Neighbours

    s = session_of(vs)
    assert Neighbours("new york", k=2).run(s).word == "new_york"
    assert Neighbours("café", k=2).run(s).word == "Café"
    assert Neighbours("Cafe\u0301", k=2).run(s).word == "Café"  # decomposed é: NFC
    res = Neighbours("HARBOUR", k=2).run(s)
    assert res.word == "harbour" and any("answered as harbour" in n for n in res.notes())
    out = json.loads(run_cli("near", DEMO, "Hotel", "--json").stdout)
    assert out["word"] == "hotel"
    assert run_cli("near", DEMO, "Hotel", "--exact-word").returncode == 3


def test_failed_imports_leave_nothing_behind(tmp_path):
    cases = {
        "bad.json": "{not json",
        "deep.json": "[" * 100_000,
        "other.json": json.dumps({"hello": "world"}),
    }
    for name, text in cases.items():
        f = tmp_path / name
        f.write_text(text)
        target = tmp_path / f"{name}.wkn"
        r = run_cli("import", str(f), str(target))
        assert r.returncode == 4 and len(r.stderr.strip().splitlines()) == 1, (name, r.stderr)
        assert not list(tmp_path.glob(f"{name}.wkn*")), name


def test_every_query_pane_has_the_toggles():
    assert {b.id for b in QueryPane.BINDINGS} == {"query.subwords", "query.variants"}
