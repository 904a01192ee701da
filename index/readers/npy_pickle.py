"""Readers for a ``.npy`` matrix with a words file beside it, and (only when trusted) gensim's pickled models."""

from __future__ import annotations

from collections.abc import Iterator

import numpy as np

from wordkin.index.errors import UnreadableFileError
from wordkin.index.progress import ProgressFn
from wordkin.index.readers.base import Batch, Detected


def read_npy(det: Detected, progress: ProgressFn | None, batch_rows: int) -> Iterator[Batch]:
    arr = np.load(det.path, mmap_mode="r", allow_pickle=False)
    assert det.words_path is not None
    try:
        text = det.words_path.read_bytes().decode("utf-8", "replace")
    except OSError as exc:
        raise UnreadableFileError(str(det.words_path), f"cannot read: {exc.strerror or exc}") from None
    words = text.split("\n")
    if words and words[-1] == "":
        words.pop()
    words = [w.rstrip("\r") for w in words]
    if len(words) != arr.shape[0]:
        raise UnreadableFileError(
            str(det.words_path),
            f"has {len(words)} words but the matrix {det.path.name} has {arr.shape[0]} rows",
        )
    yield from _from_matrix(det, words, arr, progress, batch_rows)


def _from_matrix(det: Detected, words: list[str], arr, progress: ProgressFn | None, batch_rows: int) -> Iterator[Batch]:  # type: ignore[no-untyped-def]
    n = arr.shape[0]
    for s in range(0, n, batch_rows):
        vec = np.ascontiguousarray(arr[s : s + batch_rows], dtype=np.float32)
        if not np.isfinite(vec).all():
            bad = s + int(np.flatnonzero(~np.isfinite(vec).all(axis=1))[0])
            raise UnreadableFileError(
                str(det.path), f"row {bad + 1} has a value that is not a finite number", word=words[bad]
            )
        yield Batch(words[s : s + batch_rows], vec, s)
        if progress is not None:
            progress(s + len(vec), n, "reading matrix")


def read_pickle(det: Detected, progress: ProgressFn | None, batch_rows: int) -> Iterator[Batch]:
    """Load a gensim model or KeyedVectors. Only reached with ``trust_pickle=True``: this runs the file's code."""
    from gensim.utils import SaveLoad

    if progress is not None:
        progress(0, 0, "unpickling (trusted)")
    try:
        obj = SaveLoad.load(str(det.path))
    except Exception as exc:  # noqa: BLE001 - any failure inside a foreign pickle is "unreadable"
        raise UnreadableFileError(str(det.path), f"could not load the pickled model: {exc}") from None
    kv = getattr(obj, "wv", obj)
    if not hasattr(kv, "index_to_key") or not hasattr(kv, "vectors"):
        raise UnreadableFileError(str(det.path), f"the pickle holds a {type(obj).__name__}, not word vectors")
    det.dims = int(kv.vectors.shape[1])
    det.header_count = int(kv.vectors.shape[0])
    yield from _from_matrix(det, [str(w) for w in kv.index_to_key], kv.vectors, progress, batch_rows)
