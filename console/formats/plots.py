"""Pictures of distributions: histograms drawn with block characters for the terminal and e-mail (they read in
256 colours and under ``NO_COLOR``: the bar is the shape, the count is printed), and the same as SVG files for a
report (``--plot DIR``)."""

from __future__ import annotations

import re
from pathlib import Path
from typing import Any

from wordkin.console.formats.output_file import write_output
from wordkin.console.formats.safe_text import visible

BLOCKS = " ▏▎▍▌▋▊▉█"
WIDTH = 40


def bar(count: int, peak: int, width: int = WIDTH) -> str:
    if peak <= 0:
        return ""
    v = count / peak * width
    full = int(v)
    part = int((v - full) * 8)
    return "█" * full + (BLOCKS[part] if part and full < width else "")


def histogram_lines(title: str, h: Any, *, width: int = WIDTH) -> list[str]:
    """One line per bin: its range, a bar, its count."""
    peak = max(h.counts) if h.counts else 0
    integral = all(float(e).is_integer() for e in h.edges)
    out = [visible(title)]
    for i, c in enumerate(h.counts):
        lo, hi = h.edges[i], h.edges[i + 1]
        label = f"{int(lo):>6}" if integral else f"{lo:7.3f} to {hi:7.3f}"
        out.append(f"  {label}  {bar(c, peak, width):<{width}}  {c:,}".rstrip())
    return out


def svg(title: str, h: Any) -> str:
    """A bar chart of the histogram as a small standalone SVG."""
    w, ht, pad = 640, 320, 40
    n = max(1, len(h.counts))
    peak = max(h.counts) or 1
    bw = (w - 2 * pad) / n
    esc = visible(title).replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    parts = [
        f'<svg xmlns="http://www.w3.org/2000/svg" width="{w}" height="{ht}" viewBox="0 0 {w} {ht}">',
        f'<rect width="{w}" height="{ht}" fill="white"/>',
        f'<text x="{pad}" y="24" font-family="sans-serif" font-size="14">{esc}</text>',
    ]
    for i, c in enumerate(h.counts):
        bh = (ht - 2 * pad - 20) * c / peak
        x = pad + i * bw
        y = ht - pad - bh
        parts.append(
            f'<rect x="{x:.1f}" y="{y:.1f}" width="{max(bw - 1, 1):.1f}" height="{bh:.1f}" fill="#3b6ea5">'
            f"<title>{h.edges[i]:.4g} to {h.edges[i + 1]:.4g}: {c}</title></rect>"
        )
    parts.append(f'<text x="{pad}" y="{ht - 12}" font-family="sans-serif" font-size="11">{h.edges[0]:.4g}</text>')
    parts.append(
        f'<text x="{w - pad}" y="{ht - 12}" font-family="sans-serif" font-size="11" text-anchor="end">'
        f"{h.edges[-1]:.4g}</text>"
    )
    parts.append("</svg>")
    return "\n".join(parts) + "\n"


def write_svgs(result: Any, folder: str) -> list[Path]:
    """Every histogram of ``result`` as ``DIR/<kind>-<name>.svg``; the folder must exist."""
    d = Path(folder)
    if not d.is_dir():
        from wordkin.index.errors import UnreadableFileError

        raise UnreadableFileError(str(d), "no such folder for the plots")
    out = []
    for title, h in result.histograms():
        slug = re.sub(r"[^a-z0-9]+", "-", title.lower()).strip("-")[:40]
        p = d / f"{result.query.kind}-{slug}.svg"
        write_output(p, svg(title, h), force=True)
        out.append(p)
    return out
