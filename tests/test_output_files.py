"""Files written on request: umask honoured, devices and FIFOs written to (never replaced), symlinks written through,
``-`` is standard output, a missing folder is one line and exit 4; and pair files as published (doubled tabs)."""

from __future__ import annotations

import os
import stat
import subprocess
import sys
import threading
from pathlib import Path

import pytest

from wordkin.console.formats.output_file import current_umask, write_output
from wordkin.index.errors import UnreadableFileError, UsageError

from .conftest import ROOT, run_cli


def test_new_files_honour_the_umask(tmp_path):
    code = (
        "import os, sys; os.umask(0o022)\n"
        "from wordkin.console.formats.output_file import write_output\n"
        "write_output(sys.argv[1], 'x')\n"
    )
    out = tmp_path / "e.txt"
    subprocess.run([sys.executable, "-c", code, str(out)], check=True, cwd=ROOT)
    assert stat.S_IMODE(out.stat().st_mode) == 0o644
    assert current_umask() == current_umask()  # reading it changes nothing


def test_fifo_is_written_to_and_stays_a_fifo(tmp_path):
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    got: list[str] = []
    reader = threading.Thread(target=lambda: got.append(fifo.read_text()))
    reader.start()
    write_output(fifo, "hello\n", force=False)
    reader.join(10)
    assert got == ["hello\n"] and stat.S_ISFIFO(fifo.stat().st_mode)


def test_symlink_target_is_replaced_not_the_link(tmp_path):
    target = tmp_path / "real.txt"
    target.write_text("old")
    link = tmp_path / "link.txt"
    link.symlink_to(target)
    with pytest.raises(UsageError, match="exists"):
        write_output(link, "new")
    write_output(link, "new", force=True)
    assert link.is_symlink() and target.read_text() == "new"


def test_dash_is_standard_output_and_missing_folder_is_exit_4(tmp_path, capsys):
    assert write_output("-", "to stdout\n") == "standard output"
    assert capsys.readouterr().out == "to stdout\n"
    with pytest.raises(UnreadableFileError, match="no such folder"):
        write_output(tmp_path / "nope" / "x.txt", "x")
    nb = tmp_path / "nb.wkn"
    assert run_cli("near", str(ROOT / "demo_vectors" / "brackwater.vec.gz"), "hotel", "--save", str(nb)).returncode == 0
    r = run_cli("export", str(nb), "-o", str(tmp_path / "nope" / "x.md"))
    assert r.returncode == 4 and len(r.stderr.strip().splitlines()) == 1 and "no such folder" in r.stderr
    r = run_cli("export", str(nb), "-o", "-")
    assert r.returncode == 0 and r.stdout.startswith("wordkin notebook")


def test_pair_files_with_doubled_tabs_and_bad_lines(tmp_path):
    demo = str(ROOT / "demo_vectors" / "brackwater.vec.gz")
    clean = Path(ROOT / "demo_vectors" / "brackwater-pairs.tsv").read_text(encoding="utf-8").splitlines()
    doubled = tmp_path / "doubled.tsv"
    doubled.write_text("\n".join(x.replace("\t", "\t\t") for x in clean) + "\nonly two\nharbour quay notanumber\n")
    a = run_cli("score", demo, "--pairs", str(ROOT / "demo_vectors" / "brackwater-pairs.tsv"), "--json")
    b = run_cli("score", demo, "--pairs", str(doubled), "--json")
    import json

    ja, jb = json.loads(a.stdout), json.loads(b.stdout)
    assert ja["spearman"] == jb["spearman"] and ja["used"] == jb["used"]
    assert jb["skipped_lines"] == 2 and jb["first_skipped_line"] == len(clean) + 1
    text = run_cli("score", demo, "--pairs", str(doubled)).stdout
    assert f"skipped: 2 malformed lines, first at line {len(clean) + 1}" in text
