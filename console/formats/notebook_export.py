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
from pathlib import Path
from typing import Any

from rich.cells import cell_len

from wordkin.console.formats.output_file import write_output
from wordkin.console.formats.safe_text import visible, visible_word
from wordkin.console.formats.text_tables import cell_text, table_lines
from wordkin.console.store.legacy_v1 import upgrade_v1
from wordkin.console.store.notebook import Entry, Notebook
from wordkin.index.errors import UnreadableFileError, UsageError
from wordkin.index.kinds.base import Table

FORMATS = ("text", "md", "csv", "json")
JSON_FORMAT = "wordkin-notebook"
JSON_VERSION = 2
RULE = "-" * 72


def _pad(s: str, w: int) -> str:
    return s + " " * max(0, w - cell_len(s))


def _params(e: Entry) -> str:
    """Every option that shaped the result, and how it was answered."""
    opts = e.query.options()
    how = {"ann": "answered by index candidates, exact cosines", "exact": "answered by exact search"}.get(
        e.result.mode, ""
    )
    return ", ".join(opts + ([how] if how else [])) or "none"


def _vector_set(e: Entry) -> str:
    v = e.vector_set
    return (
        f"{visible(os.path.basename(str(v.get('path', '?'))))} ({v.get('words', 0):,} words x {v.get('dims', '?')} "
        f"dims, fingerprint {str(v.get('fingerprint', ''))[:12]})"
    )


def text_entry(e: Entry, number: int, *, result_first: bool = False) -> str:
    """One entry as fixed-width plain text (``result_first``: the result's table before where it came from)."""
    head = [f"#{number}  {visible(e.title)}"]
    meta = [
        f"    saved       {e.created}",
        f"    vector set  {_vector_set(e)}",
        f"    parameters  {visible(_params(e))}",
    ]
    note = e.note.strip()
    if note:
        import textwrap

        lines = [w for x in note.splitlines() for w in (textwrap.wrap(visible(x), 56) or [""])] or [""]
        meta.append(f"    note        {lines[0]}")
        meta.extend(f"                {x}" for x in lines[1:])
    out = head + ([] if result_first else meta + [""])
    for caption, table in e.result.tables():
        if caption:
            out.append("    " + visible(caption))
        if table.rows:
            out.extend("    " + line for line in table_lines(table))
        else:
            out.append("    (no results)")
    out.extend("    " + visible(n) for n in e.result.notes())
    if result_first:
        out += [""] + meta
    return "\n".join(out) + "\n"


def to_text(entries: list[Entry], source: str, exported: str) -> str:
    head = [
        f"wordkin notebook {visible(os.path.basename(source))}",
        f"exported {exported}, {_count(len(entries))}",
        "",
    ]
    body = []
    for i, e in enumerate(entries, 1):
        body.append(RULE)
        body.append(text_entry(e, i))
    return "\n".join(head) + "\n".join(body)


def md_cell(s: str) -> str:
    return visible_word(s).replace("\\", "\\\\").replace("|", "\\|").replace("`", "\\`")


def md_table(t: Table) -> list[str]:
    head = "| " + " | ".join(md_cell(c) if c else " " for c in t.columns) + " |"
    numeric = t.numeric or tuple(False for _ in t.columns)
    rule = "|" + "|".join(" ---: " if n else " --- " for n in numeric) + "|"
    rows = ["| " + " | ".join(md_cell(cell_text(v)) for v in row) + " |" for row in t.rows]
    return [head, rule, *rows]


