"""The annoy (angular) index: built in the background, saved in the cache, memory-mapped.

annoy only proposes candidates; ``search`` re-scores them exactly with numpy against the float32 unit matrix, so
every similarity shown is an exact cosine. Because of that, the index need not hold the full vectors: it is built
over a compact copy, each unit row projected on the top ``PROJECTED_DIMS`` principal axes of a seeded sample
(``projection.npy`` in the cache). annoy stores every item's vector in its file, so at 300 dimensions the
projection makes the index about a fifth of the matrix plus its trees, and each candidate it examines costs a
64-float dot product instead of a 300-float one. The candidates it proposes (ranked by the projected cosine) are
re-ranked exactly; how many is tuned with ``search_k`` on measured recall. Indexes built before the projection
(full vectors, one or two shard files) still load. annoy loads a truncated or foreign index file without
complaint, so ``load`` checks the file size, item count and dimensions against ``meta.json`` first. Building is
``index_build``; choosing ``search_k`` by measurement is ``tuning``; whether the file is in memory, ``residency``.
"""

from __future__ import annotations

import dataclasses
import enum
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

INDEX_FILE = "annoy.ann"
PROJECTION_FILE = "projection.npy"
#: Sets below this many floats (words x dims) are answered exactly: the scan is as fast as the index there. Measured
#: by the benchmark harness at 300 dimensions (index p50 against scan p50: 1.41x at 10,000 words, 0.51x at
#: 20,000): the two meet near 15,000 words, and the scan's work grows with words x dims.
EXACT_BELOW_FLOATS = 15_000 * 300


def small_set(n_words: int, dims: int) -> bool:
    """Whether an exact scan of the set is as fast as the index (``EXACT_BELOW_FLOATS``)."""
    return n_words * dims < EXACT_BELOW_FLOATS


#: The index holds each unit row projected on this many principal axes (sets with fewer dimensions keep theirs).
PROJECTED_DIMS = 64
#: Trees cost about this many bytes per item each (annoy, angular, measured at 64 dimensions); ``default_trees``
#: keeps the whole index file under the size of the float32 matrix.
TREE_BYTES_PER_ITEM = 12.5
MAX_TREES = 64
MIN_TREES = 16
#: Candidates re-ranked exactly per query, tried smallest first at each search_k.
CANDIDATE_LADDER = (100, 200, 400)
#: One candidate examined by annoy (a node read at random plus a short dot product) costs about this many times
#: one row of a 300-dimension exact scan (sequential): 120 ns against 30 ns in the harness at 400k words. The
#: index is used only where it examines few enough candidates to beat the scan by this rule on work.
EXAMINE_COST_ROWS = 4.0
#: Sets at most this big (words x dims) are built in-process: a child's start-up would cost more than the build.
IN_PROCESS_BELOW = 3_000_000
#: search_k values tried at build time, smallest first; the first with recall@10 >= TARGET_RECALL is kept.
SEARCH_K_LADDER = (
    1_000,
    2_000,
    5_000,
    10_000,
    15_000,
    20_000,
    25_000,
    30_000,
    40_000,
    60_000,
    80_000,
    120_000,
    160_000,
    320_000,
    640_000,
)
TARGET_RECALL = 0.99
#: The samples' recall must clear the target by this much.
RECALL_MARGIN = 0.002
#: Queries in each recall sample (frequent words and random words): with recall near 0.99, 500 queries x 10
#: neighbours estimate it to about +-0.003 (95%).
RECALL_SAMPLE = 500


def projected_dims(dims: int) -> int:
    return min(dims, PROJECTED_DIMS)


def node_bytes(dims: int) -> int:
    """Bytes of one annoy angular node holding a ``dims``-float vector (descendant count, two children, vector)."""
    return 12 + 4 * dims


