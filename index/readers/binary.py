"""word2vec binary reader: ``N D\\n`` then, per word, the word's bytes, a space and ``D`` little-endian float32.

Each record may be preceded by a newline (the original C tool writes one after every vector; gensim does not).
Words may contain any byte but the space; bytes that are not UTF-8 are replaced and counted.
"""

from __future__ import annotations

import lzma
import zlib
from collections.abc import Iterator

import numpy as np

from wordkin.index.errors import UnreadableFileError
from wordkin.index.progress import ProgressFn
from wordkin.index.readers.base import Batch, Detected, decode_words, open_stream, read_stream_errors

CHUNK = 1 << 23
STREAM_ERRORS = (EOFError, zlib.error, lzma.LZMAError, OSError)
MAX_WORD_BYTES = 1 << 20


def read(det: Detected, progress: ProgressFn | None, batch_rows: int) -> Iterator[Batch]:
    path = str(det.path)
    dims = det.dims
    vbytes = 4 * dims
    stream, raw = open_stream(det.path, det.compression)
    total = det.path.stat().st_size
    bad_utf8 = [0]
    try:
        stream.readline()
        buf = b""
        pos = 0
        row = 0
        eof = False
        words: list[bytes] = []
        offsets: list[int] = []
        while True:
            # Parse every complete record in buf[pos:].
            n = len(buf)
            while True:
                while pos < n and buf[pos] in (10, 13):
                    pos += 1
                sp = buf.find(b" ", pos, pos + MAX_WORD_BYTES)
                if sp < 0 or sp + 1 + vbytes > n:
                    break
                words.append(buf[pos:sp])
                offsets.append(sp + 1)
                pos = sp + 1 + vbytes
            if words:
                vec = _gather(buf, offsets, dims)
                if not np.isfinite(vec).all():
                    bad = int(np.flatnonzero(~np.isfinite(vec).all(axis=1))[0])
                    raise UnreadableFileError(
                        path,
                        f"record {row + bad + 1} has a value that is not a finite number (NaN or inf)",
                        word=words[bad].decode("utf-8", "replace"),
                    )
                yield Batch(decode_words(words, det.warnings, bad_utf8), vec, row)
                row += len(words)
                words, offsets = [], []
                if progress is not None:
                    progress(raw.tell(), total, "parsing")
            if eof:
                break
            chunk = stream.read(CHUNK)
            if not chunk:
                eof = True
            buf = buf[pos:] + chunk
            pos = 0
        rest = buf[pos:].strip(b"\r\n")
        if rest:
            sp = rest.find(b" ")
            word = rest[:sp].decode("utf-8", "replace") if sp >= 0 else rest[:40].decode("utf-8", "replace")
            have = len(rest) - sp - 1 if sp >= 0 else 0
            raise UnreadableFileError(
                path,
                f"record {row + 1} is cut short: expected {vbytes} bytes of vector, found {max(have, 0)} "
                "(file truncated?)",
                word=word,
            )
    except STREAM_ERRORS as exc:
        raise read_stream_errors(det.path, det.compression, exc) from None
    finally:
        stream.close()
        raw.close()
    if bad_utf8[0]:
        det.warnings.append(f"{bad_utf8[0]} words had bytes that are not UTF-8 (shown as U+FFFD)")


def _gather(buf: bytes, offsets: list[int], dims: int) -> np.ndarray:
    """Copy the vectors at ``offsets`` into one (len(offsets), dims) float32 matrix."""
    arr = np.frombuffer(buf, dtype=np.uint8)
    off = np.asarray(offsets, dtype=np.int64)
    vbytes = 4 * dims
    # Records in a chunk are usually back to back with equal word lengths only by chance, so gather per row
    # through a strided view: one fancy-index over (rows, vbytes) bytes, in blocks to bound the index memory.
    out = np.empty((len(off), dims), dtype=np.float32)
    view = out.view(np.uint8).reshape(len(off), vbytes)
    cols = np.arange(vbytes, dtype=np.int64)
    step = max(1, (1 << 22) // vbytes)
    for s in range(0, len(off), step):
        view[s : s + step] = arr[off[s : s + step, None] + cols]
    return out.astype("<f4", copy=False)
