"""Recursive-descent parser from tokens to :mod:`syntax` nodes.

Nesting is counted *before* each recursive step (parenthesis, call, unary '-', 'not',
'when'), so hostile input is refused long before Python's own stack limit.
"""

from __future__ import annotations

from collections.abc import Callable

from fieldkit.expr.errors import ExprError
from fieldkit.expr.lexer import Tok, Token, tokenize
from fieldkit.expr.syntax import (
    Call,
    Chain,
    Compare,
    Logic,
    Name,
    Negate,
    Node,
    Not,
    Number,
    Power,
    Step,
    Truth,
    When,
)

MAX_DEPTH = 32
MAX_ARGS = 16
MAX_EXPONENT = 4
COMPARISONS = frozenset({"<", "<=", ">", ">=", "=", "!="})

_Rule = Callable[[], Node]


def parse(source: str) -> Node:
    """The syntax tree of ``source``; raises ExprError with the column of the first problem."""
    return _Parser(source, tokenize(source)).parse()


class _Parser:
    def __init__(self, source: str, tokens: list[Token]) -> None:
        self.source = source
        self.tokens = tokens
        self.i = 0
        self.depth = 0

    # --- helpers ----------------------------------------------------------------------
    def peek(self) -> Token:
        return self.tokens[self.i]

    def advance(self) -> Token:
        token = self.tokens[self.i]
        if token.kind is not Tok.END:
            self.i += 1
        return token

    def at(self, kind: Tok, text: str | None = None) -> bool:
        token = self.tokens[self.i]
        return token.kind is kind and (text is None or token.text == text)

    def error(self, message: str, position: int) -> ExprError:
        return ExprError(message, self.source, position)

    def expect(self, kind: Tok, text: str, why: str) -> Token:
        if not self.at(kind, text):
            found = self.peek()
            raise self.error(f"expected '{text}' {why}, found {found.describe()}", found.start)
        return self.advance()

    def enter(self, token: Token) -> None:
        self.depth += 1
        if self.depth > MAX_DEPTH:
            raise self.error(
                f"the expression is nested more than {MAX_DEPTH} levels deep "
                "(parentheses, calls, '-', 'not', 'when'); simplify it",
                token.start,
            )

    def leave(self) -> None:
        self.depth -= 1

    # --- grammar ----------------------------------------------------------------------
    def parse(self) -> Node:
        node = self.expression()
        if not self.at(Tok.END):
            extra = self.peek()
            before = self.tokens[self.i - 1]
            hint = ""
            if extra.kind is Tok.OP and extra.text in COMPARISONS:
                hint = " (comparisons do not chain: write 'a < b and b < c')"
            elif extra.kind is Tok.LPAREN and before.kind in (Tok.NUMBER, Tok.NAME, Tok.RPAREN):
                hint = " (write '*' to multiply"
                hint += "; a word right after a number reads as a unit)" if before.unit else ")"
            raise self.error(f"unexpected {extra.describe()} after a complete expression{hint}", extra.start)
        return node

    def expression(self) -> Node:
        if self.at(Tok.KEYWORD, "when"):
            return self.when()
        return self.disjunction()

    def when(self) -> Node:
        token = self.advance()
        self.enter(token)
        condition = self.disjunction()
        then_at = self.expect(Tok.KEYWORD, "then", "after the condition of 'when'").start
        then = self.disjunction()
        else_at = self.expect(
            Tok.KEYWORD, "else", "after the 'then' value (every 'when' needs an 'else')"
        ).start
        otherwise = self.expression()
        self.leave()
        return When(token.start, otherwise.end, condition, then, otherwise, then_at, else_at)

    def disjunction(self) -> Node:
        first = self.conjunction()
        if not self.at(Tok.KEYWORD, "or"):
            return first
        operands, ats = [first], []
        while self.at(Tok.KEYWORD, "or"):
            ats.append(self.advance().start)
            operands.append(self.conjunction())
        return Logic(first.start, operands[-1].end, "or", tuple(operands), tuple(ats))

    def conjunction(self) -> Node:
        first = self.negation()
        if not self.at(Tok.KEYWORD, "and"):
            return first
        operands, ats = [first], []
        while self.at(Tok.KEYWORD, "and"):
            ats.append(self.advance().start)
            operands.append(self.negation())
        return Logic(first.start, operands[-1].end, "and", tuple(operands), tuple(ats))

    def negation(self) -> Node:
        if not self.at(Tok.KEYWORD, "not"):
            return self.comparison()
        token = self.advance()
        self.enter(token)
        operand = self.negation()
        self.leave()
        return Not(token.start, operand.end, operand)

    def comparison(self) -> Node:
        left = self.additive()
        token = self.peek()
        if token.kind is not Tok.OP or token.text not in COMPARISONS:
            return left
        self.advance()
        right = self.additive()
        return Compare(left.start, right.end, token.text, token.start, left, right)

    def additive(self) -> Node:
        return self.chain(("+", "-"), self.term)

    def term(self) -> Node:
        return self.chain(("*", "/"), self.unary)

    def chain(self, ops: tuple[str, ...], operand: _Rule) -> Node:
        first = operand()
        steps: list[Step] = []
        while self.peek().kind is Tok.OP and self.peek().text in ops:
            token = self.advance()
            steps.append(Step(token.text, token.start, operand()))
        if not steps:
            return first
        return Chain(first.start, steps[-1].operand.end, first, tuple(steps))

    def unary(self) -> Node:
        if not self.at(Tok.OP, "-"):
            return self.power()
        token = self.advance()
        self.enter(token)
        operand = self.unary()
        self.leave()
        return Negate(token.start, operand.end, operand)

    def power(self) -> Node:
        base = self.primary()
        if not self.at(Tok.OP, "^"):
            return base
        caret = self.advance()
        sign = 1
        if self.at(Tok.OP, "-"):
            self.advance()
            sign = -1
        token = self.peek()
        if (
            token.kind is not Tok.NUMBER
            or token.unit is not None
            or not token.magnitude.is_integer()
            or "." in token.text
            or token.magnitude > MAX_EXPONENT
        ):
            raise self.error(
                f"the exponent after '^' must be a whole number from -{MAX_EXPONENT} to "
                f"{MAX_EXPONENT} written directly, e.g. x ^ 2",
                token.start,
            )
        self.advance()
        if self.at(Tok.OP, "^"):
            raise self.error(
                "raise to a power once; for a power of a power use parentheses: (x ^ 2) ^ 2",
                self.peek().start,
            )
        return Power(base.start, token.end, base, sign * int(token.magnitude), caret.start)

    def primary(self) -> Node:
        token = self.peek()
        if token.kind is Tok.NUMBER:
            self.advance()
            return Number(token.start, token.end, token.magnitude, token.unit)
        if token.kind is Tok.KEYWORD and token.text in ("true", "false"):
            self.advance()
            return Truth(token.start, token.end, token.text == "true")
        if token.kind is Tok.NAME:
            self.advance()
            if self.at(Tok.LPAREN):
                return self.call(token)
            return Name(token.start, token.end, token.text)
        if token.kind is Tok.LPAREN:
            self.advance()
            self.enter(token)
            inner = self.expression()
            self.expect(Tok.RPAREN, ")", f"to close the '(' at column {token.start + 1}")
            self.leave()
            return inner
        if token.kind is Tok.KEYWORD and token.text == "when":
            raise self.error(
                "put 'when … then … else …' in parentheses when it is part of a larger expression",
                token.start,
            )
        if token.kind is Tok.END:
            raise self.error("the expression ends too early: a number, a name or '(' is missing", token.start)
        raise self.error(f"expected a number, a name or '(' but found {token.describe()}", token.start)

    def call(self, name: Token) -> Node:
        opening = self.advance()
        self.enter(opening)
        args: list[Node] = []
        if not self.at(Tok.RPAREN):
            while True:
                if len(args) == MAX_ARGS:
                    raise self.error(f"a function takes at most {MAX_ARGS} arguments", self.peek().start)
                args.append(self.expression())
                if not self.at(Tok.COMMA):
                    break
                self.advance()
        closing = self.expect(Tok.RPAREN, ")", f"to close the call of {name.text}()")
        self.leave()
        return Call(name.start, closing.end, name.text, tuple(args))
