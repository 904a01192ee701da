"""The annoy (angular) index over the unit matrix: built in the background, saved in the cache, memory-mapped.

annoy only proposes candidates; ``search`` re-scores them exactly with numpy, so every similarity shown is an
exact cosine. annoy loads a truncated or foreign index file without complaint, so ``load`` checks the file size,
item count and dimensions against ``meta.json`` first. ``build()`` releases the GIL but reports nothing and cannot
be interrupted: large sets are built in a child process (spawned, so it shares no threads with a running app), so
that a cancel or a quit never waits for it.
"""

from __future__ import annotations

import enum
import multiprocessing as mp
import os
import time
from dataclasses import dataclass
from pathlib import Path
from typing import Any

import numpy as np

from . import cache
from .errors import CancelledError, WordkinError
from .progress import CancelFn, ProgressFn

INDEX_FILE = "annoy.ann"
#: Sets at most this big are answered exactly: a full scan is as fast as annoy plus re-ranking there.
EXACT_BELOW_WORDS = 20_000
#: Sets at most this big (words x dims) are built in-process: a child's start-up would cost more than the build.
IN_PROCESS_BELOW = 3_000_000
#: search_k values tried at build time, smallest first; the first with recall@10 >= TARGET_RECALL is kept.
SEARCH_K_LADDER = (2_000, 5_000, 10_000, 20_000, 40_000, 80_000, 160_000, 320_000)
TARGET_RECALL = 0.99
RECALL_SAMPLE = 250


def default_trees(n_words: int) -> int:
    """Trees by set size, chosen from the benchmark harness's measurements (tests/bench)."""
    if n_words <= 200_000:
        return 40
    return 50


class IndexState(enum.Enum):
    EMPTY = "empty"
    BUILDING = "building"
    READY = "ready"
    FAILED = "failed"


@dataclass
class AnnIndex:
    """A loaded annoy index with the ``search_k`` chosen for it and its measured recall@10."""

    index: Any  # annoy.AnnoyIndex
    n_trees: int
    search_k: int
    recall_at_10: float
    path: Path | None

    def candidates(self, vec: np.ndarray, n: int) -> list[int]:
        return self.index.get_nns_by_vector(vec, n, search_k=self.search_k)

    @property
    def usable(self) -> bool:
        return self.recall_at_10 >= TARGET_RECALL


def load(vs: Any) -> AnnIndex | None:
    """The cached index of ``vs`` if its meta says ready and the file checks out; else ``None``."""
    if vs.cache_dir is None:
        return None
    info = vs.meta.get("index") or {}
    if info.get("state") != "ready":
        return None
    path = Path(vs.cache_dir) / INDEX_FILE
    try:
        if path.stat().st_size != int(info["file_bytes"]):
            vs.warnings.append(
                "annoy index file has the wrong size; ignored (rebuild with `wordkin prepare`)"
            )
            return None
        from annoy import AnnoyIndex

        idx = AnnoyIndex(vs.dims, "angular")
        idx.load(str(path), prefault=False)
        if idx.get_n_items() != vs.n or idx.f != vs.dims:
            idx.unload()
            vs.warnings.append("annoy index does not match the vectors; ignored")
            return None
        return AnnIndex(idx, int(info["trees"]), int(info["search_k"]), float(info["recall_at_10"]), path)
    except (OSError, KeyError, ValueError, TypeError) as exc:
        vs.warnings.append(f"annoy index unreadable ({exc}); ignored")
        return None


def _add_and_build(matrix_path: str, out: str, dims: int, n_trees: int, seed: int, report: Any) -> None:
    from annoy import AnnoyIndex

    unit = np.load(matrix_path, mmap_mode="r")
    idx = AnnoyIndex(dims, "angular")
    idx.set_seed(seed)
    idx.on_disk_build(out)
    n = unit.shape[0]
    step = 5000
    for s in range(0, n, step):
        block = np.asarray(unit[s : s + step], dtype=np.float32)
        for j in range(len(block)):
            idx.add_item(s + j, block[j])
        report("adding", min(n, s + step), n)
    report("building trees", 0, 0)
    idx.build(n_trees, n_jobs=-1)
    idx.unload()


def _child(matrix_path: str, out: str, dims: int, n_trees: int, seed: int, conn: Any) -> None:
    try:
        _add_and_build(matrix_path, out, dims, n_trees, seed, lambda st, d, t: conn.send(("p", st, d, t)))
        conn.send(("done",))
    except BaseException as exc:  # noqa: BLE001 - reported to the parent, which raises it
        conn.send(("error", f"{type(exc).__name__}: {exc}"))
    finally:
        conn.close()


