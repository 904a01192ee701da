"""Vector arithmetic and analogies: 3CosAdd for any expression, 3CosMul for plain +/- word sums.

3CosAdd (Mikolov et al. 2013): the unit vectors of the words are weighted, added and subtracted; answers are ranked
by cosine to the result. 3CosMul (Levy and Goldberg 2014): for positive words P and negative words N, each word x
scores prod_p s(x,p) / (prod_n s(x,n) + eps) with s = (cos + 1) / 2, eps = 0.001 as in the paper (gensim's
``most_similar_cosmul`` uses 1e-6; ``epsilon`` is a parameter so the tests can check against it). The expression's
own words are excluded from the answers unless ``keep_inputs``.
"""

from __future__ import annotations

import time

import numpy as np
from numpy.typing import NDArray

from .ann import AnnIndex
from .errors import UsageError
from .expr import Analogy, Centroid, Node, Scale, Sum, Word, parse, signed_words, to_text, words_of
from .results import CalcResult, Neighbour
from .search import best_of, check_k, check_top, exact_top, rank_in, rank_of, top_for_vector, unit_query, use_ann
from .store import VectorSet

EPSILON = 0.001
#: Candidates taken from annoy (for the 3CosAdd vector) before 3CosMul re-scores them exactly.
MUL_POOL = 200


def vector_of(vs: VectorSet, node: Node) -> NDArray[np.float32]:
    """The 3CosAdd vector of an expression tree (not normalised). Unknown words raise ``UnknownWordError``."""
    if isinstance(node, Word):
        return np.asarray(vs.unit[vs.row(node.text)], dtype=np.float32)
    if isinstance(node, Scale):
        return np.float32(node.weight) * vector_of(vs, node.node)
    if isinstance(node, Centroid):
        return np.mean([vector_of(vs, i) for i in node.items], axis=0).astype(np.float32)
    assert isinstance(node, Sum)
    out = np.zeros(vs.dims, dtype=np.float32)
    for sign, sub in node.terms:
        out += sign * vector_of(vs, sub)
    return out


def as_expression(tree: Node | Analogy) -> Node:
    if isinstance(tree, Analogy):
        return Sum(((1, tree.b), (-1, tree.a), (1, tree.c)))
    return tree


def mul_scores(
    vs: VectorSet,
    pos: list[int],
    neg: list[int],
    rows: NDArray[np.int64] | None = None,
    *,
    epsilon: float = EPSILON,
) -> NDArray[np.float32]:
    """3CosMul scores of ``rows`` (all rows if None) for positive and negative rows."""
    m = vs.unit if rows is None else vs.unit[rows]
    num = np.ones(m.shape[0], dtype=np.float32)
    for p in pos:
        num *= (1 + m @ vs.unit[p]) / 2
    den = np.ones(m.shape[0], dtype=np.float32)
    for n in neg:
        den *= (1 + m @ vs.unit[n]) / 2
    return num / (den + np.float32(epsilon)) if neg else num


def calc(
    vs: VectorSet,
    expression: str,
    k: int = 10,
    *,
    method: str = "add",
    top: int | None = None,
    keep_inputs: bool = False,
    ann: AnnIndex | None = None,
    mode: str = "auto",
    epsilon: float = EPSILON,
) -> CalcResult:
    """Answer an expression or an analogy. ``similarity`` in the rows is a cosine (add) or a 3CosMul score (mul)."""
    t0 = time.perf_counter()
    if method not in ("add", "mul"):
        raise UsageError(f"--method is add or mul, not {method!r}")
    tree = parse(expression)
    k = check_k(k, vs)
    top = check_top(top, vs)
    words = words_of(tree)
    rows = [vs.row(w) for w in words]  # unknown words fail here, with close matches
    exclude = [] if keep_inputs else rows
    target = tree.d.text if isinstance(tree, Analogy) and tree.d is not None else None
    target_row = vs.row(target) if target is not None else None
    expr = as_expression(tree)
    used = "exact"
    if ann is not None and mode != "ann":
        # Combined vectors use their own measured search_k, or an exact scan where the index is not good enough.
        ann = ann.for_expressions()
    if method == "add":
        q = unit_query(vector_of(vs, expr))
        top_rows, scores, used = top_for_vector(vs, q, k, exclude, ann=ann, mode=mode, top=top)
        t_rank = t_sim = None
        if target_row is not None:
            t_rank = rank_of(vs, q, target_row, exclude, top)
            t_sim = float(vs.unit[target_row] @ q)
    else:
        sw = signed_words(expr)
        if sw is None:
            raise UsageError("--method mul takes unweighted + and - words only (no weights, groups or centroids)")
        pos = [vs.row(w) for w in sw[0]]
        neg = [vs.row(w) for w in sw[1]]
        top_rows, scores, used = _mul_top(vs, expr, pos, neg, k, exclude, top, ann, mode, epsilon)
        t_rank = t_sim = None
        if target_row is not None:
            all_scores = mul_scores(vs, pos, neg, epsilon=epsilon)
            t_sim = float(all_scores[target_row])
            t_rank = rank_in(vs, all_scores, target_row, exclude, top)
    res = tuple(
        Neighbour(i + 1, vs.words[int(r)], float(s)) for i, (r, s) in enumerate(zip(top_rows, scores, strict=True))
    )
    return CalcResult(
        expression=to_text(tree),
        method=method,
        excluded=tuple(words) if not keep_inputs else (),
        results=res,
        k=k,
        mode=used,
        top=top,
        target=target,
        target_rank=t_rank,
        target_similarity=t_sim,
        elapsed_ms=(time.perf_counter() - t0) * 1000,
    )


def _mul_top(
    vs: VectorSet,
    expr: Node,
    pos: list[int],
    neg: list[int],
    k: int,
    exclude: list[int],
    top: int | None,
    ann: AnnIndex | None,
    mode: str,
    epsilon: float,
) -> tuple[NDArray[np.int64], NDArray[np.float32], str]:
    if use_ann(vs, ann, mode):
        assert ann is not None
        q = unit_query(vector_of(vs, expr))
        cands, _, _ = top_for_vector(vs, q, max(MUL_POOL, 4 * k), exclude, ann=ann, mode="ann", top=top)
        if len(cands) >= k:
            s = mul_scores(vs, pos, neg, cands, epsilon=epsilon)
            order = np.lexsort((cands, -s))[:k]
            return cands[order], s[order], "ann"
    scores = mul_scores(vs, pos, neg, epsilon=epsilon)
    rows, best = best_of(vs, scores if top is None else scores[:top].copy(), k, exclude)
    return rows, best, "exact"


__all__ = ["calc", "vector_of", "mul_scores", "EPSILON", "exact_top"]
