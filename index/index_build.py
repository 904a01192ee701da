"""Building the annoy index of a cached vector set, in-process for small sets and in child processes otherwise.

annoy's ``build()`` releases the GIL but reports nothing and cannot be interrupted: large sets are built by
``ann_child`` subprocesses (plain subprocesses, so they share no threads or file descriptors with a running app),
so that a cancel or a quit never waits for it. After the build, ``tuning`` measures ``search_k`` and recall, and
the figures go into the cache's metadata.
"""

from __future__ import annotations

import os
import time
from pathlib import Path
from typing import Any

import numpy as np

from . import cache
from .ann import IN_PROCESS_BELOW, RECALL_SAMPLE, AnnIndex, IndexState, _open_shards, default_trees, load, shard_file
from .errors import CancelledError, WordkinError
from .progress import CancelFn, ProgressFn
from .tuning import choose_calc_search_k, choose_search_k


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
        est = choose_search_k(vs, idx, cancel=cancel)
        report(0, 0, "index: checking analogies")
        calc_sk, agree = choose_calc_search_k(vs, idx, est.search_k, cancel=cancel)
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
    info = cache.IndexMeta(
        state="ready",
        trees=trees,
        search_k=est.search_k,
        recall_at_10=round(est.worst, 4),
        recall_frequent=round(est.frequent, 4),
        recall_random=round(est.random, 4),
        missing_share=round(est.missing, 4),
        recall_sample=RECALL_SAMPLE,
        query_ms_p50=round(est.p50_ms, 3),
        calc_search_k=calc_sk,
        calc_top1_agreement=round(agree, 4),
        build_seconds=round(build_s, 2),
        shards=n_shards,
        file_bytes=tuple(f.stat().st_size for f in finals),
        seed=seed,
    )
    vs.meta = vs.meta.with_index(info)
    cache.write_meta(cache_dir, vs.meta)
    loaded = load(vs)
    if loaded.state is not IndexState.READY or loaded.index is None:
        raise WordkinError(f"the index just built could not be loaded back ({loaded.reason})")
    return loaded.index


def _build_in_children(
    matrix: str, outs: list[Path], dims: int, trees: list[int], seed: int, report: ProgressFn, cancel: CancelFn | None
) -> None:
    """Run one ``ann_child`` subprocess per shard at once, relaying shard 0's progress; kill all on cancel.

    Plain subprocesses, not multiprocessing: they need no file descriptors of the parent (a Textual app replaces
    stdout and stderr with objects that have none) and share no threads with it.
    """
    import selectors
    import subprocess
    import sys

    child = __name__.rsplit(".", 1)[0] + ".ann_child"
    procs = [
        subprocess.Popen(
            [sys.executable, "-m", child, matrix, str(out), str(dims), str(t), str(seed + k)],
            stdin=subprocess.DEVNULL,
            stdout=subprocess.PIPE,
            stderr=subprocess.PIPE,
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
