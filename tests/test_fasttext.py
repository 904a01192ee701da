"""fastText ``.bin`` models: every word-vector model gensim ships for its tests, read by content, with vectors for
vocabulary words and for words the model never saw equal to gensim's ``load_facebook_vectors`` (the outside
reference), n-gram hashes equal to the published algorithm, damaged files refused cleanly."""

from __future__ import annotations

import importlib.util
import json
import struct
from pathlib import Path

import numpy as np
import pytest

from wordkin.index.errors import UnknownWordError, UnreadableFileError
from wordkin.index.kinds import Neighbours, Similarity, TermSuggest
from wordkin.index.subwords import ngram_buckets
from wordkin.index.vectors import open_vectors

from .conftest import gensim_data, run_cli, session_of

# The fastText word-vector models in gensim's test data (gensim.test.utils.datapath): old (pre-0.1) and new
# formats, ASCII, non-ASCII and cp852 words. pang_lee_polarity_fasttext.bin is a classifier: refused, below.
MODELS = [
    "lee_fasttext.bin",
    "lee_fasttext_new.bin",
    "crime-and-punishment.bin",
    "toy-model.bin",
    "toy-model-pretrained.bin",
    "non_ascii_fasttext.bin",
    "cp852_fasttext.bin",
]


def unknown_words(vocab: list[str], n: int = 50) -> list[str]:
    """Misspellings, inflections and unseen compounds made from the vocabulary, plus non-ASCII words."""
    base = [w for w in vocab if w.isalpha() and len(w) >= 3][:40] or ["harbour"]
    out = ["harbourfront", "brackwaterish", "café", "straße", "dağ", "東京港", "naïveté", "ğüşıöç"]
    i = 0
    while len(out) < 3 * n:
        w = base[i % len(base)]
        out += [w + "s", w + "ing", w[:-1], w[0] + w, w + base[(i + 1) % len(base)]]
        i += 1
    vocab_set = set(vocab)
    return [w for w in dict.fromkeys(out) if w not in vocab_set][:n]


def fnv1a_reference(data: bytes) -> int:
    """32-bit FNV-1a as fastText's Dictionary::hash computes it: each byte read as a signed char first."""
    h = 2166136261
    for b in data:
        signed = b - 256 if b >= 128 else b
        h ^= signed & 0xFFFFFFFF
        h = (h * 16777619) & 0xFFFFFFFF
    return h


def reference_ngrams(word: str, minn: int, maxn: int) -> list[bytes]:
    """fastText's computeSubwords, character by character (written from its documented behaviour)."""
    chars = ["<"] + list(word) + [">"]
    out = []
    for i in range(len(chars)):
        for n in range(minn, maxn + 1):
            if i + n > len(chars):
                break
            if n == 1 and (i == 0 or i + n == len(chars)):
                continue
            out.append("".join(chars[i : i + n]).encode("utf-8"))
    return out


@pytest.mark.parametrize("word", ["café", "straße", "dağ", "東京", "harbour", "a", "ğüş", "x" * 12])
def test_ngram_hashes_follow_the_published_algorithm(word):
    rows, off = ngram_buckets([word.encode("utf-8")], 3, 6, 2_000_000)
    want = sorted(fnv1a_reference(g) % 2_000_000 for g in reference_ngrams(word, 3, 6))
    assert sorted(rows[off[0] : off[1]].tolist()) == want
    from gensim.models.fasttext import ft_ngram_hashes  # gensim's implementation, the second reference

    assert sorted(ft_ngram_hashes(word, 3, 6, 2_000_000)) == want


def test_fnv_sign_extension_matters():
    # "é" is C3 A9: bytes >= 0x80 are sign-extended before the XOR, which changes the hash.
    plain = 2166136261
    for b in "é".encode():
        plain = ((plain ^ b) * 16777619) & 0xFFFFFFFF
    assert fnv1a_reference("é".encode()) != plain


