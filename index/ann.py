"""The annoy (angular) index over the unit matrix: built in the background, saved in the cache, memory-mapped.

annoy only proposes candidates; ``search`` re-scores them exactly with numpy, so every similarity shown is an
exact cosine. annoy loads a truncated or foreign index file without complaint, so ``load`` checks the file size,
item count and dimensions against ``meta.json`` first. Building is ``index_build``; choosing ``search_k`` by
measurement is ``tuning``.
"""

from __future__ import annotations

import enum
import os
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

INDEX_FILE = "annoy.ann"
#: Sets at most this big are answered exactly: a full scan is as fast as annoy plus re-ranking there.
EXACT_BELOW_WORDS = 20_000
#: Sets at most this big (words x dims) are built in-process: a child's start-up would cost more than the build.
IN_PROCESS_BELOW = 3_000_000
#: search_k values tried at build time, smallest first; the first with recall@10 >= TARGET_RECALL is kept.
SEARCH_K_LADDER = (
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
)
TARGET_RECALL = 0.99
#: The samples' recall must clear the target by this much.
RECALL_MARGIN = 0.002
#: Queries in each recall sample (frequent words and random words): with recall near 0.99, 500 queries x 10
#: neighbours estimate it to about +-0.003 (95%).
RECALL_SAMPLE = 500


def default_trees(n_words: int) -> int:
    """Trees by set size, chosen from the benchmark harness's measurements (tests/bench).

    At 400k x 300, 50 trees needed search_k 40,000 for recall@10 0.99 (10 ms, a quarter of an exact scan); 100 trees
    reach it at 30,000 (7.8 ms, under a fifth) for 2.4x the build time, which runs in the background.
    """
    if n_words <= 200_000:
        return 40
    return 100


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
    """Several annoy indexes over the same items, queried in parallel (annoy releases the GIL while it searches).

    Each shard holds part of the trees and gets its share of ``search_k``; their candidates are pooled. Two
    shards of 50 trees answer like one of 100 trees in about half the time on two cores (tests/bench).
    """

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


def _open_shards(dims: int, paths: list[Path], prefault: bool = False) -> Shards:
    from annoy import AnnoyIndex

    out = []
    for p in paths:
        ix = AnnoyIndex(dims, "angular")
        ix.load(str(p), prefault=prefault)
        out.append(ix)
    return Shards(out)


@dataclass
class AnnIndex:
    """A loaded annoy index with the ``search_k`` chosen for it and its measured recall@10."""

    index: Any  # annoy.AnnoyIndex
    n_trees: int
    search_k: int
    recall_at_10: float
    path: Path | None
    #: search_k for combined vectors (arithmetic, analogies), or None where the index cannot match an exact scan's
    #: top answer often enough (then those are answered exactly).
    calc_search_k: int | None = None

    def candidates(self, vec: np.ndarray, n: int) -> list[int]:
        return list(self.index.get_nns_by_vector(vec, n, search_k=self.search_k))

    def for_expressions(self) -> AnnIndex | None:
        """The same index tuned for combined vectors, or None when expressions should be answered exactly."""
        if self.calc_search_k is None:
            return None
        return AnnIndex(self.index, self.n_trees, self.calc_search_k, self.recall_at_10, self.path, self.calc_search_k)

    @property
    def usable(self) -> bool:
        return self.recall_at_10 >= TARGET_RECALL + RECALL_MARGIN


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
        idx = _open_shards(vs.dims, paths)
        if idx.get_n_items() != vs.n or idx.f != vs.dims:
            idx.unload()
            return IndexLoad(IndexState.REJECTED, reason="the index does not match the vectors")
        ann = AnnIndex(idx, info.trees, info.search_k, info.recall_at_10, paths[0], info.calc_search_k or None)
        return IndexLoad(IndexState.READY, ann)
    except (OSError, ValueError, TypeError) as exc:
        return IndexLoad(IndexState.REJECTED, reason=f"unreadable ({exc})")
