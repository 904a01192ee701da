"""In-process latency on one set: neighbours (index + exact re-rank vs exact scan vs gensim) and analogies.

Usage: python -m tests.bench.latency TEXT_FILE GENSIM_NATIVE_KV   (prints one JSON line)
"""

from __future__ import annotations

import json
import sys
import time

import numpy as np


def main() -> None:
    from gensim.models import KeyedVectors

    from wordkin.index import ann
    from wordkin.index.queries import Arithmetic, Neighbours
    from wordkin.index.search import exact_top
    from wordkin.index.session import Session
    from wordkin.index.store import open_vectors

    vs = open_vectors(sys.argv[1])
    loaded = ann.load(vs)
    assert loaded.index is not None, f"run wordkin prepare first ({loaded.state.value} {loaded.reason})"
    session = Session.from_load(vs, loaded)
    exact = Session(vs)
    kv = KeyedVectors.load(sys.argv[2], mmap="r")
    kv.fill_norms()
    rng = np.random.default_rng(2024)
    qs = rng.choice(vs.n, 400, replace=False)
    np.asarray(vs.unit).sum()  # warm the page cache for both sides alike
    np.asarray(kv.vectors).sum()
    # Each kind in its own loop: interleaving them lets one side's idle BLAS threads spin against the other's.
    t_ann, t_ex, t_gen, hits = [], [], [], 0
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
    for r, want in zip(qs, truth, strict=True):
        t0 = time.perf_counter()
        res = Neighbours(vs.words[int(r)], 10).run(session)
        t_ann.append(time.perf_counter() - t0)
        hits += len(want & {n.word for n in res.rows})
    c_ann, c_gen, agree = [], [], 0
    triples = rng.choice(vs.n, (200, 3), replace=False) if vs.n >= 600 else rng.choice(vs.n, (200, 3))
    exprs = [" ".join((vs.words[int(b)], "-", vs.words[int(a)], "+", vs.words[int(c)])) for a, b, c in triples]
    exact_top1 = [Arithmetic(e, 1).run(exact).rows[0].word for e in exprs]
    for a, b, c in triples:
        t0 = time.perf_counter()
        kv.most_similar(positive=[vs.words[int(b)], vs.words[int(c)]], negative=[vs.words[int(a)]], topn=10)
        c_gen.append(time.perf_counter() - t0)
    time.sleep(0.5)
    for e, want in zip(exprs, exact_top1, strict=True):
        t0 = time.perf_counter()
        got = Arithmetic(e, 10).run(session)
        c_ann.append(time.perf_counter() - t0)
        agree += got.rows[0].word == want
    ms = lambda xs, q=50: float(np.percentile(xs, q) * 1000)  # noqa: E731
    print(
        json.dumps(
            {
                "ann_p50": ms(t_ann),
                "ann_p99": ms(t_ann, 99),
                "exact_p50": ms(t_ex),
                "gensim_p50": ms(t_gen),
                "recall": hits / (10 * len(qs)),
                "calc_p50": ms(c_ann),
                "gensim_calc_p50": ms(c_gen),
                "calc_agree": agree / len(triples),
            }
        )
    )


if __name__ == "__main__":
    main()
