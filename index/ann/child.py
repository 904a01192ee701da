"""The annoy builder run as a child process:
``python -m wordkin.index.ann.child MATRIX OUT DIMS TREES SEED AXES [CACHE]`` (``AXES``: the projection's ``.npy``,
or ``-`` for the full vectors; ``CACHE``: the cache directory, to measure the index there too, see
``index_build.tune``).

It reports ``p STAGE DONE TOTAL`` lines, with ``CACHE`` one ``tuned JSON`` line, and finally ``done`` on stdout. A
child can be killed at once, so a cancel or a quit never waits for annoy's ``build()``, which cannot be interrupted;
and it runs below the console in the scheduler, holding none of the console's GIL.
"""

from __future__ import annotations

import sys
import time


def main() -> None:
    import os

    from wordkin.index.ann.build import _add_and_build

    # Below the console in the scheduler: annoy builds on both cores of a 2-core machine, and an equal-priority
    # build would take the UI's time slices (a 150 ms frame stall was measured before this). On Linux nice is per
    # thread: the BLAS threads numpy started on import are lowered too (a 60-80 ms stall while they were not).
    try:
        os.nice(10)
    except OSError:
        pass
    try:
        for tid in os.listdir("/proc/self/task"):
            os.setpriority(os.PRIO_PROCESS, int(tid), os.getpriority(os.PRIO_PROCESS, 0))
    except (AttributeError, OSError, ValueError):
        pass

    matrix, out, dims, trees, seed = sys.argv[1], sys.argv[2], int(sys.argv[3]), int(sys.argv[4]), int(sys.argv[5])
    axes = sys.argv[6] if len(sys.argv) > 6 and sys.argv[6] != "-" else None

    def report(stage: str, done: int, total: int) -> None:
        print(f"p {stage.replace(' ', '_')} {done} {total}", flush=True)

    t0 = time.perf_counter()
    _add_and_build(matrix, out, dims, trees, seed, report, axes)
    build_s = time.perf_counter() - t0
    if len(sys.argv) > 7:
        import dataclasses
        import json
        from pathlib import Path

        import numpy as np

        from wordkin.index.ann.build import tune
        from wordkin.index.vectors import open_cache_dir

        vs = open_cache_dir(Path(sys.argv[7]))
        axes_m = np.load(axes, allow_pickle=False) if axes else None
        est, calc_sk, agree = tune(vs, Path(out), trees, axes_m, lambda st: report(st, 0, 0), None)
        figures = {"recall": dataclasses.asdict(est), "calc_search_k": calc_sk, "agreement": agree}
        print("tuned " + json.dumps(figures | {"build_seconds": build_s}), flush=True)
    print("done", flush=True)


if __name__ == "__main__":
    main()
