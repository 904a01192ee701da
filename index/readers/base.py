"""The types and stream helpers shared by the readers: ``Batch`` (rows as read), ``Detected`` (what the format
detection found) and decompressing streams. ``formats`` detects and dispatches; each ``read_*`` module reads one
layout; both import this module and never each other the wrong way round."""

from __future__ import annotations

import bz2
import gzip
import io
import lzma
from dataclasses import dataclass, field
from pathlib import Path
from typing import BinaryIO, Literal

import numpy as np
from numpy.typing import NDArray

from wordkin.index.errors import UnreadableFileError

Compression = Literal["gzip", "bz2", "xz"] | None
Kind = Literal["word2vec-text", "glove-text", "word2vec-binary", "npy", "pickle", "fasttext-bin"]


@dataclass
class Batch:
    """Rows ``first_row .. first_row + len(words) - 1`` of the file, in file order."""

    words: list[str]
    vectors: NDArray[np.float32]  # shape (len(words), dims), raw values as stored in the file
    first_row: int


@dataclass
class Detected:
    """What ``detect`` found: enough to choose a reader and to describe the file in ``info``."""

    path: Path
    kind: Kind
    compression: Compression
    dims: int
    header_count: int | None  # N from an ``N D`` header, if there is one
    trailing_space: bool = False  # text rows end with a space (word2vec C tool, fastText)
    words_path: Path | None = None  # for .npy
    #: fastText ``.bin``: (minn, maxn, bucket) of its character n-grams
    subwords: tuple[int, int, int] | None = None
    warnings: list[str] = field(default_factory=list)

    @property
    def format_name(self) -> str:
        return self.kind + (f"+{self.compression}" if self.compression else "")


def open_stream(path: Path, compression: Compression) -> tuple[BinaryIO, BinaryIO]:
    """Open ``path`` decompressed. Returns ``(stream, raw)``; ``raw.tell()`` measures progress in file bytes."""
    raw: BinaryIO = open(path, "rb")  # noqa: SIM115 - closed by the caller
    if compression == "gzip":
        return gzip.GzipFile(fileobj=raw, mode="rb"), raw  # type: ignore[return-value]
    if compression == "bz2":
        return bz2.BZ2File(raw, mode="rb"), raw  # type: ignore[return-value]
    if compression == "xz":
        return lzma.LZMAFile(raw, mode="rb"), raw  # type: ignore[return-value]
    return raw, raw


def read_stream_errors(path: Path, compression: Compression, exc: BaseException) -> UnreadableFileError:
    """Turn a decompression failure into a one-line error."""
    if isinstance(exc, EOFError):
        return UnreadableFileError(str(path), f"the {compression} stream is cut short (file truncated?)")
    return UnreadableFileError(str(path), f"cannot decompress ({compression}): {exc}")


def decode_words(raw: list[bytes], warnings: list[str], counter: list[int]) -> list[str]:
    """Decode UTF-8 words; bytes that are not UTF-8 are replaced (U+FFFD) and counted in ``counter[0]``."""
    if not raw:
        return []
    joined = b"\n".join(raw)
    if joined.count(b"\n") == len(raw) - 1:
        try:
            return joined.decode("utf-8").split("\n")
        except UnicodeDecodeError:
            pass
    out = []
    for w in raw:
        try:
            out.append(w.decode("utf-8"))
        except UnicodeDecodeError:
            counter[0] += 1
            out.append(w.decode("utf-8", "replace"))
    return out


def stream_for_reading(det: Detected) -> tuple[io.BufferedIOBase | BinaryIO, BinaryIO]:
    return open_stream(det.path, det.compression)
