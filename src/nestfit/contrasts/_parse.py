"""The contrast expression language: a tokenizer and a recursive-descent parser.

A contrast is written as a linear combination of level means, in a small
syntax of our own (never evaluated by Python)::

    statement := [label "="] expr
    expr      := term (("+" | "-") term)*
    term      := unary (("*" | "/") unary)*
    unary     := ("+" | "-") unary | atom
    atom      := number | level | "(" expr ")" | "mean" "(" item ("," item)* ")"
    item      := expr | "..."
    level     := bare word | '"' text '"' | "'" text "'"

Examples: ``"A - mean(B, C)"``, ``"(A + B)/2 - C"``, ``"2*A - B - C"``,
``'"lot 1" - "lot 2"'``, ``"serviced = H4 - mean(...)"`` (``...`` inside
``mean`` stands for every level not named elsewhere in the expression).

A bare word that reads as a decimal number (``2``, ``0.5``, ``1e-3``) is a
number; quote level labels that look like numbers (``"4" - "0"``) or contain
spaces, operators or quotes. ``mean`` followed by ``(`` is the mean; anywhere
else it is a level label.

Every sub-expression has a *kind*, number or linear (a combination of
levels), checked while parsing: ``number * linear`` and ``linear / number``
are linear; a product of two linear parts, a division by a linear part or
a number added to a linear part (an affine, not linear, function) is
rejected with a :class:`~nestfit.errors.ParseError` pointing at the
operator or number.
"""

from __future__ import annotations

import math
import re
from collections.abc import Callable
from dataclasses import dataclass
from typing import Any

from nestfit.errors import ParseError

__all__ = ["Expr", "ParsedContrast", "parse_contrast"]

NUMBER, LEVEL, OP, REST, END = "number", "level", "op", "rest", "end"
_OPERATORS = "+-*/(),="
_NUMBER_RE = re.compile(r"(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?")
_WORD_STOP = set(_OPERATORS) | set("\"' \t\r\n")


@dataclass(frozen=True)
class Token:
    """One token: its kind, its text (or numeric value) and its offset in the full text."""

    kind: str
    text: str
    pos: int
    value: float = 0.0


# ---------------------------------------------------------------- AST nodes
@dataclass(frozen=True)
class Expr:
    """A node of the parsed expression; ``linear`` is its kind (False: a plain number)."""

    pos: int
    linear: bool


@dataclass(frozen=True)
class Num(Expr):
    value: float


@dataclass(frozen=True)
class Level(Expr):
    name: str


@dataclass(frozen=True)
class Rest(Expr):
    """``...`` inside ``mean(...)``: every level not named elsewhere."""


@dataclass(frozen=True)
class Neg(Expr):
    operand: Expr


@dataclass(frozen=True)
class Binary(Expr):
    op: str
    left: Expr
    right: Expr


@dataclass(frozen=True)
class Mean(Expr):
    items: tuple[Expr, ...]


@dataclass(frozen=True)
class ParsedContrast:
    """A parsed statement: optional label, the expression tree and the source text."""

    label: str | None
    expr: Expr
    text: str

    def named_levels(self) -> tuple[str, ...]:
        """Level labels named in the expression, in order of first appearance."""
        out: dict[str, None] = {}

        def walk(node: Expr) -> None:
            if isinstance(node, Level):
                out.setdefault(node.name, None)
            elif isinstance(node, Neg):
                walk(node.operand)
            elif isinstance(node, Binary):
                walk(node.left)
                walk(node.right)
            elif isinstance(node, Mean):
                for item in node.items:
                    walk(item)

        walk(self.expr)
        return tuple(out)


