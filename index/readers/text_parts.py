"""Parse a large uncompressed text file on several cores: the file is cut at line starts into one part per core,
each part runs its own pyarrow streaming reader in a thread (pyarrow parses without the GIL; its streaming reader
alone keeps one core busy, measured in ``tests/bench``), and the rows still come out in file order.

The first part's rows are handed on as they are parsed (its thread parses while the caller normalises and writes);
the later parts' rows wait in an unlinked spill file (in the cache being built, or the temp directory), so memory
stays at a few blocks per part however large the file is.
"""

from __future__ import annotations

import io
import os
import queue
import tempfile
import threading
from collections.abc import Callable, Iterator
from pathlib import Path

import numpy as np

from wordkin.index.progress import ProgressFn
from wordkin.index.readers.base import Batch, Detected, decode_words
from wordkin.index.readers.text_arrow import FastPathGaveUp, arrow_rows

#: Files smaller than this are read in one part: the threads would cost more than they bring.
SPLIT_MIN_BYTES = 64 << 20
#: At most this many parts, whatever the core count.
MAX_PARTS = 4


def cores() -> int:
    try:
        return len(os.sched_getaffinity(0))
    except (AttributeError, OSError):
        return os.cpu_count() or 1


def split_ranges(det: Detected, total: int, parts: int | None = None) -> list[tuple[int, int]]:
    """Byte ranges ``[start, end)`` of the data rows, each starting at a line start; just ``[(0, total)]`` (read
    the file as one stream) when it is compressed, small, or the machine has one core."""
    parts = min(cores(), MAX_PARTS) if parts is None else parts
    if det.compression is not None or parts < 2 or total < SPLIT_MIN_BYTES:
        return [(0, total)]
    with open(det.path, "rb") as f:
        first = len(f.readline()) if det.header_count is not None else 0
        cuts = [first]
        for i in range(1, parts):
            f.seek(max(first + (total - first) * i // parts - 1, cuts[-1]))
            f.readline()  # to the end of the line the cut falls in
            at = f.tell()
            if cuts[-1] < at < total:
                cuts.append(at)
    return list(zip(cuts, [*cuts[1:], total], strict=True))


class _Range(io.RawIOBase):
    """Bytes ``[start, end)`` of a file, read with ``pread`` (a thread of its own, no shared file position)."""

    def __init__(self, path: Path, start: int, end: int) -> None:
        self._fd = os.open(path, os.O_RDONLY)
        self.pos = start
        self.end = end

    def readable(self) -> bool:
        return True

    def readinto(self, buf: memoryview) -> int:  # type: ignore[override]
        want = min(len(buf), self.end - self.pos)
        if want <= 0:
            return 0
        got = os.preadv(self._fd, [memoryview(buf)[:want]], self.pos)
        self.pos += got
        return got

    def close(self) -> None:
        if not self.closed:
            os.close(self._fd)
        super().close()


class _Part(threading.Thread):
    """Parse one part on a thread of its own. The first part (``live``) hands its blocks on through a short queue;
    a later one writes them to a spill file, which ``spilled()`` reads back in order."""

    def __init__(
        self, det: Detected, start: int, end: int, block_size: int, spill_dir: Path | None, live: bool
    ) -> None:
        super().__init__(daemon=True, name=f"wordkin-parse-{start}")
        self.det = det
        self.range = _Range(det.path, start, end)
        self.start_byte = start
        self.block_size = block_size
        self.live: queue.Queue[tuple[list[bytes], np.ndarray] | None] | None = queue.Queue(4) if live else None
        self.spill = None if live else tempfile.TemporaryFile(dir=spill_dir, prefix="wordkin-part-")  # noqa: SIM115
        self.index: list[tuple[list[bytes], int]] = []  # (raw words, rows) per spilled block
        self.stop = threading.Event()
        self.error: BaseException | None = None
        self.gave_up = False

    @property
    def bytes_done(self) -> int:
        return self.range.pos - self.start_byte

    def run(self) -> None:
        try:
            stream = io.BufferedReader(self.range, 1 << 20)
            for raw_words, vec in arrow_rows(self.det, stream, self.block_size, threads=False):
                if self.stop.is_set():
                    return
                if self.live is not None:
                    self._hand_on((raw_words, vec))
                else:
                    assert self.spill is not None
                    self.spill.write(np.ascontiguousarray(vec).data.cast("B"))
                    self.index.append((raw_words, len(raw_words)))
        except FastPathGaveUp:
            self.gave_up = True
        except BaseException as exc:  # noqa: BLE001 - handed to the reading thread, raised there
            self.error = exc
        finally:
            if self.live is not None:
                self._hand_on(None)

    def _hand_on(self, item: tuple[list[bytes], np.ndarray] | None) -> None:
        assert self.live is not None
        while not self.stop.is_set():
            try:
                self.live.put(item, timeout=0.1)
                return
            except queue.Full:
                continue

    def handed_on(self, report: Callable[[], None]) -> Iterator[tuple[list[bytes], np.ndarray]]:
        """The live part's blocks as they come."""
        assert self.live is not None
        while True:
            try:
                item = self.live.get(timeout=0.1)
            except queue.Empty:
                report()
                continue
            if item is None:
                return
            yield item
            report()

    def spilled(self) -> Iterator[tuple[list[bytes], np.ndarray]]:
        assert self.spill is not None
        self.spill.flush()
        fd = self.spill.fileno()
        offset = 0
        dims = self.det.dims
        for raw_words, n in self.index:
            vec = np.empty((n, dims), dtype=np.float32)
            got = os.preadv(fd, [vec.data.cast("B")], offset)
            if got != vec.nbytes:
                raise OSError(f"spill file short: {got} of {vec.nbytes} bytes")
            offset += vec.nbytes
            yield raw_words, vec

    def finish(self, report: Callable[[], None]) -> None:
        """Wait for the thread; raise what it met."""
        while self.is_alive():
            self.join(0.1)
            report()
        if self.error is not None:
            raise self.error

    def close(self) -> None:
        self.stop.set()
        if self.ident is not None and self.is_alive():
            self.join()
        if self.spill is not None:
            self.spill.close()
        self.range.close()


def read_parts(
    det: Detected,
    ranges: list[tuple[int, int]],
    block_size: int,
    progress: ProgressFn | None,
    bad_utf8: list[int],
    spill_dir: Path | None,
) -> Iterator[Batch]:
    """Rows of every range in file order; raises ``FastPathGaveUp`` after the last regular row handed on."""
    total = ranges[-1][1]
    parts: list[_Part] = []
    row = 0

    def report() -> None:
        if progress is not None:
            progress(sum(p.bytes_done for p in parts), total, "parsing")

    try:
        for i, (a, b) in enumerate(ranges):
            parts.append(_Part(det, a, b, block_size, spill_dir, live=i == 0))
        for p in parts:
            p.start()
        for i, p in enumerate(parts):
            blocks = p.handed_on(report) if i == 0 else p.spilled()
            if i:
                p.finish(report)
            for raw_words, vec in blocks:
                yield Batch(decode_words(raw_words, det.warnings, bad_utf8), vec, row)
                row += len(raw_words)
            if i == 0:
                p.finish(report)
            if p.gave_up:
                raise FastPathGaveUp
    finally:
        for p in parts:
            p.close()
