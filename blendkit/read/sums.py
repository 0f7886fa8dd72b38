"""The Sum of a Combined row: numbers times nutrient names joined by + and -.

The syntax is our own and small; it is read by a tokenizer and a recursive descent
parser, never evaluated as code::

    sum   := [sign] term (sign term)*
    term  := number "*" name | name "*" number | name
    sign  := "+" | "-"            (the Unicode minus and the en dash are minus too)

A number is written with a decimal point (``434.8``, ``.5``, ``2``); ``×`` is accepted
for ``*``. A name is the text between operators, trimmed,
and may hold spaces, digits and parentheses (``Lysine (digestible)``); it is compared like
a Specs nutrient, so ``Sodium`` and ``Sodium (%)`` both name the column ``Sodium (%)``. A
``+`` or ``-`` with no space on either side inside a name that exists
(``Omega-3``, ``25-OH-D3``) is part of the name, and so is one with spaces around it when
the whole text is a name and the part after the sign is not (``Methionine + cystine``, the
trade's heading, beside a ``Methionine`` column); the longest known name wins. A number with an exponent (``1e3``) is refused
with its own message. A bare name counts once; there is no constant term and
no brackets. `parse_sum` returns the terms with the names as written (the caller checks
that each names a nutrient) or raises `SumError` with a plain message.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from typing import Callable

# Operator characters and what they stand for.
_OPERATORS = {"+": "+", "-": "-", "\u2212": "-", "\u2013": "-", "*": "*", "\u00d7": "*"}
# A number as written in a Sum: digits with an optional decimal point.
_NUMBER = re.compile(r"\d+(?:\.\d*)?|\.\d+")
# A number with an exponent, up to the sign the tokenizer splits at ("1e3", "1e" of "1e-3").
_EXPONENT = re.compile(r"(?:\d+(?:\.\d*)?|\.\d+)[eE]\d*")
# A word that starts with a number and goes on (a missing "*", or a decimal comma).
_LEADING_NUMBER = re.compile(r"(\d+(?:\.\d*)?|\.\d+)\s*(.*)", re.DOTALL)

NUMBER, NAME, SIGN, TIMES = "number", "name", "sign", "times"

# Most parts a name joined across signs may have ("25-OH-D3" has three): bounds the search
# for the longest known name, so a Sum of a thousand terms is read in linear time.
MOST_NAME_PARTS = 6

EXAMPLE = "434.8 * Sodium + 255.8 * Potassium - 282.1 * Chloride"


class SumError(ValueError):
    """A Sum that does not follow the syntax; the message says what is wrong and how to write it."""


@dataclass(frozen=True)
class Token:
    """One piece of a Sum: its kind, its text (an operator as it stands for) and where it is."""

    kind: str
    text: str
    start: int
    end: int


@dataclass(frozen=True)
class Term:
    """One number times one nutrient, the name as written."""

    number: float
    name: str


def parse_sum(text: str, known: Callable[[str], bool]) -> list[Term]:
    """The terms of the Sum `text`; `known(name)` says whether a name is a nutrient (used to
    keep "+" and "-" inside names such as "Omega-3"). Raises `SumError`."""
    tokens = _joined(text, tokenize(text, known), known)
    if not tokens:
        raise SumError(f"the Sum is blank; write the nutrients it adds, each times a number, as in {EXAMPLE}")
    sign, at = 1.0, 0
    if tokens[0].kind == SIGN:
        sign, at = (-1.0 if tokens[0].text == "-" else 1.0), 1
        if len(tokens) == 1:
            raise SumError(f'the Sum is only "{tokens[0].text}"; write the nutrients it adds, each times a '
                           f"number, as in {EXAMPLE}")
    terms: list[Term] = []
    while True:
        term, at = _term(tokens, at, sign, known)
        terms.append(term)
        if at == len(tokens):
            return terms
        token = tokens[at]
        if token.kind != SIGN:
            raise SumError(f'"{_shown(token)}" after "{_written(text, tokens, at)}" joins nothing: '
                           f"a Sum is terms joined by + and -, each a number times a nutrient, as in {EXAMPLE}")
        sign, at = (-1.0 if token.text == "-" else 1.0), at + 1
        if at == len(tokens):
            raise SumError(f'the Sum ends with "{_shown(token)}"; add a number times a nutrient after it, '
                           "or delete it")


def tokenize(text: str, known: Callable[[str], bool]) -> list[Token]:
    """The Sum's tokens: operators, numbers and names (names as written, trimmed)."""
    tokens: list[Token] = []
    at = 0
    while at < len(text):
        character = text[at]
        if character.isspace():
            at += 1
        elif character in _OPERATORS:
            stands_for = _OPERATORS[character]
            tokens.append(Token(TIMES if stands_for == "*" else SIGN, stands_for, at, at + 1))
            at += 1
        else:
            end = at
            while end < len(text) and text[end] not in _OPERATORS:
                end += 1
            word = text[at:end].rstrip()
            tokens.append(_word(word, at, known))
            at = end
    return tokens