def default_trees(dims: int) -> int:
    """As many trees as keep the index file within the size of the float32 matrix (``4 * dims`` bytes a word),
    between ``MIN_TREES`` and ``MAX_TREES``: at 300 dimensions, 64 trees over 64 projected dimensions make a file of
    0.87x the matrix (measured at 400k and 1M words). More trees need a smaller search_k for the same recall."""
    room = 4 * dims - node_bytes(projected_dims(dims))
    return int(max(MIN_TREES, min(MAX_TREES, room // TREE_BYTES_PER_ITEM)))


class IndexState(enum.Enum):
    EMPTY = "empty"
    BUILDING = "building"
    READY = "ready"
    REJECTED = "rejected"
    FAILED = "failed"


_POOL: Any = None


def _pool() -> Any:
    global _POOL
    if _POOL is None:
        from concurrent.futures import ThreadPoolExecutor

        _POOL = ThreadPoolExecutor(max_workers=max(2, min(4, os.cpu_count() or 2)), thread_name_prefix="annoy")
    return _POOL


class Shards:
    """One or several annoy indexes over the same items, queried in parallel (annoy releases the GIL while it
    searches). New builds write one file; indexes built before the projection had two shards, each holding part of
    the trees and getting its share of ``search_k``, their candidates pooled. They still load."""

    def __init__(self, indexes: list[Any]) -> None:
        self.indexes = indexes
        self.f = indexes[0].f

    def get_nns_by_vector(self, vec: Any, n: int, search_k: int = -1) -> list[int]:
        if len(self.indexes) == 1:
            return list(self.indexes[0].get_nns_by_vector(vec, n, search_k=search_k))
        share = max(1, search_k // len(self.indexes)) if search_k > 0 else -1
        parts = _pool().map(lambda ix: ix.get_nns_by_vector(vec, n, search_k=share), self.indexes)
        out: list[int] = []
        for p in parts:
            out.extend(p)
        return out

    def get_n_items(self) -> int:
        return min(int(ix.get_n_items()) for ix in self.indexes)

    def get_n_trees(self) -> int:
        return sum(ix.get_n_trees() for ix in self.indexes)

    def unload(self) -> None:
        for ix in self.indexes:
            ix.unload()


def shard_file(i: int) -> str:
    return INDEX_FILE if i == 0 else f"annoy.{i}.ann"


def open_shards(dims: int, paths: list[Path], prefault: bool = False) -> Shards:
    from annoy import AnnoyIndex

    out = []
    for p in paths:
        ix = AnnoyIndex(dims, "angular")
        ix.load(str(p), prefault=prefault)
        out.append(ix)
    return Shards(out)


def _open_checked(f: int, paths: list[Path], n_words: int) -> Shards:
    from wordkin.index.errors import WordkinError

    idx = open_shards(f, paths)
    if idx.get_n_items() != n_words or idx.f != f:
        idx.unload()
        raise WordkinError("the cached index does not match the vectors (`wordkin prepare` rebuilds it)")
    return idx


class LazyIndex:
    """An annoy index (``Shards``) opened at its first use: ``load`` does not map a file that is not in memory."""

    def __init__(self, opener: Any) -> None:
        self._opener = opener
        self._index: Any = None

    def __getattr__(self, name: str) -> Any:
        if self._index is None:
            self._index = self._opener()
        return getattr(self._index, name)


@dataclass
class AnnIndex:
    """A loaded annoy index with the ``search_k`` and candidate count chosen for it and its measured recall@10."""

    index: Any  # annoy.AnnoyIndex, or Shards
    n_trees: int
    search_k: int
    recall_at_10: float
    path: Path | None
    #: search_k for combined vectors (arithmetic, analogies), or None where the index cannot match an exact scan's
    #: top answer often enough (then those are answered exactly).
    calc_search_k: int | None = None
    #: ``(dims, projected dims)`` float32: unit vectors are projected on it before annoy sees them (None: the
    #: index holds the full vectors).
    projection: np.ndarray | None = None
    #: How many candidates a query asks annoy for (at least), to be re-ranked exactly.
    n_candidates: int = 0
    #: Words in the set (for the rule on work in ``worthwhile``).
    n_words: int = 0
    #: Whether the index file was found (mostly) in the page cache: None until checked (``is_warm``).
    warm: bool | None = dataclasses.field(default=None, compare=False)

    def project(self, vec: np.ndarray) -> np.ndarray:
        if self.projection is None:
            return vec
        out: np.ndarray = np.asarray(vec, dtype=np.float32) @ self.projection
        return out

    def candidates(self, vec: np.ndarray, n: int) -> list[int]:
        want = max(n, self.n_candidates)
        return list(self.index.get_nns_by_vector(self.project(vec), want, search_k=self.search_k))

    def with_search(self, search_k: int, n_candidates: int | None = None) -> AnnIndex:
        return dataclasses.replace(
            self, search_k=search_k, n_candidates=self.n_candidates if n_candidates is None else n_candidates
        )

    def for_expressions(self) -> AnnIndex | None:
        """The same index tuned for combined vectors, or None when expressions should be answered exactly."""
        if self.calc_search_k is None:
            return None
        return self.with_search(self.calc_search_k)

    def is_warm(self) -> bool:
        """Whether the index file is mostly in the page cache (``residency``): checked at each query until it is,
        then never again (a query then costs no system call)."""
        if self.warm or self.path is None:
            return True
        from wordkin.index.ann.residency import WARM_SHARE, resident_share

        share = resident_share(self.path)
        self.warm = share is None or share >= WARM_SHARE
        return self.warm

    @property
    def usable(self) -> bool:
        return self.recall_at_10 >= TARGET_RECALL + RECALL_MARGIN and self.worthwhile

    @property
    def worthwhile(self) -> bool:
        """Whether the index examines few enough candidates to beat an exact scan (a rule on work, so the same
        vectors always get the same answer; ``EXAMINE_COST_ROWS`` is measured by the harness)."""
        return worthwhile(self.search_k, self.n_words)


def worthwhile(search_k: int, n_words: int) -> bool:
    return n_words <= 0 or search_k * EXAMINE_COST_ROWS <= n_words


@dataclass(frozen=True)
class IndexLoad:
    """What ``load`` found: READY with the index, EMPTY (none built yet), or REJECTED with the reason."""

    state: IndexState
    index: AnnIndex | None = None
    reason: str = ""


def load(vs: Any) -> IndexLoad:
    """The cached index of ``vs`` if meta.json says ready and the files check out against it.

    annoy maps a truncated or foreign file without complaint, so the file sizes, item count and dimensions are
    checked first; a file that fails is REJECTED with the reason (the callers say so and rebuild it).
    """
    info = vs.meta.index
    if vs.cache_dir is None or info.state != "ready":
        return IndexLoad(IndexState.EMPTY)
    paths = [Path(vs.cache_dir) / shard_file(i) for i in range(info.shards)]
    try:
        if len(info.file_bytes) != info.shards:
            return IndexLoad(IndexState.REJECTED, reason="meta.json does not list every index file")
        for p, want in zip(paths, info.file_bytes, strict=True):
            if not p.is_file():
                return IndexLoad(IndexState.REJECTED, reason=f"{p.name} is missing")
            if p.stat().st_size != want:
                return IndexLoad(
                    IndexState.REJECTED, reason=f"{p.name} has {p.stat().st_size:,} bytes, expected {want:,}"
                )
        projection = None
        if info.projected_dims:
            projection = np.load(Path(vs.cache_dir) / PROJECTION_FILE, allow_pickle=False)
            if projection.shape != (vs.dims, info.projected_dims) or projection.dtype != np.float32:
                return IndexLoad(IndexState.REJECTED, reason=f"{PROJECTION_FILE} does not match meta.json")
        f = info.projected_dims or vs.dims
        from wordkin.index.ann.residency import WARM_SHARE, resident_share

        share = resident_share(paths[0])
        warm = share is None or share >= WARM_SHARE
        if warm:
            idx: Any = open_shards(f, paths)
            if idx.get_n_items() != vs.n or idx.f != f:
                idx.unload()
                return IndexLoad(IndexState.REJECTED, reason="the index does not match the vectors")
        else:
            # Not in memory: queries are answered by the scan for now, so annoy maps the file only once it is
            # used (and checks it then); a cold query touches nothing of the index but what ``residency`` asks.
            idx = LazyIndex(lambda: _open_checked(f, paths, vs.n))
        ann = AnnIndex(
            idx,
            info.trees,
            info.search_k,
            info.recall_at_10,
            paths[0],
            info.calc_search_k or None,
            projection=projection,
            n_candidates=info.candidates,
            n_words=vs.n,
            warm=warm,
        )
        return IndexLoad(IndexState.READY, ann)
    except (OSError, ValueError, TypeError) as exc:
        return IndexLoad(IndexState.REJECTED, reason=f"unreadable ({exc})")
