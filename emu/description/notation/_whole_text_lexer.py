"""A lexer for lark that reads a whole text in one regular-expression pass.

lark's own lexer matches one terminal at a time, ignored ones (spaces,
comments) as separate matches, and brings a line counter up to date after
every match: on a long assembly program that is over a third of the parse.
This one is built from the same terminal definitions, in the order lark gives
them, so the grammar stays the one source of truth and the tokens are the
same; it folds the ignored text in front of a token into that token's match
and walks the text with a single ``finditer``. That ignored text is matched
whole before the token is tried (an atomic group), never given back to
it: a comment at the end of a file stays a comment.

It reads the text as lark's *basic* lexer does, without the parser state a
contextual lexer consults, and takes ignored text before any token, so it
suits grammars whose ignored terminals never match where a token could
begin (spaces and comments). It refuses a grammar where a regular-expression
terminal also matches a string terminal (a keyword that is also a name),
which lark's lexer sorts out match by match. Where no terminal matches
it raises lark's ``UnexpectedCharacters`` at the place lark's lexer would.
"""

from __future__ import annotations

import re

import lark
from lark.lexer import Lexer

__all__ = ["WholeTextLexer"]


class WholeTextLexer(Lexer):
    """``lark.Lark(..., parser="lalr", lexer=WholeTextLexer)``; ``lex(text)`` yields lark Tokens."""

    def __init__(self, lexer_conf):
        terminals = sorted(lexer_conf.terminals,
                           key=lambda t: (-t.priority, -t.pattern.max_width, -len(t.pattern.value), t.name))
        _refuse_shadowed_strings(terminals, lexer_conf.g_regex_flags)
        skipped = [t for t in terminals if t.name in lexer_conf.ignore]
        kept = [t for t in terminals if t.name not in lexer_conf.ignore]
        skip = "(?>(?:" + "|".join(f"(?:{t.pattern.to_regexp()})" for t in skipped) + ")*)" if skipped else ""
        choices = "|".join(f"(?P<{t.name}>{t.pattern.to_regexp()})" for t in kept)
        self._tokens = re.compile(f"{skip}(?:{choices}|\\Z)", lexer_conf.g_regex_flags)
        self._skip = re.compile(skip, lexer_conf.g_regex_flags)

    def lex(self, text: str):
        """The tokens of ``text`` with lark's positions (1-based line and column, 0-based start)."""
        token = _Token
        line, line_start, end = 1, 0, 0
        for match in self._tokens.finditer(text):
            if match.start() != end:
                self._refuse(text, end)
            kind = match.lastgroup
            if kind is None:                # ignored text up to the end (the last match)
                return
            start = match.start(kind)
            if start != end and text.count("\n", end, start):      # a line break in ignored text
                line += text.count("\n", end, start)
                line_start = text.rindex("\n", end, start) + 1
            value = match.group(kind)
            yield token(kind, value, start, line, start - line_start + 1)
            end = match.end()
            if "\n" in value:
                line += value.count("\n")
                line_start = text.rindex("\n", start, end) + 1

    def _refuse(self, text: str, end: int):
        """Stop where no terminal matches: past the ignored text after the last token, as lark's lexer does."""
        position = self._skip.match(text, end).end()
        line = text.count("\n", 0, position) + 1
        column = position - (text.rfind("\n", 0, position) + 1) + 1
        raise lark.UnexpectedCharacters(text, position, line, column)


class _Token(lark.Token):
    """lark's Token made in one call: ``lark.Token(...)`` hands its arguments on to a second
    (to accept an older keyword): a tenth of parsing a long file."""
    __slots__ = ()

    def __new__(cls, kind: str, value: str, start_pos: int, line: int, column: int):
        token = str.__new__(cls, value)
        token.type, token.value, token.start_pos, token.line, token.column = kind, value, start_pos, line, column
        token.end_line = token.end_column = token.end_pos = None
        return token


def _refuse_shadowed_strings(terminals, flags: int) -> None:
    """A string terminal that a regular-expression terminal matches whole needs lark's lexer."""
    for regex in (t for t in terminals if t.pattern.type == "re"):
        for string in (t for t in terminals if t.pattern.type == "str" and t.priority == regex.priority):
            found = re.match(regex.pattern.to_regexp(), string.pattern.value, flags)
            if found and found.group(0) == string.pattern.value:
                raise ValueError(f"terminal {string.name} ({string.pattern.value!r}) is also a {regex.name}: "
                                 f"the whole-text lexer cannot tell them apart; use lark's lexer")
