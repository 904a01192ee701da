"""The notebook: round trips, crash safety, concurrency, damaged files, exports, re-run diffs."""

from __future__ import annotations

import csv
import io
import json
import os
import random
import signal
import sqlite3
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest

from wordkin.console.formats.notebook_export import csv_cell, md_cell, render, to_csv, to_markdown, write_file
from wordkin.console.formats.rerun_report import diff_text
from wordkin.console.store.notebook import Entry, Notebook
from wordkin.console.store.rerun import rerun
from wordkin.index.vectors import from_arrays

from .conftest import ROOT, calc, neighbours, run_cli, session_of, similarity, stub_entry

GOLDEN = Path(__file__).parent / "golden"


def _tiny():
    words = ["harbour", "quay", "pier", "jetty", "ferry", "boat", "inn", "hotel", "=cmd", "tab|bar`x"]
    rng = np.random.default_rng(5)
    base = rng.standard_normal((3, 6))
    groups = [0, 0, 0, 0, 1, 1, 2, 2, 2, 1]
    vecs = np.stack([base[g] + 0.3 * rng.standard_normal(6) for g in groups]).astype(np.float32)
    return from_arrays(words, vecs, source="/data/brackwater-tiny.vec")


def test_cli_save_every_kind_then_json_round_trip(tmp_path, lee_model):
    kv, paths = lee_model
    nb = tmp_path / "team.wkn"
    f = str(paths["text"])
    w = kv.index_to_key
    for args in (
        ["near", f, w[10], "-k", "5", "--save", str(nb), "--note", "keep the first three"],
        ["calc", f, f"{w[20]} : {w[21]} :: {w[22]} : {w[23]}", "--save", str(nb)],
        ["calc", f, f"{w[20]} - {w[21]} + {w[22]}", "--method", "mul", "--save", str(nb), "--note", "mul"],
        ["sim", f, w[1], w[2], w[3], "--save", str(nb), "--note", "odd?"],
    ):
        r = run_cli(*args)
        assert r.returncode == 0, r.stderr
        assert "saved as entry" in r.stderr
    with Notebook.open(nb) as book:
        entries = book.entries()
    assert [e.kind for e in entries] == ["neighbours", "arithmetic", "arithmetic", "similarity"]
    assert entries[0].note == "keep the first three" and len(entries[0].result.rows) == 5
    assert entries[1].result.target == w[23]
    assert entries[2].query.method == "mul"
    assert entries[0].vector_set["words"] == len(w)
    out1 = tmp_path / "a.json"
    assert run_cli("export", str(nb), "--format", "json", "-o", str(out1)).returncode == 0
    nb2 = tmp_path / "copy.wkn"
    r = run_cli("import", str(out1), str(nb2))
    assert r.returncode == 0, r.stderr
    out2 = tmp_path / "b.json"
    assert run_cli("export", str(nb2), "--format", "json", "-o", str(out2)).returncode == 0
    assert out1.read_bytes() == out2.read_bytes()
    # Never overwrite without --force.
    r = run_cli("export", str(nb), "--format", "json", "-o", str(out1))
    assert r.returncode == 2 and "--force" in r.stderr
    assert run_cli("export", str(nb), "--format", "md", "-o", str(out1), "--force").returncode == 0


WRITER = """
import sys
from tests.conftest import stub_entry
from wordkin.console.store.notebook import Notebook
nb = Notebook.open(sys.argv[1])
tag = sys.argv[2]
for i in range(int(sys.argv[3])):
    nb.add(stub_entry(f"{tag}-{i}", note=tag))
    print(f"{tag}-{i}", flush=True)
"""


def _writer(nb: Path, tag: str, n: int) -> subprocess.Popen:
    return subprocess.Popen(
        [sys.executable, "-c", WRITER, str(nb), tag, str(n)], cwd=ROOT, stdout=subprocess.PIPE, text=True
    )


def _saved_words(nb: Path) -> set[str]:
    con = sqlite3.connect(nb)
    assert con.execute("PRAGMA integrity_check").fetchone()[0] == "ok"
    words = {json.loads(q)["word"] for (q,) in con.execute("SELECT query FROM entries")}
    con.close()
    return words


def test_sigkill_during_saves_loses_nothing_reported(tmp_path):
    nb = tmp_path / "crash.wkn"
    Notebook.open(nb).close()
    rng = random.Random(42)
    reported: set[str] = set()
    for round_ in range(6):
        procs = [_writer(nb, f"r{round_}w{k}", 400) for k in range(2)]
        time.sleep(rng.uniform(0.3, 1.2))
        for p in procs:
            p.send_signal(signal.SIGKILL)
        for p in procs:
            out, _ = p.communicate()
            reported |= set(out.split())
    assert reported, "no writer reported a save before being killed"
    saved = _saved_words(nb)
    assert reported <= saved
    with Notebook.open(nb) as book:
        assert len(book.entries()) == len(saved)


def test_two_writers_at_once_lose_nothing(tmp_path):
    nb = tmp_path / "two.wkn"
    procs = [_writer(nb, f"w{k}", 150) for k in range(2)]
    outs = [p.communicate(timeout=120)[0] for p in procs]
    assert all(p.returncode == 0 for p in procs)
    reported = {w for o in outs for w in o.split()}
    assert len(reported) == 300 and _saved_words(nb) == reported


@pytest.mark.parametrize("content", [b"this is a text file, not a notebook\n", b"SQLite format 3\x00" + b"\x00" * 200])
def test_non_notebook_and_damaged_files_are_untouched(tmp_path, lee_model, content):
    _, paths = lee_model
    f = tmp_path / "notes.wkn"
    f.write_bytes(content)
    r = run_cli("near", str(paths["text"]), "the", "--save", str(f))
    assert r.returncode == 4 and str(f) in r.stderr and "Traceback" not in r.stderr
    r = run_cli("export", str(f))
    assert r.returncode == 4
    assert f.read_bytes() == content