def to_markdown(entries: list[Entry], source: str, exported: str) -> str:
    out = [
        f"# wordkin notebook {md_cell(os.path.basename(source))}",
        "",
        f"Exported {exported}, {_count(len(entries))}.",
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
        for caption, table in e.result.tables():
            out.append("")
            if caption:
                out += [md_cell(caption), ""]
            out += md_table(table)
        notes = e.result.notes()
        if notes:
            out += [""] + [md_cell(n) + "  " for n in notes]
        out.append("")
    return "\n".join(out)


def _count(n: int) -> str:
    return f"{n} entr{'y' if n == 1 else 'ies'}"


def csv_cell(s: str) -> str:
    v = visible(s) if s else s
    if v and v[0] in "=+-@\t\r":
        return "'" + v
    return v


CSV_HEADER = ["entry", "kind", "query", "parameters", "vector_set", "note"]


def to_csv(entries: list[Entry]) -> str:
    """One row per result row: the entry's columns, then the union of the results' own columns."""
    records = [(e, e.result.records()) for e in entries]
    extra: list[str] = []
    for _, recs in records:
        for r in recs:
            extra.extend(k for k in r if k not in extra)
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\r\n")
    w.writerow(CSV_HEADER + extra)
    for e, recs in records:
        base = [
            str(e.id),
            e.kind,
            csv_cell(e.title),
            csv_cell(_params(e)),
            csv_cell(os.path.basename(str(e.vector_set.get("path", "")))),
            csv_cell(e.note),
        ]
        for r in recs:
            w.writerow(base + [_csv_value(r.get(k)) for k in extra])
    return buf.getvalue()


def _csv_value(v: Any) -> str:
    if v is None:
        return ""
    if isinstance(v, float):
        return f"{v:.6f}"
    if isinstance(v, bool | int):
        return str(v)
    return csv_cell(str(v))


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


def write_file(out: str | os.PathLike[str], text: str, *, force: bool = False, how_to_force: str = "--force") -> str:
    """Write an export by the rules of ``output_file.write_output``; returns where it went."""
    return write_output(out, text, force=force, how_to_force=how_to_force)


def read_export(path: str | os.PathLike[str]) -> Any:
    """The parsed JSON of an export file; one-line ``UnreadableFileError`` for anything that is not JSON."""
    p = Path(path)
    try:
        doc = json.loads(p.read_text(encoding="utf-8"))
    except (OSError, ValueError, RecursionError) as exc:
        why = "nested too deeply" if isinstance(exc, RecursionError) else str(exc)
        raise UnreadableFileError(str(p), f"not a JSON export ({why})") from None
    if not isinstance(doc, dict):
        raise UnreadableFileError(str(p), "not a wordkin export (not a JSON object)")
    return doc


def read_entries(path: str | os.PathLike[str], doc: dict[str, Any]) -> list[Entry]:
    """The entries of a parsed notebook export ``doc``, checked before anything is written."""
    p = Path(path)
    if doc.get("version") not in (1, JSON_VERSION):
        raise UnreadableFileError(str(p), f"export version {doc.get('version')} is not {JSON_VERSION}")
    try:
        raw = doc.get("entries", [])
        if doc["version"] == 1:
            raw = [_from_v1(d) for d in raw]
        return [Entry.from_json(d) for d in raw]
    except (KeyError, TypeError, ValueError, AttributeError) as exc:
        raise UnreadableFileError(str(p), f"an entry is malformed ({exc})") from None


def add_entries(nb: Notebook, entries: list[Entry]) -> int:
    """Add imported entries (keeping their ids when ``nb`` is empty); returns how many."""
    keep_ids = not nb.entries(include_deleted=True)
    for e in entries:
        nb.add(e, keep_position=True, keep_id=keep_ids)
    return len(entries)


def import_json(path: str | os.PathLike[str], nb: Notebook) -> int:
    """Add the entries of a notebook JSON export to ``nb``; returns how many."""
    doc = read_export(path)
    if doc.get("format") != JSON_FORMAT:
        raise UnreadableFileError(str(path), f'not a wordkin notebook export (no "format": "{JSON_FORMAT}")')
    return add_entries(nb, read_entries(path, doc))


def _from_v1(d: dict[str, Any]) -> dict[str, Any]:
    q, r = upgrade_v1(d["kind"], d["query"], d["params"], d["result"])
    return {**d, "query": q, "result": r}


def now_iso() -> str:
    from wordkin.console.store.notebook import now

    return now()


def export_command(args: Any) -> str:
    with Notebook.open(args.notebook, create=False, readonly=True) as nb:
        return render(nb, args.format, now_iso())
