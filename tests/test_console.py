"""Pilot tests: the console built through the same factory the CLI uses, driven from the keyboard."""

from __future__ import annotations

import asyncio
import time

import numpy as np
import pytest
from gensim.models import KeyedVectors
from textual.widgets import DataTable, Input, Static

from wordkin.console.formats.safe_text import visible
from wordkin.console.tui.app import WordkinApp, create_app
from wordkin.console.tui.panes.arithmetic import ArithmeticPane
from wordkin.console.tui.panes.neighbours import NeighboursPane
from wordkin.console.tui.panes.notebook import NotebookPane
from wordkin.console.tui.panes.similarity import SimilarityPane

from .conftest import write_w2v_text

SIZE = (80, 24)


def run(coro):
    return asyncio.run(coro)


async def wait_for(pilot, cond, timeout: float = 30.0) -> None:
    end = time.monotonic() + timeout
    while not cond():
        if time.monotonic() > end:
            raise AssertionError("timed out waiting")
        await pilot.pause(0.05)


def table_words(table: DataTable) -> list[str]:
    return [table.get_row_at(i)[1].plain for i in range(table.row_count)]


async def opened(pilot) -> WordkinApp:
    app = pilot.app
    await wait_for(pilot, lambda: app.session is not None and app.session.state.value != "building")
    return app


def test_neighbours_pane_matches_gensim_drill_down_and_back(lee_model, tmp_path):
    kv, paths = lee_model
    seen: list = []

    async def main():
        app = create_app(str(paths["text"]), notebook=str(tmp_path / "nb.wkn"))
        async with app.run_test(size=SIZE, message_hook=seen.append) as pilot:
            await opened(pilot)
            assert app.focused.id == "nb-word"  # the neighbour input has focus on open
            word = kv.index_to_key[25]
            await pilot.press(*word, "enter")
            await wait_for(pilot, lambda: any(isinstance(m, NeighboursPane.Answered) for m in seen))
            found = [m for m in seen if isinstance(m, NeighboursPane.Answered)][-1]
            ref = kv.most_similar(word, topn=10)
            assert [n.word for n in found.result.rows] == [w for w, _ in ref]
            np.testing.assert_allclose([n.similarity for n in found.result.rows], [s for _, s in ref], atol=1e-5)
            table = app.query_one("#nb-table", DataTable)
            await wait_for(pilot, lambda: table.row_count == 10)
            assert table_words(table) == [w for w, _ in ref]
            assert table.get_row_at(0)[2].plain == f"{ref[0][1]:.3f}"
            # Drill down: Enter on the second result makes it the query.
            table.focus()
            await pilot.press("down", "enter")
            second = ref[1][0]
            await wait_for(pilot, lambda: app.query_one(NeighboursPane).result.word == second)
            assert table_words(table)[:3] == [w for w, _ in kv.most_similar(second, topn=3)]
            await pilot.press("ctrl+b")
            await wait_for(pilot, lambda: app.query_one(NeighboursPane).result.word == word)
            await pilot.press("ctrl+f")
            await wait_for(pilot, lambda: app.query_one(NeighboursPane).result.word == second)
            marks = [m for m in seen if isinstance(m, NeighboursPane.MutualMarked)]
            assert marks and len(marks[-1].marks) == 10

    run(main())


def test_unknown_word_shows_close_matches_and_app_lives(lee_model, tmp_path):
    kv, paths = lee_model
    seen: list = []

    async def main():
        app = create_app(str(paths["text"]), notebook=str(tmp_path / "nb.wkn"))
        async with app.run_test(size=SIZE, message_hook=seen.append) as pilot:
            await opened(pilot)
            word = kv.index_to_key[40]
            typo = word[:-1] + "q" + word[-1]
            await pilot.press(*typo, "enter")
            await wait_for(pilot, lambda: any(isinstance(m, NeighboursPane.Failed) for m in seen))
            msg = str(app.query_one("#nb-message", Static).render())
            assert "not in the vocabulary" in msg and word in msg
            await pilot.press("ctrl+u", *word, "enter")
            await wait_for(pilot, lambda: any(isinstance(m, NeighboursPane.Answered) for m in seen))

    run(main())


