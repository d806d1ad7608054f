"""Where a lark parse of one short text went wrong, as a column a caret can point at."""

from __future__ import annotations

import lark

__all__ = ["error_column"]


def error_column(exc: lark.UnexpectedInput, text: str) -> int:
    """The 1-based column of the error; when the text stops short, the column just after it."""
    column = getattr(exc, "column", 0) or 0
    token = getattr(exc, "token", None)
    if column < 1 or getattr(token, "type", None) == "$END":
        column = len(text.rstrip()) + 1
    return column