@pytest.mark.parametrize("name", MODELS)
def test_vectors_and_neighbours_equal_gensim(name, tmp_path):
    from gensim.models.fasttext import load_facebook_vectors

    path = gensim_data(name)
    vs = open_vectors(path, cache_root=tmp_path / "c")
    assert vs.format == "fasttext-bin" and vs.subwords is not None
    kv = load_facebook_vectors(str(path))
    session = session_of(vs)
    # cp852 words are not UTF-8: gensim and wordkin decode them differently (both say so); ASCII words compare.
    vocab = [w for w in kv.index_to_key if vs.find(w) is not None and (name != "cp852_fasttext.bin" or w.isascii())]
    for w in vocab[:50]:
        r = vs.find(w)
        np.testing.assert_allclose(vs.unit[r] * vs.norms[r], kv.get_vector(w), atol=1e-5)
    k = min(10, vs.n - 1)
    unknown = unknown_words(list(kv.index_to_key))
    assert len(unknown) == 50
    for w in unknown:
        wv = vs.word_vector(w)
        assert wv.source == "subwords" and wv.row is None
        ref = kv.get_vector(w)
        np.testing.assert_allclose(wv.vector, ref / np.linalg.norm(ref), atol=1e-5)
    if name == "cp852_fasttext.bin":
        return  # its non-UTF-8 words have other vectors in gensim (re-encoded), so neighbour lists differ there
    for w in vocab[:10] + unknown[:10]:
        res = Neighbours(w, k=k, exact=True).run(session)
        ref = kv.most_similar(w, topn=k)
        np.testing.assert_allclose([n.similarity for n in res.rows], [s for _, s in ref], atol=1e-5)
        # Same words wherever the cosines are not tied within float error.
        sims = [s for _, s in ref]
        for i, (n, (rw, _)) in enumerate(zip(res.rows, ref, strict=True)):
            tied = any(abs(sims[i] - sims[j]) < 1e-5 for j in range(len(sims)) if j != i)
            assert tied or n.word == rw, (w, i, n.word, rw)


def test_unknown_words_in_every_query_kind(tmp_path):
    vs = open_vectors(gensim_data("lee_fasttext.bin"), cache_root=tmp_path / "c")
    s = session_of(vs)
    res = Neighbours("harbourfront", k=5).run(s)
    assert res.subword is not None and res.subword.ngrams > 0 and res.to_json()["query_vector"] == "subwords"
    assert Neighbours("governmentt", k=5).run(s).subword.close[0] == "government"  # close matches, beside the answer
    from wordkin.index.kinds import Arithmetic

    calc = Arithmetic("governmentt - government + police", k=5).run(s)
    assert [x.word for x in calc.subwords] == ["governmentt"] and calc.to_json()["query_vector"] == "subwords"
    sim = Similarity(("police", "officers", "polisemen")).run(s)
    assert [x.word for x in sim.subwords] == ["polisemen"] and sim.pair_ranks[0][2] is None
    terms = TermSuggest("t", ("police", "polisemen"), k=5).run(s)
    assert [x.word for x in terms.subwords] == ["polisemen"] and len(terms.rows) == 5
    with pytest.raises(UnknownWordError):
        Neighbours("harbourfront", k=5, subwords=False).run(s)
    # A .vec file of the same model: nothing changes, unknown words are unknown.
    vec = open_vectors(gensim_data("lee_fasttext.vec"), cache_root=tmp_path / "c")
    with pytest.raises(UnknownWordError):
        Neighbours("harbourfront", k=5).run(session_of(vec))


def test_command_line_marks_subword_answers(tmp_path):
    path = str(gensim_data("lee_fasttext.bin"))
    r = run_cli("near", path, "governmentt", "-k", "3", "--json")
    assert r.returncode == 0, r.stderr
    out = json.loads(r.stdout)
    assert out["query_vector"] == "subwords" and out["subwords"]["ngrams"]["total"] > 0
    assert "government" in out["subwords"]["close_matches"]
    text = run_cli("near", path, "governmentt", "-k", "3").stdout
    assert "≈ governmentt: not in the vocabulary; built from its character n-grams" in text
    assert json.loads(run_cli("near", path, "government", "-k", "3", "--json").stdout)["query_vector"] == "vocabulary"
    r = run_cli("near", path, "governmentt", "--no-subwords")
    assert r.returncode == 3 and "close matches" in r.stderr
    nb = tmp_path / "nb.wkn"
    assert run_cli("near", path, "governmentt", "--save", str(nb)).returncode == 0
    md = run_cli("export", str(nb), "--format", "md").stdout
    assert "built from its character n-grams" in md


def _model_bytes() -> bytes:
    return gensim_data("lee_fasttext_new.bin").read_bytes()


