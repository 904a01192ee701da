"""fastText ``.bin`` models: the header, the dictionary and the input matrix (word rows, then n-gram buckets).

Layout (fastText's ``FastText::saveModel``, ``Args::save``, ``Dictionary::save``, ``DenseMatrix::save``; gensim's
``_fasttext_bin.py`` reads the same): int32 magic 793712314 and int32 version (files older than fastText 0.1 have
neither and start with dim and ws), then the arguments (int32 dim, ws, epoch, minCount, neg, wordNgrams, loss,
model, bucket, minn, maxn, lrUpdateRate, float64 t), the dictionary (int32 size, nwords, nlabels, int64 ntokens,
int64 pruneidx size; per entry the word's bytes, a NUL, int64 count, int8 type; the prune index), a bool ``quant``
(new format), int64 rows and columns, and the float32 matrix; the output matrix follows (not read).

Reading streams: the n-gram bucket rows are copied into the cache as ``ngrams.npy`` in blocks, then each
vocabulary word's vector is computed as fastText's ``getWordVector`` does (the mean of its own row and its n-gram
rows) a block of words at a time, with a sparse product over the memory-mapped bucket matrix. Nothing holds the
whole file in memory.
"""

from __future__ import annotations

import mmap
import struct
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import BinaryIO

import numpy as np
from numpy.typing import NDArray

from wordkin.index.errors import UnreadableFileError
from wordkin.index.progress import ProgressFn
from wordkin.index.readers.base import Batch, Detected
from wordkin.index.subwords import ngram_buckets

MAGIC = 793712314
#: The versions this reader knows (fastText writes 11 and 12; older files have no version at all).
VERSIONS = (11, 12)
WORD_BATCH = 4096
#: Words whose n-gram sums are gathered in one pass over the bucket matrix.
WORD_CHUNK = 500_000
#: Bucket rows read at once.
COPY_ROWS = 131_072
MAX_DIMS = 65_536


@dataclass(frozen=True)
class FastTextHeader:
    new_format: bool
    version: int
    dims: int
    minn: int
    maxn: int
    bucket: int
    model: int  # 1 cbow, 2 skipgram, 3 supervised
    nwords: int
    nlabels: int
    words: tuple[bytes, ...]
    matrix_offset: int  # byte offset of the input matrix's first float
    file_size: int


def _fail(path: Path, problem: str) -> UnreadableFileError:
    return UnreadableFileError(str(path), problem)


def looks_like_fasttext(head: bytes) -> bool:
    """The first bytes of a new-format model (magic), or of a plausible pre-0.1 model (dim, ws, arguments)."""
    if len(head) >= 4 and struct.unpack("<i", head[:4])[0] == MAGIC:
        return True
    if len(head) < 56:
        return False
    dim, ws, epoch, min_count, neg, word_ngrams, loss, model, bucket, minn, maxn, lr = struct.unpack("<12i", head[:48])
    return bool(
        1 <= dim <= MAX_DIMS
        and 1 <= ws <= 1000
        and 1 <= epoch <= 100_000
        and 0 <= min_count <= 1_000_000_000
        and 0 <= neg <= 10_000
        and 1 <= word_ngrams <= 100
        and 1 <= loss <= 4
        and 1 <= model <= 3
        and 0 <= bucket <= 1 << 31
        and 0 <= minn <= maxn <= 100
        and 1 <= lr <= 1_000_000
    )


def read_header(path: Path) -> FastTextHeader:
    """Parse everything before the input matrix and check the matrix against the file's size."""
    size = path.stat().st_size
    with open(path, "rb") as f, mmap.mmap(f.fileno(), 0, access=mmap.ACCESS_READ) as mm:
        pos = 0

        def take(fmt: str) -> tuple[int | float | bool, ...]:
            nonlocal pos
            n = struct.calcsize(fmt)
            if pos + n > size:
                raise _fail(path, f"the fastText model is cut short (at byte {pos:,} of {size:,})")
            out = struct.unpack_from(fmt, mm, pos)
            pos += n
            return out

        first, second = take("<2i")
        new_format = first == MAGIC
        if new_format:
            version = int(second)
            if version not in VERSIONS:
                raise _fail(path, f"fastText model version {version}; this reader knows versions 11 and 12")
            dims, _ws = take("<2i")
        else:
            version, dims = 0, int(first)
        _epoch, _mc, _neg, _wng, _loss, model, bucket, minn, maxn, _lr = take("<10i")
        take("<d")
        if not 1 <= int(dims) <= MAX_DIMS:
            raise _fail(path, f"the fastText header says {dims} dimensions")
        if not 0 <= int(minn) <= int(maxn) <= 100 or int(bucket) < 0:
            raise _fail(path, f"the fastText header is damaged (minn {minn}, maxn {maxn}, bucket {bucket})")
        vocab_size, nwords, nlabels = take("<3i")
        take("<q")  # ntokens
        prune = int(take("<q")[0]) if new_format else 0
        if int(nlabels) > 0 or int(model) == 3:
            raise _fail(path, "is a supervised (classifier) fastText model; only word-vector models can be read")
        if not 0 <= int(nwords) <= int(vocab_size) or int(vocab_size) > size:
            raise _fail(path, f"the fastText dictionary sizes are damaged ({vocab_size} entries, {nwords} words)")
        words: list[bytes] = []
        for _ in range(int(vocab_size)):
            end = mm.find(b"\x00", pos)
            if end < 0 or end + 10 > size:
                raise _fail(path, f"the fastText dictionary is cut short after {len(words):,} words")
            words.append(mm[pos:end])
            pos = end + 10  # NUL, int64 count, int8 type
        if prune > 0:
            raise _fail(path, "is a pruned (quantised .ftz) fastText model; export its word vectors instead")
        if new_format:
            (quant,) = take("<?")
            if quant:
                raise _fail(path, "is a quantised fastText model; export its word vectors instead")
        rows, cols = take("<2q")
        if int(cols) != int(dims) or int(rows) != int(nwords) + int(bucket):
            raise _fail(
                path,
                f"the input matrix is {rows:,} x {cols:,}, but {nwords:,} words + {bucket:,} buckets x {dims} dims "
                "were declared",
            )
        need = pos + 4 * int(rows) * int(cols)
        if need > size:
            raise _fail(
                path, f"the fastText model is cut short: the input matrix needs {need:,} bytes, the file has {size:,}"
            )
        return FastTextHeader(
            new_format,
            version,
            int(dims),
            int(minn),
            int(maxn),
            int(bucket),
            int(model),
            int(nwords),
            int(nlabels),
            tuple(words[: int(nwords)]),
            pos,
            size,
        )


