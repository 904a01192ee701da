"""Re-run a saved entry against the vector set now open and say what changed (gained, lost, moved)."""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

from .notebook import Entry, entry_from_result
from .safe_text import visible


def rerun(entry: Entry, vs: Any, ann: Any = None) -> Entry:
    """The same query with the same parameters, answered by ``vs``."""
    if entry.kind == "neighbours":
        from index.search import neighbours

        p = entry.params
        mode = "exact" if p.get("mode") == "exact" else "auto"
        res: Any = neighbours(vs, entry.query["word"], int(p.get("k", 10)), ann=ann, top=p.get("top"), mode=mode)
    elif entry.kind == "arithmetic":
        from index.analogy import calc

        p = entry.params
        res = calc(
            vs,
            entry.query["expression"],
            int(p.get("k", 10)),
            method=p.get("method", "add"),
            top=p.get("top"),
            keep_inputs=bool(p.get("keep_inputs")),
            ann=ann,
        )
    else:
        from index.similarity import similarity

        res = similarity(vs, list(entry.query["words"]))
    return entry_from_result(res, vs, note=entry.note)


@dataclass
class Diff:
    gained: list[tuple[str, int]] = field(default_factory=list)  # (word, new rank)
    lost: list[tuple[str, int]] = field(default_factory=list)  # (word, old rank)
    moved: list[tuple[str, int, int]] = field(default_factory=list)  # (word, old rank, new rank)
    same: int = 0
    cells: list[tuple[str, str, float, float]] = field(default_factory=list)  # similarity: (a, b, old, new)

    @property
    def changed(self) -> bool:
        return bool(self.gained or self.lost or self.moved or self.cells)


def diff(old: Entry, new: Entry, tolerance: float = 5e-4) -> Diff:
    d = Diff()
    if old.kind == "similarity":
        words = old.query["words"]
        for i, a in enumerate(words):
            for j, b in enumerate(words):
                if i < j:
                    o, n = old.result["matrix"][i][j], new.result["matrix"][i][j]
                    if abs(o - n) > tolerance:
                        d.cells.append((a, b, o, n))
                    else:
                        d.same += 1
        return d
    before = {r["word"]: r["rank"] for r in old.result.get("rows", [])}
    after = {r["word"]: r["rank"] for r in new.result.get("rows", [])}
    for w, r in after.items():
        if w not in before:
            d.gained.append((w, r))
        elif before[w] != r:
            d.moved.append((w, before[w], r))
        else:
            d.same += 1
    d.lost = [(w, r) for w, r in before.items() if w not in after]
    return d


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
