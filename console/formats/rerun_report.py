"""What a re-run changed, in words: gained, lost and moved words, changed cells (``store.rerun`` answers again)."""

from __future__ import annotations

from typing import Any

from wordkin.console.formats.safe_text import visible
from wordkin.index.kinds.base import Diff


def diff_text(d: Diff, old_set: dict[str, Any], new_set: dict[str, Any]) -> str:
    same_set = old_set.get("fingerprint") == new_set.get("fingerprint")
    head = (
        "re-run on the same vector set"
        if same_set
        else (f"re-run on {visible(str(new_set.get('path')))} (saved from {visible(str(old_set.get('path')))})")
    )
    lines = [head]
    if not d.changed:
        lines.append("no change")
        return "\n".join(lines)
    if d.gained:
        lines.append("gained: " + ", ".join(f"{visible(w)} (#{r})" for w, r in d.gained))
    if d.lost:
        lines.append("lost:   " + ", ".join(f"{visible(w)} (was #{r})" for w, r in d.lost))
    if d.moved:
        lines.append("moved:  " + ", ".join(f"{visible(w)} #{a}→#{b}" for w, a, b in d.moved))
    if d.cells:
        lines.append(
            "changed cosines: " + ", ".join(f"{visible(a)}·{visible(b)} {o:.3f}→{n:.3f}" for a, b, o, n in d.cells)
        )
    lines.append(f"unchanged: {d.same}")
    return "\n".join(lines)
