"""Property tests for the expression parser (hypothesis)."""

from __future__ import annotations

from hypothesis import given, settings
from hypothesis import strategies as st

from wordkin.index.expressions import Analogy, Centroid, ExprError, Scale, Sum, Word, parse, to_text

ALPHABET = st.characters(codec="utf-8", exclude_categories=("Cs",))


@settings(max_examples=600, deadline=None)
@given(st.text(alphabet=ALPHABET, max_size=60) | st.text(alphabet='ab1.5*+-(){},:?" ', max_size=40))
def test_any_string_parses_or_fails_with_position(text):
    try:
        tree = parse(text)
    except ExprError as e:
        assert 0 <= e.column <= len(text)
        assert "^" in e.pointer()
    else:
        assert parse(to_text(tree)) == tree


words = st.text(alphabet=ALPHABET, min_size=1, max_size=8).map(Word)
weights = st.floats(min_value=0.001, max_value=1000, allow_nan=False, allow_infinity=False)


def trees():
    return st.recursive(
        words,
        lambda inner: st.one_of(
            st.builds(Scale, weights, inner),
            st.lists(st.tuples(st.sampled_from([1, -1]), inner), min_size=2, max_size=4).map(lambda t: Sum(tuple(t))),
            st.lists(inner, min_size=1, max_size=3).map(lambda t: Centroid(tuple(t))),
        ),
        max_leaves=8,
    )


@settings(max_examples=400, deadline=None)
@given(trees())
def test_print_then_parse_gives_the_same_tree(tree):
    assert parse(to_text(tree)) == tree


@settings(max_examples=200, deadline=None)
@given(words, words, words, st.none() | words)
def test_analogy_round_trip(a, b, c, d):
    t = Analogy(a, b, c, d)
    assert parse(to_text(t)) == t
