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
import hashlib
import json
import os
import shutil
import tempfile
from pathlib import Path
from typing import Any

import numpy as np

from . import __version__

#: Bump when the layout changes; older caches are rebuilt.
CACHE_FORMAT = 1
HEAD_TAIL = 1 << 20
NPY_HEADER_LEN = 128


def default_root() -> Path:
    env = os.environ.get("WORDKIN_CACHE")
    if env:
        return Path(env)
    from platformdirs import user_cache_dir

    return Path(user_cache_dir("wordkin", appauthor=False))


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
        self._f.write(np.ascontiguousarray(rows, dtype="<f4").tobytes())
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


def read_meta(dir_: Path) -> dict[str, Any] | None:
    try:
        with open(dir_ / "meta.json", encoding="utf-8") as f:
            meta = json.load(f)
    except (OSError, ValueError):
        return None
    return meta if isinstance(meta, dict) else None


def validate(
    dir_: Path, meta: dict[str, Any] | None, source: Path, fingerprint: str, size: int, mtime_ns: int
) -> str | None:
    """Return ``None`` if the cache in ``dir_`` may be trusted for ``source``, else the reason it may not."""
    if meta is None:
        return "meta.json is missing or unreadable"
    try:
        if meta.get("cache_format") != CACHE_FORMAT:
            return f"cache format {meta.get('cache_format')} is not {CACHE_FORMAT}"
        if meta.get("tool_version") != __version__:
            return f"written by wordkin {meta.get('tool_version')}, this is {__version__}"
        if meta.get("fingerprint") != fingerprint or meta.get("source_size") != size:
            return "the source file's content changed"
        if meta.get("source_mtime_ns") != mtime_ns:
            return "the source file was modified"
        n, d = int(meta["words"]), int(meta["dims"])
        expect = {
            "matrix.npy": NPY_HEADER_LEN + 4 * n * d,
            "norms.npy": None,
            "words.txt": int(meta["words_bytes"]),
            "zero_rows.npy": None,
        }
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
def build_dir(root: Path, key: str):  # type: ignore[no-untyped-def]
    tmp = new_build_dir(root, key)
    try:
        yield tmp
    except BaseException:
        discard(tmp)
        raise
