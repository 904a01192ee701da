"""The fast path of the text reader: pyarrow's streaming CSV reader with the space as delimiter, each value typed
float32. It accepts only the regular layout (one space between fields, an optional trailing space, no blank lines);
anything else raises ``FastPathGaveUp`` and ``read_text`` re-reads the rest line by line."""

from __future__ import annotations

import lzma
import zlib
from collections.abc import Iterator
from typing import BinaryIO

import numpy as np

from wordkin.index.readers.base import Detected, read_stream_errors

STREAM_ERRORS = (EOFError, zlib.error, lzma.LZMAError, OSError)


class FastPathGaveUp(Exception):
    """The rows from here on are not in the regular layout (or not finite): the careful reader takes over."""


def arrow_rows(
    det: Detected, stream: BinaryIO, block_size: int, threads: bool
) -> Iterator[tuple[list[bytes], np.ndarray]]:
    """pyarrow's streaming reader over ``stream`` (positioned at a line start): ``(raw words, float32 rows)`` per
    block; ``threads`` lets pyarrow use its own thread pool (worth it when this is the only reader). Raises
    ``FastPathGaveUp`` on anything but the regular layout, ``UnreadableFileError`` on a broken stream."""
    import pyarrow as pa
    import pyarrow.csv as pcsv

    dims = det.dims
    ncols = dims + 1 + (1 if det.trailing_space else 0)
    names = [f"c{i}" for i in range(ncols)]
    types = {"c0": pa.binary()} | {f"c{i}": pa.float32() for i in range(1, dims + 1)}
    if det.trailing_space:
        types[f"c{dims + 1}"] = pa.binary()
    try:
        reader = pcsv.open_csv(
            stream,
            read_options=pcsv.ReadOptions(column_names=names, block_size=block_size, use_threads=threads),
            parse_options=pcsv.ParseOptions(
                delimiter=" ", quote_char=False, escape_char=False, ignore_empty_lines=False
            ),
            convert_options=pcsv.ConvertOptions(
                column_types=types,
                null_values=[],
                strings_can_be_null=False,
                quoted_strings_can_be_null=False,
            ),
        )
        while True:
            try:
                rb = reader.read_next_batch()
            except StopIteration:
                break
            n = rb.num_rows
            vec = np.empty((n, dims), dtype=np.float32)
            for j in range(dims):
                col = rb.column(j + 1)
                if col.null_count:
                    raise FastPathGaveUp
                vec[:, j] = col.to_numpy(zero_copy_only=False)
            if det.trailing_space:
                import pyarrow.compute as pc

                tail = rb.column(dims + 1)
                if n and pc.max(pc.binary_length(tail)).as_py():
                    raise FastPathGaveUp
            if not np.isfinite(vec).all():
                raise FastPathGaveUp  # the careful path names the line and the value
            yield rb.column(0).to_pylist(), vec
    except STREAM_ERRORS as exc:
        raise read_stream_errors(det.path, det.compression, exc) from None
    except pa.ArrowInvalid:
        raise FastPathGaveUp from None