def _rows_from(f: BinaryIO, offset: int, count: int, dims: int) -> NDArray[np.float32]:
    """``count`` float32 rows read (not mapped: read pages are not this process's memory) from ``offset``."""
    f.seek(offset)
    out = np.fromfile(f, dtype="<f4", count=count * dims)
    if out.size != count * dims:
        raise EOFError
    return out.reshape(count, dims).astype(np.float32, copy=False)


def read(det: Detected, progress: ProgressFn | None, workdir: Path) -> Iterator[Batch]:
    """Yield the vocabulary words with fastText's word vectors; writes ``ngrams.npy`` (the bucket rows, raw) and
    ``ngrams_seen.npy`` into ``workdir`` (the cache being built).

    Memory stays small whatever the model's size: the bucket matrix is streamed once from the model into the cache
    in blocks, and each block adds its share to the n-gram sums of a chunk of words through a sparse product
    (the words' bucket lists as a CSC matrix); a model with more words than a chunk re-reads the bucket matrix
    from the cache once per further chunk.
    """
    from scipy.sparse import csr_matrix

    from wordkin.index import cache

    h = read_header(det.path)
    dims, nw, nb = h.dims, h.nwords, h.bucket
    seen = np.zeros(nb, dtype=bool)
    ngrams_path = workdir / "ngrams.npy"
    bad_utf8 = 0
    try:
        with open(det.path, "rb") as src:
            for c0 in range(0, max(nw, 1), WORD_CHUNK):
                raw = list(h.words[c0 : c0 + WORD_CHUNK])
                rows, offsets = ngram_buckets(raw, h.minn, h.maxn, nb)
                seen[rows] = True
                counts = np.diff(offsets).astype(np.float32)
                # (words x buckets), one entry per n-gram occurrence; columns sliced per block of buckets.
                picks = csr_matrix(
                    (np.ones(len(rows), dtype=np.float32), rows.astype(np.int32), offsets), shape=(len(raw), nb)
                ).tocsc()
                sums = np.zeros((len(raw), dims), dtype=np.float32)
                first = c0 == 0
                writer = cache.MatrixWriter(ngrams_path, dims) if first else None
                try:
                    with open(ngrams_path, "rb") if not first else open(det.path, "rb") as blocks:
                        for b0 in range(0, nb, COPY_ROWS):
                            m = min(COPY_ROWS, nb - b0)
                            if first:
                                block = _rows_from(src, h.matrix_offset + 4 * dims * (nw + b0), m, dims)
                                if not np.isfinite(block).all():
                                    bad = b0 + int(np.flatnonzero(~np.isfinite(block).all(axis=1))[0])
                                    raise _fail(
                                        det.path, f"n-gram bucket {bad} has a value that is not a finite number"
                                    )
                                assert writer is not None
                                writer.append(block)
                            else:
                                block = _rows_from(blocks, cache.NPY_HEADER_LEN + 4 * dims * b0, m, dims)
                            if len(rows):
                                sums += np.asarray(picks[:, b0 : b0 + m] @ block, dtype=np.float32)
                            if progress is not None and first:
                                progress(b0 + m, nb, "reading n-gram buckets")
                finally:
                    if writer is not None:
                        writer.close()
                for s in range(0, len(raw), WORD_BATCH):
                    e = min(s + WORD_BATCH, len(raw))
                    own = _rows_from(src, h.matrix_offset + 4 * dims * (c0 + s), e - s, dims)
                    if not np.isfinite(own).all():
                        bad = c0 + s + int(np.flatnonzero(~np.isfinite(own).all(axis=1))[0])
                        raise _fail(det.path, f"word row {bad + 1} has a value that is not a finite number")
                    vec = ((own + sums[s:e]) / (1.0 + counts[s:e])[:, None]).astype(np.float32)
                    words = []
                    for w in raw[s:e]:
                        try:
                            words.append(w.decode("utf-8"))
                        except UnicodeDecodeError:
                            bad_utf8 += 1
                            words.append(w.decode("utf-8", "replace"))
                    yield Batch(words, vec, c0 + s)
                    if progress is not None:
                        progress(c0 + e, nw, "computing word vectors")
    except EOFError:
        raise _fail(det.path, "the fastText model is cut short inside its input matrix") from None
    if nw == 0:
        cache.MatrixWriter(ngrams_path, dims).close()
    np.save(workdir / "ngrams_seen.npy", seen)
    if bad_utf8:
        det.warnings.append(f"{bad_utf8} words had bytes that are not UTF-8 (shown as U+FFFD)")
