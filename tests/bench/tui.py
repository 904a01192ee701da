"""Console benchmark, Pilot-driven: Enter-to-result latency with the index ready, and frame stalls while the
index builds.

Usage: python -m tests.bench.tui BIG_TEXT_FILE (index prepared in $WORDKIN_CACHE) SMALL_TEXT_FILE
Prints one JSON line.
"""

from __future__ import annotations

import asyncio
import json
import sys
import tempfile
import time

import numpy as np


async def latency(path: str) -> list[float]:
    from textual.widgets import Input

    from wordkin.console.app import create_app
    from wordkin.console.pane_neighbours import NeighboursPane

    app = create_app(path, notebook=tempfile.mktemp(suffix=".wkn"))
    out = []
    async with app.run_test(size=(80, 24)) as pilot:
        end = time.monotonic() + 300
        while app.session is None or app.session.index is None:
            if time.monotonic() > end:
                raise SystemExit(f"index never ready: {app.query_one('StatusLine').mode}")
            await pilot.pause(0.05)
        rng = np.random.default_rng(3)
        box = app.query_one("#nb-word", Input)
        vs = app.session.vectors
        for r in rng.choice(vs.n, 30, replace=False):
            box.value = vs.words[int(r)]
            await pilot.pause(0.05)
            pane = app.query_one(NeighboursPane)
            before = pane.result
            t0 = time.perf_counter()
            # Not awaited: Pilot.press also waits for the screen to go idle, which is not what a user waits for.
            press = asyncio.ensure_future(pilot.press("enter"))
            end = time.monotonic() + 10
            # The pane's handler sets ``result`` and fills the table in the same step.
            while pane.result is before:
                if time.monotonic() > end:
                    raise SystemExit(f"no result for {box.value!r}: {app.query_one('#nb-message').render()}")
                await asyncio.sleep(0.001)
            out.append((time.perf_counter() - t0) * 1000)
            await press
    return out


async def stall(path: str) -> float:
    import os

    from textual.widgets import Input

    from wordkin.console.app import create_app

    os.environ["WORDKIN_CACHE"] = tempfile.mkdtemp()  # a cold open: parse and build the index from scratch
    app = create_app(path, notebook=tempfile.mktemp(suffix=".wkn"))
    ticks: list[float] = []
    async with app.run_test(size=(80, 24)) as pilot:
        app.set_interval(0.02, lambda: ticks.append(time.perf_counter()))
        while app.session is None:
            await pilot.pause(0.05)
        ticks.clear()
        end = time.monotonic() + 300
        while app.session is None or app.session.index is None:
            if time.monotonic() > end:
                raise SystemExit(f"index never ready: {app.query_one('StatusLine').mode}")
            app.query_one("#nb-word", Input).insert_text_at_cursor("a")  # typing while the index builds
            await asyncio.sleep(0.05)
    gaps = np.diff(ticks) * 1000
    return float(gaps.max()) if len(gaps) else 0.0


def main() -> None:
    lat = asyncio.run(latency(sys.argv[1]))
    st = asyncio.run(stall(sys.argv[2]))
    print(json.dumps({"p50": float(np.median(lat)), "max": float(np.max(lat)), "n": len(lat), "stall": st}))


if __name__ == "__main__":
    main()
