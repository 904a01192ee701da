"""Shared fixtures. No test downloads anything or writes outside pytest's tmp_path: the cache goes to a temporary
directory through WORDKIN_CACHE for the whole session."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

ROOT = Path(__file__).resolve().parents[1]


@pytest.fixture(autouse=True, scope="session")
def _private_cache(tmp_path_factory: pytest.TempPathFactory):
    root = tmp_path_factory.mktemp("wordkin-cache")
    old = os.environ.get("WORDKIN_CACHE")
    os.environ["WORDKIN_CACHE"] = str(root)
    os.environ.setdefault("WORDKIN_DATA", str(tmp_path_factory.mktemp("wordkin-data")))
    os.environ["WORDKIN_CONFIG"] = str(tmp_path_factory.mktemp("wordkin-config"))  # no user keymap in tests
    yield root
    if old is None:
        os.environ.pop("WORDKIN_CACHE", None)
    else:
        os.environ["WORDKIN_CACHE"] = old


def gensim_data(name: str) -> Path:
    # Reference files shipped with gensim (gensim.test.utils.datapath).
    from gensim.test.utils import datapath

    return Path(datapath(name))


@pytest.fixture(scope="session")
def lee_model(tmp_path_factory: pytest.TempPathFactory):
    """A small word2vec model trained here on gensim's bundled Lee corpus, saved as text, binary and gzip text."""
    from gensim.models import Word2Vec
    from gensim.utils import simple_preprocess

    with open(gensim_data("lee_background.cor"), encoding="utf-8") as f:
        sentences = [simple_preprocess(line) for line in f]
    model = Word2Vec(sentences, vector_size=40, min_count=3, epochs=10, workers=1, seed=7)
    d = tmp_path_factory.mktemp("lee")
    paths = {
        "text": d / "lee.txt",
        "binary": d / "lee.bin",
        "gzip": d / "lee.txt.gz",
    }
    model.wv.save_word2vec_format(str(paths["text"]), binary=False)
    model.wv.save_word2vec_format(str(paths["binary"]), binary=True)
    model.wv.save_word2vec_format(str(paths["gzip"]), binary=False)
    return model.wv, paths


def run_cli(*args: str, env: dict[str, str] | None = None, timeout: float = 120) -> subprocess.CompletedProcess[str]:
    """Run ``wordkin`` in a subprocess, as a user would, and capture its output."""
    e = dict(os.environ)
    if env:
        e.update(env)
    return subprocess.run(
        [sys.executable, "-m", "wordkin.console.cli", *args],
        capture_output=True,
        text=True,
        env=e,
        timeout=timeout,
        cwd=ROOT,
    )


def cli_json(*args: str) -> dict:
    r = run_cli(*args, "--json")
    assert r.returncode == 0, r.stderr
    return json.loads(r.stdout)


def structured_set(
    n: int, dims: int, seed: int = 0, clusters: int = 500, sub: int = 20, noise: float = 0.5
) -> np.ndarray:
    """Seeded clusters in a low-dimensional subspace plus noise: the structure real embeddings have."""
    rng = np.random.default_rng(seed)
    centres = rng.standard_normal((clusters, sub)).astype(np.float32)
    proj = rng.standard_normal((sub, dims)).astype(np.float32) / np.sqrt(sub)
    labels = rng.integers(0, clusters, n)
    x = centres[labels] @ proj + noise * rng.standard_normal((n, dims)).astype(np.float32) / np.sqrt(dims) * 3
    return x.astype(np.float32)


def write_w2v_text(path: Path, words: list[str], vecs: np.ndarray, header: bool = True) -> Path:
    with open(path, "w", encoding="utf-8") as f:
        if header:
            f.write(f"{len(words)} {vecs.shape[1]}\n")
        for w, v in zip(words, vecs, strict=True):
            f.write(w + " " + " ".join(f"{x:.6f}" for x in v) + "\n")
    return path


# -- query shortcuts: each builds the query value and runs it on a session of ``vs`` (and ``ann`` when given) --


def session_of(vs, ann=None):
    from wordkin.index.ann.annoy_file import IndexState
    from wordkin.index.session import Session

    return Session(vs, ann, IndexState.READY if ann is not None else IndexState.EMPTY)


def neighbours(vs, word, k=10, *, ann=None, mode="auto", top=None, **opts):
    from wordkin.index.kinds import Neighbours

    return Neighbours(word, k=k, top=top, exact=mode == "exact", **opts).run(session_of(vs, ann))


def calc(vs, expression, k=10, *, method="add", top=None, keep_inputs=False, ann=None, epsilon=None):
    from wordkin.index.analogy import EPSILON
    from wordkin.index.kinds import Arithmetic

    q = Arithmetic(expression, k=k, method=method, top=top, keep_inputs=keep_inputs)
    return q.run(session_of(vs, ann), epsilon=EPSILON if epsilon is None else epsilon)


def similarity(vs, words):
    from wordkin.index.kinds import Similarity

    return Similarity(tuple(words)).run(session_of(vs))


def stub_entry(word: str, note: str = ""):
    """A notebook entry for a neighbours query with no rows (store tests that need many small entries)."""
    from wordkin.console.store.notebook import Entry
    from wordkin.index.kinds import NeighbourResult, Neighbours

    q = Neighbours(word, k=1)
    return Entry(q, NeighbourResult(q, word, "exact", (), 1), {"path": "x"}, note)
