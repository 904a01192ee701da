"""Plain-text tables for the headless commands. Every word passes through ``visible`` first."""

from __future__ import annotations

from collections.abc import Sequence

from rich.cells import cell_len

from index.results import Neighbour

from .safe_text import visible


def pad(text: str, width: int) -> str:
    return text + " " * max(0, width - cell_len(text))


def neighbour_table(rows: Sequence[Neighbour], title: str = "") -> str:
    words = [visible(r.word) for r in rows]
    w = max([4] + [cell_len(x) for x in words])
    out = [visible(title)] if title else []
    out.append(f"{'rank':>4}  {pad('word', w)}  cosine")
    for r, word in zip(rows, words, strict=True):
        out.append(f"{r.rank:>4}  {pad(word, w)}  {r.similarity:6.3f}")
    if not rows:
        out.append("   (no neighbours: the word's vector is all zeros)")
    return "\n".join(out) + "\n"
