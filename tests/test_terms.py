"""Term lists: the candidate ranking and support against independent computations and gensim, durable decisions,
the command line, the exports (golden files, escaping, JSON round trip) and the console pane."""

from __future__ import annotations

import asyncio
import json
import random
import re
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest

from wordkin.console.formats.term_list_export import render, synonym_term
from wordkin.console.store.notebook import Notebook
from wordkin.console.store.term_lists import create_list, decide, get_list, undo
from wordkin.console.tui.app import create_app
from wordkin.console.tui.panes.terms import TermsPane
from wordkin.demo_vectors import demo_path
from wordkin.index.kinds import TermSuggest
from wordkin.index.vectors import from_arrays, open_vectors

from .conftest import ROOT, run_cli, session_of
from .test_console import SIZE, wait_for

GOLDEN = Path(__file__).parent / "golden"


def _small():
    rng = np.random.default_rng(8)
    words = [f"w{i}" for i in range(300)]
    return from_arrays(words, rng.standard_normal((300, 12)).astype(np.float32)), words


def test_ranking_equals_the_formula_in_plain_numpy():
    vs, words = _small()
    seeds, kept, dropped = ("w1", "w2"), ("w3",), ("w4", "w5")
    q = TermSuggest("t", seeds, kept, dropped, k=15, gamma=0.3, exact=True)
    res = q.run(session_of(vs))
    # The formula, written out here: q = mean(unit(seeds ∪ kept)) − γ · mean(unit(dropped)), rank by cosine.
    x = np.asarray([vs.unit[i] for i in range(vs.n)], dtype=np.float64)
    x /= np.linalg.norm(x, axis=1, keepdims=True)
    pos = x[[words.index(w) for w in seeds + kept]].mean(axis=0)
    neg = x[[words.index(w) for w in dropped]].mean(axis=0)
    v = pos - 0.3 * neg
    cos = x @ v / np.linalg.norm(v)
    decided = {words.index(w) for w in seeds + kept + dropped}
    order = [i for i in np.argsort(-cos, kind="stable") if i not in decided][:15]
    assert [c.word for c in res.rows] == [words[i] for i in order]
    np.testing.assert_allclose([c.score for c in res.rows], cos[order], atol=1e-5)


def test_equals_gensim_most_similar_when_nothing_is_dropped(lee_model):
    kv, paths = lee_model
    vs = open_vectors(paths["text"])
    members = [kv.index_to_key[i] for i in (30, 31, 35)]
    res = TermSuggest("t", tuple(members[:2]), kept=(members[2],), k=10, exact=True).run(session_of(vs))
    # gensim's most_similar averages the unit vectors of `positive` (weight 1 each) and excludes them.
    ref = kv.most_similar(positive=members, topn=10)
    assert [c.word for c in res.rows] == [w for w, _ in ref]
    np.testing.assert_allclose([c.score for c in res.rows], [s for _, s in ref], atol=1e-5)


def test_support_counts_match_gensim_neighbour_lists(lee_model):
    kv, paths = lee_model
    vs = open_vectors(paths["text"])
    members = [kv.index_to_key[i] for i in (40, 41, 42, 47)]
    res = TermSuggest("t", tuple(members), k=25, support_k=25, exact=True).run(session_of(vs))
    lists = {m: {w for w, _ in kv.most_similar(m, topn=25)} for m in members}
    for c in res.rows:
        assert c.support == sum(c.word in lists[m] for m in members), c
    assert res.members == 4 and any(c.support > 0 for c in res.rows)


def test_filters_hide_forms_top_and_expressions():
    vs = open_vectors(demo_path())
    s = session_of(vs)
    base = TermSuggest("lodging", ("hotel", "inn"), k=30, exact=True)
    words = [c.word for c in base.run(s).rows]
    assert "hotels" in words
    hidden = [c.word for c in TermSuggest("lodging", ("hotel", "inn"), k=30, hide_forms=True).run(s).rows]
    assert "hotels" not in hidden and "inns" not in hidden
    only = [c.word for c in TermSuggest("lodging", ("hotel", "inn"), k=10, include="^c").run(s).rows]
    assert only and all(w.startswith("c") for w in only)
    no = [c.word for c in TermSuggest("lodging", ("hotel", "inn"), k=10, exclude="s$").run(s).rows]
    assert not any(w.endswith("s") for w in no)
    top = TermSuggest("lodging", ("hotel", "inn"), k=10, top=400).run(s)
    assert all(vs.find(c.word) < 400 for c in top.rows)
    with pytest.raises(Exception, match="regular expression"):
        TermSuggest("lodging", ("hotel",), include="(").run(s)


