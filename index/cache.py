"""The on-disk cache of a parsed vector set.

Layout: ``<root>/<key>/`` (key: a hash of the source's absolute path) with ``matrix.npy`` (unit-normalised
float32, shape ``(n_words, dims)``, opened with ``mmap_mode="r"``), ``norms.npy`` (the original norms),
``zero_rows.npy``, ``words.txt`` (UTF-8, one per line) and
``meta.json`` written last. A cache is built in a temporary sibling directory and renamed into place, so a reader
sees either a whole cache or none. The annoy index (``annoy.ann``) is added later; its settings and measured recall
go into ``meta.json`` (rewritten atomically). Every open validates the cache against the source file and the
files' sizes; a cache that fails is rebuilt, never trusted.
"""

from __future__ import annotations

import contextlib
import dataclasses
import hashlib
import json
import os
import shutil
import tempfile
from collections.abc import Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from wordkin.index import __version__

#: Bump when the layout changes; older caches are rebuilt.
CACHE_FORMAT = 1
HEAD_TAIL = 1 << 20
NPY_HEADER_LEN = 128


@dataclass(frozen=True)
class IndexMeta:
    """What ``meta.json`` says of the annoy index: ``state`` is "empty" or "ready" (a loaded index is checked
    against these figures before it is trusted)."""

    state: str = "empty"
    trees: int = 0
    search_k: int = 0
    recall_at_10: float = 0.0  # the lower of the two samples' recall@10 (what the console and the tuning use)
    recall_frequent: float = 0.0  # recall@10 with the most frequent words as queries
    recall_random: float = 0.0  # recall@10 with uniformly drawn words as queries
    missing_share: float = 0.0  # share of the sample's queries that lose at least one true neighbour
    recall_sample: int = 0
    query_ms_p50: float = 0.0
    calc_search_k: int | None = None
    calc_top1_agreement: float = 0.0
    build_seconds: float = 0.0
    shards: int = 1
    file_bytes: tuple[int, ...] = ()
    seed: int = 1
    projected_dims: int = 0  # dimensions of the vectors in the index (0: the full vectors, as older builds made)
    candidates: int = 0  # candidates re-ranked exactly per query (0: k + excluded + 10, as older builds did)


@dataclass(frozen=True)
class SubwordMeta:
    """A fastText model's character n-grams: ``ngrams.npy`` holds ``bucket`` rows (raw float32)."""

    minn: int
    maxn: int
    bucket: int


@dataclass(frozen=True)
class CacheMeta:
    """The typed content of ``meta.json``; this module is its only reader and writer."""

    source: str
    source_size: int
    source_mtime_ns: int
    fingerprint: str
    format: str
    words: int
    dims: int
    words_bytes: int = 0
    words_escaped: bool = False
    duplicates: int = 0  # duplicate words dropped at load (the first of each kept)
    warnings: tuple[str, ...] = ()
    parse_seconds: float = 0.0
    index: IndexMeta = field(default_factory=IndexMeta)
    subwords: SubwordMeta | None = None
    cache_format: int = CACHE_FORMAT
    tool_version: str = __version__

    def with_index(self, index: IndexMeta) -> CacheMeta:
        return dataclasses.replace(self, index=index)

    def to_json(self) -> dict[str, Any]:
        d = dataclasses.asdict(self)
        d["warnings"] = list(self.warnings)
        d["index"]["file_bytes"] = list(self.index.file_bytes)
        return d

    @classmethod
    def from_json(cls, d: Any) -> CacheMeta:
        """Raises ``ValueError`` (or ``TypeError``/``KeyError``) when ``d`` is not a meta.json of this layout."""
        if not isinstance(d, dict) or not isinstance(d.get("index"), dict):
            raise ValueError("meta.json is not an object with an index section")
        idx = d["index"]
        known = {f.name for f in dataclasses.fields(IndexMeta)}
        fb = idx.get("file_bytes", ())
        index = IndexMeta(
            **{k: v for k, v in idx.items() if k in known and k != "file_bytes"},
            file_bytes=tuple(int(x) for x in (fb if isinstance(fb, list) else [fb])),
        )
        sw = d.get("subwords")
        subwords = SubwordMeta(int(sw["minn"]), int(sw["maxn"]), int(sw["bucket"])) if isinstance(sw, dict) else None
        known = {f.name for f in dataclasses.fields(cls)} - {"index", "warnings", "subwords"}
        missing = {"source", "fingerprint", "format", "words", "dims"} - set(d)
        if missing:
            raise KeyError(", ".join(sorted(missing)))
        meta = cls(
            **{k: v for k, v in d.items() if k in known},
            warnings=tuple(str(w) for w in d.get("warnings", [])),
            index=index,
            subwords=subwords,
        )
        for name, typ in (("words", int), ("dims", int), ("source_size", int), ("source_mtime_ns", int)):
            if not isinstance(getattr(meta, name), typ):
                raise TypeError(f"{name} is not a whole number")
        return meta


