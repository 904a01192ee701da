"""Hostile input that the other suites do not cover: huge lines, odd arguments, words with spaces and empty words,
control characters in every export, and a notebook write that fails."""

from __future__ import annotations

import json
import struct

import numpy as np
import pytest

from wordkin.console.formats.notebook_export import to_csv, to_json, to_markdown, to_text
from wordkin.console.store.notebook import Entry, Notebook
from wordkin.index.errors import WordkinError
from wordkin.index.vectors import from_arrays

from .conftest import neighbours, run_cli


@pytest.fixture(scope="module")
def small(tmp_path_factory):
    d = tmp_path_factory.mktemp("small")
    f = d / "s.txt"
    rng = np.random.default_rng(0)
    with open(f, "w") as out:
        for i in range(50):
            out.write(f"w{i} " + " ".join(f"{x:.4f}" for x in rng.standard_normal(4)) + "\n")
    return f


@pytest.mark.parametrize("line", ["w " + "0.1 " * 2_500_000, "w " + "1" * 10_000_000])
def test_ten_megabyte_single_line(tmp_path, line):
    f = tmp_path / "long.txt"
    f.write_text(line + "\n")
    r = run_cli("info", str(f), "--cache", str(tmp_path / "c"))
    assert r.returncode == 4 and "line 1" in r.stderr and len(r.stderr.splitlines()) == 1
    assert not list((tmp_path / "c").rglob("meta.json")) if (tmp_path / "c").exists() else True


@pytest.mark.parametrize("k,code", [("0", 2), ("-3", 2), ("1000000000", 2), ("50", 0), ("49", 0)])
def test_k_values(small, k, code):
    r = run_cli("near", str(small), "w1", "-k", k, "--json", "--no-cache")
    assert r.returncode == code, r.stderr
    if code == 0:
        assert len(json.loads(r.stdout)["results"]) == 49  # every other word, clamped to the vocabulary
    else:
        assert "-k" in r.stderr and "Traceback" not in r.stderr


@pytest.mark.parametrize("top,code", [("0", 2), ("5", 0), ("1000000", 0)])
def test_top_values(small, top, code):
    r = run_cli("near", str(small), "w1", "--top", top, "--json", "--no-cache")
    assert r.returncode == code, r.stderr
    if top == "5":
        assert {x["word"] for x in json.loads(r.stdout)["results"]} <= {"w0", "w2", "w3", "w4"}


def test_similarity_list_of_ten_thousand(small):
    r = run_cli("sim", str(small), *[f"x{i}" for i in range(10_000)], "--no-cache")
    assert r.returncode == 2 and "at most" in r.stderr


def test_binary_words_with_spaces_and_empty_word(tmp_path):
    words = [b"harbour", b"new york", b"", b"quay\x1b[2J", b"pier"]
    vecs = [(1, 0), (0.9, 0.1), (0.8, 0.2), (0.7, 0.3), (0.6, 0.4)]
    body = b"5 2\n" + b"".join(w + b" " + struct.pack("<2f", *v) for w, v in zip(words, vecs, strict=True))
    # word2vec binary ends a word at the first space, so "new york" cannot round-trip: it is read as "new" followed
    # by a cut record. What must hold: a clear error or a usable file, never a crash.
    f = tmp_path / "spaces.bin"
    f.write_bytes(body)
    r = run_cli("near", str(f), "harbour", "--json", "--no-cache")
    assert r.returncode in (0, 4) and "Traceback" not in r.stderr
    # Without the space word: the empty word and the escape sequence come through and show safely.
    words = [b"harbour", b"", b"quay\x1b[2J", b"pier"]
    body = b"4 2\n" + b"".join(w + b" " + struct.pack("<2f", *v) for w, v in zip(words, vecs, strict=False))
    f.write_bytes(body)
    r = run_cli("near", str(f), "harbour", "--no-cache")
    assert r.returncode == 0, r.stderr
    assert '""' in r.stdout and "quay\\x1b[2J" in r.stdout and "\x1b" not in r.stdout


HOSTILE = ['=HYPERLINK("x")', "a|b`c", "c1\x9bx", "bidi\u202eevil", "esc\x1b]0;t\x07", "-minus", "@at", ""]