def test_cli_twin(tmp_path):
    nb, demo = str(tmp_path / "team.wkn"), str(demo_path())
    assert run_cli("terms", "new", nb, "lodging", "hotel", "inn", "hostel").returncode == 0
    r = run_cli("terms", "new", nb, "lodging", "hotel")
    assert r.returncode == 2 and "already has a term list" in r.stderr
    r = run_cli("terms", "suggest", demo, nb, "lodging", "-k", "8", "--json")
    assert r.returncode == 0, r.stderr
    out = json.loads(r.stdout)
    assert {"list", "seeds", "kept", "dropped", "gamma", "mode", "candidates"} <= set(out)
    assert set(out["candidates"][0]) == {"rank", "word", "score", "support"} and len(out["candidates"]) == 8
    first = out["candidates"][0]
    assert run_cli("terms", "keep", nb, "lodging", first["word"], "cottage", "--note", "ours").returncode == 0
    r = run_cli("terms", "keep", nb, "lodging", "cottage")
    assert r.returncode == 0 and "already kept: cottage" in r.stderr
    r = run_cli("terms", "drop", nb, "lodging", "hotl")
    assert r.returncode == 3 and "hotel" in r.stderr
    show = json.loads(run_cli("terms", "show", nb, "lodging", "--json").stdout)
    kept = {d["word"]: d for d in show["decisions"]}
    assert kept[first["word"]]["score"] == pytest.approx(first["score"]) and kept[first["word"]]["note"] == "ours"
    assert kept[first["word"]]["support"] == first["support"] and kept[first["word"]]["fingerprint"]
    r = run_cli("terms", "suggest", demo, nb, "nope")
    assert r.returncode == 2 and "no term list named 'nope'" in r.stderr
    r = run_cli("terms", "new", nb, "typos", "hotl")
    assert r.returncode == 0
    r = run_cli("terms", "suggest", demo, nb, "typos")
    assert r.returncode == 3 and "close matches" in r.stderr


def _golden_list(path: Path):
    with Notebook.open(path) as nb:
        create_list(nb, "lodging", ["hotel", "inn"], created="2026-11-30T09:00:00+00:00")
        decide(nb, "lodging", ["hostel", "guest house, self-catering", "back\\slash"], "kept", by="mira")
        decide(nb, "lodging", ["balcony"], "dropped", note="a feature, not a place to stay", by="mira")
        with nb.transaction() as con:  # fixed times, so the golden files do not change with the clock
            con.execute("UPDATE term_decisions SET decided = '2026-11-30T09:05:00+00:00'")
            con.execute("UPDATE term_lists SET updated = '2026-11-30T09:05:00+00:00'")
        return get_list(nb, "lodging")


def test_exports_golden_and_escaping(tmp_path):
    tl = _golden_list(tmp_path / "g.wkn")
    for fmt, name in (("synonyms", "terms-synonyms.txt"), ("words", "terms-words.txt")):
        text = render(tl, fmt, "2026-11-30T10:00:00+00:00")
        assert text == (GOLDEN / name).read_text(encoding="utf-8"), fmt
    line = render(tl, "synonyms", "x").splitlines()[-1]
    # Read the line back as a synonym parser does: split on unescaped commas, then unescape.
    terms = [re.sub(r"\\(.)", r"\1", t).strip() for t in re.split(r"(?<!\\),", line)]
    assert terms == list(tl.terms)
    assert synonym_term("#tag") == "\\#tag"


def test_json_export_import_export_is_identical(tmp_path):
    _golden_list(tmp_path / "a.wkn")
    out1, out2 = tmp_path / "1.json", tmp_path / "2.json"
    assert (
        run_cli("terms", "export", str(tmp_path / "a.wkn"), "lodging", "--format", "json", "-o", str(out1)).returncode
        == 0
    )
    r = run_cli("import", str(out1), str(tmp_path / "b.wkn"))
    assert r.returncode == 0, r.stderr
    assert (
        run_cli("terms", "export", str(tmp_path / "b.wkn"), "lodging", "--format", "json", "-o", str(out2)).returncode
        == 0
    )
    assert out1.read_bytes() == out2.read_bytes()
    csv_text = run_cli("terms", "export", str(tmp_path / "a.wkn"), "lodging", "--format", "csv").stdout
    assert "a feature, not a place to stay" in csv_text and csv_text.startswith("list,word,decision")


