"""Term-list exports: what a search engine or a glossary takes.

- ``words``: the list's terms (seeds, then kept words), one per line.
- ``synonyms``: the plain synonym-rule line format that the common open-source search engines read: one group of
  equivalent terms per line, separated by commas; a comma or a backslash inside a term is escaped with a backslash
  (as is a ``#`` that would start the line); lines starting with ``#`` are comments, here carrying the list's name,
  vector set and date. Words that only binary vector files can hold (control characters) are written as visible
  escapes, never raw.
- ``csv``: every decision with its fields (formula-injection guard as in the notebook exports).
- ``json``: everything, history included; ``wordkin import`` reads it back.
"""

from __future__ import annotations

import csv
import io
import json
import os
from pathlib import Path
from typing import Any

from wordkin.console.formats.notebook_export import csv_cell
from wordkin.console.formats.safe_text import visible
from wordkin.console.store.term_lists import TermList
from wordkin.index.errors import UnreadableFileError, UsageError

FORMATS = ("words", "synonyms", "csv", "json")
JSON_FORMAT = "wordkin-term-list"
JSON_VERSION = 1


def synonym_term(word: str) -> str:
    """A term for a synonym line: backslashes and commas escaped; spaces kept (multi-word terms)."""
    t = visible(word).replace("\\", "\\\\").replace(",", "\\,")
    return "\\" + t if t.startswith("#") else t


def to_words(tl: TermList) -> str:
    return "".join(visible(w) + "\n" for w in tl.terms)


def _source(tl: TermList) -> str:
    vs = tl.vector_set
    if not vs:
        return "no suggestion shown yet"
    return f"{os.path.basename(str(vs.get('path', '?')))} (fingerprint {str(vs.get('fingerprint', ''))[:12]})"


def to_synonyms(tl: TermList, exported: str) -> str:
    lines = [
        f"# wordkin term list: {visible(tl.name)}",
        f"# vector set: {visible(_source(tl))}",
        f"# exported: {exported}; {len(tl.terms)} terms (seeds and kept words)",
        ", ".join(synonym_term(w) for w in tl.terms),
    ]
    return "\n".join(lines) + "\n"


CSV_HEADER = ["list", "word", "decision", "note", "score", "support", "fingerprint", "decided", "by"]


def to_csv(tl: TermList) -> str:
    """One row per word: the seeds, then every current decision with its fields."""
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\r\n")
    w.writerow(CSV_HEADER)
    name = csv_cell(tl.name)
    for s in tl.seeds:
        w.writerow([name, csv_cell(s), "seed", "", "", "", "", tl.created, ""])
    for d in tl.current.values():
        w.writerow(
            [
                name,
                csv_cell(d.word),
                d.state,
                csv_cell(d.note),
                "" if d.score is None else f"{d.score:.6f}",
                "" if d.support is None else str(d.support),
                d.fingerprint,
                d.decided,
                csv_cell(d.by),
            ]
        )
    return buf.getvalue()


def to_json(tl: TermList) -> str:
    doc = {"format": JSON_FORMAT, "version": JSON_VERSION, "list": tl.to_json()}
    return json.dumps(doc, ensure_ascii=True, indent=1) + "\n"


def render(tl: TermList, fmt: str, exported: str) -> str:
    if fmt == "words":
        return to_words(tl)
    if fmt == "synonyms":
        return to_synonyms(tl, exported)
    if fmt == "csv":
        return to_csv(tl)
    if fmt == "json":
        return to_json(tl)
    raise UsageError(f"the format is one of {', '.join(FORMATS)}, not {fmt!r}")


def read_json(path: str | os.PathLike[str], doc: Any) -> TermList:
    """The term list of a parsed JSON export ``doc``; ``UnreadableFileError`` naming ``path`` otherwise."""
    if doc.get("version") != JSON_VERSION:
        raise UnreadableFileError(str(path), f"term-list export version {doc.get('version')} is not {JSON_VERSION}")
    try:
        return TermList.from_json(doc["list"])
    except (KeyError, TypeError, ValueError, AttributeError) as exc:
        raise UnreadableFileError(str(Path(path)), f"the term list is malformed ({exc})") from None
