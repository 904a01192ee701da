"""Vector arithmetic and analogies: 3CosAdd for any expression, 3CosMul for plain +/- word sums.

3CosAdd (Mikolov et al. 2013): the unit vectors of the words are weighted, added and subtracted; answers are ranked
by cosine to the result. 3CosMul (Levy and Goldberg 2014): for positive words P and negative words N, each word x
scores prod_p s(x,p) / (prod_n s(x,n) + eps) with s = (cos + 1) / 2, eps = 0.001 as in the paper (gensim's
``most_similar_cosmul`` uses 1e-6; ``epsilon`` is a parameter so the tests can check against it). The expression's
own words are excluded from the answers unless ``keep_inputs``. The query itself is ``kind_arithmetic``.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
from numpy.typing import NDArray

from wordkin.index.ann.annoy_file import AnnIndex
from wordkin.index.expressions import Analogy, Centroid, Node, Scale, Sum, Word
from wordkin.index.search import best_of, top_for_vector, use_ann
from wordkin.index.vectors import VectorSet

EPSILON = 0.001
#: Candidates taken from annoy (for the 3CosAdd vector) before 3CosMul re-scores them exactly.
MUL_POOL = 200


def vector_of(node: Node, lookup: Callable[[str], NDArray[np.float32]], dims: int) -> NDArray[np.float32]:
    """The 3CosAdd vector of an expression tree (not normalised); ``lookup`` gives each word's unit vector."""
    if isinstance(node, Word):
        return lookup(node.text)
    if isinstance(node, Scale):
        return np.float32(node.weight) * vector_of(node.node, lookup, dims)
    if isinstance(node, Centroid):
        items = [vector_of(i, lookup, dims) for i in node.items]
        mean: NDArray[np.float32] = np.mean(items, axis=0).astype(np.float32)
        return mean
    assert isinstance(node, Sum)
    out = np.zeros(dims, dtype=np.float32)
    for sign, sub in node.terms:
        out += sign * vector_of(sub, lookup, dims)
    return out


def as_expression(tree: Node | Analogy) -> Node:
    if isinstance(tree, Analogy):
        return Sum(((1, tree.b), (-1, tree.a), (1, tree.c)))
    return tree


def mul_scores(
    vs: VectorSet,
    pos: list[NDArray[np.float32]],
    neg: list[NDArray[np.float32]],
    rows: NDArray[np.int64] | None = None,
    *,
    epsilon: float = EPSILON,
) -> NDArray[np.float32]:
    """3CosMul scores of ``rows`` (all rows if None) for positive and negative unit vectors."""
    m = vs.unit if rows is None else vs.unit[rows]
    num = np.ones(m.shape[0], dtype=np.float32)
    for p in pos:
        num *= (1 + m @ p) / 2
    den = np.ones(m.shape[0], dtype=np.float32)
    for n in neg:
        den *= (1 + m @ n) / 2
    return num / (den + np.float32(epsilon)) if neg else num


def mul_top(
    vs: VectorSet,
    q: NDArray[np.float32],
    pos: list[NDArray[np.float32]],
    neg: list[NDArray[np.float32]],
    k: int,
    exclude: list[int],
    top: int | None,
    ann: AnnIndex | None,
    mode: str,
    epsilon: float,
) -> tuple[NDArray[np.int64], NDArray[np.float32], str]:
    if use_ann(vs, ann, mode):
        assert ann is not None
        cands, _, _ = top_for_vector(vs, q, max(MUL_POOL, 4 * k), exclude, ann=ann, mode="ann", top=top)
        if len(cands) >= k:
            s = mul_scores(vs, pos, neg, cands, epsilon=epsilon)
            order = np.lexsort((cands, -s))[:k]
            return cands[order], s[order], "ann"
    scores = mul_scores(vs, pos, neg, epsilon=epsilon)
    rows, best = best_of(vs, scores if top is None else scores[:top].copy(), k, exclude)
    return rows, best, "exact"
