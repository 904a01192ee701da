"""How much of a file is in the page cache (``mincore(2)``, or ``RWF_NOWAIT`` reads), and reading a file into it.

After the OS has dropped its caches (a reboot, memory pressure, a long idle night), a query through the annoy index
faults in pages all over the index file, one random read at a time, and is several times slower than an exact scan,
which reads the matrix in order. So while the index file is mostly not resident, queries are answered exactly; the
console reads the file in with a background worker (with progress) and then uses the index. A command-line query
on a cold index is answered exactly and leaves the index as it is: ``posix_fadvise(WILLNEED)`` was tried and read
under 1% of a 1 GB index file in 3 seconds here, and reading the whole file would delay the shell's prompt.
"""

from __future__ import annotations

import ctypes
import mmap
import os
from collections.abc import Callable
from pathlib import Path

import numpy as np

#: The index counts as warm once this share of its file's pages is resident.
WARM_SHARE = 0.8
#: Pages read (from the page cache only) to estimate how much of a file is there.
PROBES = 64
_CHUNK = 16 * 2**20


def resident_share(path: Path, probes: int = PROBES) -> float | None:
    """The share of ``path``'s pages in the page cache, or None where the system cannot tell.

    Asked with ``mincore(2)`` on a mapping of the file (mapping reads none of it), which has no side effect.
    Where that is missing, up to ``probes`` pages spread over the file are read with ``RWF_NOWAIT``, which returns
    data only from the page cache and fails with ``EAGAIN`` instead of waiting for the disk; but a miss still
    starts readahead of the page it asked for, so a second probe of a cold file finds its own probes resident
    (measured at 2M words: the second check called a cold 2 GB index warm, and the query faulted in 330 MB of it).
    """
    try:
        size = path.stat().st_size
    except OSError:
        return None
    if size == 0:
        return 1.0
    pages = (size + mmap.PAGESIZE - 1) // mmap.PAGESIZE
    share = _mincore_share(path, size, pages)
    return share if share is not None else _probe_nowait(path, pages, min(pages, probes))


def _probe_nowait(path: Path, pages: int, probes: int) -> float | None:
    flag = getattr(os, "RWF_NOWAIT", None)
    preadv = getattr(os, "preadv", None)
    if flag is None or preadv is None:
        return None
    buf = bytearray(1)
    hits = 0
    fd = os.open(path, os.O_RDONLY)
    try:
        for i in range(probes):
            page = i * pages // probes
            try:
                hits += preadv(fd, [buf], page * mmap.PAGESIZE, flag) > 0
            except BlockingIOError:
                pass
            except OSError:
                return None  # RWF_NOWAIT not supported here (EOPNOTSUPP, EINVAL)
    finally:
        os.close(fd)
    return hits / probes


def _mincore_share(path: Path, size: int, pages: int) -> float | None:
    try:
        libc = ctypes.CDLL(None, use_errno=True)
        mincore = libc.mincore
    except (OSError, AttributeError):
        return None
    mapped = np.memmap(path, dtype=np.uint8, mode="r")  # mapping a file reads none of it
    try:
        vec = (ctypes.c_ubyte * pages)()
        rc = mincore(ctypes.c_void_p(mapped.ctypes.data), ctypes.c_size_t(size), vec)
        if rc != 0:
            return None
        flags = np.frombuffer(bytes(vec), dtype=np.uint8)
        return float(np.mean(flags & 1))
    finally:
        del mapped  # unmapped with its last reference


def read_in(path: Path, progress: Callable[[int, int], None], cancel: Callable[[], bool]) -> bool:
    """Read ``path`` from start to end (into the page cache), reporting bytes read; False when cancelled."""
    size = path.stat().st_size
    done = 0
    with open(path, "rb", buffering=0) as f:
        while True:
            if cancel():
                return False
            chunk = f.read(_CHUNK)
            if not chunk:
                return True
            done += len(chunk)
            progress(done, size)