def build(
    vs: Any,
    *,
    n_trees: int | None = None,
    seed: int = 1,
    progress: ProgressFn | None = None,
    cancel: CancelFn | None = None,
    in_process: bool | None = None,
) -> AnnIndex:
    """Build, measure and save the index of a cached ``vs``; record trees, search_k and recall in meta.json."""
    if vs.cache_dir is None:
        raise WordkinError("an index needs the cache (it is off): drop --no-cache")
    cache_dir = Path(vs.cache_dir)
    trees = n_trees or default_trees(vs.n)
    tmp = cache_dir / f".{INDEX_FILE}.{os.getpid()}.tmp"
    matrix = str(cache_dir / "matrix.npy")
    report = progress or (lambda d, t, s: None)
    t0 = time.perf_counter()
    if in_process is None:
        in_process = vs.n * vs.dims <= IN_PROCESS_BELOW
    try:
        if in_process:
            _add_and_build(
                matrix, str(tmp), vs.dims, trees, seed, lambda st, d, t: report(d, t, f"index: {st}")
            )
        else:
            _build_in_child(matrix, str(tmp), vs.dims, trees, seed, report, cancel)
        build_s = time.perf_counter() - t0
        from annoy import AnnoyIndex

        idx = AnnoyIndex(vs.dims, "angular")
        idx.load(str(tmp))
        report(0, 0, "index: measuring recall@10")
        search_k, recall, p50 = choose_search_k(vs, idx, cancel=cancel)
        idx.unload()
        final = cache_dir / INDEX_FILE
        os.replace(tmp, final)
    except BaseException:
        tmp.unlink(missing_ok=True)
        raise
    info = {
        "state": "ready",
        "trees": trees,
        "search_k": search_k,
        "recall_at_10": round(recall, 4),
        "recall_sample": RECALL_SAMPLE,
        "query_ms_p50": round(p50, 3),
        "build_seconds": round(build_s, 2),
        "file_bytes": final.stat().st_size,
        "seed": seed,
    }
    vs.meta["index"] = info
    cache.write_json_atomic(cache_dir / "meta.json", vs.meta)
    loaded = load(vs)
    if loaded is None:
        raise WordkinError("the index just built could not be loaded back")
    return loaded


def _build_in_child(
    matrix: str, out: str, dims: int, trees: int, seed: int, report: ProgressFn, cancel: CancelFn | None
) -> None:
    ctx = mp.get_context("spawn")
    parent, child = ctx.Pipe(duplex=False)
    proc = ctx.Process(target=_child, args=(matrix, out, dims, trees, seed, child), daemon=True)
    proc.start()
    child.close()
    try:
        while True:
            if cancel is not None and cancel():
                raise CancelledError("index build cancelled")
            if parent.poll(0.1):
                try:
                    msg = parent.recv()
                except EOFError:
                    raise WordkinError("the index builder stopped unexpectedly") from None
                if msg[0] == "p":
                    report(msg[2], msg[3], f"index: {msg[1]}")
                elif msg[0] == "done":
                    break
                else:
                    raise WordkinError(f"index build failed: {msg[1]}")
            elif not proc.is_alive() and not parent.poll():
                raise WordkinError(f"the index builder exited with code {proc.exitcode}")
    finally:
        if proc.is_alive():
            proc.terminate()
        proc.join(5)
        parent.close()


def choose_search_k(
    vs: Any, idx: Any, *, cancel: CancelFn | None = None, k: int = 10
) -> tuple[int, float, float]:
    """Smallest ``search_k`` on the ladder whose recall@k (after exact re-rank) reaches the target.

    Recall is measured on a seeded sample of non-zero rows as queries, against the exact top-k that excludes the
    query itself. Returns ``(search_k, recall, p50 query ms)``.
    """
    from .search import exact_top

    rng = np.random.default_rng(12345)
    ok = np.ones(vs.n, dtype=bool)
    ok[vs.zero_rows] = False
    pool = np.flatnonzero(ok)
    sample = rng.choice(pool, size=min(RECALL_SAMPLE, len(pool)), replace=False)
    truth = [set(exact_top(vs, vs.unit[i], k, exclude=[int(i)])[0].tolist()) for i in sample]
    best = (SEARCH_K_LADDER[-1], 0.0, 0.0)
    for sk in SEARCH_K_LADDER:
        if cancel is not None and cancel():
            raise CancelledError("cancelled")
        ann = AnnIndex(idx, 0, sk, 1.0, None)
        hits = 0
        times = []
        for i, t in zip(sample, truth, strict=True):
            t1 = time.perf_counter()
            rows, _ = ann_top(vs, ann, vs.unit[i], k, exclude=[int(i)])
            times.append(time.perf_counter() - t1)
            hits += len(t.intersection(rows.tolist()))
        recall = hits / (k * len(sample))
        p50 = float(np.median(times) * 1000)
        if recall > best[1]:
            best = (sk, recall, p50)
        if recall >= TARGET_RECALL:
            return sk, recall, p50
        if sk >= 2 * vs.n * max(1, idx.get_n_trees()):
            break
    return best


def ann_top(
    vs: Any, ann: AnnIndex, q: np.ndarray, k: int, exclude: list[int]
) -> tuple[np.ndarray, np.ndarray]:
    from .search import rerank

    cands = ann.candidates(q, k + len(exclude) + 10)
    return rerank(vs, q, np.asarray(cands, dtype=np.int64), k, exclude)
