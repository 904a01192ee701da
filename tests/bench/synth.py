"""Seeded structured synthetic vector sets for the benchmarks: clusters in a low-dimensional subspace plus noise.

Uniform noise is not what embeddings look like and no index handles it well; real sets have many small
neighbourhoods inside a low-dimensional structure. Words are ``w000000``...; files are cached under
``tests/bench/out`` (ignored by git) and reused when present.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

OUT = Path(__file__).resolve().parent / "out"


def matrix(n: int, dims: int = 300, seed: int = 0, sub: int = 40, noise: float = 0.9) -> np.ndarray:
    rng = np.random.default_rng(seed)
    clusters = max(50, n // 40)
    centres = rng.standard_normal((clusters, sub)).astype(np.float32)
    proj = (rng.standard_normal((sub, dims)) / np.sqrt(sub)).astype(np.float32)
    out = np.empty((n, dims), dtype=np.float32)
    step = 50_000
    for s in range(0, n, step):
        m = min(step, n - s)
        lab = rng.integers(0, clusters, m)
        local = centres[lab] + 0.5 * rng.standard_normal((m, sub)).astype(np.float32)
        out[s : s + m] = local @ proj + noise * rng.standard_normal((m, dims)).astype(np.float32)
    return np.round(out, 5)


def words(n: int) -> list[str]:
    return [f"w{i:06d}" for i in range(n)]


def write_text(path: Path, x: np.ndarray) -> Path:
    import pyarrow as pa
    import pyarrow.csv as pcsv

    n, d = x.shape
    tmp = path.with_suffix(".partial")
    with open(tmp, "wb") as f:
        f.write(f"{n} {d}\n".encode())
        step = 50_000
        for s in range(0, n, step):
            block = x[s : s + step]
            cols = {"w": pa.array(words(n)[s : s + step])}
            for j in range(d):
                cols[f"c{j}"] = pa.array(block[:, j])
            pcsv.write_csv(
                pa.table(cols),
                f,
                write_options=pcsv.WriteOptions(include_header=False, delimiter=" ", quoting_style="none"),
            )
    tmp.rename(path)
    return path


def write_binary(path: Path, x: np.ndarray) -> Path:
    n, d = x.shape
    tmp = path.with_suffix(".partial")
    with open(tmp, "wb") as f:
        f.write(f"{n} {d}\n".encode())
        for w, v in zip(words(n), x, strict=True):
            f.write(w.encode() + b" " + v.astype("<f4").tobytes() + b"\n")
    tmp.rename(path)
    return path


#: Files ``ensure`` wrote in this process (the harness removes them at the end unless asked to keep them).
CREATED: list[Path] = []


def ensure(n: int, dims: int = 300, kinds: tuple[str, ...] = ("text", "binary")) -> dict[str, Path]:
    """The ``kinds`` ("text", "binary") of files of the ``n``-word set, generated once."""
    OUT.mkdir(parents=True, exist_ok=True)
    base = OUT / f"synth-{n // 1000}k-{dims}d"
    paths = {"text": base.with_suffix(".txt"), "binary": base.with_suffix(".bin")}
    missing = [k for k in kinds if not paths[k].exists()]
    if missing:
        x = matrix(n, dims)
        for k in missing:
            (write_text if k == "text" else write_binary)(paths[k], x)
            CREATED.append(paths[k])
    return {k: paths[k] for k in kinds}
