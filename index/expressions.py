"""wordkin's expression language: vector arithmetic over words, and the analogy form.

Grammar (whitespace between tokens is ignored)::

    query     := analogy | sum
    analogy   := word ":" word "::" word ":" ( "?" | word )
    sum       := [ "-" ] product ( ( "+" | "-" ) product )*
    product   := factor ( "*" factor )*          exactly one factor must be a vector, the others numbers
    factor    := NUMBER | word | "(" sum ")" | "{" sum ( "," sum )* "}"
    word      := BARE | QUOTED
    BARE      := letters, digits, combining marks and  _ ' . & / @ # $ %  (no operators, no other punctuation)
    QUOTED    := '"' any text, with \\" and \\\\ escapes '"'
    NUMBER    := 2 | 0.5 | .5 | 1e-3   (a number not next to "*" is read as a word: `2010` is the word "2010")

``{a, b, c}`` is the centroid (mean) of its items. ``0.5*paris`` and ``paris*0.5`` weight a word.
``a : b :: c : ?`` asks "a is to b as c is to what", i.e. ``b - a + c``; with a fourth word instead of ``?`` the
result also says where that word ranks. Parse errors are ``ExprError`` with the 0-based column of the problem.
"""

from __future__ import annotations

import re
import unicodedata
from dataclasses import dataclass

from wordkin.index.errors import UsageError

MAX_LENGTH = 2000
MAX_DEPTH = 50


class ExprError(UsageError):
    """A parse error: ``column`` is 0-based; ``pointer()`` draws the expression with a ``^`` under it."""

    title = "expression"

    def __init__(self, text: str, column: int, expected: str) -> None:
        self.text = text
        self.column = column
        self.expected = expected
        super().__init__(f"column {column + 1}: {expected}")

    def pointer(self) -> str:
        line = self.text.replace("\n", " ").replace("\t", " ")
        return f"{line}\n{' ' * self.column}^ {self.expected}"


@dataclass(frozen=True)
class Word:
    text: str


@dataclass(frozen=True)
class Scale:
    weight: float
    node: Node


@dataclass(frozen=True)
class Sum:
    terms: tuple[tuple[int, Node], ...]  # (+1 or -1, node)


@dataclass(frozen=True)
class Centroid:
    items: tuple[Node, ...]


@dataclass(frozen=True)
class Analogy:
    a: Word
    b: Word
    c: Word
    d: Word | None


Node = Word | Scale | Sum | Centroid

_NUM = re.compile(r"(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]+)?")
_OPS = set("+-*(){},:?")
_ASCII_BARE = set("_'.&/@#$%")


def is_bare_char(ch: str) -> bool:
    if ch.isascii():
        return ch.isalnum() or ch in _ASCII_BARE
    cat = unicodedata.category(ch)
    return cat[0] in "LMN"


@dataclass(frozen=True)
class Tok:
    kind: str  # "num", "word", "op", "end"
    text: str
    pos: int
    quoted: bool = False


def tokenize(text: str) -> list[Tok]:
    if len(text) > MAX_LENGTH:
        raise ExprError(text[:80], 80, f"the expression is longer than {MAX_LENGTH} characters")
    toks: list[Tok] = []
    i, n = 0, len(text)
    while i < n:
        ch = text[i]
        if ch.isspace():
            i += 1
            continue
        if ch == ":" and text.startswith("::", i):
            toks.append(Tok("op", "::", i))
            i += 2
            continue
        if ch in _OPS:
            toks.append(Tok("op", ch, i))
            i += 1
            continue
        if ch == '"':
            j = i + 1
            buf = []
            while j < n and text[j] != '"':
                if text[j] == "\\" and j + 1 < n and text[j + 1] in '"\\':
                    j += 1
                buf.append(text[j])
                j += 1
            if j >= n:
                raise ExprError(text, i, 'a closing " for the word that starts here')
            toks.append(Tok("word", "".join(buf), i, quoted=True))
            i = j + 1
            continue
        m = _NUM.match(text, i)
        if m and (m.end() >= n or not is_bare_char(text[m.end()])):
            toks.append(Tok("num", m.group(0), i))
            i = m.end()
            continue
        if is_bare_char(ch):
            j = i
            while j < n and is_bare_char(text[j]):
                j += 1
            toks.append(Tok("word", text[i:j], i))
            i = j
            continue
        raise ExprError(text, i, f"unexpected {ch!r}: put words holding it in double quotes")
    toks.append(Tok("end", "", n))
    return toks


