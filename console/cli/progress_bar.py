"""Progress on stderr for the headless commands: a rich bar when stderr is a terminal, nothing otherwise."""

from __future__ import annotations

import sys
from collections.abc import Iterator
from contextlib import contextmanager

from wordkin.index.progress import ProgressFn


@contextmanager
def stderr_progress(enabled: bool = True) -> Iterator[ProgressFn | None]:
    if not enabled or not sys.stderr.isatty():
        yield None
        return
    from rich.console import Console
    from rich.progress import BarColumn, Progress, TaskProgressColumn, TextColumn, TimeElapsedColumn

    bar = Progress(
        TextColumn("{task.description}"),
        BarColumn(),
        TaskProgressColumn(),
        TimeElapsedColumn(),
        console=Console(stderr=True),
        transient=True,
    )
    task = bar.add_task("opening", total=None)

    def report(done: int, total: int, stage: str) -> None:
        bar.update(task, completed=done, total=total or None, description=stage)

    with bar:
        yield report
