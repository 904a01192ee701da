"""Analogy scoring time: wordkin's batched scoring against gensim's evaluate_word_analogies on the same vectors.

Usage: python -m tests.bench.scoring TEXT_FILE GENSIM_NATIVE_KV QUESTIONS   (prints one JSON line)
"""

from __future__ import annotations

import json
import sys
import time


def main() -> None:
    from gensim.models import KeyedVectors

    from wordkin.index.scoring import read_analogies, score_analogies
    from wordkin.index.vectors import open_vectors

    vs = open_vectors(sys.argv[1])
    kv = KeyedVectors.load(sys.argv[2], mmap="r")
    kv.fill_norms()
    t0 = time.perf_counter()
    ours = score_analogies(vs, read_analogies(sys.argv[3]), top=300_000)
    t_ours = time.perf_counter() - t0
    t0 = time.perf_counter()
    _, sections = kv.evaluate_word_analogies(sys.argv[3], restrict_vocab=300_000, case_insensitive=False)
    t_gen = time.perf_counter() - t0
    total = sections[-1]
    same = ours.correct == len(total["correct"]) and ours.answered == len(total["correct"]) + len(total["incorrect"])
    print(json.dumps({"ours": t_ours, "gensim": t_gen, "same": same}))


if __name__ == "__main__":
    main()
