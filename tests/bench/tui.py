"""Console benchmark, Pilot-driven: start to first answer, keystroke to completions and Enter to result with the
index ready, and frame stalls while the index builds.

Usage: python -m tests.bench.tui BIG_TEXT_FILE (index prepared in $WORDKIN_CACHE) SMALL_TEXT_FILE WORK_DIR
Prints one JSON line. Notebooks and the cold cache go to WORK_DIR (the harness removes it).
"""

from __future__ import annotations

import asyncio
import json
import sys
import time
from pathlib import Path
from typing import Any

import numpy as np


async def _answer(pilot: Any, pane: Any, box: Any) -> float:
    """Press Enter and wait for the pane's result to change; milliseconds."""
    before = pane.result
    t0 = time.perf_counter()
    # Not awaited: Pilot.press also waits for the screen to go idle, which is not what a user waits for.
    press = asyncio.ensure_future(pilot.press("enter"))
    end = time.monotonic() + 30
    # The pane's handler sets ``result`` and fills the table in the same step.
    while pane.result is before:
        if time.monotonic() > end:
            raise SystemExit(f"no result for {box.value!r}: {pane.query_one('#nb-message').render()}")
        await asyncio.sleep(0.001)
    dt = (time.perf_counter() - t0) * 1000
    await press
    return dt


async def latency(path: str, work: Path) -> dict[str, Any]:
    from textual.widgets import Input, Static

    from wordkin.console.tui.app import create_app
    from wordkin.console.tui.panes.neighbours import NeighboursPane

    t_start = time.perf_counter()
    app = create_app(path, notebook=str(work / "latency.wkn"))
    out: list[float] = []
    keys: list[float] = []
    async with app.run_test(size=(80, 24)) as pilot:
        end = time.monotonic() + 300
        while app.session is None:
            if time.monotonic() > end:
                raise SystemExit(f"never loaded: {app.query_one('StatusLine').mode}")
            await asyncio.sleep(0.005)
        box = app.query_one("#nb-word", Input)
        pane = app.query_one(NeighboursPane)
        box.value = app.session.vectors.words[7]
        await _answer(pilot, pane, box)
        first_answer = time.perf_counter() - t_start
        end = time.monotonic() + 300
        while app.session is None or app.session.index is None or app.session.index.warm is False:
            if time.monotonic() > end:
                raise SystemExit(f"index never ready: {app.query_one('StatusLine').mode}")
            await pilot.pause(0.05)
        rng = np.random.default_rng(3)
        vs = app.session.vectors
        shown = app.query_one("#nb-complete", Static)
        # Keystrokes: type words one letter at a time; each letter redraws the completion line.
        for r in rng.choice(vs.n, 10, replace=False):
            box.value = ""
            await pilot.pause(0.05)
            for ch in vs.words[int(r)]:
                before = shown.content
                t0 = time.perf_counter()
                press = asyncio.ensure_future(pilot.press(ch))
                end = time.monotonic() + 10
                while shown.content is before:
                    if time.monotonic() > end:
                        raise SystemExit(f"completions never shown after {ch!r}")
                    await asyncio.sleep(0.001)
                keys.append((time.perf_counter() - t0) * 1000)
                await press
            out.append(await _answer(pilot, pane, box))
        for r in rng.choice(vs.n, 20, replace=False):
            box.value = vs.words[int(r)]
            await pilot.pause(0.05)
            out.append(await _answer(pilot, pane, box))
    return {"first_answer": first_answer, "enter": out, "keys": keys}


async def stall(path: str, work: Path) -> float:
    from textual.widgets import Input

    from wordkin.console.tui.app import create_app

    # A cold open: parse and build the index from scratch, in a cache of its own.
    app = create_app(path, notebook=str(work / "stall.wkn"), cache=str(work / "cache-stall"))
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
            # Typing while the index builds, a new word every 12 letters: Textual's Input renders a value of hundreds
            # of letters in one call that holds the GIL for 50-60 ms with nothing else running (measured), which
            # is not what this row measures.
            box = app.query_one("#nb-word", Input)
            if len(box.value) >= 12:
                box.value = ""
            box.insert_text_at_cursor("a")
            await asyncio.sleep(0.05)
    gaps = np.diff(ticks) * 1000
    return float(gaps.max()) if len(gaps) else 0.0


def main() -> None:
    work = Path(sys.argv[3])
    lat = asyncio.run(latency(sys.argv[1], work))
    st = asyncio.run(stall(sys.argv[2], work))
    enter, keys = lat["enter"], lat["keys"]
    print(
        json.dumps(
            {
                "first_answer": lat["first_answer"],
                "p50": float(np.median(enter)),
                "max": float(np.max(enter)),
                "n": len(enter),
                "key_p50": float(np.median(keys)),
                "key_max": float(np.max(keys)),
                "keys": len(keys),
                "stall": st,
            }
        )
    )


if __name__ == "__main__":
    main()