@pytest.mark.parametrize(
    "damage,words",
    [
        ("truncated", "cut short"),
        ("version", "version 99"),
        ("bucket", "buckets"),
        ("supervised", "supervised"),
    ],
)
def test_damaged_models_are_one_line_exit_4(tmp_path, damage, words):
    data = bytearray(_model_bytes())
    if damage == "truncated":
        data = data[: len(data) // 2]
    elif damage == "version":
        data[4:8] = struct.pack("<i", 99)
    elif damage == "bucket":
        # The 9th argument (after magic, version and 8 ints) is the bucket count.
        data[8 + 8 * 4 : 8 + 9 * 4] = struct.pack("<i", 5000)
    elif damage == "supervised":
        data[8 + 7 * 4 : 8 + 8 * 4] = struct.pack("<i", 3)
    bad = tmp_path / "model.bin"
    bad.write_bytes(bytes(data))
    cache = tmp_path / "cache"
    r = run_cli("near", str(bad), "the", "--cache", str(cache))
    assert r.returncode == 4, r.stderr
    assert words in r.stderr and len(r.stderr.strip().splitlines()) == 1 and "Traceback" not in r.stderr
    assert not list(cache.rglob("meta.json")) if cache.exists() else True
    with pytest.raises(UnreadableFileError):
        open_vectors(bad, cache_root=cache)


def test_wrong_magic_is_not_taken_for_a_model(tmp_path):
    data = bytearray(_model_bytes())
    data[0:4] = struct.pack("<i", 12345)
    bad = tmp_path / "model.bin"
    bad.write_bytes(bytes(data))
    r = run_cli("info", str(bad), "--cache", str(tmp_path / "c"))
    assert r.returncode == 4 and len(r.stderr.strip().splitlines()) == 1


def test_classifier_model_is_refused():
    r = run_cli("info", str(gensim_data("pang_lee_polarity_fasttext.bin")), "--no-cache")
    assert r.returncode == 4 and "supervised" in r.stderr


def test_second_open_maps_both_matrices(tmp_path):
    path = gensim_data("lee_fasttext_new.bin")
    vs = open_vectors(path, cache_root=tmp_path / "c")
    assert vs.cache_note == "built" and (vs.cache_dir / "ngrams.npy").is_file()
    again = open_vectors(path, cache_root=tmp_path / "c")
    assert again.cache_note == "hit"
    assert isinstance(again.subwords.ngrams, np.memmap)
    np.testing.assert_array_equal(again.word_vector("harbourfront").vector, vs.word_vector("harbourfront").vector)


@pytest.mark.skipif(importlib.util.find_spec("fasttext") is None, reason="the fastText Python binding is not installed")
def test_against_the_fasttext_binding(tmp_path):
    import fasttext

    corpus = tmp_path / "corpus.txt"
    rng = np.random.default_rng(3)
    vocab = ["harbour", "ferry", "quay", "pier", "inn", "hotel", "hostel", "café", "straße", "dağ", "東京"]
    filler = [f"w{i}x" for i in range(200)]  # a vocabulary this small alone drives training to NaN
    lines = [" ".join(rng.choice(vocab + filler, 12)) for _ in range(2000)]
    corpus.write_text("\n".join(lines) + "\n", encoding="utf-8")
    for attempt in range(5):
        try:  # on a corpus this small the binding's training now and then ends in "Encountered NaN"
            model = fasttext.train_unsupervised(
                str(corpus), dim=16, minCount=1, epoch=3, lr=0.01, thread=1, bucket=5000, verbose=0
            )
            break
        except RuntimeError:
            if attempt == 4:
                raise
    out = tmp_path / "m.bin"
    model.save_model(str(out))
    vs = open_vectors(out, cache_root=tmp_path / "c")
    for w in vocab + ["harbourfront", "cafés", "straßen", "東京港"]:
        want = np.asarray(model.get_word_vector(w), dtype=np.float32)
        r = vs.find(w)
        got = vs.unit[r] * vs.norms[r] if r is not None else vs.subwords.vector(w)[0]  # raw, before normalising
        np.testing.assert_allclose(got, want, atol=1e-5, rtol=1e-4)


def test_models_are_detected_by_content_not_name(tmp_path):
    renamed = tmp_path / "vectors.txt"
    renamed.write_bytes(Path(gensim_data("lee_fasttext.bin")).read_bytes())
    vs = open_vectors(renamed, cache_root=tmp_path / "c")
    assert vs.format == "fasttext-bin"
