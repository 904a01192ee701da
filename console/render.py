"""Plain-text tables for the headless commands. Every word passes through ``visible`` first."""

from __future__ import annotations

from collections.abc import Sequence

from rich.cells import cell_len

from index.results import Neighbour

from .safe_text import visible, visible_word


def pad(text: str, width: int) -> str:
    return text + " " * max(0, width - cell_len(text))


def neighbour_table(rows: Sequence[Neighbour], title: str = "", score_label: str = "cosine") -> str:
    words = [visible_word(r.word) for r in rows]
    w = max([4] + [cell_len(x) for x in words])
    out = [visible(title)] if title else []
    out.append(f"{'rank':>4}  {pad('word', w)}  {score_label}")
    for r, word in zip(rows, words, strict=True):
        out.append(f"{r.rank:>4}  {pad(word, w)}  {r.similarity:6.3f}")
    if not rows:
        out.append("   (no neighbours: the word's vector is all zeros)")
    return "\n".join(out) + "\n"


def calc_text(res) -> str:  # type: ignore[no-untyped-def]
    what = "cosine" if res.method == "add" else "3CosMul score"
    out = neighbour_table(res.results, title=f"{res.expression}   [{res.method}, {res.mode}]", score_label=what)
    if res.excluded:
        out += "excluded: " + ", ".join(visible(w) for w in res.excluded) + "\n"
    if res.target is not None:
        if res.target_rank is None:
            out += f"{visible(res.target)}: not ranked (it is one of the excluded words)\n"
        else:
            out += f"{visible(res.target)}: rank {res.target_rank}, score {res.target_similarity:.3f}\n"
    return out


def similarity_text(res) -> str:  # type: ignore[no-untyped-def]
    words = [visible_word(w) for w in res.words]
    w = max(cell_len(x) for x in words)
    cw = max(6, min(12, w))
    head = " " * (w + 2) + " ".join(pad(x[:cw], cw) for x in words)
    lines = [head]
    for name, row in zip(words, res.matrix, strict=True):
        lines.append(pad(name, w) + "  " + " ".join(f"{v:>{cw}.3f}" for v in row))
    if res.odd_one_out is not None:
        i = res.words.index(res.odd_one_out)
        lines.append(
            f"odd one out: {visible(res.odd_one_out)} (cosine {res.odd_scores[i]:.3f} to the mean of the others; "
            + ", ".join(f"{x} {s:.3f}" for x, s in zip(words, res.odd_scores, strict=True))
            + ")"
        )
    if res.pair_ranks:
        lines.append("neighbour ranks (row word's rank of column word):")
        lines.append(" " * (w + 2) + " ".join(pad(x[:cw], cw) for x in words))
        for name, row in zip(words, res.pair_ranks, strict=True):
            lines.append(pad(name, w) + "  " + " ".join(f"{'-' if v is None else v:>{cw}}" for v in row))
    return "\n".join(lines) + "\n"


def score_text(res) -> str:  # type: ignore[no-untyped-def]
    if getattr(res, "sections", None) is not None:
        w = max([7] + [cell_len(visible(s.name)) for s in res.sections])
        lines = [f"{pad('section', w)}  {'answered':>8}  {'correct':>7}  accuracy"]
        for s in res.sections:
            acc = "-" if s.accuracy is None else f"{s.accuracy:.3f}"
            lines.append(f"{pad(visible(s.name), w)}  {s.answered:>8}  {s.correct:>7}  {acc:>8}")
        acc = "-" if res.accuracy is None else f"{res.accuracy:.3f}"
        lines.append(f"{pad('overall', w)}  {res.answered:>8}  {res.correct:>7}  {acc:>8}")
        lines.append(f"{res.total - res.answered} of {res.total} questions skipped (a word not in the top {res.top})")
        return "\n".join(lines) + "\n"
    rho = "-" if res.spearman is None else f"{res.spearman:.4f}"
    r = "-" if res.pearson is None else f"{res.pearson:.4f}"
    return f"pairs {res.pairs}, used {res.used}, skipped {res.pairs - res.used}\nSpearman rho {rho}\nPearson r    {r}\n"
