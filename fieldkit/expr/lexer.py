"""Split expression text into tokens, refusing anything outside the language on the spot.

Numbers take their unit here: after a number (and optional spaces) the longest unit spelling
from :data:`fieldkit.units.SPELLINGS` that ends on a word boundary is taken. Units are
recognised nowhere else, which is why a name may never be a unit word.
"""

from __future__ import annotations

import difflib
import math
import re
from dataclasses import dataclass
from enum import Enum

from fieldkit.expr.errors import ExprError
from fieldkit.units import SPELLINGS

MAX_CHARS = 1000
MAX_TOKENS = 400

KEYWORDS = frozenset({"and", "or", "not", "when", "then", "else", "true", "false"})
# Words a person might try from a programming language; named in the message, never resolved.
FORBIDDEN_WORDS = frozenset(
    {
        "lambda",
        "import",
        "from",
        "def",
        "class",
        "exec",
        "eval",
        "compile",
        "open",
        "getattr",
        "setattr",
        "delattr",
        "globals",
        "locals",
        "vars",
        "builtins",
        "input",
        "print",
        "return",
        "yield",
    }
)
UNIT_WORDS = frozenset(SPELLINGS)

_SPELLINGS_LONGEST_FIRST = tuple(sorted(SPELLINGS, key=len, reverse=True))
_NUMBER = re.compile(r"[0-9]+(?:\.[0-9]+)?|\.[0-9]+")
_NAME = re.compile(r"[a-z][a-z0-9_]*")
_WHITESPACE = " \t\r\n"
_OPERATORS_2 = {"<=": "<=", ">=": ">=", "!=": "!="}
_OPERATORS_1 = {
    "+": "+",
    "-": "-",
    "*": "*",
    "/": "/",
    "^": "^",
    "<": "<",
    ">": ">",
    "=": "=",
    "\u2212": "-",
    "\u2264": "<=",
    "\u2265": ">=",
    "\u2260": "!=",  # − ≤ ≥ ≠
}
_REFUSED_2 = {
    "==": "write '=' to test equality",
    "**": "write '^' for a power, e.g. x ^ 2",
    "&&": "write 'and'",
    "||": "write 'or'",
}
_REFUSED_1 = {
    "[": "square brackets are not part of the rule language",
    "]": "square brackets are not part of the rule language",
    "{": "braces are not part of the rule language",
    "}": "braces are not part of the rule language",
    "'": "quotes are not part of the rule language: it has no text values",
    '"': "quotes are not part of the rule language: it has no text values",
    "`": "quotes are not part of the rule language: it has no text values",
    ";": "one expression only: ';' is not allowed",
    "!": "write 'not' for negation and '!=' for 'not equal'",
    "&": "write 'and'",
    "|": "write 'or'",
    "%": "'%' is a unit and must follow a number, e.g. 90 %",
    ".": "a '.' may only be a decimal point inside a number such as 0.5; there is no attribute access",
    "_": "names start with a lower-case letter",
    "\\": "backslashes are not part of the rule language",
    "#": "comments are not part of an expression",
}


def _is_digit(ch: str) -> bool:
    """ASCII digits only: str.isdigit() also accepts '²' and other scripts' digits."""
    return len(ch) == 1 and "0" <= ch <= "9"


class Tok(Enum):
    NUMBER = "number"
    NAME = "name"
    KEYWORD = "keyword"
    OP = "operator"
    LPAREN = "'('"
    RPAREN = "')'"
    COMMA = "','"
    END = "end of expression"


@dataclass(frozen=True, slots=True)
class Token:
    kind: Tok
    text: str  # for OP the canonical operator; otherwise the text as written
    start: int
    end: int
    magnitude: float = 0.0  # NUMBER only
    unit: str | None = None  # NUMBER only: the unit spelling, if any

    def describe(self) -> str:
        if self.kind is Tok.END:
            return "the end of the expression"
        if self.kind is Tok.NUMBER:
            return f"the number '{self.text}'"
        if self.kind in (Tok.NAME, Tok.KEYWORD):
            return f"'{self.text}'"
        return f"'{self.text}'"


def tokenize(source: object) -> list[Token]:
    """Tokens of ``source`` followed by one END token."""
    if not isinstance(source, str):
        raise ExprError(f"an expression must be text, not {type(source).__name__}")
    if len(source) > MAX_CHARS:
        raise ExprError(
            f"the expression is {len(source)} characters long; the limit is {MAX_CHARS}", source, MAX_CHARS
        )
    if not source.strip(_WHITESPACE):
        raise ExprError("the expression is empty", source, 0)
    dunder = source.find("__")
    if dunder >= 0:
        raise ExprError(
            "'__' is not allowed: names are lower-case words joined by single underscores", source, dunder
        )
    tokens: list[Token] = []
    i, n = 0, len(source)
    while i < n:
        ch = source[i]
        if ch in _WHITESPACE:
            i += 1
            continue
        if _is_digit(ch) or (ch == "." and _is_digit(source[i + 1 : i + 2])):
            token, i = _number(source, i)
        elif "a" <= ch <= "z":
            token, i = _name(source, i)
        elif ch == "(":
            token, i = Token(Tok.LPAREN, ch, i, i + 1), i + 1
        elif ch == ")":
            token, i = Token(Tok.RPAREN, ch, i, i + 1), i + 1
        elif ch == ",":
            token, i = Token(Tok.COMMA, ch, i, i + 1), i + 1
        else:
            token, i = _operator(source, i)
        tokens.append(token)
        if len(tokens) > MAX_TOKENS:
            raise ExprError(
                f"the expression has more than {MAX_TOKENS} tokens; split it into smaller rules",
                source,
                token.start,
            )
    tokens.append(Token(Tok.END, "", n, n))
    return tokens


