"""The Brackwater Guides demo vector set (see README.md here): vectors, analogy questions and word pairs."""

from __future__ import annotations

from pathlib import Path

HERE = Path(__file__).resolve().parent


def demo_path() -> Path:
    return HERE / "brackwater.vec.gz"


def fasttext_path() -> Path:
    """A fastText model of the same corpus: words it never saw get vectors from their character n-grams."""
    return HERE / "brackwater-ft.bin"


def analogies_path() -> Path:
    return HERE / "brackwater-analogies.txt"


def pairs_path() -> Path:
    return HERE / "brackwater-pairs.tsv"
