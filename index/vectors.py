"""``VectorSet``: the words of a file in file order and their unit-normalised float32 matrix.

``open_vectors`` parses the file once, writes the cache (see ``cache``) and memory-maps it; a second open of the
same unchanged file maps the cache without parsing. File order is frequency order for the usual formats, so
"the N most frequent words" are rows ``0 .. N-1``.
"""

from __future__ import annotations

import os
import tempfile
import time
import unicodedata
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
from numpy.typing import NDArray

from wordkin.index import cache, locations
from wordkin.index.errors import UnknownWordError, UnreadableFileError, WordkinError
from wordkin.index.progress import CancelFn, ProgressFn, check
from wordkin.index.readers.base import Detected
from wordkin.index.readers.detect import detect, read_batches
from wordkin.index.subwords import SubwordTable


@dataclass(frozen=True)
class WordVector:
    """A word's unit vector for a query: from its ``row`` of the vocabulary, or (``source`` "subwords") built from
    its character n-grams by a fastText model, with how many of its ``ngrams`` are ``known`` and the vocabulary's
    ``close`` matches beside it."""

    word: str
    vector: NDArray[np.float32]
    row: int | None
    source: str = "vocabulary"
    known: int = 0
    ngrams: int = 0
    close: tuple[str, ...] = ()
    #: How a vocabulary word answered when the word as typed is not in the vocabulary: "NFC", "case-folded" or
    #: "spaces as _" (``matched`` is that word); "" when it answered as typed.
    form: str = ""
    matched: str = ""


@dataclass
class VectorSet:
    """An opened vector set. ``unit`` has shape ``(n_words, dims)``, C-contiguous float32, rows of norm 1 (or 0)."""

    source: Path
    format: str
    words: list[str]
    unit: NDArray[np.float32]
    norms: NDArray[np.float32]
    zero_rows: NDArray[np.int64]
    fingerprint: str
    cache_dir: Path | None
    meta: cache.CacheMeta
    warnings: list[str] = field(default_factory=list)
    #: A fastText model's n-gram table: vectors for words not in the vocabulary.
    subwords: SubwordTable | None = None
    cache_note: str = ""  # "hit", "built", "rebuilt: <reason>", "off"
    _lookup: dict[str, int] | None = None
    _lookups: int = 0
    _folded: dict[str, int] | None = None

    @property
    def n(self) -> int:
        return len(self.words)

    @property
    def dims(self) -> int:
        return int(self.unit.shape[1])

    def row(self, word: str) -> int:
        """Row of ``word``; ``UnknownWordError`` with close matches if it is not in the vocabulary."""
        r = self.find(word)
        if r is None:
            from wordkin.index.close_matches import close_matches

            raise UnknownWordError(word, close_matches(self.words, word))
        return r

    def find(self, word: str) -> int | None:
        if self._lookup is None:
            self._lookups += 1
            if self._lookups <= 2:
                # One-off lookups (a headless command) scan the list in C rather than build a dict.
                try:
                    return self.words.index(word)
                except ValueError:
                    return None
            self._lookup = {w: i for i, w in enumerate(self.words)}
        return self._lookup.get(word)

    def __contains__(self, word: str) -> bool:
        return self.find(word) is not None

    def find_folded(self, word: str) -> int | None:
        """Row of ``word``, or of its most frequent case variant (case-insensitive lookup)."""
        r = self.find(word)
        if r is not None:
            return r
        if self._folded is None:
            folded: dict[str, int] = {}
            for i, w in enumerate(self.words):
                folded.setdefault(w.casefold(), i)
            self._folded = folded
        return self._folded.get(word.casefold())

    def lookup(self) -> dict[str, int]:
        if self._lookup is None:
            self._lookup = {w: i for i, w in enumerate(self.words)}
        return self._lookup

    def is_zero(self, row: int) -> bool:
        return bool(self.norms[row] == 0)

    def find_variant(self, word: str) -> tuple[int, str] | None:
        """The row of ``word`` as typed, else of its first variant in the vocabulary: Unicode NFC, then
        case-folded (the most frequent case variant), then with spaces as ``_`` (how multi-word phrases are
        stored in the usual files, ``new_york``). Returns ``(row, how)``, ``how`` empty when found as typed."""
        r = self.find(word)
        if r is not None:
            return r, ""
        nfc = unicodedata.normalize("NFC", word)
        if nfc != word and (r := self.find(nfc)) is not None:
            return r, "NFC"
        if (r := self.find_folded(nfc)) is not None:
            return r, "case-folded"
        if " " in nfc.strip():
            joined = "_".join(nfc.split())
            if (r := self.find(joined)) is not None or (r := self.find_folded(joined)) is not None:
                return r, "spaces as _"
        return None

    def word_vector(self, word: str, *, subwords: bool = True, variants: bool = True) -> WordVector:
        """``word``'s unit vector: its row if it is in the vocabulary (or, with ``variants``, a variant's: see
        ``find_variant``); else, for a fastText model and unless ``subwords`` is false, the mean of its character
        n-gram rows, normalised; else ``UnknownWordError`` with close matches."""
        found = self.find_variant(word) if variants else ((r, "") if (r := self.find(word)) is not None else None)
        if found is not None:
            r, how = found
            return WordVector(word, np.asarray(self.unit[r], dtype=np.float32), r, form=how, matched=self.words[r])
        from wordkin.index.close_matches import close_matches

        close = close_matches(self.words, word)
        if subwords and self.subwords is not None:
            raw, known, total = self.subwords.vector(word)
            n = float(np.linalg.norm(raw))
            if total and n > 0:
                return WordVector(word, (raw / n).astype(np.float32), None, "subwords", known, total, tuple(close))
        raise UnknownWordError(word, close)