def memory_meta(words: int, dims: int) -> CacheMeta:
    """The metadata of a set held in memory (no file, no cache)."""
    return CacheMeta(
        source="<memory>",
        source_size=0,
        source_mtime_ns=0,
        fingerprint="memory",
        format="memory",
        words=words,
        dims=dims,
    )


def write_meta(dir_: Path, meta: CacheMeta) -> None:
    write_json_atomic(dir_ / "meta.json", meta.to_json())


def content_fingerprint(path: Path) -> tuple[str, int, int]:
    """``(hash, size, mtime_ns)``: blake2b of the size and the first and last MiB (common practice for big files)."""
    st = path.stat()
    h = hashlib.blake2b(digest_size=16)
    h.update(str(st.st_size).encode())
    with open(path, "rb") as f:
        h.update(f.read(HEAD_TAIL))
        if st.st_size > HEAD_TAIL:
            f.seek(max(HEAD_TAIL, st.st_size - HEAD_TAIL))
            h.update(f.read(HEAD_TAIL))
    return h.hexdigest(), st.st_size, st.st_mtime_ns


def cache_key(path: Path) -> str:
    """One cache directory per source path; a changed file replaces its cache instead of piling up new ones."""
    h = hashlib.blake2b(digest_size=10)
    h.update(str(path.resolve()).encode("utf-8", "surrogateescape"))
    return h.hexdigest()


def write_json_atomic(path: Path, data: dict[str, Any]) -> None:
    tmp = path.with_name(f".{path.name}.{os.getpid()}.tmp")
    with open(tmp, "w", encoding="utf-8") as f:
        json.dump(data, f, indent=1, sort_keys=True)
        f.flush()
        os.fsync(f.fileno())
    os.replace(tmp, path)


def npy_header(shape: tuple[int, int]) -> bytes:
    """A version 1.0 ``.npy`` header for little-endian float32 C order, padded to a fixed length.

    The fixed length lets the writer reserve the header before the row count is known (format: numpy's
    ``numpy.lib.format`` documentation; the padding with spaces before the newline is allowed there).
    """
    d = "{'descr': '<f4', 'fortran_order': False, 'shape': (%d, %d), }" % shape  # noqa: UP031 - braces
    body_len = NPY_HEADER_LEN - 10
    d = d.ljust(body_len - 1) + "\n"
    out = b"\x93NUMPY\x01\x00" + body_len.to_bytes(2, "little") + d.encode("latin1")
    assert len(out) == NPY_HEADER_LEN
    return out


class MatrixWriter:
    """Append float32 rows to a ``.npy`` file whose row count is written at the end."""

    def __init__(self, path: Path, dims: int) -> None:
        self.path = path
        self.dims = dims
        self.rows = 0
        self._f = open(path, "wb")  # noqa: SIM115
        self._f.write(npy_header((0, dims)))

    def append(self, rows: np.ndarray) -> None:
        self._f.write(np.ascontiguousarray(rows, dtype="<f4").data.cast("B"))
        self.rows += len(rows)

    def close(self) -> None:
        self._f.seek(0)
        self._f.write(npy_header((self.rows, self.dims)))
        self._f.flush()
        os.fsync(self._f.fileno())
        self._f.close()


