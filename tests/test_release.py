"""The release check: the check-up of one set and the comparison with the set it replaces, against independent
computations (numpy brute force, scipy's skew, spearmanr and orthogonal_procrustes) and on planted changes."""

from __future__ import annotations

import json
from pathlib import Path

import numpy as np
import pytest
from scipy.linalg import orthogonal_procrustes
from scipy.stats import ortho_group, skew, spearmanr

from wordkin.index.errors import DimensionMismatchError, UsageError
from wordkin.index.kinds import Checkup, Compare
from wordkin.index.kinds.checkup import PAIR_SAMPLE, SEED
from wordkin.index.kinds.compare import procrustes
from wordkin.index.session import Session
from wordkin.index.statistics import sample_pairs, spearman
from wordkin.index.vectors import from_arrays, open_vectors

from .conftest import gensim_data, run_cli, structured_set, write_w2v_text

GOLDEN = Path(__file__).parent / "golden"


def _set(n=600, d=16, seed=4):
    x = structured_set(n, d, seed=seed, clusters=30, sub=6)
    x *= np.linspace(3.0, 1.0, n, dtype=np.float32)[:, None]  # norms fall with frequency rank, as in real sets
    words = [f"w{i:04d}" for i in range(n)]
    return words, x


def test_hubness_skewness_equals_brute_force_and_scipy():
    words, x = _set()
    vs = from_arrays(words, x)
    res = Checkup(k=10).run(Session(vs))
    u = x / np.linalg.norm(x, axis=1, keepdims=True)
    sims = u @ u.T
    np.fill_diagonal(sims, -np.inf)
    nk = np.zeros(len(words), dtype=int)
    for i in range(len(words)):
        nk[np.argsort(-sims[i], kind="stable")[:10]] += 1  # brute force, every word a query
    assert res.hubness["skewness"] == pytest.approx(float(skew(nk)), abs=1e-9)  # scipy's skew, bias=True
    assert res.hubness["hubs"][0]["n_k"] == nk.max()


def test_anisotropy_and_norms_equal_numpy_and_scipy():
    words, x = _set()
    vs = from_arrays(words, x)
    res = Checkup().run(Session(vs))
    pairs = sample_pairs(np.arange(len(words), dtype=np.int64), PAIR_SAMPLE, SEED)  # the same seeded sample
    u = x / np.linalg.norm(x, axis=1, keepdims=True)
    assert res.anisotropy == pytest.approx(float(np.mean(np.sum(u[pairs[:, 0]] * u[pairs[:, 1]], axis=1))), abs=1e-6)
    norms = np.linalg.norm(x, axis=1)
    assert res.norms["median"] == pytest.approx(float(np.median(norms)), rel=1e-6)
    assert res.norms["q1"] == pytest.approx(float(np.percentile(norms, 25)), rel=1e-6)
    rho = spearmanr(norms, np.arange(len(words))).statistic
    assert res.norms["spearman_rank"] == pytest.approx(float(rho), abs=1e-9) and rho < -0.5
    ties = np.array([1, 2, 2, 3, 5, 5, 5, 0], dtype=float)
    assert spearman(ties, np.arange(8.0)) == pytest.approx(spearmanr(ties, np.arange(8.0)).statistic, abs=1e-12)


def test_vocabulary_oddities_are_counted():
    words = ["harbour", "Harbour", "HARBOUR", "quay", "!!!", "1999", "<br>", "&amp;", "http://x.invalid", "ferry"]
    x = np.random.default_rng(0).standard_normal((len(words), 8)).astype(np.float32)
    res = Checkup(k=3).run(Session(from_arrays(words, x)))
    assert res.case_groups == 1 and res.case_examples == (("harbour", "Harbour", "HARBOUR"),)
    assert res.non_words["punctuation-only"]["count"] == 1 and res.non_words["digits-only"]["count"] == 1
    assert res.non_words["markup-looking"]["count"] == 3 and res.longest == "http://x.invalid"


def test_a_set_against_itself_and_a_rotated_copy():
    words, x = _set()
    vs = from_arrays(words, x)
    same = Compare(top=600).run(Session(vs, against=vs))
    assert same.overlap["mean"] == 1.0 and same.overlap["quartiles"] == [1.0, 1.0, 1.0]
    assert same.aligned["quartiles"][0] == pytest.approx(1.0, abs=1e-9)
    q = ortho_group.rvs(16, random_state=7).astype(np.float32)  # scipy's random orthogonal matrix
    turned = from_arrays(words, x @ q)
    res = Compare(top=600).run(Session(turned, against=vs))
    assert res.overlap["mean"] == 1.0  # cosines are unchanged by a rotation
    assert min(c.aligned_cosine for c in res.most_changed) > 0.9999
    assert res.aligned["mean"] > 0.9999