def open_vectors(
    path: str | os.PathLike[str],
    *,
    cache_root: str | os.PathLike[str] | None = None,
    use_cache: bool = True,
    trust_pickle: bool = False,
    progress: ProgressFn | None = None,
    cancel: CancelFn | None = None,
) -> VectorSet:
    """Open ``path``: map a valid cache, or parse the file and (unless ``use_cache`` is false) cache it."""
    src = Path(path)
    det = detect(src, trust_pickle=trust_pickle)
    fp, size, mtime = cache.content_fingerprint(src)
    if not use_cache:
        tmp = Path(tempfile.mkdtemp(prefix="wordkin-nocache-"))
        try:
            meta = _build(det, tmp, fp, size, mtime, progress, cancel)
            vs = _map(det.path, tmp, meta, fp, None)
        finally:
            cache.discard(tmp)  # the maps stay valid after the files are unlinked
        vs.cache_note = "off"
        return vs
    root = Path(cache_root) if cache_root is not None else locations.cache_root()
    key = cache.cache_key(src)
    final = root / key
    note = "built"
    if final.is_dir():
        found = cache.read_meta(final)
        reason = cache.validate(final, found, src, fp, size, mtime)
        if reason is None and found is not None:
            try:
                vs = _map(src, final, found, fp, final)
                vs.cache_note = "hit"
                return vs
            except (OSError, ValueError) as exc:
                reason = f"could not be mapped ({exc})"
        note = f"rebuilt: {reason}"
    try:
        with cache.build_dir(root, key) as tmp:
            meta = _build(det, tmp, fp, size, mtime, progress, cancel)
            cache.publish(tmp, final)
    except OSError as exc:
        # A read-only or full cache directory must not stop the user: parse without a cache, say so.
        vs = open_vectors(src, use_cache=False, trust_pickle=trust_pickle, progress=progress, cancel=cancel)
        vs.warnings.append(f"cache not written ({exc.strerror or exc}); working without a cache")
        return vs
    vs = _map(src, final, meta, fp, final)
    vs.cache_note = note
    if note != "built":
        vs.warnings.append(f"cache {note}")
    return vs


def open_cache_dir(dir_: Path) -> VectorSet:
    """Map an existing cache directory as it is (no source file needed): for the index builder's child process."""
    meta = cache.read_meta(dir_)
    if meta is None:
        raise UnreadableFileError(str(dir_), "is not a wordkin cache (meta.json missing or of another layout)")
    return _map(Path(meta.source), dir_, meta, meta.fingerprint, dir_)