def _word(word: str, start: int, known: Callable[[str], bool]) -> Token:
    """The text between two operators: a number or a name (a name may start with a digit)."""
    end = start + len(word)
    if known(word) or not word[0].isdigit() and word[0] != ".":
        return Token(NAME, word, start, end)
    if _NUMBER.fullmatch(word):
        return Token(NUMBER, word, start, end)
    if _EXPONENT.fullmatch(word):
        raise SumError(f'"{word}" is a number with an exponent; write it in plain decimals, as in 1000 or '
                       "0.001 (a Sum takes digits and a decimal point)")
    if re.fullmatch(r"\d+,\d+", word):
        raise SumError(f'"{word}": write decimals with a point, as in {word.replace(",", ".")}')
    match = _LEADING_NUMBER.fullmatch(word)
    if match is None or not match[2]:
        raise SumError(f'"{word}" is not a number; write numbers with digits and a decimal point, as in 434.8')
    raise SumError(f'"{word}" has no "*" between the number and the nutrient; write {match[1]} * {match[2]}')


def _joined(text: str, tokens: list[Token], known: Callable[[str], bool]) -> list[Token]:
    """The tokens with "part sign part ..." made one name when that text is a known name
    (the longest such run wins): written without spaces ("Omega-3", "25-OH-D3") when the
    first part alone is not known, and also with spaces ("Methionine + cystine") when the
    part after the first sign is not a known name."""
    result: list[Token] = []
    at = 0
    while at < len(tokens):
        last = min(len(tokens) - 1, at + 2 * (MOST_NAME_PARTS - 1))
        end = next((end for end in range(last, at + 1, -2) if _joins(text, tokens[at:end + 1], known)), at)
        result.append(tokens[at] if end == at else Token(NAME, text[tokens[at].start:tokens[end].end],
                                                          tokens[at].start, tokens[end].end))
        at = end + 1
    return result


def _joins(text: str, run: list[Token], known: Callable[[str], bool]) -> bool:
    """Whether the tokens `run` (parts and signs in turn) are one known name (see `_joined`)."""
    parts, signs = run[0::2], run[1::2]
    if len(run) % 2 == 0 or any(t.kind not in (NAME, NUMBER) for t in parts) or any(t.kind != SIGN for t in signs):
        return False
    if not known(text[run[0].start:run[-1].end]):
        return False
    tight = all(left.end == right.start for left, right in zip(run, run[1:]))
    if tight:
        return run[0].kind == NUMBER or not known(run[0].text)
    return run[0].kind == NAME and run[2].kind == NAME and not known(run[2].text)


def _term(tokens: list[Token], at: int, sign: float, known: Callable[[str], bool]) -> tuple[Term, int]:
    """The term starting at `at` and where the next token is."""
    token = tokens[at]
    after = tokens[at + 1] if at + 1 < len(tokens) else None
    if token.kind in (SIGN, TIMES) and at > 0 and tokens[at - 1].kind == SIGN:
        raise SumError(f'two operators in a row ("{tokens[at - 1].text} {_shown(token)}"); put a number times a '
                       "nutrient between them, or delete one")
    if token.kind == TIMES:
        raise SumError(f'"{_shown(token)}" has no number before it; write a number times a nutrient, as in 434.8 * Sodium')
    if after is None or after.kind != TIMES:
        if token.kind == NUMBER:
            raise SumError(f"the number {token.text} multiplies no nutrient; write {token.text} * a nutrient, "
                           "or delete it (a Sum has no constant part)")
        return Term(sign, _name(token, known)), at + 1
    other = tokens[at + 2] if at + 2 < len(tokens) else None
    if other is None:
        raise SumError(f'"{_shown(after)}" after "{token.text}" has nothing after it; write '
                       + ("a nutrient" if token.kind == NUMBER else "a number"))
    if other.kind in (SIGN, TIMES):
        raise SumError(f'two operators in a row ("{_shown(after)} {_shown(other)}"); put a number between them, '
                       "or delete one")
    if token.kind == other.kind == NUMBER:
        raise SumError(f"{token.text} * {other.text} multiplies two numbers; write one number times a nutrient")
    if token.kind == other.kind == NAME:
        raise SumError(f'"{token.text} * {other.text}" multiplies two nutrients; a Sum adds nutrients, each '
                       "times a number")
    number, name = (token, other) if token.kind == NUMBER else (other, token)
    return Term(sign * float(number.text), _name(name, known)), at + 3


def _name(token: Token, known: Callable[[str], bool]) -> str:
    """A name token's text; brackets used to group terms are refused."""
    if not known(token.text) and token.text.count("(") != token.text.count(")"):
        raise SumError("brackets cannot group terms in a Sum; multiply each nutrient by its number, "
                       "as in 2 * Calcium + 2 * Phosphorus")
    return token.text


def _shown(token: Token) -> str:
    """An operator as shown in a message."""
    return "*" if token.kind == TIMES else token.text


def _written(text: str, tokens: list[Token], at: int) -> str:
    """The Sum's text up to the token at `at`, trimmed, for a message."""
    return text[:tokens[at].start].strip()