class _Parser:
    def __init__(self, text: str) -> None:
        self.text = text
        self.toks = tokenize(text)
        self.i = 0
        self.depth = 0

    @property
    def tok(self) -> Tok:
        return self.toks[self.i]

    def take(self) -> Tok:
        t = self.toks[self.i]
        self.i += 1
        return t

    def is_op(self, op: str) -> bool:
        return self.tok.kind == "op" and self.tok.text == op

    def fail(self, expected: str, tok: Tok | None = None) -> ExprError:
        t = tok or self.tok
        found = "the end" if t.kind == "end" else repr(t.text)
        return ExprError(self.text, t.pos, f"expected {expected}, found {found}")

    def parse(self) -> Node | Analogy:
        if self.tok.kind == "end":
            raise ExprError(self.text, 0, "expected a word or an expression, found nothing")
        if any(t.kind == "op" and t.text in (":", "::") for t in self.toks):
            return self.analogy()
        node = self.sum()
        if self.tok.kind != "end":
            raise self.fail("an operator (+ - *) or the end")
        return node

    def word(self) -> Word:
        t = self.tok
        if t.kind in ("word", "num"):
            self.take()
            return Word(t.text)
        raise self.fail("a word")

    def analogy(self) -> Analogy:
        a = self.word()
        self.expect(":")
        b = self.word()
        self.expect("::")
        c = self.word()
        self.expect(":")
        d: Word | None
        if self.is_op("?"):
            self.take()
            d = None
        else:
            d = self.word() if self.tok.kind in ("word", "num") else None
            if d is None:
                raise self.fail("'?' or a word")
        if self.tok.kind != "end":
            raise self.fail("the end of the analogy")
        return Analogy(a, b, c, d)

    def expect(self, op: str) -> None:
        if not self.is_op(op):
            raise self.fail(repr(op))
        self.take()

    def sum(self) -> Node:
        self.depth += 1
        if self.depth > MAX_DEPTH:
            raise ExprError(self.text, self.tok.pos, f"expressions nest at most {MAX_DEPTH} deep")
        terms: list[tuple[int, Node]] = []
        sign = 1
        if self.is_op("-"):
            self.take()
            sign = -1
        terms.append((sign, self.product()))
        while self.is_op("+") or self.is_op("-"):
            sign = 1 if self.take().text == "+" else -1
            terms.append((sign, self.product()))
        self.depth -= 1
        if len(terms) == 1 and terms[0][0] == 1:
            return terms[0][1]
        return Sum(tuple(terms))

    def product(self) -> Node:
        start = self.tok
        weight = 1.0
        vec: Node | None = None
        weighted = False
        while True:
            t = self.tok
            followed_or_preceded = self.toks[self.i + 1].text == "*" if t.kind == "num" else False
            if t.kind == "num" and (followed_or_preceded or weighted):
                self.take()
                weight *= float(t.text)
            else:
                f = self.factor()
                if vec is not None:
                    raise ExprError(
                        self.text,
                        t.pos,
                        "a number here: '*' multiplies a vector by a number, not by a vector",
                    )
                vec = f
            if self.is_op("*"):
                self.take()
                weighted = True
                continue
            break
        if vec is None:
            raise ExprError(self.text, start.pos, "a word in this product: a number alone is not a vector")
        return Scale(weight, vec) if weighted else vec

    def factor(self) -> Node:
        t = self.tok
        if t.kind in ("word", "num"):
            self.take()
            return Word(t.text)
        if self.is_op("("):
            self.take()
            node = self.sum()
            if not self.is_op(")"):
                raise self.fail(f"')' to close the '(' at column {t.pos + 1}")
            self.take()
            return node
        if self.is_op("{"):
            self.take()
            items = [self.sum()]
            while self.is_op(","):
                self.take()
                items.append(self.sum())
            if not self.is_op("}"):
                raise self.fail(f"',' or '}}' to close the '{{' at column {t.pos + 1}")
            self.take()
            return Centroid(tuple(items))
        raise self.fail("a word, a number, '(' or '{'")


def parse(text: str) -> Node | Analogy:
    """Parse ``text``; raises ``ExprError`` (a ``UsageError``) with the column of the problem."""
    return _Parser(text).parse()


def quote_word(w: str) -> str:
    if w and all(is_bare_char(c) for c in w) and not _NUM.fullmatch(w):
        return w
    return '"' + w.replace("\\", "\\\\").replace('"', '\\"') + '"'


def to_text(node: Node | Analogy) -> str:
    """The canonical text of a tree; ``parse(to_text(t)) == t``."""
    if isinstance(node, Analogy):
        d = "?" if node.d is None else quote_word(node.d.text)
        return f"{quote_word(node.a.text)} : {quote_word(node.b.text)} :: {quote_word(node.c.text)} : {d}"
    if isinstance(node, Word):
        return quote_word(node.text)
    if isinstance(node, Scale):
        inner = to_text(node.node)
        if isinstance(node.node, Sum) or isinstance(node.node, Scale):
            inner = f"({inner})"
        return f"{node.weight!r}*{inner}"
    if isinstance(node, Centroid):
        return "{" + ", ".join(to_text(i) for i in node.items) + "}"
    parts = []
    for k, (sign, sub) in enumerate(node.terms):
        s = to_text(sub)
        if isinstance(sub, Sum):
            s = f"({s})"
        if k == 0:
            parts.append(("-" if sign < 0 else "") + s)
        else:
            parts.append(("- " if sign < 0 else "+ ") + s)
    return " ".join(parts)


def words_of(node: Node | Analogy) -> list[str]:
    """Every word in the expression, in order, without repeats."""
    out: list[str] = []

    def walk(n: Node | Analogy | None) -> None:
        if n is None:
            return
        if isinstance(n, Word):
            if n.text not in out:
                out.append(n.text)
        elif isinstance(n, Scale):
            walk(n.node)
        elif isinstance(n, Sum):
            for _, s in n.terms:
                walk(s)
        elif isinstance(n, Centroid):
            for s in n.items:
                walk(s)
        else:
            for s in (n.a, n.b, n.c):
                walk(s)

    walk(node)
    return out


def signed_words(node: Node | Analogy) -> tuple[list[str], list[str]] | None:
    """``(positive, negative)`` if the expression is a plain +/- sum of unweighted words (3CosMul's domain)."""
    if isinstance(node, Analogy):
        return [node.b.text, node.c.text], [node.a.text]
    if isinstance(node, Word):
        return [node.text], []
    if isinstance(node, Sum) and all(isinstance(s, Word) for _, s in node.terms):
        pos = [s.text for sign, s in node.terms if sign > 0]  # type: ignore[union-attr]
        neg = [s.text for sign, s in node.terms if sign < 0]  # type: ignore[union-attr]
        return pos, neg
    return None
