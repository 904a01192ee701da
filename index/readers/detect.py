"""Detect a vector file's format by its content (never by its name) and hand it to the right reader.

Formats: word2vec text with an ``N D`` header (fastText ``.vec`` is the same), headerless GloVe-style text,
word2vec binary, any of these compressed with gzip, bz2 or xz, and a ``.npy`` matrix with a words file beside it.
Pickled files (gensim's ``.model``/``.kv``) are refused unless the caller passes ``trust_pickle=True``.

Every reader yields ``Batch`` objects of raw (not yet normalised) float32 rows, so that the store can normalise
and write them to the cache as they come and never holds the whole file twice.
"""

from __future__ import annotations

import lzma
import os
from collections.abc import Iterator
from pathlib import Path

import numpy as np

from wordkin.index.errors import PickleRefusedError, UnreadableFileError
from wordkin.index.progress import ProgressFn
from wordkin.index.readers import binary as read_binary
from wordkin.index.readers import fasttext as read_fasttext
from wordkin.index.readers import npy_pickle as read_other
from wordkin.index.readers import text as read_text
from wordkin.index.readers.base import Batch, Compression, Detected, open_stream, read_stream_errors

#: How much decompressed text is sniffed to decide the format.
SNIFF_BYTES = 1 << 16
SNIFF_LIMIT = 1 << 26
#: More dimensions than this is not a word-vector file (published sets have 25 to 1,000).
MAX_DIMS = 65_536
PICKLE_SUFFIXES = {".model", ".kv", ".pkl", ".pickle", ".p"}


def _compression_of(head: bytes) -> Compression:
    if head.startswith(b"\x1f\x8b"):
        return "gzip"
    if head.startswith(b"BZh"):
        return "bz2"
    if head.startswith(b"\xfd7zXZ\x00"):
        return "xz"
    return None


def _sniff(path: Path, compression: Compression) -> bytes:
    """The start of the decompressed file: at least its first two lines (up to ``SNIFF_LIMIT``)."""
    stream, raw = open_stream(path, compression)
    try:
        data = stream.read(SNIFF_BYTES)
        while data.count(b"\n") < 2 and len(data) < SNIFF_LIMIT:
            more = stream.read(SNIFF_BYTES * 16)
            if not more:
                break
            data += more
        return data
    except (EOFError, OSError, lzma.LZMAError) as exc:
        raise read_stream_errors(path, compression, exc) from None
    finally:
        stream.close()
        raw.close()


def _is_int(tok: bytes) -> bool:
    return tok.isdigit()


def _looks_like_floats(tokens: list[bytes]) -> bool:
    try:
        for t in tokens:
            float(t)
    except ValueError:
        return False
    return True


def _words_file_for(npy: Path) -> Path | None:
    stem = npy.name[: -len(".npy")]
    for name in (stem + ".words.txt", stem + ".words", stem + ".vocab", stem + ".txt"):
        cand = npy.with_name(name)
        if cand.is_file():
            return cand
    return None


