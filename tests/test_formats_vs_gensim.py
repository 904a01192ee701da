"""Parsing and exact neighbours checked against gensim, the reference library, on real vectors."""

from __future__ import annotations

import numpy as np
import pytest
from gensim.models import KeyedVectors

from wordkin.index.vectors import open_vectors

from .conftest import cli_json, gensim_data, neighbours


def _gensim(path, **kw) -> KeyedVectors:
    return KeyedVectors.load_word2vec_format(str(path), **kw)


def _cases(lee_model):
    _, p = lee_model
    return [
        ("glove", gensim_data("test_glove.txt"), {"no_header": True}, "glove-text"),
        ("fasttext-vec", gensim_data("lee_fasttext.vec"), {}, "word2vec-text"),
        ("lee-text", p["text"], {}, "word2vec-text"),
        ("lee-binary", p["binary"], {"binary": True}, "word2vec-binary"),
        ("lee-gzip", p["gzip"], {}, "word2vec-text+gzip"),
    ]


@pytest.mark.parametrize("case", range(5), ids=["glove", "fasttext-vec", "lee-text", "lee-binary", "lee-gzip"])
def test_matrix_equals_gensim(lee_model, case):
    name, path, kw, fmt = _cases(lee_model)[case]
    kv = _gensim(path, **kw)
    vs = open_vectors(path)
    assert vs.format == fmt
    assert vs.words == list(kv.index_to_key)
    raw = np.asarray(vs.unit) * vs.norms[:, None]
    np.testing.assert_allclose(raw, kv.vectors, atol=1e-6, rtol=1e-6)
    # Unit rows, C-contiguous float32, memory-mapped from the cache.
    assert vs.unit.dtype == np.float32 and vs.unit.flags["C_CONTIGUOUS"]
    np.testing.assert_allclose(np.linalg.norm(vs.unit, axis=1), 1.0, atol=1e-5)


@pytest.mark.parametrize("case", range(5), ids=["glove", "fasttext-vec", "lee-text", "lee-binary", "lee-gzip"])
def test_near_exact_equals_most_similar(lee_model, case):
    name, path, kw, _ = _cases(lee_model)[case]
    kv = _gensim(path, **kw)
    for word in kv.index_to_key[:40:7]:
        ref = kv.most_similar(word, topn=10)
        got = cli_json("near", str(path), word, "-k", "10", "--exact")
        assert got["mode"] == "exact" and got["query"] == word and got["k"] == 10
        assert [r["word"] for r in got["results"]] == [w for w, _ in ref]
        np.testing.assert_allclose([r["similarity"] for r in got["results"]], [s for _, s in ref], atol=1e-5)
        assert [r["rank"] for r in got["results"]] == list(range(1, 11))


def test_engine_api_matches_gensim_on_glove():
    path = gensim_data("test_glove.txt")
    kv = _gensim(path, no_header=True)
    vs = open_vectors(path)
    word = kv.index_to_key[3]
    res = neighbours(vs, word, 5, mode="exact")
    assert [n.word for n in res.rows] == [w for w, _ in kv.most_similar(word, topn=5)]
