"""Character n-grams of fastText (Bojanowski, Grave, Joulin & Mikolov 2017): which rows of a model's n-gram bucket
matrix make up a word's vector, and the vector of a word the model never saw.

As fastText computes them (its ``Dictionary::computeSubwords`` and ``Dictionary::hash``; gensim's
``ft_ngram_hashes`` does the same): the word is wrapped as ``<word>`` and encoded as UTF-8; every run of ``minn`` to
``maxn`` *characters* (a character is a UTF-8 lead byte and its continuation bytes) is an n-gram, except the lone
``<`` and ``>``; each n-gram's bytes are hashed with 32-bit FNV-1a, each byte sign-extended from ``int8`` first
(fastText reads them as ``char``), and the hash modulo the bucket count is the row. A word's vector is the mean of
those rows (for a vocabulary word, of its own row and those rows). The hashing is vectorised over many words at
once with numpy (uint32 arithmetic wraps as C's does).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
from numpy.typing import NDArray

FNV_OFFSET = np.uint32(2166136261)
FNV_PRIME = np.uint32(16777619)


def _fnv1a(data: NDArray[np.uint8], starts: NDArray[np.int64], lengths: NDArray[np.int64]) -> NDArray[np.uint32]:
    """FNV-1a (fastText's variant: each byte sign-extended from int8) of ``data[s:s+l]`` for every (s, l)."""
    out = np.empty(len(starts), dtype=np.uint32)
    signed = data.view(np.int8).astype(np.int32).astype(np.uint32)  # sign extension, as uint32(int8_t(c))
    for length in np.unique(lengths):
        sel = np.flatnonzero(lengths == length)
        h = np.full(len(sel), FNV_OFFSET, dtype=np.uint32)
        base = starts[sel]
        for t in range(int(length)):
            h ^= signed[base + t]
            h *= FNV_PRIME
        out[sel] = h
    return out


def ngram_buckets(words: list[bytes], minn: int, maxn: int, bucket: int) -> tuple[NDArray[np.int64], NDArray[np.int64]]:
    """The n-gram rows of each word (raw UTF-8 bytes, without the ``<`` ``>``): ``(rows, offsets)`` where word i's
    rows are ``rows[offsets[i]:offsets[i + 1]]`` (bucket numbers, not yet offset by the vocabulary size)."""
    n = len(words)
    if n == 0 or bucket <= 0 or maxn <= 0 or minn > maxn:
        return np.empty(0, np.int64), np.zeros(n + 1, np.int64)
    wrapped = [b"<" + w + b">" for w in words]
    lens = np.fromiter((len(w) for w in wrapped), dtype=np.int64, count=n)
    data = np.frombuffer(b"".join(wrapped), dtype=np.uint8)
    word_start = np.concatenate(([0], np.cumsum(lens)))
    is_lead = (data & 0xC0) != 0x80
    char_pos = np.flatnonzero(is_lead).astype(np.int64)  # byte offset of every character
    char_word = np.searchsorted(word_start, char_pos, side="right") - 1  # which word each character is in
    chars_per_word = np.bincount(char_word, minlength=n)
    first_char = np.concatenate(([0], np.cumsum(chars_per_word)))
    local = np.arange(len(char_pos)) - first_char[char_word]  # character index within its word
    remaining = chars_per_word[char_word] - local  # characters from here to the end of the word, this one included
    ends = np.concatenate((char_pos, [len(data)]))  # start of character g + n is the end of an n-gram at g
    starts_all, lens_all, word_all = [], [], []
    for length in range(minn, maxn + 1):
        ok = remaining >= length
        if length == 1:
            ok &= (local != 0) & (remaining != 1)  # not the lone "<" nor the lone ">"
        g = np.flatnonzero(ok)
        starts_all.append(char_pos[g])
        lens_all.append(ends[g + length] - char_pos[g])
        word_all.append(char_word[g])
    starts = np.concatenate(starts_all)
    blen = np.concatenate(lens_all)
    wid = np.concatenate(word_all)
    order = np.argsort(wid, kind="stable")  # grouped by word (a mean does not depend on the order within)
    starts, blen, wid = starts[order], blen[order], wid[order]
    rows = (_fnv1a(data, starts, blen) % np.uint32(bucket)).astype(np.int64)
    offsets = np.concatenate(([0], np.cumsum(np.bincount(wid, minlength=n)))).astype(np.int64)
    return rows, offsets


@dataclass
class SubwordTable:
    """A fastText model's n-gram bucket matrix (raw, not normalised) and its parameters.

    ``seen`` marks the buckets that some vocabulary word's n-grams fall in: fastText trains the n-grams of its
    vocabulary only, so an unknown word's n-grams outside them carry no training (collisions aside).
    """

    ngrams: NDArray[np.float32]  # (bucket, dims), memory-mapped
    seen: NDArray[np.bool_]  # (bucket,)
    minn: int
    maxn: int

    @property
    def bucket(self) -> int:
        return int(self.ngrams.shape[0])

    def vector(self, word: str) -> tuple[NDArray[np.float32], int, int]:
        """The raw vector of ``word`` from its n-grams, and how many of its n-grams are known (of how many)."""
        rows, _ = ngram_buckets([word.encode("utf-8")], self.minn, self.maxn, self.bucket)
        dims = int(self.ngrams.shape[1])
        if len(rows) == 0:
            return np.zeros(dims, dtype=np.float32), 0, 0
        vec = np.asarray(self.ngrams[np.sort(rows)], dtype=np.float32).sum(axis=0) / np.float32(len(rows))
        return vec.astype(np.float32), int(np.count_nonzero(self.seen[rows])), int(len(rows))