def test_truncated_notebook_is_refused_untouched(tmp_path):
    nb = tmp_path / "t.wkn"
    with Notebook.open(nb) as book:
        for i in range(200):
            book.add(stub_entry(f"w{i}", note="x" * 200))
    data = nb.read_bytes()
    cut = data[: len(data) // 2]
    nb.write_bytes(cut)
    for name in ("t.wkn-wal", "t.wkn-shm"):
        (tmp_path / name).unlink(missing_ok=True)
    r = run_cli("export", str(nb))
    assert r.returncode == 4 and "damaged" in r.stderr
    assert nb.read_bytes() == cut


def test_foreign_sqlite_database_is_refused(tmp_path):
    f = tmp_path / "other.db"
    con = sqlite3.connect(f)
    con.execute("CREATE TABLE t (x)")
    con.commit()
    con.close()
    before = f.read_bytes()
    r = run_cli("export", str(f))
    assert r.returncode == 4 and "not a wordkin notebook" in r.stderr
    assert f.read_bytes() == before


def _golden_notebook(path: Path) -> Notebook:
    vs = _tiny()
    nb = Notebook.open(path)
    items = [
        (neighbours(vs, "harbour", 4), "harbour synonyms for the site search; pier and jetty go in"),
        (calc(vs, "ferry : boat :: inn : hotel", 3), "expected hotel"),
        (similarity(vs, ["harbour", "quay", "ferry", "inn"]), "inn is the odd one out: lodging among harbour words"),
    ]
    for i, (res, note) in enumerate(items):
        e = Entry.of(res, vs, note=note)
        e.created = e.updated = f"2026-11-30T09:0{i}:00+00:00"
        nb.add(e)
    return nb


def test_text_export_golden(tmp_path):
    nb = _golden_notebook(tmp_path / "golden.wkn")
    text = render(nb, "text", "2026-11-30T10:00:00+00:00")
    nb.close()
    expected = (GOLDEN / "notebook.txt").read_text(encoding="utf-8")
    assert text == expected


def test_markdown_and_csv_escape(tmp_path):
    nb = _golden_notebook(tmp_path / "g.wkn")
    md = to_markdown(nb.entries(), "g.wkn", "t")
    rows = list(csv.reader(io.StringIO(to_csv(nb.entries()))))
    nb.close()
    assert md_cell("tab|bar`x") == "tab\\|bar\\`x"
    assert csv_cell("=cmd") == "'=cmd" and csv_cell("-ing") == "'-ing" and csv_cell("@x") == "'@x"
    assert csv_cell("\x1b[31m") == "\\x1b[31m"
    assert rows[0][:3] == ["entry", "kind", "query"]
    words = [r[6] for r in rows[1:]]
    assert "=cmd" not in words  # guarded wherever it appears
    for r in rows[1:]:
        for cell in r:
            assert not cell.startswith(("=", "+", "@")) or cell == ""
    assert "| rank | word | cosine |" in md


def test_write_file_is_atomic_and_refuses_overwrite(tmp_path):
    p = tmp_path / "out.txt"
    write_file(p, "one")
    with pytest.raises(Exception, match="--force"):
        write_file(p, "two")
    write_file(p, "two", force=True)
    assert p.read_text() == "two" and not list(tmp_path.glob(".out.txt.*"))


def test_rerun_reports_gained_lost_moved(tmp_path):
    vs = _tiny()
    e = Entry.of(neighbours(vs, "harbour", 4), vs)
    new, same = rerun(e, session_of(vs))
    assert not same.changed and same.same == 4
    # A second version of the set: quay moved away from harbour.
    words = list(vs.words)
    vecs = np.asarray(vs.unit) * vs.norms[:, None]
    vecs[words.index("quay")] = -vecs[words.index("harbour")]
    vs2 = from_arrays(words, vecs, source="/data/brackwater-tiny-v2.vec")
    new, d = rerun(e, session_of(vs2))
    assert ("quay", 1) in d.lost or any(w == "quay" for w, _ in d.lost)
    assert d.gained and d.changed
    text = diff_text(d, e.vector_set, new.vector_set)
    assert "lost:" in text and "quay" in text


def test_notebook_order_delete_undo(tmp_path):
    with Notebook.open(tmp_path / "o.wkn") as nb:
        ids = [nb.add(stub_entry(w)) for w in "abc"]
        nb.move(ids[2], -2)
        assert [e.query.word for e in nb.entries()] == ["c", "a", "b"]
        nb.delete(ids[0])
        assert [e.query.word for e in nb.entries()] == ["c", "b"]
        nb.undelete(ids[0])
        assert [e.query.word for e in nb.entries()] == ["c", "a", "b"]
        nb.set_note(ids[1], "edited")
        assert nb.get(ids[1]).note == "edited"


def test_read_only_notebook_export_works_and_save_fails_cleanly(tmp_path, lee_model):
    _, paths = lee_model
    nb = tmp_path / "ro.wkn"
    with Notebook.open(nb) as book:
        book.add(stub_entry("a"))
    os.chmod(nb, 0o444)
    os.chmod(tmp_path, 0o555)
    try:
        if os.geteuid() == 0:
            pytest.skip("root ignores file permissions")
        assert run_cli("export", str(nb)).returncode == 0
        r = run_cli("near", str(paths["text"]), "the", "--save", str(nb))
        assert r.returncode in (1, 4) and "Traceback" not in r.stderr
    finally:
        os.chmod(tmp_path, 0o755)
        os.chmod(nb, 0o644)
