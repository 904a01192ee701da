"""Regenerate the README's screenshots: ``python -m tests.screenshots [OUT_DIR]`` (``make screenshots``).

Drives the console on the demo set with Pilot at 80x24 and saves each pane with the app's own SVG export into
``docs/screenshots/``. A developer's script, not part of the installed package: its notebooks and cache live in
one temporary folder that is removed at the end.
"""

from __future__ import annotations

import asyncio
import os
import sys
import tempfile
from pathlib import Path

OUT = Path(__file__).resolve().parent.parent / "docs" / "screenshots"


async def shoot(out: Path, scratch: Path) -> list[Path]:
    from wordkin.console.tui.app import create_app
    from wordkin.demo_vectors import demo_path

    out.mkdir(parents=True, exist_ok=True)
    nb = scratch / "demo.wkn"
    app = create_app(str(demo_path()), notebook=str(nb))
    saved = []
    async with app.run_test(size=(80, 24)) as pilot:
        while app.session is None or app.session.state.value in ("building", "empty"):
            await pilot.pause(0.1)

        async def save(name: str) -> None:
            await pilot.pause(0.4)
            saved.append(Path(app.save_screenshot(filename=f"{name}.svg", path=str(out))))

        await pilot.press(*"harbour", "enter")
        await save("neighbours")
        await pilot.press("ctrl+s")
        await pilot.press("f3", *"hotel : hotels :: ferry : ?", "enter")
        await save("arithmetic")
        await pilot.press("ctrl+s")
        await pilot.press("f4", *"hotel inn hostel cottage ferry", "enter")
        await pilot.pause(0.3)
        await pilot.press("right", "right")
        await save("similarity")
        await pilot.press("ctrl+s", "f5")
        await save("notebook")
        await pilot.press("f6", "n")
        app.query_one("#tm-hide").value = True  # type: ignore[attr-defined]
        app.query_one("#tm-name").value = "lodging: hotel inn hostel"  # type: ignore[attr-defined]
        await pilot.press("enter")
        await pilot.pause(0.6)
        for key in ("k", "down", "d", "k", "k"):
            await pilot.press(key)
            await pilot.pause(0.4)
        await save("terms")
    return saved


async def shoot_large(out: Path, scratch: Path) -> Path:
    """One larger screenshot (120x36): the neighbours pane with room to spare."""
    from wordkin.console.tui.app import create_app
    from wordkin.demo_vectors import demo_path

    app = create_app(str(demo_path()), notebook=str(scratch / "demo-large.wkn"))
    async with app.run_test(size=(120, 36)) as pilot:
        while app.session is None or app.session.state.value in ("building", "empty"):
            await pilot.pause(0.1)
        await pilot.press(*"harbour", "enter")
        await pilot.pause(0.6)
        return Path(app.save_screenshot(filename="neighbours-120x36.svg", path=str(out)))


def main() -> None:
    out = Path(sys.argv[1]) if len(sys.argv) > 1 else OUT
    with tempfile.TemporaryDirectory(prefix="wordkin-shots-") as tmp:
        scratch = Path(tmp)
        os.environ["WORDKIN_CACHE"] = str(scratch / "cache")
        for p in asyncio.run(shoot(out, scratch)):
            print(p)
        print(asyncio.run(shoot_large(out, scratch)))


if __name__ == "__main__":
    main()
