"""Release-check benchmark: ``wordkin compare`` of two 400k x 300 sets with the default 10,000 words, and the
check-up of one (the bar for compare: 60 s on two cores). Run: ``python -m tests.bench.compare [--words 400000]``.

The old set is the harness's seeded structured set (``synth.matrix``); the new one is a noisy copy with 1% of its
rows swapped, both written as ``.npy`` matrices with their words. Each command runs as a whole process, as a user
runs it (cache warm, as after ``wordkin prepare``), and reports its own peak memory. Everything it writes is
removed at the end.
"""

from __future__ import annotations

import argparse
import json
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

from . import synth


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--words", type=int, default=400_000)
    args = ap.parse_args()
    work = Path(tempfile.mkdtemp(prefix="wordkin-bench-compare-"))
    try:
        x = synth.matrix(args.words)
        words = "\n".join(synth.words(args.words)) + "\n"
        np.save(work / "old.npy", x)
        (work / "old.words.txt").write_text(words)
        rng = np.random.default_rng(8)
        x += 0.3 * rng.standard_normal(x.shape).astype(np.float32)
        swap = rng.choice(args.words, args.words // 100, replace=False)
        x[swap] = x[np.roll(swap, 1)]
        np.save(work / "new.npy", x)
        (work / "new.words.txt").write_text(words)
        del x
        env = {"WORDKIN_CACHE": str(work / "cache")}
        import os

        env = {**os.environ, **env}
        cli = [sys.executable, "-m", "wordkin.console.cli"]
        for f in ("old.npy", "new.npy"):  # warm: the caches exist, as after `wordkin prepare`
            subprocess.run([*cli, "info", str(work / f)], env=env, check=True, capture_output=True)
        out = {}
        for name, cmd in (
            ("compare", [*cli, "compare", str(work / "old.npy"), str(work / "new.npy"), "--json"]),
            ("checkup", [*cli, "checkup", str(work / "new.npy"), "--json"]),
        ):
            wrapped = [sys.executable, "-c", LAUNCH, *cmd]
            t0 = time.perf_counter()
            r = subprocess.run(wrapped, env=env, check=True, capture_output=True, text=True)
            took = time.perf_counter() - t0
            report = json.loads(r.stdout.splitlines()[0])
            peak = json.loads(r.stderr.strip().splitlines()[-1])["peak_mib"]
            out[name] = {"seconds": round(took, 1), "peak_mib": round(peak)}
            if name == "compare":
                out[name]["overlap_mean"] = round(report["overlap"]["mean"], 3)
                out[name]["aligned_mean"] = round(report["aligned_cosine"]["mean"], 4)
        out["words"] = args.words
        out["bar_met"] = out["compare"]["seconds"] <= 60
        print(json.dumps(out))
    finally:
        shutil.rmtree(work, ignore_errors=True)


# Runs the command in this process (so VmHWM is the command's own) and prints its peak memory on stderr.
LAUNCH = """
import json, sys
sys.argv = sys.argv[1:]
try:
    sys.argv = sys.argv[2:] if sys.argv[1] == "-m" else sys.argv
    from wordkin.console.cli import main
    code = main(sys.argv[1:])
finally:
    hwm = [l for l in open("/proc/self/status") if l.startswith("VmHWM")][0].split()[1]
    print(json.dumps({"peak_mib": int(hwm) / 1024}), file=sys.stderr)
sys.exit(code)
"""


if __name__ == "__main__":
    main()
