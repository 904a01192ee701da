"""Every malformed vector file gives exit 4 and one line naming the file and the line (or exit 0 and a warning
where the file is usable), never a traceback, and leaves nothing half-written in the cache."""

from __future__ import annotations

import gzip
import os
import struct
from pathlib import Path

import numpy as np
import pytest

from .conftest import run_cli


def _w2v_bin(path: Path, words, vecs, cut: int | None = None) -> Path:
    data = f"{len(words)} {vecs.shape[1]}\n".encode()
    for w, v in zip(words, vecs, strict=True):
        data += w.encode() + b" " + np.asarray(v, "<f4").tobytes() + b"\n"
    path.write_bytes(data if cut is None else data[:cut])
    return path


V3 = "1.0 0.5 0.25"

# (name, file content, exit code, words that must appear in the one-line message)
TEXT_CASES = [
    ("empty", b"", 4, ["empty"]),
    ("header-only", b"3 3\n", 4, ["no vectors"]),
    (
        "short-row",
        f"2 3\nharbour {V3}\nquay 1.0 0.5\n".encode(),
        4,
        ["line 3", "quay", "expected 3 values", "found 2"],
    ),
    ("long-row", f"2 3\nharbour {V3}\nquay {V3} 9\n".encode(), 4, ["line 3", "quay", "found 4"]),
    (
        "not-a-number",
        f"2 3\nharbour {V3}\nquay 1.0 abc 0.5\n".encode(),
        4,
        ["line 3", "column", "quay", "not a number"],
    ),
    ("nan", f"2 3\nharbour {V3}\nquay 1.0 nan 0.5\n".encode(), 4, ["line 3", "quay", "finite"]),
    ("inf", f"harbour {V3}\nquay 1.0 0.5 -inf\n".encode(), 4, ["line 2", "quay", "finite"]),
    ("garbage", bytes(range(256)) * 4, 4, ["line 1"]),
    (
        "header-dims-differ",
        f"2 4\nharbour {V3}\nquay {V3}\n".encode(),
        4,
        ["line 2", "header", "4 dimensions", "3 values"],
    ),
]


def _no_leftovers(cache: Path) -> None:
    left = [p.name for p in cache.rglob("*") if "building" in p.name or p.name.endswith(".tmp")]
    assert left == []


@pytest.mark.parametrize("name,content,code,needles", TEXT_CASES, ids=[c[0] for c in TEXT_CASES])
def test_malformed_text(tmp_path, name, content, code, needles):
    f = tmp_path / f"{name}.txt"
    f.write_bytes(content)
    cache = tmp_path / "cache"
    r = run_cli("info", str(f), "--cache", str(cache))
    assert r.returncode == code, r.stderr
    lines = r.stderr.strip().splitlines()
    assert len(lines) == 1 and "Traceback" not in r.stderr, r.stderr
    assert str(f) in lines[0]
    for n in needles:
        assert n in lines[0], (n, lines[0])
    if cache.exists():
        _no_leftovers(cache)
        assert not any(p.name == "meta.json" for p in cache.rglob("meta.json"))


def test_bad_row_late_in_a_large_file_names_its_line(tmp_path):
    # The fast (pyarrow) path gives up; the careful path must still report the exact line.
    rng = np.random.default_rng(0)
    lines = [f"w{i} " + " ".join(f"{x:.4f}" for x in rng.standard_normal(5)) for i in range(120_000)]
    lines[100_000] = "w100000 1 2 3 oops 5"
    f = tmp_path / "big.txt"
    f.write_text("120000 5\n" + "\n".join(lines) + "\n")
    r = run_cli("info", str(f), "--cache", str(tmp_path / "c"))
    assert r.returncode == 4
    assert "line 100002" in r.stderr and "w100000" in r.stderr and "oops" in r.stderr


@pytest.mark.parametrize(
    "name,content,needles",
    [
        ("count-larger", f"5 3\nharbour {V3}\nquay {V3}\n".encode(), ["header says 5", "has 2"]),
        ("count-smaller", f"1 3\nharbour {V3}\nquay {V3}\n".encode(), ["header says 1", "has 2"]),
        ("duplicates", f"3 3\nharbour {V3}\nquay {V3}\nharbour 0 1 0\n".encode(), ["1 duplicate word"]),
        ("zero-row", f"harbour {V3}\nquay 0 0 0\n".encode(), ["1 all-zero vector"]),
        (
            "latin1",
            f"harbour {V3}\n".encode() + b"caf\xe9 " + V3.encode() + b"\n",
            ["1 words had bytes that are not UTF-8"],
        ),
        ("double-spaces", f"harbour  {V3}\nquay\t{V3}\n".encode(), []),
    ],
)
def test_usable_with_warning(tmp_path, name, content, needles):
    f = tmp_path / f"{name}.txt"
    f.write_bytes(content)
    r = run_cli("info", str(f), "--json", "--cache", str(tmp_path / "c"))
    assert r.returncode == 0, r.stderr
    for n in needles:
        assert n in r.stderr, r.stderr


