"""Close matches for a word that is not in the vocabulary: case-insensitive equals first, then edit distance."""

from __future__ import annotations


def close_matches(words: list[str], word: str, limit: int = 5) -> list[str]:
    low = word.casefold()
    same_case = [w for w in words if w.casefold() == low and w != word][:limit]
    if len(same_case) >= limit:
        return same_case
    from rapidfuzz import fuzz, process
    from rapidfuzz.distance import Levenshtein

    # Levenshtein over the whole vocabulary in C++; a cutoff keeps far-off words out.
    cutoff = max(1, min(3, len(word) // 3 + 1))
    found = process.extract(word, words, scorer=Levenshtein.distance, limit=limit * 2, score_cutoff=cutoff)
    out = list(same_case)
    for cand, _dist, _idx in sorted(found, key=lambda t: (t[1], -fuzz.ratio(word, t[0]), t[2])):
        if cand not in out and cand != word:
            out.append(cand)
        if len(out) >= limit:
            break
    return out
