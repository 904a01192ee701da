"""The annoy (angular) index over the unit matrix: built in the background, saved in the cache, memory-mapped.

annoy only proposes candidates; ``search`` re-scores them exactly with numpy, so every similarity shown is an
exact cosine. annoy loads a truncated or foreign index file without complaint, so ``load`` checks the file size,
item count and dimensions against ``meta.json`` first. ``build()`` releases the GIL but reports nothing and cannot
be interrupted: large sets are built in a child process (spawned, so it shares no threads with a running app), so
that a cancel or a quit never waits for it.
"""

from __future__ import annotations

import enum
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
#: The sample's recall must clear the target by this much: 250 queries estimate recall to about +-0.005.
RECALL_MARGIN = 0.002
RECALL_SAMPLE = 250


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
            return self.indexes[0].get_nns_by_vector(vec, n, search_k=search_k)
        share = max(1, search_k // len(self.indexes)) if search_k > 0 else -1
        parts = _pool().map(lambda ix: ix.get_nns_by_vector(vec, n, search_k=share), self.indexes)
        out: list[int] = []
        for p in parts:
            out.extend(p)
        return out

    def get_n_items(self) -> int:
        return min(ix.get_n_items() for ix in self.indexes)

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
        return self.index.get_nns_by_vector(vec, n, search_k=self.search_k)

    def for_expressions(self) -> AnnIndex | None:
        """The same index tuned for combined vectors, or None when expressions should be answered exactly."""
        if self.calc_search_k is None:
            return None
        return AnnIndex(self.index, self.n_trees, self.calc_search_k, self.recall_at_10, self.path, self.calc_search_k)

    @property
    def usable(self) -> bool:
        return self.recall_at_10 >= TARGET_RECALL + RECALL_MARGIN


def load(vs: Any) -> AnnIndex | None:
    """The cached index of ``vs`` if its meta says ready and the file checks out; else ``None``."""
    if vs.cache_dir is None:
        return None
    info = vs.meta.get("index") or {}
    if info.get("state") != "ready":
        return None
    shards = int(info.get("shards", 1))
    sizes = info["file_bytes"] if isinstance(info.get("file_bytes"), list) else [info.get("file_bytes")]
    paths = [Path(vs.cache_dir) / shard_file(i) for i in range(shards)]
    path = paths[0]
    try:
        if len(sizes) != shards or any(p.stat().st_size != int(b) for p, b in zip(paths, sizes, strict=True)):
            vs.warnings.append("annoy index file has the wrong size; ignored (rebuild with `wordkin prepare`)")
            return None
        idx = _open_shards(vs.dims, paths)
        if idx.get_n_items() != vs.n or idx.f != vs.dims:
            idx.unload()
            vs.warnings.append("annoy index does not match the vectors; ignored")
            return None
        calc_sk = info.get("calc_search_k")
        return AnnIndex(
            idx,
            int(info["trees"]),
            int(info["search_k"]),
            float(info["recall_at_10"]),
            path,
            int(calc_sk) if calc_sk else None,
        )
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
    if in_process is None:
        in_process = vs.n * vs.dims <= IN_PROCESS_BELOW
    n_shards = 1 if in_process or trees < 2 else 2
    tmps = [cache_dir / f".{shard_file(i)}.{os.getpid()}.tmp" for i in range(n_shards)]
    matrix = str(cache_dir / "matrix.npy")
    report = progress or (lambda d, t, s: None)
    t0 = time.perf_counter()
    per_shard = [trees // n_shards + (1 if i < trees % n_shards else 0) for i in range(n_shards)]
    try:
        if in_process:
            _add_and_build(matrix, str(tmps[0]), vs.dims, trees, seed, lambda st, d, t: report(d, t, f"index: {st}"))
        else:
            _build_in_children(matrix, tmps, vs.dims, per_shard, seed, report, cancel)
        build_s = time.perf_counter() - t0
        idx = _open_shards(vs.dims, tmps)
        report(0, 0, "index: measuring recall@10")
        search_k, recall, p50 = choose_search_k(vs, idx, cancel=cancel)
        report(0, 0, "index: checking analogies")
        calc_sk, agree = choose_calc_search_k(vs, idx, search_k, cancel=cancel)
        idx.unload()
        for i in range(n_shards, 4):
            (cache_dir / shard_file(i)).unlink(missing_ok=True)
        finals = [cache_dir / shard_file(i) for i in range(n_shards)]
        for t, f in zip(tmps, finals, strict=True):
            os.replace(t, f)
    except BaseException:
        for t in tmps:
            t.unlink(missing_ok=True)
        raise
    info = {
        "state": "ready",
        "trees": trees,
        "search_k": search_k,
        "recall_at_10": round(recall, 4),
        "recall_sample": RECALL_SAMPLE,
        "query_ms_p50": round(p50, 3),
        "calc_search_k": calc_sk,
        "calc_top1_agreement": round(agree, 4),
        "build_seconds": round(build_s, 2),
        "shards": n_shards,
        "file_bytes": [f.stat().st_size for f in finals],
        "seed": seed,
    }
    vs.meta["index"] = info
    cache.write_json_atomic(cache_dir / "meta.json", vs.meta)
    loaded = load(vs)
    if loaded is None:
        raise WordkinError("the index just built could not be loaded back")
    return loaded


def _build_in_children(
    matrix: str, outs: list[Path], dims: int, trees: list[int], seed: int, report: ProgressFn, cancel: CancelFn | None
) -> None:
    """Run one ``index.ann_child`` subprocess per shard at once, relaying shard 0's progress; kill all on cancel.

    Plain subprocesses, not multiprocessing: they need no file descriptors of the parent (a Textual app replaces
    stdout and stderr with objects that have none) and share no threads with it.
    """
    import selectors
    import subprocess
    import sys

    root = str(Path(__file__).resolve().parents[1])
    env = dict(os.environ)
    env["PYTHONPATH"] = root + (os.pathsep + env["PYTHONPATH"] if env.get("PYTHONPATH") else "")
    procs = [
        subprocess.Popen(
            [sys.executable, "-m", "index.ann_child", matrix, str(out), str(dims), str(t), str(seed + k)],
            stdin=subprocess.DEVNULL,
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
            env=env,
            close_fds=True,
        )
        for k, (out, t) in enumerate(zip(outs, trees, strict=True))
    ]
    sel = selectors.DefaultSelector()
    for k, p in enumerate(procs):
        assert p.stdout is not None
        sel.register(p.stdout, selectors.EVENT_READ, k)
    bufs = [b""] * len(procs)
    done = [False] * len(procs)
    open_pipes = len(procs)
    try:
        while open_pipes and not all(done):
            if cancel is not None and cancel():
                raise CancelledError("index build cancelled")
            for key, _ in sel.select(timeout=0.1):
                k = key.data
                chunk = os.read(key.fileobj.fileno(), 65536)  # type: ignore[union-attr]
                if not chunk:
                    sel.unregister(key.fileobj)
                    open_pipes -= 1
                    continue
                *lines, bufs[k] = (bufs[k] + chunk).split(b"\n")
                for line in lines:
                    parts = line.decode().split()
                    if parts[:1] == ["p"] and len(parts) == 4 and k == 0:
                        report(int(parts[2]), int(parts[3]), "index: " + parts[1].replace("_", " "))
                    elif parts == ["done"]:
                        done[k] = True
        for p in procs:
            p.wait()
        for k, p in enumerate(procs):
            if not done[k] or p.returncode != 0:
                err = p.stderr.read().decode(errors="replace").strip().splitlines() if p.stderr else []
                raise WordkinError(f"index build failed (exit {p.returncode}): {err[-1] if err else 'no message'}")
    finally:
        sel.close()
        for p in procs:
            if p.poll() is None:
                p.kill()
                p.wait()
            for f in (p.stdout, p.stderr):
                if f is not None:
                    f.close()


def choose_search_k(vs: Any, idx: Any, *, cancel: CancelFn | None = None, k: int = 10) -> tuple[int, float, float]:
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
    truth = []
    for i in sample:
        time.sleep(0)
        truth.append(set(exact_top(vs, vs.unit[i], k, exclude=[int(i)])[0].tolist()))
    best = (SEARCH_K_LADDER[-1], 0.0, 0.0)
    for sk in SEARCH_K_LADDER:
        if cancel is not None and cancel():
            raise CancelledError("cancelled")
        ann = AnnIndex(idx, 0, sk, 1.0, None)
        hits = 0
        times = []
        for i, t in zip(sample, truth, strict=True):
            time.sleep(0)  # let a console's UI thread run between samples
            t1 = time.perf_counter()
            rows, _ = ann_top(vs, ann, vs.unit[i], k, exclude=[int(i)])
            times.append(time.perf_counter() - t1)
            hits += len(t.intersection(rows.tolist()))
        recall = hits / (k * len(sample))
        p50 = float(np.median(times) * 1000)
        if recall > best[1]:
            best = (sk, recall, p50)
        if recall >= TARGET_RECALL + RECALL_MARGIN:
            return sk, recall, p50
        if sk >= 2 * vs.n * max(1, idx.get_n_trees()):
            break
    return best


CALC_SAMPLE = 150
TARGET_AGREEMENT = 0.99


def choose_calc_search_k(
    vs: Any, idx: Any, search_k: int, *, cancel: CancelFn | None = None
) -> tuple[int | None, float]:
    """search_k for ``b - a + c`` vectors: the smallest multiple of ``search_k`` whose top answer agrees with an
    exact scan on a seeded sample of random triples at least 99% of the time and is still faster than the scan.
    ``(None, best agreement)`` when no multiple qualifies: expressions are then answered exactly."""
    from .search import exact_top, rerank, unit_query

    rng = np.random.default_rng(54321)
    ok = np.ones(vs.n, dtype=bool)
    ok[vs.zero_rows] = False
    pool = np.flatnonzero(ok)
    if len(pool) < 3:
        return None, 0.0
    triples = [rng.choice(pool, 3, replace=False) for _ in range(CALC_SAMPLE)]
    queries = [unit_query(np.asarray(vs.unit[b] - vs.unit[a] + vs.unit[c], dtype=np.float32)) for a, b, c in triples]
    truth, t_exact = [], []
    for (a, b, c), q in zip(triples, queries, strict=True):
        time.sleep(0)
        t0 = time.perf_counter()
        rows, _ = exact_top(vs, q, 1, [int(a), int(b), int(c)])
        t_exact.append(time.perf_counter() - t0)
        truth.append(int(rows[0]) if len(rows) else -1)
    exact_ms = float(np.median(t_exact))
    best = 0.0
    for mult in (1, 2, 4, 8):
        if cancel is not None and cancel():
            raise CancelledError("cancelled")
        sk = search_k * mult
        agree, times = 0, []
        for (a, b, c), q, want in zip(triples, queries, truth, strict=True):
            time.sleep(0)
            t0 = time.perf_counter()
            cands = np.asarray(idx.get_nns_by_vector(q, 23, search_k=sk), dtype=np.int64)
            rows, _ = rerank(vs, q, cands, 1, [int(a), int(b), int(c)])
            times.append(time.perf_counter() - t0)
            agree += bool(len(rows)) and int(rows[0]) == want
        frac = agree / len(triples)
        best = max(best, frac)
        if float(np.median(times)) >= exact_ms:
            break
        if frac >= TARGET_AGREEMENT:
            return sk, frac
    return None, best


def ann_top(vs: Any, ann: AnnIndex, q: np.ndarray, k: int, exclude: list[int]) -> tuple[np.ndarray, np.ndarray]:
    from .search import rerank

    cands = ann.candidates(q, k + len(exclude) + 10)
    return rerank(vs, q, np.asarray(cands, dtype=np.int64), k, exclude)
