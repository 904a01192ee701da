"""The annoy builder run as a child process:
``python -m wordkin.index.ann_child MATRIX OUT DIMS TREES SEED AXES`` (``AXES``: the projection's ``.npy``, or ``-``
for the full vectors).

It reports ``p STAGE DONE TOTAL`` lines and finally ``done`` on stdout. A child can be killed at once, so a cancel or
a quit never waits for annoy's ``build()``, which cannot be interrupted.
"""

from __future__ import annotations

import sys


def main() -> None:
    import os

    from .index_build import _add_and_build

    # Below the console in the scheduler: annoy builds on both cores of a 2-core machine, and an equal-priority
    # build would take the UI's time slices (a 150 ms frame stall was measured before this).
    try:
        os.nice(10)
    except OSError:
        pass

    matrix, out, dims, trees, seed = sys.argv[1], sys.argv[2], int(sys.argv[3]), int(sys.argv[4]), int(sys.argv[5])
    axes = sys.argv[6] if len(sys.argv) > 6 and sys.argv[6] != "-" else None

    def report(stage: str, done: int, total: int) -> None:
        print(f"p {stage.replace(' ', '_')} {done} {total}", flush=True)

    _add_and_build(matrix, out, dims, trees, seed, report, axes)
    print("done", flush=True)


if __name__ == "__main__":
    main()