def test_duplicates_keep_first_and_zero_rows_never_ranked(tmp_path):
    f = tmp_path / "d.txt"
    f.write_text("harbour 1 0 0\nquay 0.9 0.1 0\nharbour 0 1 0\nvoid 0 0 0\npier 0.8 0.2 0\n")
    r = run_cli("near", str(f), "harbour", "--json", "-k", "10", "--cache", str(tmp_path / "c"))
    assert r.returncode == 0
    import json

    got = [x["word"] for x in json.loads(r.stdout)["results"]]
    assert got == ["quay", "pier"]  # the first harbour (1,0,0) is kept; void is never ranked


def test_headerless_first_row_of_two_integers(tmp_path):
    # A one-dimensional headerless file whose first row is "10 5": not a header.
    f = tmp_path / "one.txt"
    f.write_text("10 5\nharbour 0.5\nquay -1\n")
    r = run_cli("info", str(f), "--json", "--cache", str(tmp_path / "c"))
    assert r.returncode == 0, r.stderr
    assert '"words": 3' in r.stdout and '"dims": 1' in r.stdout


def test_binary_cut_mid_row(tmp_path):
    vecs = np.arange(12, dtype=np.float32).reshape(3, 4)
    full = _w2v_bin(tmp_path / "full.bin", ["harbour", "quay", "pier"], vecs)
    cut = _w2v_bin(tmp_path / "cut.bin", ["harbour", "quay", "pier"], vecs, cut=full.stat().st_size - 7)
    r = run_cli("info", str(cut), "--cache", str(tmp_path / "c"))
    assert r.returncode == 4 and "record 3" in r.stderr and "pier" in r.stderr and "cut short" in r.stderr
    assert len(r.stderr.strip().splitlines()) == 1
    _no_leftovers(tmp_path / "c")


def test_gzip_cut_in_half(tmp_path, lee_model):
    _, p = lee_model
    data = p["gzip"].read_bytes()
    f = tmp_path / "half.txt.gz"
    f.write_bytes(data[: len(data) // 2])
    r = run_cli("info", str(f), "--cache", str(tmp_path / "c"))
    assert r.returncode == 4 and "cut short" in r.stderr and "Traceback" not in r.stderr
    _no_leftovers(tmp_path / "c")


def test_missing_file_and_directory(tmp_path):
    r = run_cli("info", str(tmp_path / "nope.txt"))
    assert r.returncode == 4 and "no such file" in r.stderr
    r = run_cli("info", str(tmp_path))
    assert r.returncode == 4 and "directory" in r.stderr


def test_pickle_refused_and_marker_never_created(tmp_path):
    marker = tmp_path / "pwned"
    f = tmp_path / "evil.model"

    class Evil:
        def __reduce__(self):
            return (os.system, (f"touch {marker}",))

    import pickle

    f.write_bytes(pickle.dumps(Evil(), protocol=4))
    also = tmp_path / "evil.vec"  # a pickle under a vector-file name is refused by its content
    also.write_bytes(pickle.dumps(Evil(), protocol=4))
    for path in (f, also):
        r = run_cli("info", str(path), "--cache", str(tmp_path / "c"))
        assert r.returncode == 4 and "--trust-pickle" in r.stderr, r.stderr
    assert not marker.exists()


def test_trusted_gensim_pickle_loads(tmp_path, lee_model):
    kv, _ = lee_model
    f = tmp_path / "lee.kv"
    kv.save(str(f))
    r = run_cli("info", str(f), "--json", "--trust-pickle", "--cache", str(tmp_path / "c"))
    assert r.returncode == 0, r.stderr
    assert f'"words": {len(kv.index_to_key)}' in r.stdout


def test_npy_with_words_file(tmp_path):
    m = np.eye(3, dtype=np.float32) + 0.1
    np.save(tmp_path / "set.npy", m)
    (tmp_path / "set.words.txt").write_text("harbour\nquay\npier\n")
    r = run_cli("near", str(tmp_path / "set.npy"), "quay", "--json", "--cache", str(tmp_path / "c"))
    assert r.returncode == 0, r.stderr
    (tmp_path / "set.words.txt").write_text("harbour\nquay\n")
    r = run_cli("info", str(tmp_path / "set.npy"), "--no-cache")
    assert r.returncode == 4 and "2 words" in r.stderr and "3 rows" in r.stderr


def test_compressed_variants(tmp_path):
    import bz2
    import lzma

    text = f"harbour {V3}\nquay 1 0.4 0.3\npier 0 1 0\n".encode()
    for name, data in (
        ("a.gz", gzip.compress(text)),
        ("a.bz2", bz2.compress(text)),
        ("a.xz", lzma.compress(text)),
    ):
        f = tmp_path / name
        f.write_bytes(data)
        r = run_cli("near", str(f), "harbour", "--json", "-k", "1", "--no-cache")
        assert r.returncode == 0 and '"quay"' in r.stdout, (name, r.stderr)


def test_binary_with_spaces_struct(tmp_path):
    # word2vec binary as the C tool writes it: newline after each vector.
    f = tmp_path / "c.bin"
    body = b"2 2\n" + b"harbour " + struct.pack("<2f", 1, 0) + b"\n" + b"quay " + struct.pack("<2f", 0.9, 0.1) + b"\n"
    f.write_bytes(body)
    r = run_cli("near", str(f), "harbour", "--json", "--no-cache")
    assert r.returncode == 0 and '"quay"' in r.stdout, r.stderr
