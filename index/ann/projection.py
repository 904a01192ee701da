"""The compact copy of the vectors the annoy index is built over: unit rows projected on the top principal axes
(uncentred, so that dot products are approximated best in the least-squares sense) of a seeded sample of rows.

Only candidates come from the projected vectors; every score shown is re-computed from the float32 matrix. The
sample is drawn with a fixed seed, so the same vectors give the same axes and the same index.
"""

from __future__ import annotations

import time
from typing import Any

import numpy as np

#: Rows the axes are estimated from (all rows of a smaller set).
SAMPLE_ROWS = 50_000
SEED = 8191


def principal_axes(unit: Any, zero_rows: np.ndarray, out_dims: int, sample: int = SAMPLE_ROWS) -> np.ndarray:
    """``(dims, out_dims)`` float32 with orthonormal columns: the top eigenvectors of ``S.T @ S`` for a seeded
    sample ``S`` of the non-zero unit rows, largest eigenvalue first, each with its largest entry positive."""
    n, dims = unit.shape
    ok = np.ones(n, dtype=bool)
    ok[np.asarray(zero_rows, dtype=np.int64)] = False
    pool = np.flatnonzero(ok)
    if len(pool) > sample:
        pool = np.sort(np.random.default_rng(SEED).choice(pool, size=sample, replace=False))
    gram = np.zeros((dims, dims), dtype=np.float64)
    for s in range(0, len(pool), 2_000):
        # Small blocks, with a yield between them: gathering rows holds the GIL, and a console's UI thread may be
        # waiting for it (the index is built while the console answers queries).
        block = np.asarray(unit[pool[s : s + 2_000]], dtype=np.float64)
        gram += block.T @ block
        time.sleep(0)
    values, vectors = np.linalg.eigh(gram)
    top = vectors[:, np.argsort(-values, kind="stable")[:out_dims]]
    signs = np.sign(top[np.abs(top).argmax(axis=0), np.arange(top.shape[1])])
    signs[signs == 0] = 1
    return np.ascontiguousarray((top * signs).astype(np.float32))