def encode_words(words: list[str]) -> tuple[bytes, bool]:
    """Words as UTF-8 lines. Words holding a newline or backslash (binary files allow them) are escaped."""
    text = "\n".join(words)
    if text.count("\n") == len(words) - 1 and "\\" not in text:
        return text.encode("utf-8", "surrogatepass"), False
    esc = [w.replace("\\", "\\\\").replace("\n", "\\n").replace("\r", "\\r") for w in words]
    return "\n".join(esc).encode("utf-8", "surrogatepass"), True


def decode_words(data: bytes, escaped: bool, count: int) -> list[str]:
    words = data.decode("utf-8", "surrogatepass").split("\n") if count else []
    if escaped:
        import re

        table = {"\\\\": "\\", "\\n": "\n", "\\r": "\r"}
        rx = re.compile(r"\\[\\nr]")
        words = [rx.sub(lambda m: table[m.group(0)], w) if "\\" in w else w for w in words]
    return words


def new_build_dir(root: Path, key: str) -> Path:
    root.mkdir(parents=True, exist_ok=True)
    return Path(tempfile.mkdtemp(prefix=f".{key}.building-", dir=root))


def publish(tmp: Path, final: Path) -> None:
    """Move a finished build directory into place, replacing any stale cache."""
    if final.exists():
        stale = final.with_name(f".{final.name}.stale-{os.getpid()}")
        os.replace(final, stale)
        shutil.rmtree(stale, ignore_errors=True)
    os.replace(tmp, final)


def discard(tmp: Path) -> None:
    shutil.rmtree(tmp, ignore_errors=True)


def read_meta(dir_: Path) -> CacheMeta | None:
    """The cache's metadata, or None when it is missing or not of this layout."""
    try:
        with open(dir_ / "meta.json", encoding="utf-8") as f:
            return CacheMeta.from_json(json.load(f))
    except (OSError, ValueError, TypeError, KeyError):
        return None


def validate(
    dir_: Path, meta: CacheMeta | None, source: Path, fingerprint: str, size: int, mtime_ns: int
) -> str | None:
    """Return ``None`` if the cache in ``dir_`` may be trusted for ``source``, else the reason it may not."""
    if meta is None:
        return "meta.json is missing or unreadable"
    try:
        if meta.cache_format != CACHE_FORMAT:
            return f"cache format {meta.cache_format} is not {CACHE_FORMAT}"
        if meta.tool_version != __version__:
            return f"written by wordkin {meta.tool_version}, this is {__version__}"
        if meta.fingerprint != fingerprint or meta.source_size != size:
            return "the source file's content changed"
        if meta.source_mtime_ns != mtime_ns:
            return "the source file was modified"
        n, d = int(meta.words), int(meta.dims)
        expect = {
            "matrix.npy": NPY_HEADER_LEN + 4 * n * d,
            "norms.npy": None,
            "words.txt": int(meta.words_bytes),
            "zero_rows.npy": None,
        }
        if meta.subwords is not None:
            expect["ngrams.npy"] = NPY_HEADER_LEN + 4 * meta.subwords.bucket * d
            expect["ngrams_seen.npy"] = None
        for name, want in expect.items():
            p = dir_ / name
            if not p.is_file():
                return f"{name} is missing"
            if want is not None and p.stat().st_size != want:
                return f"{name} has {p.stat().st_size} bytes, expected {want}"
        with open(dir_ / "matrix.npy", "rb") as f:
            head = f.read(NPY_HEADER_LEN)
        if head != npy_header((n, d)):
            return "matrix.npy header does not match meta.json"
    except (KeyError, TypeError, ValueError) as exc:
        return f"meta.json is inconsistent ({exc})"
    return None


@contextlib.contextmanager
def build_dir(root: Path, key: str) -> Iterator[Path]:
    tmp = new_build_dir(root, key)
    try:
        yield tmp
    except BaseException:
        discard(tmp)
        raise
