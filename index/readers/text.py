"""word2vec / GloVe text reader.

Fast path (``text_arrow``): pyarrow's CSV reader with the space as delimiter, each value typed float32, on one part
of the file per core when the file is large and uncompressed (``text_parts``); 10x+ faster than gensim's
``load_word2vec_format``, see ``tests/bench``. It accepts only the regular layout (one space between fields, an
optional trailing space, no blank lines), which is what the usual tools write. Anything else — a row with the wrong
number of values, a value that is not a number, tabs or double spaces, a blank line — makes it stop; the careful
path then re-reads the file line by line from the row where the fast path stopped, either accepting the irregular
but valid layout or raising an error that names the line, the column and the word.
"""

from __future__ import annotations

import math
from collections.abc import Iterator
from pathlib import Path

import numpy as np

from wordkin.index.errors import UnreadableFileError
from wordkin.index.progress import ProgressFn
from wordkin.index.readers import text_parts
from wordkin.index.readers.base import Batch, Detected, decode_words, open_stream, read_stream_errors
from wordkin.index.readers.text_arrow import STREAM_ERRORS, FastPathGaveUp, arrow_rows

SLOW_BATCH = 8192
FLOAT32_MAX = float(np.finfo(np.float32).max)


def read(det: Detected, progress: ProgressFn | None, workdir: Path | None = None) -> Iterator[Batch]:
    """Yield batches of rows; the file's own warnings (none here) go to ``det.warnings``."""
    done_rows = 0
    bad_utf8 = [0]
    try:
        for batch in _fast(det, progress, bad_utf8, workdir):
            done_rows += len(batch.words)
            yield batch
        failed = False
    except FastPathGaveUp:
        failed = True
    if failed:
        yield from _careful(det, progress, done_rows, bad_utf8)
    if bad_utf8[0]:
        det.warnings.append(f"{bad_utf8[0]} words had bytes that are not UTF-8 (shown as U+FFFD)")


def _first_line_no(det: Detected) -> int:
    return 2 if det.header_count is not None else 1


def _block_size(file_bytes: int, parts: int) -> int:
    """pyarrow's streaming reader reads about 40 blocks ahead of the rows it hands on (measured: peak RSS grows
    ~40x the block size), in each part: blocks of 0.5 to 4 MiB, the largest keeping that below a quarter of the file.
    Larger blocks parse faster on large files; smaller ones keep a 100k x 300 set under 1.5x its matrix."""
    return min(max(file_bytes // (4 * 40 * parts), 1 << 19), 4 << 20) & ~0xFFF


def _fast(det: Detected, progress: ProgressFn | None, bad_utf8: list[int], workdir: Path | None) -> Iterator[Batch]:
    total = det.path.stat().st_size
    ranges = text_parts.split_ranges(det, total)
    if len(ranges) > 1:
        yield from text_parts.read_parts(det, ranges, _block_size(total, len(ranges)), progress, bad_utf8, workdir)
        return
    stream, raw = open_stream(det.path, det.compression)
    try:
        if det.header_count is not None:
            stream.readline()
        row = 0
        for raw_words, vec in arrow_rows(det, stream, _block_size(total, 1), threads=True):
            yield Batch(decode_words(raw_words, det.warnings, bad_utf8), vec, row)
            row += len(raw_words)
            if progress is not None:
                progress(raw.tell(), total, "parsing")
    finally:
        stream.close()
        raw.close()


def _careful(det: Detected, progress: ProgressFn | None, skip_rows: int, bad_utf8: list[int]) -> Iterator[Batch]:
    """Line-by-line reader: any whitespace between fields; blank lines skipped; precise errors."""
    path = str(det.path)
    dims = det.dims
    stream, raw = open_stream(det.path, det.compression)
    total = det.path.stat().st_size
    line_no = 0
    row = 0
    words: list[bytes] = []
    values: list[list[bytes]] = []
    start_row = skip_rows
    try:
        if det.header_count is not None:
            stream.readline()
            line_no = 1
        for line in stream:
            line_no += 1
            parts = line.split()
            if not parts:
                continue
            if row < skip_rows:
                row += 1
                continue
            if len(parts) - 1 != dims:
                word = parts[0].decode("utf-8", "replace")
                what = "the header" if det.header_count is not None else "the first row"
                raise UnreadableFileError(
                    path,
                    f"expected {dims} values after the word (as {what} says), found {len(parts) - 1}",
                    line=line_no,
                    word=word,
                )
            words.append(parts[0])
            values.append(parts[1:])
            row += 1
            if len(words) >= SLOW_BATCH:
                yield _to_batch(path, words, values, start_row, line_no - len(words) + 1, det, bad_utf8, line)
                start_row = row
                words, values = [], []
                if progress is not None:
                    progress(raw.tell(), total, "parsing (careful)")
        if words:
            yield _to_batch(path, words, values, start_row, None, det, bad_utf8, b"")
    except STREAM_ERRORS as exc:
        raise read_stream_errors(det.path, det.compression, exc) from None
    finally:
        stream.close()
        raw.close()


def _to_batch(
    path: str,
    words: list[bytes],
    values: list[list[bytes]],
    start_row: int,
    _first_line: int | None,
    det: Detected,
    bad_utf8: list[int],
    _line: bytes,
) -> Batch:
    try:
        vec = np.array(values, dtype=np.float32)
    except ValueError:
        vec = None
    if vec is None or not np.isfinite(vec).all():
        _locate_bad_value(path, det, start_row, words, values)
    assert vec is not None
    return Batch(decode_words(words, det.warnings, bad_utf8), vec, start_row)


def _locate_bad_value(path: str, det: Detected, start_row: int, words: list[bytes], values: list[list[bytes]]) -> None:
    """Find the first value in this batch that is not a finite number and raise an error naming its line."""
    for i, vals in enumerate(values):
        for j, v in enumerate(vals):
            try:
                x = float(v)
            except ValueError:
                problem = f"value {j + 1} of {det.dims} is not a number: {v.decode('utf-8', 'replace')[:40]!r}"
            else:
                if math.isfinite(x) and abs(x) <= FLOAT32_MAX:
                    continue
                problem = f"value {j + 1} of {det.dims} is {v.decode('utf-8', 'replace')[:40]!r}, not a finite number"
            line, col = _find_line(det, start_row + i, j)
            raise UnreadableFileError(path, problem, line=line, column=col, word=words[i].decode("utf-8", "replace"))
    raise UnreadableFileError(path, "a value could not be read as a number")


def _find_line(det: Detected, target_row: int, value_index: int) -> tuple[int, int | None]:
    """Line number and 1-based character column of value ``value_index`` of data row ``target_row``."""
    stream, raw = open_stream(det.path, det.compression)
    try:
        line_no = 0
        if det.header_count is not None:
            stream.readline()
            line_no = 1
        row = -1
        for line in stream:
            line_no += 1
            if not line.split():
                continue
            row += 1
            if row == target_row:
                text = line.decode("utf-8", "replace")
                pos = 0
                toks = text.split()
                for k, tok in enumerate(toks):
                    pos = text.index(tok, pos)
                    if k == value_index + 1:
                        return line_no, pos + 1
                    pos += len(tok)
                return line_no, None
    finally:
        stream.close()
        raw.close()
    return line_no, None