def _number(source: str, i: int) -> tuple[Token, int]:
    match = _NUMBER.match(source, i)
    assert match is not None  # the caller saw a digit, or '.' and a digit
    end = match.end()
    if source[end : end + 1] == ".":
        if _is_digit(source[end + 1 : end + 2]):
            raise ExprError("a number has two decimal points", source, end)
        raise ExprError("a decimal point must be followed by digits (write 17 or 17.0)", source, end)
    magnitude = float(match.group())
    if not math.isfinite(magnitude):
        raise ExprError("the number is too large", source, i)
    spelling, stop = _unit_after(source, end)
    return Token(Tok.NUMBER, source[i:stop], i, stop, magnitude, spelling), stop


def _unit_after(source: str, end: int) -> tuple[str | None, int]:
    """The unit spelling that follows a number ending at ``end``, and where it stops."""
    j = end
    while j < len(source) and source[j] in " \t":
        j += 1
    for spelling in _SPELLINGS_LONGEST_FIRST:
        if source.startswith(spelling, j):
            stop = j + len(spelling)
            glued = stop < len(source) and (source[stop].isalnum() or source[stop] == "_")
            if not (glued and (spelling[-1].isalnum())):
                return spelling, stop
    word = re.match(r"[^\s()+\-*/^<>=!,]+", source[j:])
    if word is None or not (word.group()[0].isalpha() or word.group()[0] in "°º"):
        return None, end
    text = word.group()
    if text in KEYWORDS:
        return None, end
    if j == end and re.fullmatch(r"[eE][0-9]+", text):
        raise ExprError("exponent notation is not supported; write the number out", source, j)
    close = difflib.get_close_matches(text, _SPELLINGS_LONGEST_FIRST, n=4, cutoff=0.6)
    hint = (
        f"did you mean {', '.join(repr(c) for c in close)}?"
        if close
        else "use a unit such as bar, psi, L/min, gpm, °C, rpm, mm/min, %"
    )
    raise ExprError(f"'{text}' after a number is not a unit fieldkit knows; {hint}", source, j)


def _name(source: str, i: int) -> tuple[Token, int]:
    match = _NAME.match(source, i)
    assert match is not None
    end = match.end()
    text = match.group()
    if end < len(source) and source[end].isalnum():
        raise ExprError("names are written in lower-case letters, digits and '_'", source, end)
    if source[end : end + 1] == ".":
        raise ExprError(f"'.' after '{text}': attribute access is not part of the rule language", source, end)
    if text in KEYWORDS:
        return Token(Tok.KEYWORD, text, i, end), end
    if text in FORBIDDEN_WORDS:
        raise ExprError(f"'{text}' is not part of the rule language", source, i)
    if text == "if":
        raise ExprError("write a condition as 'when … then … else …'", source, i)
    if text in UNIT_WORDS and not source[end:].lstrip(_WHITESPACE).startswith("("):
        raise ExprError(
            f"'{text}' is a unit word, not a name: a unit goes right after a number "
            f"(e.g. '5 {text}'), and names may not be unit words",
            source,
            i,
        )
    return Token(Tok.NAME, text, i, end), end


def _operator(source: str, i: int) -> tuple[Token, int]:
    pair = source[i : i + 2]
    if pair in _OPERATORS_2:
        return Token(Tok.OP, _OPERATORS_2[pair], i, i + 2), i + 2
    if pair in _REFUSED_2:
        raise ExprError(f"'{pair}' is not an operator here: {_REFUSED_2[pair]}", source, i)
    ch = source[i]
    if ch in _OPERATORS_1:
        return Token(Tok.OP, _OPERATORS_1[ch], i, i + 1), i + 1
    if ch in _REFUSED_1:
        raise ExprError(_REFUSED_1[ch], source, i)
    if ch.isalpha() and ch.isascii():
        raise ExprError(
            "names are written in lower-case letters; upper-case letters appear only in units after a number",
            source,
            i,
        )
    if ch.isprintable():
        raise ExprError(
            f"unexpected character '{ch}'"
            + ("" if ch.isascii() else " (units such as °C go right after a number)"),
            source,
            i,
        )
    raise ExprError(f"unexpected invisible character U+{ord(ch):04X}", source, i)