WRITER = """
import sys
from wordkin.console.store.notebook import Notebook
from wordkin.console.store.term_lists import decide
nb = Notebook.open(sys.argv[1])
tag = sys.argv[2]
for i in range(int(sys.argv[3])):
    decide(nb, "shared", [f"{tag}-{i}"], "kept" if i % 3 else "dropped")
    print(f"{tag}-{i}", flush=True)
"""


def _decider(nb: Path, tag: str, n: int) -> subprocess.Popen:
    return subprocess.Popen(
        [sys.executable, "-c", WRITER, str(nb), tag, str(n)], cwd=ROOT, stdout=subprocess.PIPE, text=True
    )


def test_decisions_survive_sigkill_and_two_deciders_lose_nothing(tmp_path):
    nb = tmp_path / "crash.wkn"
    with Notebook.open(nb) as book:
        create_list(book, "shared", ["seed"])
    rng = random.Random(7)
    reported: set[str] = set()
    for round_ in range(4):
        procs = [_decider(nb, f"r{round_}w{k}", 400) for k in range(2)]
        time.sleep(rng.uniform(0.3, 1.0))
        for p in procs:
            p.send_signal(signal.SIGKILL)
        for p in procs:
            reported |= set(p.communicate()[0].split())
    assert reported
    with Notebook.open(nb) as book:
        tl = get_list(book, "shared")
    assert reported <= set(tl.current)
    # Two at once, to the end: every decision is there.
    nb2 = tmp_path / "two.wkn"
    with Notebook.open(nb2) as book:
        create_list(book, "shared", ["seed"])
    procs = [_decider(nb2, f"w{k}", 120) for k in range(2)]
    outs = [p.communicate(timeout=120)[0] for p in procs]
    with Notebook.open(nb2) as book:
        tl = get_list(book, "shared")
    assert {w for o in outs for w in o.split()} == set(tl.current) and len(tl.history) == 240


def test_undo_takes_back_the_latest_decision(tmp_path):
    with Notebook.open(tmp_path / "u.wkn") as nb:
        create_list(nb, "l", ["a"])
        decide(nb, "l", ["b"], "kept")
        decide(nb, "l", ["b"], "dropped")
        assert get_list(nb, "l").dropped == ("b",)
        d = undo(nb, "l")
        assert d is not None and d.word == "b" and d.state == "dropped"
        assert get_list(nb, "l").kept == ("b",)
        undo(nb, "l")
        assert get_list(nb, "l").current == {}
        assert undo(nb, "l") is None


def test_terms_pane_seed_keep_drop_undo(tmp_path):
    nb = tmp_path / "nb.wkn"
    seen: list = []

    async def main():
        app = create_app(str(demo_path()), notebook=str(nb), build_index=False)
        async with app.run_test(size=SIZE, message_hook=seen.append) as pilot:
            await wait_for(pilot, lambda: app.session is not None)
            pane = app.query_one(TermsPane)
            await pilot.press("f6", "n", *"lodging: hotel inn", "enter")
            await wait_for(pilot, lambda: pane.term_list is not None and pane.result is not None)
            assert pane.term_list.seeds == ("hotel", "inn")
            table = app.query_one("#tm-table")
            assert app.focused is table

            async def decide_on(row: int, key: str) -> str:
                before = pane.result
                table.move_cursor(row=row)
                word = pane.highlighted()
                await pilot.press(key)
                await wait_for(
                    pilot, lambda: pane.result is not before and word not in [c.word for c in pane.result.rows]
                )
                return word

            kept = [await decide_on(0, "k"), await decide_on(2, "k"), await decide_on(1, "k")]
            dropped = await decide_on(0, "d")
            assert pane.term_list.kept == tuple(kept) and pane.term_list.dropped == (dropped,)
            assert table.cursor_row == 0  # the cursor stays on the row the curator was on
            before = pane.result
            await pilot.press("u")
            await wait_for(pilot, lambda: pane.result is not before and pane.term_list.dropped == ())
            assert dropped in [c.word for c in pane.result.rows]  # undone: a candidate again
            last = await decide_on(3, "k")
            assert pane.term_list.kept == (*kept, last)
            # The refreshed candidates are the engine's for the list's state now.
            want = pane.term_list.query(k=20).run(session_of(app.session.vectors))
            assert [c.word for c in pane.result.rows] == [c.word for c in want.rows]

    asyncio.run(main())
    with Notebook.open(nb) as book:
        tl = get_list(book, "lodging")
    assert len(tl.kept) == 4 and tl.dropped == () and len(tl.history) == 5