# --------------------------------------------------------------- tokenizer
def _tokenize(text: str, start: int, stop: int) -> list[Token]:
    tokens: list[Token] = []
    i = start
    while i < stop:
        c = text[i]
        if c in " \t\r\n":
            i += 1
        elif text.startswith("...", i):
            tokens.append(Token(REST, "...", i))
            i += 3
        elif c in _OPERATORS:
            if c == "=":
                raise ParseError("a contrast has at most one '=' (written 'label = expression')",
                                 text, i)
            tokens.append(Token(OP, c, i))
            i += 1
        elif c in "\"'":
            end = text.find(c, i + 1, stop)
            if end < 0:
                raise ParseError(f"unclosed quote {c}: close the level label with {c}", text, i)
            if end == i + 1:
                raise ParseError("empty quoted level label", text, i)
            tokens.append(Token(LEVEL, text[i + 1:end], i))
            i = end + 1
        else:
            j = i
            while j < stop and text[j] not in _WORD_STOP:
                j += 1
            match = _NUMBER_RE.match(text, i, stop)
            if match and match.end() >= j:
                # a number; ``1e-3`` runs past the word scan, which stops at the sign
                tokens.append(Token(NUMBER, text[i:match.end()], i,
                                    float(text[i:match.end()])))
                i = match.end()
            else:  # a bare level label (it may start with digits, e.g. 0.5mg)
                tokens.append(Token(LEVEL, text[i:j], i))
                i = j
    tokens.append(Token(END, "", stop))
    return tokens


# ------------------------------------------------------------------ parser
class _Parser:
    def __init__(self, text: str, tokens: list[Token]) -> None:
        self.text = text
        self.tokens = tokens
        self.i = 0

    @property
    def tok(self) -> Token:
        return self.tokens[self.i]

    def _error(self, message: str, pos: int | None = None) -> ParseError:
        return ParseError(message, self.text, self.tok.pos if pos is None else pos)

    def _advance(self) -> Token:
        tok = self.tokens[self.i]
        self.i += 1
        return tok

    def _is_op(self, chars: str) -> bool:
        return self.tok.kind == OP and self.tok.text in chars

    def parse(self) -> Expr:
        if self.tok.kind == END:
            raise self._error("the contrast is empty; write levels such as 'A - mean(B, C)'")
        node = self.expr()
        if self.tok.kind != END:
            if self._is_op(")"):
                raise self._error("unmatched ')'")
            raise self._error(f"expected an operator (+ - * /) before {self._describe(self.tok)}")
        return node

    def expr(self) -> Expr:
        node = self.term()
        while self._is_op("+-"):
            op = self._advance()
            right = self.term()
            if node.linear != right.linear:
                number = node if not node.linear else right
                raise self._error(
                    "a number cannot be added to level means: a contrast is a weighted sum of "
                    "level means with no constant term (write a multiple such as 2*A)", number.pos)
            node = Binary(node.pos, node.linear, op.text, node, right)
        return node

    def term(self) -> Expr:
        node = self.unary()
        while self._is_op("*/"):
            op = self._advance()
            right = self.unary()
            if op.text == "*":
                if node.linear and right.linear:
                    raise self._error("a product of two level expressions is not linear; "
                                      "multiply levels by numbers only", op.pos)
            else:
                if right.linear:
                    raise self._error("division by a level expression is not linear; "
                                      "divide by numbers only", op.pos)
                if _constant(right) == 0.0:
                    raise self._error("division by zero", op.pos)
            node = Binary(node.pos, node.linear or right.linear, op.text, node, right)
        return node

    def unary(self) -> Expr:
        if self._is_op("+-"):
            op = self._advance()
            operand = self.unary()
            return operand if op.text == "+" else Neg(op.pos, operand.linear, operand)
        return self.atom()

    def atom(self) -> Expr:
        tok = self.tok
        if tok.kind == NUMBER:
            self._advance()
            if not math.isfinite(tok.value):
                raise self._error(f"the number {tok.text} is too large", tok.pos)
            return Num(tok.pos, False, tok.value)
        if tok.kind == LEVEL:
            self._advance()
            quoted = self.text[tok.pos] in "\"'"
            if not quoted and tok.text == "mean" and self._is_op("("):
                return self.mean(tok)
            return Level(tok.pos, True, tok.text)
        if self._is_op("("):
            self._advance()
            if self._is_op(")"):
                raise self._error("empty parentheses", tok.pos)
            node = self.expr()
            if not self._is_op(")"):
                raise self._error(f"expected ')' to close the '(' at character {tok.pos + 1}, "
                                  f"found {self._describe(self.tok)}")
            self._advance()
            return node
        if tok.kind == REST:
            raise self._error("'...' (the remaining levels) is allowed only inside mean(...)")
        if tok.kind == END:
            raise self._error("the expression ends too early: a level or number is missing")
        raise self._error(f"expected a level or a number, found {self._describe(tok)}")

    def mean(self, name: Token) -> Expr:
        open_paren = self._advance()
        items: list[Expr] = []
        while True:
            if self.tok.kind == REST:
                rest = self._advance()
                items.append(Rest(rest.pos, True))
            elif self._is_op(",)"):
                raise self._error("mean(...) needs a level or '...' here")
            else:
                items.append(self.expr())
            if self._is_op(","):
                self._advance()
                continue
            if self._is_op(")"):
                self._advance()
                break
            raise self._error(f"expected ',' or ')' in mean(...) opened at character "
                              f"{open_paren.pos + 1}, found {self._describe(self.tok)}")
        kinds = {item.linear for item in items}
        if len(kinds) > 1:
            number = next(item for item in items if not item.linear)
            raise self._error("mean(...) mixes numbers and levels; average levels only",
                              number.pos)
        return Mean(name.pos, items[0].linear, tuple(items))

    @staticmethod
    def _describe(tok: Token) -> str:
        if tok.kind == END:
            return "the end of the text"
        if tok.kind == LEVEL:
            return f"level {tok.text!r}"
        return f"{tok.text!r}"


