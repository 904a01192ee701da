"""Word forms: whether a candidate is merely a form of another word (a plural, an inflection, a case variant).

The rule is the plain one that curators use when they skim neighbour lists (common practice, no source): one word
contains the other, compared case-insensitively. It is deliberately simple and language-neutral; it also drops
compounds built on the word (``harbourside`` for ``harbour``), which is what "hide forms" asks for.
"""

from __future__ import annotations

from collections.abc import Iterable


def is_form_of(candidate: str, words: Iterable[str]) -> bool:
    """True when ``candidate`` contains, or is contained in, any of ``words`` (case-insensitively)."""
    c = candidate.casefold()
    for w in words:
        f = w.casefold()
        if f in c or c in f:
            return True
    return False