def test_arithmetic_pane_error_position_and_result(lee_model, tmp_path):
    kv, paths = lee_model
    seen: list = []
    a, b, c = kv.index_to_key[30], kv.index_to_key[33], kv.index_to_key[37]

    async def main():
        app = create_app(str(paths["text"]), notebook=str(tmp_path / "nb.wkn"))
        async with app.run_test(size=SIZE, message_hook=seen.append) as pilot:
            await opened(pilot)
            await pilot.press("f3")
            assert app.focused.id == "ar-expr"
            await pilot.press(*f"{b} - ({a}")
            check = app.query_one("#ar-check", Static).render().plain
            caret = check.index("^")
            # The caret sits under the end of the text, where ")" was expected (3 cells of border and padding).
            assert caret == len(f"{b} - ({a}") + 3 and "expected" in check
            await pilot.press(*f") + {c}", "enter")
            await wait_for(pilot, lambda: any(isinstance(m, ArithmeticPane.Answered) for m in seen))
            res = [m for m in seen if isinstance(m, ArithmeticPane.Answered)][-1].result
            ref = kv.most_similar(positive=[b, c], negative=[a], topn=10)
            assert [r.word for r in res.rows] == [w for w, _ in ref]
            table = app.query_one("#ar-table", DataTable)
            await wait_for(pilot, lambda: table.row_count == 10)
            assert "excluded" in app.query_one("#ar-message", Static).render().plain

    run(main())


def test_similarity_pane_matches_gensim(lee_model, tmp_path):
    kv, paths = lee_model
    seen: list = []
    words = kv.index_to_key[50:55]

    async def main():
        app = create_app(str(paths["text"]), notebook=str(tmp_path / "nb.wkn"))
        async with app.run_test(size=SIZE, message_hook=seen.append) as pilot:
            await opened(pilot)
            await pilot.press("f4", *" ".join(words), "enter")
            await wait_for(pilot, lambda: any(isinstance(m, SimilarityPane.Answered) for m in seen))
            table = app.query_one("#sm-table", DataTable)
            await wait_for(pilot, lambda: table.row_count == 5)
            for i, a in enumerate(words):
                row = table.get_row_at(i)
                for j, b in enumerate(words):
                    assert float(row[j + 1].plain) == pytest.approx(float(kv.similarity(a, b)), abs=6e-4)
            res = [m for m in seen if isinstance(m, SimilarityPane.Answered)][-1].result
            assert res.odd_one_out in words
            table.focus()
            await pilot.press("right", "right")
            pair = app.query_one("#sm-pair", Static).render().plain
            assert "ranks" in pair

    run(main())


def test_help_lists_every_binding(lee_model, tmp_path):
    _, paths = lee_model

    async def main():
        app = create_app(str(paths["text"]), notebook=str(tmp_path / "nb.wkn"))
        async with app.run_test(size=SIZE) as pilot:
            await opened(pilot)
            await pilot.press("f1")
            await pilot.pause(0.2)
            table = app.screen.query_one("#help-table", DataTable)
            rows = [tuple(c.plain for c in table.get_row_at(i)) for i in range(table.row_count)]
            for cls in (WordkinApp, NeighboursPane, ArithmeticPane, SimilarityPane):
                for b in cls.BINDINGS:
                    assert any(r[2] == b.description for r in rows), b
            await pilot.press("escape")
            await pilot.pause(0.1)
            assert app.screen is app.screen_stack[0]

    run(main())


HOSTILE = [
    "[bold]x[/bold]",
    "[/]",
    "\x1b[31mred",
    "\x1b]0;pwned\x07title",
    "\u202eevil",
    "a\x9bb",
    "[link=http://example.invalid]click[/link]",
]


def test_hostile_words_shown_literally(tmp_path):
    words = ["harbour"] + HOSTILE + ["quay"]
    rng = np.random.default_rng(1)
    base = rng.standard_normal(8).astype(np.float32)
    vecs = np.stack([base + 0.01 * i * rng.standard_normal(8).astype(np.float32) for i in range(len(words))])
    path = tmp_path / "hostile.txt"
    # Words with spaces cannot be in a text file; control characters can.
    with open(path, "w", encoding="utf-8") as f:
        for w, v in zip(words, vecs, strict=True):
            f.write(w + " " + " ".join(f"{x:.5f}" for x in v) + "\n")

    async def main():
        app = create_app(str(path), notebook=str(tmp_path / "nb.wkn"))
        async with app.run_test(size=(100, 30)) as pilot:
            await opened(pilot)
            await pilot.press(*"harbour", "enter")
            table = app.query_one("#nb-table", DataTable)
            await wait_for(pilot, lambda: table.row_count == len(words) - 1)
            shown = table_words(table)
            assert sorted(shown) == sorted(visible(w) for w in words[1:])
            for cell in shown:
                assert "\x1b" not in cell and "\x9b" not in cell and "\u202e" not in cell
            screen = app.export_screenshot()
            assert "[bold]x[/bold]" in screen and "[/]" in screen and "\\x1b[31mred" in screen
            assert "click[/link]" in screen
            # Drill down into a hostile word and back: it is looked up by its real spelling.
            table.focus()
            idx = shown.index(visible("\x1b[31mred"))
            await pilot.press(*(["down"] * idx), "enter")
            await wait_for(pilot, lambda: app.query_one(NeighboursPane).result.word == "\x1b[31mred")
            assert app.query_one("#nb-word", Input).value == "\\x1b[31mred"
            await pilot.press("escape", "enter")
            await wait_for(pilot, lambda: app.query_one(NeighboursPane).result.word == "\x1b[31mred")

    run(main())