def combine(node: Neg | Binary, value: Callable[[Expr], Any]) -> Any:
    """Negation or a binary operation on the values of the operands, ``value(operand)``.

    Shared by the constant folder here and the weight evaluator of the contrasts, which
    give the operands numbers or weight vectors.
    """
    if isinstance(node, Neg):
        return -value(node.operand)
    a, b = value(node.left), value(node.right)
    if node.op == "+":
        return a + b
    if node.op == "-":
        return a - b
    if node.op == "*":
        return a * b
    return a / b


def _constant(node: Expr) -> float:
    """The value of a number-kind node."""
    if isinstance(node, Num):
        return node.value
    if isinstance(node, (Neg, Binary)):
        return float(combine(node, _constant))
    if isinstance(node, Mean):
        return math.fsum(_constant(item) for item in node.items) / len(node.items)
    raise TypeError(f"not a number node: {node!r}")  # pragma: no cover


def _split_label(text: str) -> tuple[str | None, int]:
    """The label before a top-level '=' (outside quotes), and where the expression starts."""
    quote = ""
    for i, c in enumerate(text):
        if quote:
            if c == quote:
                quote = ""
        elif c in "\"'":
            quote = c
        elif c == "=":
            raw = text[:i].strip()
            if len(raw) >= 2 and raw[0] == raw[-1] and raw[0] in "\"'":
                raw = raw[1:-1].strip()
            if not raw:
                raise ParseError("the label before '=' is empty; write 'label = expression'",
                                 text, i)
            return raw, i + 1
    return None, 0


def parse_contrast(text: str) -> ParsedContrast:
    """Parse ``"[label =] expression"`` into a checked expression tree.

    Raises
    ------
    ParseError
        Malformed text, pointing at the offending character: unbalanced
        parentheses or quotes, a missing operand, a non-linear product or
        division, a constant term, ``...`` outside ``mean()``, or an
        expression that names no level.
    """
    if not isinstance(text, str):
        raise ParseError(f"a contrast expression must be text, got {type(text).__name__}")
    label, start = _split_label(text)
    tokens = _tokenize(text, start, len(text))
    parser = _Parser(text, tokens)
    expr = parser.parse()
    if not expr.linear:
        raise ParseError("the expression names no level; quote level labels that look like "
                         "numbers, e.g. '\"4\" - \"0\"'", text, tokens[0].pos)
    return ParsedContrast(label, expr, text)
