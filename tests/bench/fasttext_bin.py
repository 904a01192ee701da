"""fastText ``.bin`` benchmark: cold open, peak memory and warm open against gensim's ``load_facebook_vectors`` on
the same model, one run. Run: ``python -m tests.bench.fasttext_bin [--words 100000 --dims 100 --buckets 2000000]``.

The model is written here with the format's own layout (header, dictionary, input matrix of word rows and n-gram
buckets, output matrix), seeded. Each measured open runs in a fresh ``python`` process that reports its own peak
resident memory (``VmHWM`` from ``/proc/self/status``: per process, not inherited from this harness). The bars:
at least 3x faster cold than gensim, peak memory at most the file's size, warm open under 1 s. Everything it
writes lives in a temporary folder removed at the end.
"""

from __future__ import annotations

import argparse
import json
import shutil
import struct
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

MAGIC, VERSION = 793712314, 12

CHILD = """
import json, sys, time
t0 = time.perf_counter()
{body}
took = time.perf_counter() - t0
hwm = [l for l in open("/proc/self/status") if l.startswith("VmHWM")][0].split()[1]
print(json.dumps({{"seconds": took, "peak_mib": int(hwm) / 1024}}))
"""

OURS = """
from wordkin.index.vectors import open_vectors
vs = open_vectors(sys.argv[1], cache_root=sys.argv[2])
wv = vs.word_vector("harbourfrontage")
"""
GENSIM = """
from gensim.models.fasttext import load_facebook_vectors
kv = load_facebook_vectors(sys.argv[1])
v = kv.get_vector("harbourfrontage")
"""


def write_model(path: Path, n: int, dims: int, buckets: int, seed: int = 5) -> None:
    rng = np.random.default_rng(seed)
    letters = np.array(list("abcdefghijklmnopqrstuvwxyz"))
    words = {"".join(rng.choice(letters, rng.integers(3, 12))) for _ in range(int(n * 1.3))}
    vocab = sorted(words)[:n]
    with open(path, "wb") as f:
        f.write(struct.pack("<2i", MAGIC, VERSION))
        f.write(struct.pack("<12i", dims, 5, 5, 5, 5, 1, 2, 2, buckets, 3, 6, 100))
        f.write(struct.pack("<d", 1e-4))
        f.write(struct.pack("<3iqq", len(vocab), len(vocab), 0, 10 * len(vocab), -1))
        for i, w in enumerate(vocab):
            f.write(w.encode() + b"\x00" + struct.pack("<qb", len(vocab) - i, 0))
        f.write(struct.pack("<?", False))
        f.write(struct.pack("<2q", len(vocab) + buckets, dims))
        step = 100_000
        for s in range(0, len(vocab) + buckets, step):
            m = min(step, len(vocab) + buckets - s)
            f.write(rng.uniform(-1 / dims, 1 / dims, (m, dims)).astype("<f4").tobytes())
        f.write(struct.pack("<?", False))
        f.write(struct.pack("<2q", len(vocab), dims))
        f.write(np.zeros((len(vocab), dims), dtype="<f4").tobytes())


def measure(body: str, *args: str) -> dict[str, float]:
    out = subprocess.run(
        [sys.executable, "-c", CHILD.format(body=body), *args], capture_output=True, text=True, check=True
    ).stdout
    return json.loads(out.strip().splitlines()[-1])


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--words", type=int, default=100_000)
    ap.add_argument("--dims", type=int, default=100)
    ap.add_argument("--buckets", type=int, default=2_000_000)
    args = ap.parse_args()
    work = Path(tempfile.mkdtemp(prefix="wordkin-bench-ft-"))
    try:
        model = work / "model.bin"
        t0 = time.perf_counter()
        write_model(model, args.words, args.dims, args.buckets)
        size_mib = model.stat().st_size / 2**20
        print(
            f"model: {args.words:,} words x {args.dims}, {args.buckets:,} buckets, {size_mib:.0f} MiB "
            f"(written in {time.perf_counter() - t0:.1f} s)",
            file=sys.stderr,
        )
        measure(GENSIM, str(model))  # a first read warms the page cache for both sides alike
        gensim = measure(GENSIM, str(model))
        cold = measure(OURS, str(model), str(work / "cache"))
        warm = measure(OURS, str(model), str(work / "cache"))
        floor = measure("pass")
        res = {
            "file_mib": round(size_mib, 1),
            "gensim_s": round(gensim["seconds"], 2),
            "gensim_peak_mib": round(gensim["peak_mib"]),
            "cold_s": round(cold["seconds"], 2),
            "cold_peak_mib": round(cold["peak_mib"]),
            "warm_s": round(warm["seconds"], 3),
            "warm_peak_mib": round(warm["peak_mib"]),
            "python_floor_mib": round(floor["peak_mib"]),
            "speedup": round(gensim["seconds"] / cold["seconds"], 1),
        }
        res["bars_met"] = res["speedup"] >= 3 and res["cold_peak_mib"] <= size_mib and res["warm_s"] < 1
        print(json.dumps(res))
    finally:
        shutil.rmtree(work, ignore_errors=True)


if __name__ == "__main__":
    main()