def test_swapped_words_top_the_most_changed_list():
    words, x = _set(800)
    rng = np.random.default_rng(5)
    y = x + 0.05 * rng.standard_normal(x.shape).astype(np.float32) * np.linalg.norm(x, axis=1, keepdims=True) / 4
    chosen = [10, 50, 90, 130, 170, 210, 250, 290, 330, 370]
    partners = [600, 610, 620, 630, 640, 650, 660, 670, 680, 690]
    for a, b in zip(chosen, partners, strict=True):
        y[[a, b]] = y[[b, a]]
    res = Compare(top=500, most=10).run(Session(from_arrays(words, y), against=from_arrays(words, x)))
    assert {c.word for c in res.most_changed} == {words[i] for i in chosen}


def test_procrustes_equals_scipy_and_overlap_equals_numpy():
    rng = np.random.default_rng(2)
    a = rng.standard_normal((200, 12))
    b = a @ ortho_group.rvs(12, random_state=3) + 0.1 * rng.standard_normal((200, 12))
    want, _ = orthogonal_procrustes(a, b)  # the outside reference
    np.testing.assert_allclose(procrustes(a.astype(np.float32), b.astype(np.float32)), want, atol=1e-5)
    words, x = _set(300)
    y = x + 0.3 * rng.standard_normal(x.shape).astype(np.float32)
    res = Compare(top=300, k=5, most=300).run(Session(from_arrays(words, y), against=from_arrays(words, x)))

    def knn(m):
        u = m / np.linalg.norm(m, axis=1, keepdims=True)
        s = u @ u.T
        np.fill_diagonal(s, -np.inf)
        return np.argsort(-s, axis=1, kind="stable")[:, :5]

    ko, kn = knn(x), knn(y)
    plain = {words[i]: len(set(ko[i]) & set(kn[i])) / 5 for i in range(300)}
    for c in res.most_changed:
        assert c.overlap == pytest.approx(plain[c.word]), c.word


def test_compare_errors_are_one_line(tmp_path):
    words, x = _set(100, 8)
    a = write_w2v_text(tmp_path / "a.txt", words, x)
    b = write_w2v_text(tmp_path / "b.txt", words, np.hstack([x, x]))
    r = run_cli("compare", str(a), str(b))
    assert r.returncode == 4 and "dimensions" in r.stderr and len(r.stderr.strip().splitlines()) == 1
    c = write_w2v_text(tmp_path / "c.txt", [f"z{i}" for i in range(100)], x)
    r = run_cli("compare", str(a), str(c))
    assert r.returncode == 2 and "share 0 words" in r.stderr
    with pytest.raises(UsageError):
        Compare().run(Session(from_arrays(words, x)))
    with pytest.raises(DimensionMismatchError):
        Compare().run(Session(from_arrays(words, np.hstack([x, x])), against=from_arrays(words, x)))


def test_report_on_gensim_vectors_against_a_perturbed_copy(tmp_path):
    kv_path = gensim_data("lee_fasttext.vec")
    vs = open_vectors(kv_path)
    rng = np.random.default_rng(9)
    x = np.asarray(vs.unit) * vs.norms[:, None]
    y = x + 0.2 * rng.standard_normal(x.shape).astype(np.float32) * vs.norms[:, None] / np.sqrt(vs.dims)
    new = write_w2v_text(tmp_path / "new.txt", vs.words, y)
    r = run_cli("compare", str(kv_path), str(new), "--top", "1000", "--json", "--plot", str(tmp_path))
    assert r.returncode == 0, r.stderr
    out = json.loads(r.stdout)
    assert {
        "old",
        "new",
        "shared",
        "added",
        "removed",
        "k",
        "compared",
        "overlap",
        "aligned_cosine",
        "bands",
        "most_changed",
    } <= set(out)
    assert out["shared"] == vs.n and out["compared"] == 1000 and 0.3 < out["overlap"]["mean"] < 1.0
    assert out["aligned_cosine"]["mean"] > 0.9
    assert set(out["most_changed"][0]) == {"word", "overlap", "aligned_cosine", "old", "new"}
    assert len(list(tmp_path.glob("compare-*.svg"))) == 2
    r = run_cli("checkup", str(kv_path), "--json")
    d = json.loads(r.stdout)
    assert {"words", "dims", "anisotropy", "norms", "hubness", "benchmarks"} <= set(d)
    assert set(d["hubness"]) >= {"k", "skewness", "hubs"} and len(d["hubness"]["hubs"]) == 20


