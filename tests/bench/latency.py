"""In-process latency on one set: neighbours (index + exact re-rank vs exact scan vs gensim) and analogies.

Usage: python -m tests.bench.latency VECTOR_FILE GENSIM_NATIVE_KV   (prints one JSON line)

``ann_p50``/``ann_p99`` time the console's own path (``Neighbours``: the index where wordkin chooses it, with the
exact re-rank); ``forced_p50`` asks the index whatever the set's size (where the index starts to pay).
"""

from __future__ import annotations

import json
import sys
import time

import numpy as np


def main() -> None:
    from gensim.models import KeyedVectors

    from wordkin.index.ann import annoy_file as ann
    from wordkin.index.kinds import Arithmetic, Neighbours
    from wordkin.index.search import exact_top, top_for_vector
    from wordkin.index.session import Session
    from wordkin.index.vectors import open_vectors

    vs = open_vectors(sys.argv[1])
    loaded = ann.load(vs)
    assert loaded.index is not None, f"run wordkin prepare first ({loaded.state.value} {loaded.reason})"
    session = Session.from_load(vs, loaded)
    exact = Session(vs)
    kv = KeyedVectors.load(sys.argv[2], mmap="r")
    kv.fill_norms()
    rng = np.random.default_rng(2024)
    # Two samples of queries, as the index's own tuning uses: the most frequent words (file order), which people
    # type, and uniformly drawn words, mostly rare. Other seeds and sizes than the tuning's.
    frequent = np.arange(1000, 1400)
    qs = np.concatenate([frequent, rng.choice(np.arange(2000, vs.n), 400, replace=False)])
    np.asarray(vs.unit).sum()  # warm the page cache for both sides alike (the cold case is measured apart)
    from wordkin.index.ann.residency import read_in

    assert loaded.index.path is not None
    read_in(loaded.index.path, lambda d, t: None, lambda: False)
    np.asarray(kv.vectors).sum()
    # Each kind in its own loop: interleaving them lets one side's idle BLAS threads spin against the other's.
    t_ann, t_ex, t_gen, hits, modes = [], [], [], [0, 0], []
    truth = []
    for r in qs:
        t0 = time.perf_counter()
        rows, _ = exact_top(vs, np.asarray(vs.unit[r]), 10, [int(r)])
        t_ex.append(time.perf_counter() - t0)
        truth.append({vs.words[int(x)] for x in rows})
    for r in qs:
        t0 = time.perf_counter()
        kv.most_similar(vs.words[int(r)], topn=10)
        t_gen.append(time.perf_counter() - t0)
    time.sleep(0.5)
    for i, (r, want) in enumerate(zip(qs, truth, strict=True)):
        t0 = time.perf_counter()
        res = Neighbours(vs.words[int(r)], 10).run(session)
        t_ann.append(time.perf_counter() - t0)
        hits[i >= len(frequent)] += len(want & {n.word for n in res.rows})
        modes.append(res.mode)
    t_force = []
    for r in qs:
        t0 = time.perf_counter()
        top_for_vector(vs, np.asarray(vs.unit[r]), 10, [int(r)], ann=loaded.index, mode="ann")
        t_force.append(time.perf_counter() - t0)
    c_ann, c_gen, agree = [], [], 0
    # 400 analogies: over frequent words (the first 2,000) and over random words, half each.
    triples = np.concatenate(
        [
            np.stack([rng.choice(2000, 3, replace=False) for _ in range(200)]),
            np.stack([rng.choice(vs.n, 3, replace=False) for _ in range(200)]),
        ]
    )
    exprs = [" ".join((vs.words[int(b)], "-", vs.words[int(a)], "+", vs.words[int(c)])) for a, b, c in triples]
    exact_top1 = [Arithmetic(e, k=1).run(exact).rows[0].word for e in exprs]
    for a, b, c in triples:
        t0 = time.perf_counter()
        kv.most_similar(positive=[vs.words[int(b)], vs.words[int(c)]], negative=[vs.words[int(a)]], topn=10)
        c_gen.append(time.perf_counter() - t0)
    time.sleep(0.5)
    for e, want in zip(exprs, exact_top1, strict=True):
        t0 = time.perf_counter()
        got = Arithmetic(e, k=10).run(session)
        c_ann.append(time.perf_counter() - t0)
        agree += got.rows[0].word == want
    ms = lambda xs, q=50: float(np.percentile(xs, q) * 1000)  # noqa: E731
    print(
        json.dumps(
            {
                "ann_p50": ms(t_ann),
                "ann_p99": ms(t_ann, 99),
                "exact_p50": ms(t_ex),
                "forced_p50": ms(t_force),
                "gensim_p50": ms(t_gen),
                "recall": sum(hits) / (10 * len(qs)),
                "recall_frequent": hits[0] / (10 * len(frequent)),
                "recall_random": hits[1] / (10 * (len(qs) - len(frequent))),
                "index_share": modes.count("ann") / len(modes),
                "calc_p50": ms(c_ann),
                "gensim_calc_p50": ms(c_gen),
                "calc_agree": agree / len(triples),
            }
        )
    )


if __name__ == "__main__":
    main()