def _build(
    det: Detected,
    dir_: Path,
    fp: str,
    size: int,
    mtime: int,
    progress: ProgressFn | None,
    cancel: CancelFn | None,
) -> cache.CacheMeta:
    t0 = time.perf_counter()
    words: list[str] = []
    norm_parts: list[np.ndarray] = []
    writer: cache.MatrixWriter | None = None
    try:
        for batch in read_batches(det, progress, workdir=dir_):
            check(cancel)
            if writer is None:
                writer = cache.MatrixWriter(dir_ / "matrix.npy", det.dims)
            vec = batch.vectors
            if vec.shape[1] != det.dims:
                raise UnreadableFileError(str(det.path), f"row width {vec.shape[1]} is not {det.dims}")
            norms = np.sqrt(np.einsum("ij,ij->i", vec, vec, dtype=np.float64)).astype(np.float32)
            safe = np.where(norms > 0, norms, 1.0).astype(np.float32)
            if vec.flags.owndata and vec.flags.writeable:
                vec /= safe[:, None]  # the reader's own fresh array: normalised in place, no copy
            else:
                vec = vec / safe[:, None]  # a view of a mapped or shared matrix: never written to
            writer.append(vec)
            norm_parts.append(norms)
            words.extend(batch.words)
    finally:
        if writer is not None:
            writer.close()
    if writer is None or not words:
        raise UnreadableFileError(str(det.path), "contains no vectors", line=2 if det.header_count is not None else 1)
    warnings = list(det.warnings)
    norms = np.concatenate(norm_parts)
    if det.header_count is not None and det.header_count != len(words) and det.kind != "npy":
        warnings.append(f"the header says {det.header_count} words but the file has {len(words)}; kept {len(words)}")
    first: dict[str, int] = {}
    for i, w in enumerate(words):
        first.setdefault(w, i)
    duplicates = len(words) - len(first)
    if len(first) != len(words):
        dup = len(words) - len(first)
        warnings.append(f"{dup} duplicate word{'s' if dup != 1 else ''}: kept the first occurrence of each")
        keep = np.zeros(len(words), dtype=bool)
        keep[np.fromiter(first.values(), dtype=np.int64, count=len(first))] = True
        _compact(dir_ / "matrix.npy", keep, det.dims, progress)
        norms = norms[keep]
        words = [w for w, k in zip(words, keep, strict=True) if k]
    zero = np.flatnonzero(norms == 0).astype(np.int64)
    if len(zero):
        warnings.append(f"{len(zero)} all-zero vector{'s' if len(zero) != 1 else ''}: kept, never ranked")
    np.save(dir_ / "norms.npy", norms)
    np.save(dir_ / "zero_rows.npy", zero)
    data, escaped = cache.encode_words(words)
    (dir_ / "words.txt").write_bytes(data)
    meta = cache.CacheMeta(
        source=str(det.path.resolve()),
        source_size=size,
        source_mtime_ns=mtime,
        fingerprint=fp,
        format=det.format_name,
        words=len(words),
        dims=det.dims,
        words_bytes=len(data),
        words_escaped=escaped,
        duplicates=duplicates,
        warnings=tuple(warnings),
        parse_seconds=round(time.perf_counter() - t0, 3),
        subwords=cache.SubwordMeta(*det.subwords) if det.subwords else None,
    )
    cache.write_meta(dir_, meta)
    return meta


def _compact(path: Path, keep: np.ndarray, dims: int, progress: ProgressFn | None) -> None:
    src = np.load(path, mmap_mode="r")
    tmp = path.with_name("matrix.compact.npy")
    w = cache.MatrixWriter(tmp, dims)
    step = 65536
    for s in range(0, len(keep), step):
        w.append(src[s : s + step][keep[s : s + step]])
    w.close()
    del src
    os.replace(tmp, path)


def _map(source: Path, dir_: Path, meta: cache.CacheMeta, fp: str, cache_dir: Path | None) -> VectorSet:
    unit = np.load(dir_ / "matrix.npy", mmap_mode="r")
    norms = np.load(dir_ / "norms.npy", allow_pickle=False)
    zero = np.load(dir_ / "zero_rows.npy", allow_pickle=False)
    words = cache.decode_words((dir_ / "words.txt").read_bytes(), meta.words_escaped, meta.words)
    if len(words) != unit.shape[0] or len(norms) != unit.shape[0]:
        raise ValueError("words, norms and matrix disagree in length")
    subwords = None
    if meta.subwords is not None:
        ngrams = np.load(dir_ / "ngrams.npy", mmap_mode="r")
        seen = np.load(dir_ / "ngrams_seen.npy", allow_pickle=False)
        if ngrams.shape != (meta.subwords.bucket, meta.dims) or seen.shape != (meta.subwords.bucket,):
            raise ValueError("the n-gram matrix does not match meta.json")
        subwords = SubwordTable(ngrams, seen, meta.subwords.minn, meta.subwords.maxn)
    return VectorSet(
        source=source,
        format=meta.format,
        words=words,
        unit=unit,
        norms=norms,
        zero_rows=zero,
        fingerprint=fp,
        cache_dir=cache_dir,
        meta=meta,
        warnings=list(meta.warnings),
        subwords=subwords,
    )


def from_arrays(words: list[str], vectors: np.ndarray, *, source: str = "<memory>") -> VectorSet:
    """A VectorSet held in memory (tests, small hand-made sets). Duplicate words are an error here."""
    vec = np.ascontiguousarray(vectors, dtype=np.float32)
    if vec.ndim != 2 or vec.shape[0] != len(words):
        raise WordkinError(f"expected ({len(words)}, dims) vectors, got {vec.shape}")
    if len(set(words)) != len(words):
        raise WordkinError("duplicate words")
    norms = np.linalg.norm(vec, axis=1).astype(np.float32)
    unit = vec / np.where(norms > 0, norms, 1)[:, None]
    return VectorSet(
        source=Path(source),
        format="memory",
        words=list(words),
        unit=np.ascontiguousarray(unit, dtype=np.float32),
        norms=norms,
        zero_rows=np.flatnonzero(norms == 0).astype(np.int64),
        fingerprint="memory",
        cache_dir=None,
        meta=cache.memory_meta(len(words), int(vec.shape[1])),
    )