def test_plain_text_report_golden(tmp_path):
    words, x = _set(200, 8, seed=11)
    rng = np.random.default_rng(12)
    y = x + 0.2 * rng.standard_normal(x.shape).astype(np.float32)
    old = write_w2v_text(tmp_path / "old.txt", words, x)
    new = write_w2v_text(tmp_path / "new.txt", words[:190] + [f"n{i}" for i in range(10)], y)
    r = run_cli("compare", str(old), str(new), "--top", "150", "--most", "5", "-k", "5")
    assert r.returncode == 0, r.stderr
    assert r.stdout == (GOLDEN / "compare.txt").read_text(encoding="utf-8")


def _pair_files(tmp_path):
    words, x = _set(400, 12, seed=21)
    y = x.copy()
    y[[3, 250]] = y[[250, 3]]  # w0003 and w0250 trade places in the new set
    old = write_w2v_text(tmp_path / "old.txt", words, x)
    new = write_w2v_text(tmp_path / "new.txt", words, y)
    return words, old, new


def test_status_line_shortens_counts_and_names_before_the_mode():
    from rich.cells import cell_len

    from wordkin.console.tui.status_line import SEP, status_parts

    mode = "exact search: small set"
    full = status_parts("brackwater.vec", (12_000, 48), "", mode, 80)
    assert full == ("brackwater.vec", "  · 12,000 words · 48 dims", mode)  # room enough: nothing shortened
    src, mid, m = status_parts("brackwater-2026-11.vec", (12_000, 48), "brackwater-2026-10-release.vec", mode, 80)
    assert m == mode and mid.startswith("  · 12,000 × 48 · vs ") and cell_len(src + mid + SEP + m) <= 80
    assert src.startswith("brackwa") and src.endswith(".vec") and "…" in src and "…" in mid  # cut in the middle
    # Untrusted names are escaped before they are measured and cut.
    src, _, _ = status_parts("bad\x1b[31mname.vec", None, "", mode, 80)
    assert "\x1b" not in src and "\\x1b" in src


def test_console_against_columns_and_comparison_pane(tmp_path):
    import asyncio

    from textual.widgets import DataTable, Static

    from wordkin.console.tui.app import create_app
    from wordkin.console.tui.panes.neighbours import NeighboursPane
    from wordkin.console.tui.panes.release import ComparePane

    from .test_console import SIZE, wait_for

    words, old, new = _pair_files(tmp_path)
    # Names as long as a release's: the status line must still say, whole, how queries are answered at 80 columns.
    old = old.rename(tmp_path / "harbour-terms-2026-10-release.vec")
    new = new.rename(tmp_path / "harbour-terms-2026-11-candidate.vec")
    seen: list = []

    async def main():
        app = create_app(str(new), notebook=str(tmp_path / "nb.wkn"), build_index=False, against=str(old))
        async with app.run_test(size=SIZE, message_hook=seen.append) as pilot:
            await wait_for(pilot, lambda: app.session is not None and app.session.against is not None)
            status = app.query_one("StatusLine")
            await wait_for(pilot, lambda: status.against != "" and "search" in status.mode)
            await pilot.pause()
            line = str(app.query_one("#status-text", Static).render())
            assert status.mode in line and "vs harbour" in line and "…" in line, line
            await pilot.press(*"w0003", "enter")
            await wait_for(pilot, lambda: any(isinstance(m, NeighboursPane.Compared) for m in seen))
            table = app.query_one("#nb-table", DataTable)
            assert "change" in table.columns and "old" in table.columns
            changes = [table.get_row_at(i)[5].plain for i in range(table.row_count)]
            assert all(c == "new" for c in changes)  # w0003 has w0250's old place: every neighbour is new to it
            assert "lost since the old set" in str(app.query_one("#nb-compare", Static).render())
            await pilot.press("f7", "ctrl+r")
            pane = app.query_one(ComparePane)
            await wait_for(pilot, lambda: pane.result is not None)
            top2 = {c.word for c in pane.result.most_changed[:2]}
            assert top2 == {"w0003", "w0250"}
            ctable = app.query_one("#cmp-table", DataTable)
            ctable.focus()
            await pilot.press("enter")
            detail = str(app.query_one("#cmp-detail", Static).render())
            assert "old:" in detail and "new:" in detail

    asyncio.run(main())