def detect(path: str | os.PathLike[str], *, trust_pickle: bool = False) -> Detected:
    """Decide the format of ``path`` from its bytes. Raises ``UnreadableFileError`` with a reason."""
    p = Path(path)
    if not p.exists():
        raise UnreadableFileError(str(p), "no such file")
    if p.is_dir():
        raise UnreadableFileError(str(p), "is a directory, not a vector file")
    try:
        with open(p, "rb") as f:
            head = f.read(16)
    except OSError as exc:
        raise UnreadableFileError(str(p), f"cannot read: {exc.strerror or exc}") from None
    if not head:
        raise UnreadableFileError(str(p), "the file is empty", line=1)

    is_pickle = (head[:1] == b"\x80" and 2 <= head[1] <= 5) or p.suffix.lower() in PICKLE_SUFFIXES
    if is_pickle:
        if not trust_pickle:
            raise PickleRefusedError(
                str(p),
                "looks like a pickled (gensim .model/.kv) file; loading a pickle runs code from the file, "
                "so it is refused unless you pass --trust-pickle (or convert it to word2vec format)",
            )
        return Detected(p, "pickle", None, 0, None)
    if read_fasttext.looks_like_fasttext(_head(p, 64)):
        h = read_fasttext.read_header(p)
        return Detected(p, "fasttext-bin", None, h.dims, h.nwords, subwords=(h.minn, h.maxn, h.bucket))
    if head.startswith(b"\x93NUMPY"):
        words = _words_file_for(p) if p.name.endswith(".npy") else None
        if words is None:
            stem = p.name[: -len(".npy")] if p.name.endswith(".npy") else p.stem
            raise UnreadableFileError(
                str(p),
                f"a .npy matrix needs its words beside it: {p.with_name(stem + '.words.txt')} was not found"
                " (one word per line; .words, .vocab and .txt are looked for too)",
            )
        try:
            arr = np.load(p, mmap_mode="r", allow_pickle=False)
        except ValueError as exc:
            raise UnreadableFileError(str(p), f"not a plain numeric .npy matrix ({exc})") from None
        if arr.ndim != 2 or arr.dtype.kind not in "fiu":
            raise UnreadableFileError(str(p), f"expected a 2-D numeric matrix, found {arr.dtype} {arr.shape}")
        return Detected(p, "npy", None, int(arr.shape[1]), int(arr.shape[0]), words_path=words)
    if head.startswith(b"PK\x03\x04"):
        raise UnreadableFileError(str(p), "is a zip archive (.npz?); unpack it first")

    compression = _compression_of(head)
    sample = _sniff(p, compression)
    if not sample.strip():
        raise UnreadableFileError(str(p), "contains no vectors (only whitespace)", line=1)
    lines = sample.split(b"\n", 2)
    first = lines[0].rstrip(b"\r")
    tokens = first.split()
    second = lines[1].rstrip(b"\r") if len(lines) > 1 else b""
    if len(tokens) == 2 and all(_is_int(t) for t in tokens):
        count, dims = int(tokens[0]), int(tokens[1])
        if dims > MAX_DIMS:
            raise UnreadableFileError(
                str(p), f"the header says {dims:,} dimensions; more than {MAX_DIMS:,} is not a word-vector file", line=1
            )
        if dims == 0:
            raise UnreadableFileError(str(p), "the header says 0 dimensions", line=1)
        if not second.strip() and len(lines) <= 2 and b"\n" not in sample[len(first) :].lstrip(b"\r\n"):
            raise UnreadableFileError(str(p), f"a header ({count} {dims}) but no vectors", line=2)
        sec_tokens = second.split()
        if len(sec_tokens) == dims + 1 and _looks_like_floats(sec_tokens[1:]):
            return Detected(p, "word2vec-text", compression, dims, count, trailing_space=second.endswith(b" "))
        if len(sec_tokens) == 2 and _looks_like_floats(sec_tokens[1:]) and dims != 1:
            # Two integers then rows of one value: the "header" was a one-dimensional row of a headerless file.
            return Detected(p, "glove-text", compression, 1, None, trailing_space=first.endswith(b" "))
        if len(sec_tokens) >= 2 and _looks_like_floats(sec_tokens[1:]) and b"\x00" not in second:
            raise UnreadableFileError(
                str(p),
                f"the header (line 1) says {dims} dimensions but this row has {len(sec_tokens) - 1} values",
                line=2,
                word=sec_tokens[0].decode("utf-8", "replace"),
            )
        return Detected(p, "word2vec-binary", compression, dims, count)
    if len(tokens) - 1 > MAX_DIMS:
        raise UnreadableFileError(
            str(p),
            f"the first line has {len(tokens) - 1:,} values; more than {MAX_DIMS:,} dimensions"
            " is not a word-vector file",
            line=1,
        )
    if len(tokens) >= 2 and _looks_like_floats(tokens[1:]):
        return Detected(p, "glove-text", compression, len(tokens) - 1, None, trailing_space=first.endswith(b" "))
    if len(tokens) == 1 and len(lines) > 1:
        raise UnreadableFileError(str(p), "a word with no values after it", line=1)
    raise UnreadableFileError(
        str(p),
        "not a word2vec/GloVe text file, word2vec binary file or .npy matrix (first line is neither "
        "an 'N D' header nor a word followed by numbers)",
        line=1,
    )


def _head(p: Path, n: int) -> bytes:
    with open(p, "rb") as f:
        return f.read(n)


def read_batches(
    det: Detected, progress: ProgressFn | None = None, batch_rows: int = 65536, workdir: Path | None = None
) -> Iterator[Batch]:
    """Yield the file's rows in order. Malformed rows raise ``UnreadableFileError`` naming file and line.
    ``workdir`` is the cache being built: a fastText model writes its n-gram matrix there, a large text file the
    rows its later parts parsed ahead (see ``text_parts``)."""
    if det.kind == "fasttext-bin":
        if workdir is None:
            raise ValueError("a fastText model is read into a cache directory")
        return read_fasttext.read(det, progress, workdir)
    if det.kind in ("word2vec-text", "glove-text"):
        return read_text.read(det, progress, workdir)
    if det.kind == "word2vec-binary":
        return read_binary.read(det, progress, batch_rows)
    if det.kind == "npy":
        return read_other.read_npy(det, progress, batch_rows)
    return read_other.read_pickle(det, progress, batch_rows)
