"""Building the annoy index of a cached vector set, in-process for small sets and in a child process otherwise.

annoy's ``build()`` releases the GIL but reports nothing and cannot be interrupted: large sets are built by
an ``ann.child`` subprocess (a plain subprocess, so it shares no threads or file descriptors with a running app),
so that a cancel or a quit never waits for it. The index holds the unit rows projected on principal axes
(``projection``); after the build, ``tuning`` measures ``search_k``, the candidate count and recall, and the
figures go into the cache's metadata.
"""

from __future__ import annotations

import json
import os
import time
from collections.abc import Callable
from pathlib import Path
from typing import Any

import numpy as np

from wordkin.index import cache
from wordkin.index.ann import annoy_file as _ann
from wordkin.index.ann.annoy_file import (
    PROJECTION_FILE,
    RECALL_SAMPLE,
    AnnIndex,
    IndexState,
    load,
    open_shards,
    projected_dims,
    shard_file,
)
from wordkin.index.ann.projection import principal_axes
from wordkin.index.ann.tuning import RecallEstimate, choose_calc_search_k, choose_search_k
from wordkin.index.errors import CancelledError, WordkinError
from wordkin.index.progress import CancelFn, ProgressFn


def _add_and_build(
    matrix_path: str, out: str, dims: int, n_trees: int, seed: int, report: Any, projection: str | None = None
) -> None:
    """Add every unit row (projected on ``projection``'s axes when given: ``dims`` is then its width) and build."""
    from annoy import AnnoyIndex

    unit = np.load(matrix_path, mmap_mode="r")
    axes = np.load(projection, allow_pickle=False) if projection else None
    idx = AnnoyIndex(dims, "angular")
    idx.set_seed(seed)
    idx.on_disk_build(out)
    n = unit.shape[0]
    step = 5000
    for s in range(0, n, step):
        block = np.asarray(unit[s : s + step], dtype=np.float32)
        if axes is not None:
            block = block @ axes
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
    trees = n_trees or _ann.default_trees(vs.dims)
    if in_process is None:
        in_process = vs.n * vs.dims <= _ann.IN_PROCESS_BELOW
    pid = os.getpid()
    tmp = cache_dir / f".{shard_file(0)}.{pid}.tmp"
    tmp_axes = cache_dir / f".{PROJECTION_FILE}.{pid}.tmp"
    matrix = str(cache_dir / "matrix.npy")
    report = progress or (lambda d, t, s: None)
    t0 = time.perf_counter()
    f = projected_dims(vs.dims)
    axes = None
    try:
        if f < vs.dims:
            report(0, 0, "index: principal axes")
            axes = principal_axes(vs.unit, vs.zero_rows, f)
            with open(tmp_axes, "wb") as fh:
                np.save(fh, axes, allow_pickle=False)
        axes_arg = str(tmp_axes) if axes is not None else None
        if in_process:
            _add_and_build(matrix, str(tmp), f, trees, seed, lambda st, d, t: report(d, t, f"index: {st}"), axes_arg)
            build_s = time.perf_counter() - t0
            est, calc_sk, agree = tune(vs, tmp, trees, axes, lambda st: report(0, 0, f"index: {st}"), cancel)
        else:
            # The child also measures recall and analogies: annoy's queries hold the GIL (a 75 ms UI stall was
            # measured when the console's own thread ran them), and the child runs below the UI in the scheduler.
            tuned = _build_in_children(matrix, [tmp], f, [trees], seed, report, cancel, axes_arg, str(cache_dir))
            build_s = float(tuned["build_seconds"])
            est, calc_sk, agree = RecallEstimate(**tuned["recall"]), tuned["calc_search_k"], tuned["agreement"]
        for i in range(1, 4):
            (cache_dir / shard_file(i)).unlink(missing_ok=True)
        final = cache_dir / shard_file(0)
        os.replace(tmp, final)
        if axes is not None:
            os.replace(tmp_axes, cache_dir / PROJECTION_FILE)
        else:
            (cache_dir / PROJECTION_FILE).unlink(missing_ok=True)
    except BaseException:
        tmp.unlink(missing_ok=True)
        tmp_axes.unlink(missing_ok=True)
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
        shards=1,
        file_bytes=(final.stat().st_size,),
        seed=seed,
        projected_dims=f if axes is not None else 0,
        candidates=est.candidates,
    )
    vs.meta = vs.meta.with_index(info)
    cache.write_meta(cache_dir, vs.meta)
    loaded = load(vs)
    if loaded.state is not IndexState.READY or loaded.index is None:
        raise WordkinError(f"the index just built could not be loaded back ({loaded.reason})")
    return loaded.index


def tune(
    vs: Any, path: Path, trees: int, axes: np.ndarray | None, stage: Callable[[str], None], cancel: CancelFn | None
) -> tuple[RecallEstimate, int | None, float]:
    """Measure the index just built at ``path``: its search_k and candidates (recall), then analogies' search_k."""
    f = axes.shape[1] if axes is not None else vs.dims
    idx = AnnIndex(open_shards(f, [path]), trees, 0, 1.0, None, projection=axes, n_words=vs.n)
    try:
        stage("measuring recall@10")
        est = choose_search_k(vs, idx, cancel=cancel)
        stage("checking analogies")
        calc_sk, agree = choose_calc_search_k(vs, idx.with_search(est.search_k, est.candidates), cancel=cancel)
    finally:
        idx.index.unload()
    return est, calc_sk, agree


def _build_in_children(
    matrix: str,
    outs: list[Path],
    dims: int,
    trees: list[int],
    seed: int,
    report: ProgressFn,
    cancel: CancelFn | None,
    projection: str | None = None,
    tune_in: str | None = None,
) -> dict[str, Any]:
    """Run one ``ann.child`` subprocess per output file at once, relaying the first's progress; kill all on cancel.
    With ``tune_in`` (the cache directory), the first child also measures the index (``tune``) and its figures
    are returned.

    Plain subprocesses, not multiprocessing: they need no file descriptors of the parent (a Textual app replaces
    stdout and stderr with objects that have none) and share no threads with it.
    """
    import selectors
    import subprocess
    import sys

    child = __name__.rsplit(".", 1)[0] + ".child"
    procs = [
        subprocess.Popen(
            [sys.executable, "-m", child, matrix, str(out), str(dims), str(t), str(seed + k), projection or "-"]
            + ([tune_in] if tune_in and k == 0 else []),
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
    tuned: dict[str, Any] = {}
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
                    elif parts[:1] == ["tuned"] and k == 0:
                        tuned = json.loads(line.decode()[len("tuned ") :])
                    elif parts == ["done"]:
                        done[k] = True
        for p in procs:
            p.wait()
        for k, p in enumerate(procs):
            if not done[k] or p.returncode != 0:
                err = p.stderr.read().decode(errors="replace").strip().splitlines() if p.stderr else []
                raise WordkinError(f"index build failed (exit {p.returncode}): {err[-1] if err else 'no message'}")
        if tune_in and not tuned:
            raise WordkinError("index build failed: the builder reported no measurements")
        return tuned
    finally:
        sel.close()
        for p in procs:
            if p.poll() is None:
                p.kill()
                p.wait()
            for f in (p.stdout, p.stderr):
                if f is not None:
                    f.close()
