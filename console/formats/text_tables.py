"""Plain-text rendering of results for the headless commands and the text export: every result describes itself as
tables and notes (``wordkin.index.kinds.base``); this module lays them out. Every word passes through ``visible``."""

from __future__ import annotations

from collections.abc import Sequence

from rich.cells import cell_len

from wordkin.console.formats.plots import histogram_lines
from wordkin.console.formats.safe_text import visible, visible_word
from wordkin.index.kinds.base import Cell, Result, Table


def pad(text: str, width: int) -> str:
    return text + " " * max(0, width - cell_len(text))


def cell_text(v: Cell) -> str:
    if v is None:
        return "-"
    if isinstance(v, bool):
        return "yes" if v else "no"
    if isinstance(v, float):
        return f"{v:.3f}"
    if isinstance(v, int):
        return str(v)
    return visible_word(v)


def table_lines(t: Table, *, max_width: int = 14) -> list[str]:
    """Fixed-width lines: text columns padded on the right, numbers on the left; no trailing spaces."""
    cells = [[cell_text(v) for v in row] for row in t.rows]
    numeric = t.numeric or tuple(False for _ in t.columns)
    widths = []
    for j, name in enumerate(t.columns):
        w = max([cell_len(visible(name))] + [cell_len(r[j]) for r in cells])
        widths.append(w if not numeric[j] or j == 0 else min(w, max(max_width, 6)))

    def line(values: Sequence[str]) -> str:
        parts = []
        for j, v in enumerate(values):
            parts.append(" " * max(0, widths[j] - cell_len(v)) + v if numeric[j] else pad(v, widths[j]))
        return "  ".join(parts).rstrip()

    out = [line([visible(c) for c in t.columns])]
    out.extend(line(r) for r in cells)
    return out


def answered_by(res: Result) -> str:
    return {"ann": "index candidates, exact cosines", "exact": "exact search"}.get(res.mode, res.mode)


def heading(res: Result) -> str:
    opts = ", ".join(res.query.options())
    return visible(f"{res.query.title()}   [{opts + '; ' if opts else ''}{answered_by(res)}]")


def result_text(res: Result) -> str:
    """A result as the commands print it: a heading, its tables, its notes."""
    out = [heading(res)]
    for caption, t in res.tables():
        if caption:
            out.append(visible(caption))
        out.extend(table_lines(t))
    out.extend(visible(n) for n in res.notes())
    for title, h in res.histograms():
        out.append("")
        out.extend(histogram_lines(title, h))
    return "\n".join(out) + "\n"


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
    out = f"pairs {res.pairs}, used {res.used}, skipped {res.pairs - res.used}\n"
    if res.skipped_lines:
        n = res.skipped_lines
        out += f"skipped: {n} malformed line{'s' if n != 1 else ''}, first at line {res.first_skipped}\n"
    return out + f"Spearman rho {rho}\nPearson r    {r}\n"
