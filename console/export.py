"""Notebook exports for colleagues without the tool: plain text, Markdown, CSV and JSON (which imports back).

Control characters in words and notes are made visible (``\\x1b``) in text, Markdown and CSV, and escaped in JSON.
Markdown escapes ``|`` and backticks; CSV guards cells that start with ``=``, ``+``, ``-``, ``@`` (and tab or
carriage return) against spreadsheet formula injection by prefixing a ``'`` (OWASP's advice for CSV injection).
Files are written to a temporary name and renamed; an existing file is only replaced with ``force``.
"""

from __future__ import annotations

import csv
import io
import json
import os
import re
import tempfile
from pathlib import Path
from typing import Any

from rich.cells import cell_len

from index.errors import UnreadableFileError, UsageError

from .notebook import Entry, Notebook
from .safe_text import visible, visible_word

FORMATS = ("text", "md", "csv", "json")
JSON_FORMAT = "wordkin-notebook"
JSON_VERSION = 1
RULE = "-" * 72


def _pad(s: str, w: int) -> str:
    return s + " " * max(0, w - cell_len(s))


def _params(e: Entry) -> str:
    p = e.params
    parts = []
    if "k" in p:
        parts.append(f"k {p['k']}")
    if "method" in p:
        parts.append("method " + {"add": "3CosAdd", "mul": "3CosMul"}.get(p["method"], str(p["method"])))
    if "top" in p:
        parts.append(f"top {p['top'] if p['top'] else 'all'}")
    if "mode" in p:
        parts.append(f"search {p['mode']}")
    return ", ".join(parts) or "none"


def _vector_set(e: Entry) -> str:
    v = e.vector_set
    return (
        f"{visible(os.path.basename(str(v.get('path', '?'))))} ({v.get('words', 0):,} words x {v.get('dims', '?')} "
        f"dims, fingerprint {str(v.get('fingerprint', ''))[:12]})"
    )


def _score_label(e: Entry) -> str:
    return "3CosMul" if e.params.get("method") == "mul" else "cosine"


def text_entry(e: Entry, number: int) -> str:
    """One entry as fixed-width plain text."""
    out = [
        f"#{number}  {visible(e.title)}",
        f"    saved       {e.created}",
        f"    vector set  {_vector_set(e)}",
        f"    parameters  {_params(e)}",
    ]
    note = e.note.strip()
    if note:
        import textwrap

        lines = [w for x in note.splitlines() for w in (textwrap.wrap(visible(x), 56) or [""])] or [""]
        out.append(f"    note        {lines[0]}")
        out.extend(f"                {x}" for x in lines[1:])
    out.append("")
    if e.kind in ("neighbours", "arithmetic"):
        rows = e.result.get("rows", [])
        words = [visible_word(r["word"]) for r in rows]
        w = max([4] + [cell_len(x) for x in words])
        out.append(f"    rank  {_pad('word', w)}  {_score_label(e)}")
        for r, word in zip(rows, words, strict=True):
            out.append(f"    {r['rank']:>4}  {_pad(word, w)}  {r['similarity']:7.3f}")
        if not rows:
            out.append("    (no results)")
        if e.result.get("excluded"):
            out.append("    excluded: " + ", ".join(visible(x) for x in e.result["excluded"]))
        t = e.result.get("target")
        if t:
            where = "excluded" if t.get("rank") is None else f"rank {t['rank']}, score {t['similarity']:.3f}"
            out.append(f"    expected answer {visible(t['word'])}: {where}")
    else:
        words = [visible_word(x) for x in e.query["words"]]
        w = max(cell_len(x) for x in words)
        cw = max(7, min(12, w))
        out.append("    " + " " * (w + 2) + " ".join(_pad(x[:cw], cw) for x in words))
        for name, row in zip(words, e.result["matrix"], strict=True):
            out.append("    " + _pad(name, w) + "  " + " ".join(f"{v:>{cw}.3f}" for v in row))
        if e.result.get("odd_one_out") is not None:
            out.append(f"    odd one out: {visible(e.result['odd_one_out'])}")
    return "\n".join(out) + "\n"


def to_text(entries: list[Entry], source: str, exported: str) -> str:
    head = [
        f"wordkin notebook {visible(os.path.basename(source))}",
        f"exported {exported}, {len(entries)} entr{'y' if len(entries) == 1 else 'ies'}",
        "",
    ]
    body = []
    for i, e in enumerate(entries, 1):
        body.append(RULE)
        body.append(text_entry(e, i))
    return "\n".join(head) + "\n".join(body)


def md_cell(s: str) -> str:
    return visible_word(s).replace("\\", "\\\\").replace("|", "\\|").replace("`", "\\`")


