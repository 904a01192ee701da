"""Term-list benchmark: after a decision, how long until the new candidates are on screen, at 400k x 300 words with
the index ready (the bar: 50 ms p50). Run: ``python -m tests.bench.terms [--words 400000]``.

It writes the harness's seeded structured set as a ``.npy`` matrix with its words (same generator as ``synth``),
opens it with a private cache, builds the index as ``wordkin prepare`` does, then:

- engine: ``TermSuggest.run`` right after each of 30 decisions (the list grows from 3 seeds to 20+ words);
- console: in the Terms pane (Pilot, 80x24), the time from the keep key to the refreshed table, 20 decisions.

Everything it writes lives in a temporary folder that is removed at the end.
"""

from __future__ import annotations

import argparse
import asyncio
import json
import shutil
import tempfile
import time
from pathlib import Path

import numpy as np

from . import synth


def engine_times(vs, session, seeds: list[str], rounds: int) -> tuple[list[float], str]:
    from wordkin.index.kinds import TermSuggest

    kept: list[str] = []
    dropped: list[str] = []
    times: list[float] = []
    mode = ""
    for i in range(rounds):
        q = TermSuggest("bench", tuple(seeds), tuple(kept), tuple(dropped))
        t0 = time.perf_counter()
        res = q.run(session)
        times.append((time.perf_counter() - t0) * 1000)
        mode = res.mode
        (dropped if i % 4 == 3 else kept).append(res.rows[0].word)
    return times, mode


async def console_times(path: Path, cache: Path, seeds: list[str], rounds: int) -> list[float]:
    import os

    from wordkin.console.tui.app import create_app
    from wordkin.console.tui.panes.terms import TermsPane

    os.environ["WORDKIN_CACHE"] = str(cache)
    app = create_app(str(path), notebook=str(cache / "bench.wkn"))
    out: list[float] = []
    async with app.run_test(size=(80, 24)) as pilot:
        while app.session is None or app.session.index is None:
            await pilot.pause(0.05)
        pane = app.query_one(TermsPane)
        await pilot.press("f6", "n")
        pane.query_one("#tm-name").value = "bench: " + " ".join(seeds)
        await pilot.press("enter")
        while pane.result is None:
            await pilot.pause(0.01)
        for _ in range(rounds):
            before = pane.result
            t0 = time.perf_counter()
            press = asyncio.ensure_future(pilot.press("k"))
            while pane.result is before:  # the handler sets ``result`` and fills the table in the same step
                await asyncio.sleep(0.001)
            out.append((time.perf_counter() - t0) * 1000)
            await press
    return out


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--words", type=int, default=400_000)
    ap.add_argument("--rounds", type=int, default=30)
    args = ap.parse_args()
    from wordkin.index.ann.annoy_file import load
    from wordkin.index.ann.build import build
    from wordkin.index.session import Session
    from wordkin.index.vectors import open_vectors

    work = Path(tempfile.mkdtemp(prefix="wordkin-bench-terms-"))
    try:
        x = synth.matrix(args.words)
        path = work / "set.npy"
        np.save(path, x)
        (work / "set.words.txt").write_text("\n".join(synth.words(args.words)) + "\n")
        del x
        cache = work / "cache"
        vs = open_vectors(path, cache_root=cache)
        t0 = time.perf_counter()
        build(vs)
        built = time.perf_counter() - t0
        session = Session.from_load(vs, load(vs))
        seeds = [vs.words[i] for i in (101, 102, 103)]
        eng, mode = engine_times(vs, session, seeds, args.rounds)
        tui = asyncio.run(console_times(path, cache, seeds, 20))
        print(
            json.dumps(
                {
                    "words": vs.n,
                    "index_build_s": round(built, 1),
                    "mode": mode,
                    "engine_ms_p50": round(float(np.median(eng)), 2),
                    "engine_ms_max": round(float(np.max(eng)), 2),
                    "console_ms_p50": round(float(np.median(tui)), 2),
                    "console_ms_max": round(float(np.max(tui)), 2),
                }
            )
        )
    finally:
        shutil.rmtree(work, ignore_errors=True)


if __name__ == "__main__":
    main()