def test_load_failure_is_shown_not_crashed(tmp_path):
    bad = tmp_path / "bad.txt"
    bad.write_text("2 3\nharbour 1 2 3\nquay 1 x 3\n")

    async def main():
        app = create_app(str(bad), notebook=str(tmp_path / "nb.wkn"))
        async with app.run_test(size=SIZE) as pilot:
            await wait_for(pilot, lambda: "line 3" in app.query_one("StatusLine").notice)
            assert app.session is None
            await pilot.press(*"harbour", "enter")
            await pilot.pause(0.1)
            assert "loading" in app.query_one("#nb-message", Static).render().plain

    run(main())


def test_save_from_pane_to_notebook(lee_model, tmp_path):
    kv, paths = lee_model
    nb = tmp_path / "nb.wkn"

    async def main():
        app = create_app(str(paths["text"]), notebook=str(nb))
        async with app.run_test(size=SIZE) as pilot:
            await opened(pilot)
            await pilot.press(*kv.index_to_key[12], "enter")
            await wait_for(pilot, lambda: app.query_one(NeighboursPane).result is not None)
            await pilot.press("ctrl+s")
            pane = app.query_one(NotebookPane)
            await wait_for(pilot, lambda: len(pane.entries) == 1)
            from wordkin.console.store.notebook import Notebook

            with Notebook.open(nb) as book:
                entries = book.entries()
            assert len(entries) == 1 and entries[0].query.word == kv.index_to_key[12]
            assert [r.word for r in entries[0].result.rows] == [
                w for w, _ in kv.most_similar(kv.index_to_key[12], topn=10)
            ]

    run(main())


def test_lee_vectors_written_for_console(tmp_path):
    # The console opens a file written by our own writer too (sanity of the fixture path used above).
    words = [f"w{i}" for i in range(50)]
    p = write_w2v_text(tmp_path / "s.txt", words, np.random.default_rng(0).standard_normal((50, 4)))
    assert KeyedVectors.load_word2vec_format(str(p)).vectors.shape == (50, 4)


def test_quit_during_index_build_is_prompt(tmp_path, monkeypatch):
    from pathlib import Path

    from wordkin.index.ann import annoy_file as ann

    from .conftest import structured_set

    n = 30_000
    np.save(tmp_path / "s.npy", structured_set(n, 32, seed=4))
    (tmp_path / "s.words.txt").write_text("\n".join(f"w{i}" for i in range(n)) + "\n")
    monkeypatch.setattr(ann, "IN_PROCESS_BELOW", 0)  # build in child processes, as for large sets
    monkeypatch.setattr(ann, "default_trees", lambda dims: 400)  # long enough to quit in the middle
    cache = tmp_path / "cache"

    async def main():
        app = create_app(str(tmp_path / "s.npy"), cache=str(cache), notebook=str(tmp_path / "nb.wkn"))
        async with app.run_test(size=SIZE) as pilot:
            await wait_for(pilot, lambda: "index:" in app.query_one("StatusLine").mode)
            t0 = time.monotonic()
            app.exit()
        return time.monotonic() - t0

    took = run(main())
    assert took < 5
    time.sleep(0.5)
    left = []
    for cmdline in Path("/proc").glob("[0-9]*/cmdline"):
        try:
            args = cmdline.read_bytes().split(b"\0")
        except OSError:
            continue
        if b"wordkin.index.ann.child" in args and any(str(cache).encode() in a for a in args):
            left.append(cmdline)
    assert left == []
    assert not list(cache.rglob("*.tmp"))
