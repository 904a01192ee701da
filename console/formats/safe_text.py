"""Make untrusted text (words from a vector file) safe to show: every control character becomes a visible escape.

C0 controls, DEL, C1 controls, and the Unicode bidirectional overrides/isolates and other invisible format
characters are replaced by ``\\xNN`` / ``\\uNNNN``, so no terminal escape sequence ever reaches the terminal and no
word can reorder the text around it. Markup is not interpreted because the console renders words as plain
``rich.text.Text`` objects; this module only deals with characters.
"""

from __future__ import annotations

import re
import unicodedata

# Bidi embeddings/overrides/isolates and marks, plus zero-width and other format characters (category Cf).
_UNSAFE = re.compile(r"[\x00-\x1f\x7f-\x9f\u061c\u200b-\u200f\u202a-\u202e\u2060-\u206f\ufeff\ufff9-\ufffb]")


def _esc(m: re.Match[str]) -> str:
    c = m.group(0)
    o = ord(c)
    return f"\\x{o:02x}" if o < 0x100 else f"\\u{o:04x}"


def visible(text: str) -> str:
    """``text`` with every control or invisible format character shown as an escape."""
    if not text:
        return ""
    if text.isprintable() and not _UNSAFE.search(text):
        return text
    out = _UNSAFE.sub(_esc, text)
    # Anything else non-printable (other Cf/Cc/Cs/Co code points, e.g. lone surrogates).
    if not out.isprintable():
        out = "".join(
            ch if ch.isprintable() or ch == " " else (f"\\u{ord(ch):04x}" if ord(ch) <= 0xFFFF else f"\\U{ord(ch):08x}")
            for ch in out
        )
    return out


def visible_word(word: str) -> str:
    """A word as shown in tables: like ``visible``, and the empty word (binary files allow it) as ``""``."""
    return visible(word) if word else '""'


def is_wide(ch: str) -> bool:
    return unicodedata.east_asian_width(ch) in ("W", "F")