def _hostile_notebook(tmp_path):
    vecs = np.random.default_rng(1).standard_normal((len(HOSTILE) + 1, 4)).astype(np.float32)
    vs = from_arrays(["harbour"] + HOSTILE, vecs)
    nb = Notebook.open(tmp_path / "h.wkn")
    nb.add(Entry.of(neighbours(vs, "harbour", len(HOSTILE)), vs, note="note with \x1b[31m and \u202e"))
    return nb


def test_control_characters_in_every_export(tmp_path):
    nb = _hostile_notebook(tmp_path)
    entries = nb.entries()
    for name, text in (
        ("text", to_text(entries, "h.wkn", "t")),
        ("md", to_markdown(entries, "h.wkn", "t")),
        ("csv", to_csv(entries)),
    ):
        for bad in ("\x1b", "\x9b", "\u202e", "\x07"):
            assert bad not in text, (name, bad)
        assert "\\x1b" in text and "\\u202e" in text and "\\x9b" in text, name
    md = to_markdown(entries, "h.wkn", "t")
    assert "a\\|b\\`c" in md
    csv_text = to_csv(entries)
    assert "'=HYPERLINK" in csv_text and "'-minus" in csv_text and "'@at" in csv_text
    js = to_json(entries)
    for bad in ("\x1b", "\x9b", "\u202e", "\x07"):
        assert bad not in js
    back = json.loads(js)["entries"][0]
    assert {r["word"] for r in back["result"]["results"]} == set(HOSTILE)  # JSON keeps the exact words
    nb.close()


class _FullDisk:
    """A connection whose inserts fail as SQLite does when the disk is full."""

    def __init__(self, con):
        self._con = con

    def execute(self, sql, *args):
        if sql.lstrip().upper().startswith("INSERT"):
            import sqlite3

            raise sqlite3.OperationalError("database or disk is full")
        return self._con.execute(sql, *args)

    def __getattr__(self, name):
        return getattr(self._con, name)


def test_disk_full_save_reports_and_keeps_earlier_entries(tmp_path):
    nb = _hostile_notebook(tmp_path)
    before = [e.to_json() for e in nb.entries()]
    real = nb.con
    nb.con = _FullDisk(real)
    with pytest.raises(WordkinError, match="nothing was saved"):
        nb.add(nb.entries()[0])
    nb.con = real
    assert [e.to_json() for e in nb.entries()] == before
    nb.close()
    with Notebook.open(tmp_path / "h.wkn") as again:
        assert len(again.entries()) == 1


def test_read_only_notebook_save_fails_cleanly(tmp_path):
    # Root ignores file modes, so a read-only notebook is simulated with SQLite's own read-only open.
    nb = _hostile_notebook(tmp_path)
    entry = nb.entries()[0]
    nb.close()
    before = (tmp_path / "h.wkn").read_bytes()
    with Notebook.open(tmp_path / "h.wkn", readonly=True) as ro:
        assert len(ro.entries()) == 1
        with pytest.raises(WordkinError, match="nothing was saved"):
            ro.add(entry)
    assert (tmp_path / "h.wkn").read_bytes() == before


def test_very_long_and_empty_words_in_the_console(tmp_path):
    import asyncio

    from textual.widgets import DataTable

    from wordkin.console.tui.app import create_app

    from .test_console import opened, table_words, wait_for

    long_word = "harbour" * 700
    f = tmp_path / "long.bin"
    words = [b"harbour", long_word.encode(), b"", b"pier"]
    vecs = [(1, 0), (0.9, 0.1), (0.8, 0.2), (0.7, 0.3)]
    f.write_bytes(b"4 2\n" + b"".join(w + b" " + struct.pack("<2f", *v) for w, v in zip(words, vecs, strict=True)))

    async def main():
        app = create_app(str(f), notebook=str(tmp_path / "nb.wkn"))
        async with app.run_test(size=(80, 24)) as pilot:
            await opened(pilot)
            await pilot.press(*"harbour", "enter")
            table = app.query_one("#nb-table", DataTable)
            await wait_for(pilot, lambda: table.row_count == 3)
            shown = table_words(table)
            assert '""' in shown and long_word in shown and "pier" in shown
            assert "harbourharbour" in app.export_screenshot()

    asyncio.run(main())
