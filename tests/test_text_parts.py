"""The text reader's parallel path (``index/text_parts``): a large file cut into parts parsed on several threads must
give exactly the rows, words, warnings and errors of reading it as one stream. The size threshold is lowered so
that small files take that path; the reference is gensim's ``load_word2vec_format`` on the same file."""

from __future__ import annotations

import threading
from pathlib import Path

import numpy as np
import pytest
from gensim.models import KeyedVectors

from wordkin.index.errors import UnreadableFileError
from wordkin.index.readers import text_parts
from wordkin.index.readers.detect import detect, read_batches
from wordkin.index.vectors import open_vectors

from .conftest import gensim_data


@pytest.fixture
def parts(monkeypatch):
    """Every file is split; ``parts.n`` sets how many parts (the test machine's core count does not matter)."""

    class Parts:
        n = 3

    monkeypatch.setattr(text_parts, "SPLIT_MIN_BYTES", 0)
    monkeypatch.setattr(text_parts, "cores", lambda: Parts.n)
    return Parts


def _rows(path: Path, workdir: Path) -> tuple[list[str], np.ndarray, list[str], int]:
    det = detect(path)
    batches = list(read_batches(det, workdir=workdir))
    firsts = [b.first_row for b in batches]
    sizes = np.cumsum([0] + [len(b.words) for b in batches[:-1]]).tolist()
    assert firsts == sizes  # rows numbered in file order across the parts
    words = [w for b in batches for w in b.words]
    return words, np.concatenate([b.vectors for b in batches]), det.warnings, len(batches)


def _text(path: Path, words: list[str], vecs: np.ndarray, header: bool = True, trailing: str = "") -> Path:
    lines = [f"{len(words)} {vecs.shape[1]}"] if header else []
    lines += [w + " " + " ".join(f"{x:.6f}" for x in v) + trailing for w, v in zip(words, vecs, strict=True)]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return path


def _set(n: int = 3000, dims: int = 12, seed: int = 5) -> tuple[list[str], np.ndarray]:
    rng = np.random.default_rng(seed)
    return [f"tide{i}" for i in range(n)], rng.standard_normal((n, dims)).astype(np.float32)


@pytest.mark.parametrize("n_parts", [2, 3, 4])
@pytest.mark.parametrize("layout", ["header", "no-header", "trailing-space"])
def test_parts_equal_gensim(parts, tmp_path, n_parts, layout):
    parts.n = n_parts
    words, vecs = _set()
    path = _text(
        tmp_path / "v.txt", words, vecs, header=layout != "no-header", trailing=" " * (layout == "trailing-space")
    )
    det = detect(path)
    assert len(text_parts.split_ranges(det, path.stat().st_size)) == n_parts
    got_words, got, warnings, _ = _rows(path, tmp_path)
    kv = KeyedVectors.load_word2vec_format(str(path), no_header=layout == "no-header")
    assert got_words == list(kv.index_to_key) and warnings == []
    np.testing.assert_array_equal(got, kv.vectors)


def test_gensim_bundled_file_through_parts(parts, tmp_path):
    path = gensim_data("lee_fasttext.vec")  # written by fastText: header, trailing space
    kv = KeyedVectors.load_word2vec_format(str(path))
    words, got, _, _ = _rows(path, tmp_path)
    assert words == list(kv.index_to_key)
    np.testing.assert_allclose(got, kv.vectors, rtol=1e-6, atol=1e-7)


def test_cuts_fall_on_line_starts(parts, tmp_path):
    words, vecs = _set(50, 3)
    path = _text(tmp_path / "v.txt", words, vecs)
    data = path.read_bytes()
    for n in range(2, 9):
        parts.n = n
        ranges = text_parts.split_ranges(detect(path), len(data), n)
        assert ranges[0][0] == data.index(b"\n") + 1 and ranges[-1][1] == len(data)
        for (_, end), (start, _) in zip(ranges, ranges[1:], strict=False):
            assert end == start and data[start - 1 : start] == b"\n"


def test_more_parts_than_lines(parts, tmp_path):
    parts.n = 4
    path = tmp_path / "v.txt"
    path.write_text("2 3\nharbour 1 0 0\nquay 0 1 0\n", encoding="utf-8")
    words, got, _, _ = _rows(path, tmp_path)
    assert words == ["harbour", "quay"] and got.shape == (2, 3)


def test_bad_row_in_a_later_part_names_its_line(parts, tmp_path):
    words, vecs = _set()
    path = _text(tmp_path / "v.txt", words, vecs)
    lines = path.read_bytes().split(b"\n")
    lines[2500] = b"tide2499 1.0 abc"  # line 2501 of the file, in the last of three parts
    path.write_bytes(b"\n".join(lines))
    with pytest.raises(UnreadableFileError) as err:
        _rows(path, tmp_path)
    assert "line 2501" in err.value.message and "tide2499" in err.value.message


def test_irregular_layout_in_a_later_part_is_read_carefully(parts, tmp_path):
    words, vecs = _set()
    path = _text(tmp_path / "v.txt", words, vecs)
    lines = path.read_bytes().split(b"\n")
    lines[2000] = lines[2000].replace(b" ", b"\t", 3)  # tabs and a blank line: valid, not the regular layout
    lines.insert(2600, b"")
    path.write_bytes(b"\n".join(lines))
    got_words, got, _, _ = _rows(path, tmp_path)
    assert got_words == words
    np.testing.assert_allclose(got, vecs, atol=5e-7)


def test_non_utf8_words_in_every_part_are_counted_once(parts, tmp_path):
    words, vecs = _set()
    path = _text(tmp_path / "v.txt", words, vecs)
    data = path.read_bytes()
    for w in (b"tide10 ", b"tide1500 ", b"tide2900 "):
        data = data.replace(b"\n" + w, b"\n" + w[:-1] + b"\xff ", 1)
    path.write_bytes(data)
    got_words, _, warnings, _ = _rows(path, tmp_path)
    assert got_words[10] == "tide10\ufffd" and got_words[2900] == "tide2900\ufffd"
    assert warnings == ["3 words had bytes that are not UTF-8 (shown as U+FFFD)"]


def test_error_in_first_part_stops_the_others(parts, tmp_path):
    words, vecs = _set(30000, 8)
    path = _text(tmp_path / "v.txt", words, vecs)
    lines = path.read_bytes().split(b"\n")
    lines[3] = b"tide2 1.0 nan 1 1 1 1 1 1"
    path.write_bytes(b"\n".join(lines))
    with pytest.raises(UnreadableFileError, match="line 4"):
        _rows(path, tmp_path)
    assert not [t for t in threading.enumerate() if t.name.startswith("wordkin-parse")]
    assert list(tmp_path.iterdir()) == [path]  # the spill files are gone


def test_cache_built_through_parts_matches_one_stream(parts, tmp_path, monkeypatch):
    words, vecs = _set(5000, 20)
    path = _text(tmp_path / "v.txt", words, vecs)
    split = open_vectors(path, cache_root=tmp_path / "a")
    monkeypatch.setattr(text_parts, "cores", lambda: 1)
    whole = open_vectors(path, cache_root=tmp_path / "b")
    assert split.words == whole.words
    np.testing.assert_array_equal(np.asarray(split.unit), np.asarray(whole.unit))