def to_markdown(entries: list[Entry], source: str, exported: str) -> str:
    out = [
        f"# wordkin notebook {md_cell(os.path.basename(source))}",
        "",
        f"Exported {exported}, {len(entries)} entries.",
        "",
    ]
    for i, e in enumerate(entries, 1):
        out += [
            f"## {i}. {md_cell(e.title)}",
            "",
            f"- saved: {e.created}",
            f"- vector set: {md_cell(_vector_set(e))}",
            f"- parameters: {md_cell(_params(e))}",
        ]
        if e.note.strip():
            out.append("- note: " + " ".join(md_cell(x) for x in e.note.strip().splitlines()))
        out.append("")
        if e.kind in ("neighbours", "arithmetic"):
            out += [f"| rank | word | {_score_label(e)} |", "| ---: | --- | ---: |"]
            out += [f"| {r['rank']} | {md_cell(r['word'])} | {r['similarity']:.3f} |" for r in e.result["rows"]]
            if e.result.get("excluded"):
                out += ["", "Excluded: " + ", ".join(md_cell(x) for x in e.result["excluded"]) + "."]
            t = e.result.get("target")
            if t:
                where = "excluded" if t.get("rank") is None else f"rank {t['rank']}, score {t['similarity']:.3f}"
                out += ["", f"Expected answer {md_cell(t['word'])}: {where}."]
        else:
            words = e.query["words"]
            out.append("| | " + " | ".join(md_cell(w) for w in words) + " |")
            out.append("| --- |" + " ---: |" * len(words))
            for w, row in zip(words, e.result["matrix"], strict=True):
                out.append(f"| {md_cell(w)} | " + " | ".join(f"{v:.3f}" for v in row) + " |")
            if e.result.get("odd_one_out") is not None:
                out += ["", f"Odd one out: {md_cell(e.result['odd_one_out'])}."]
        out.append("")
    return "\n".join(out)


def csv_cell(s: str) -> str:
    v = visible(s) if s else s
    if v and v[0] in "=+-@\t\r":
        return "'" + v
    return v


CSV_HEADER = [
    "entry",
    "kind",
    "query",
    "parameters",
    "vector_set",
    "rank",
    "word",
    "other_word",
    "score",
    "note",
]


def to_csv(entries: list[Entry]) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\r\n")
    w.writerow(CSV_HEADER)
    for e in entries:
        base = [
            str(e.id),
            e.kind,
            csv_cell(e.title),
            csv_cell(_params(e)),
            csv_cell(os.path.basename(str(e.vector_set.get("path", "")))),
        ]
        note = csv_cell(e.note)
        if e.kind in ("neighbours", "arithmetic"):
            for r in e.result["rows"]:
                w.writerow(base + [str(r["rank"]), csv_cell(r["word"]), "", f"{r['similarity']:.6f}", note])
        else:
            words = e.query["words"]
            for i, a in enumerate(words):
                for j, b in enumerate(words):
                    if i < j:
                        w.writerow(base + ["", csv_cell(a), csv_cell(b), f"{e.result['matrix'][i][j]:.6f}", note])
    return buf.getvalue()


_JSON_UNSAFE = re.compile(r"[\x7f-\x9f\u061c\u200b-\u200f\u202a-\u202e\u2060-\u206f\ufeff]")


def to_json(entries: list[Entry]) -> str:
    doc = {"format": JSON_FORMAT, "version": JSON_VERSION, "entries": [e.to_json() for e in entries]}
    text = json.dumps(doc, ensure_ascii=False, indent=1, allow_nan=False)
    # json escapes C0 controls itself; C1 controls and bidi/format characters are escaped here too.
    return _JSON_UNSAFE.sub(lambda m: f"\\u{ord(m.group(0)):04x}", text) + "\n"


def render(nb: Notebook, fmt: str, exported: str) -> str:
    entries = nb.entries()
    if fmt == "text":
        return to_text(entries, str(nb.path), exported)
    if fmt == "md":
        return to_markdown(entries, str(nb.path), exported)
    if fmt == "csv":
        return to_csv(entries)
    if fmt == "json":
        return to_json(entries)
    raise UsageError(f"--format is one of {', '.join(FORMATS)}, not {fmt!r}")


def write_file(out: str | os.PathLike[str], text: str, *, force: bool = False) -> Path:
    """Write ``text`` to ``out`` through a temporary file and a rename; refuse to replace a file without force."""
    p = Path(out)
    if p.exists() and not force:
        raise UsageError(f"{p} exists; pass --force to replace it")
    if p.is_dir():
        raise UsageError(f"{p} is a directory")
    fd, tmp = tempfile.mkstemp(prefix=f".{p.name}.", suffix=".tmp", dir=p.parent or ".")
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as f:
            f.write(text)
            f.flush()
            os.fsync(f.fileno())
        os.replace(tmp, p)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return p


def import_json(path: str | os.PathLike[str], nb: Notebook) -> int:
    """Add the entries of a JSON export to ``nb`` (keeping ids when ``nb`` is empty); returns how many."""
    p = Path(path)
    try:
        doc = json.loads(p.read_text(encoding="utf-8"))
    except (OSError, ValueError) as exc:
        raise UnreadableFileError(str(p), f"not a JSON notebook export ({exc})") from None
    if not isinstance(doc, dict) or doc.get("format") != JSON_FORMAT:
        raise UnreadableFileError(str(p), f'not a wordkin notebook export (no "format": "{JSON_FORMAT}")')
    if doc.get("version") != JSON_VERSION:
        raise UnreadableFileError(str(p), f"export version {doc.get('version')} is not {JSON_VERSION}")
    try:
        entries = [Entry.from_json(d) for d in doc.get("entries", [])]
    except (KeyError, TypeError, ValueError) as exc:
        raise UnreadableFileError(str(p), f"an entry is malformed ({exc})") from None
    keep_ids = not nb.entries(include_deleted=True)
    for e in entries:
        nb.add(e, keep_position=True, keep_id=keep_ids)
    return len(entries)


def now_iso() -> str:
    from .notebook import now

    return now()


def export_command(args: Any) -> str:
    with Notebook.open(args.notebook, create=False, readonly=True) as nb:
        return render(nb, args.format, now_iso())
