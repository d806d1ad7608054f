"""The checks of a sweep: Python expressions over one row's inputs and outputs.

``--check EXPR`` must hold for every row; ``--expect NAME=EXPR`` computes a
reference column that output NAME must equal. An expression sees the row's
columns by name and a small set of pure functions, nothing else: no
builtins, no attributes starting with ``_``, no lambdas or comprehensions
(which could reach past that set). That keeps a typo from running anything
unexpected; it is not a sandbox against a hostile user, who can run Python
anyway. Names are checked before the first run, so a misspelt column is a
usage error, not 65,536 failures.
"""

from __future__ import annotations

import ast
import math
from dataclasses import dataclass

from ._sweep_spec import SweepSpecError

__all__ = ["CHECK_FUNCTIONS", "Check", "check_names", "compile_check"]

CHECK_FUNCTIONS = {
    "abs": abs, "min": min, "max": max, "divmod": divmod, "pow": pow, "round": round, "int": int, "bool": bool,
    "len": len, "sum": sum, "any": any, "all": all, "ord": ord, "chr": chr, "hex": hex, "bin": bin, "str": str,
    "sqrt": math.sqrt, "isqrt": math.isqrt, "floor": math.floor, "ceil": math.ceil, "gcd": math.gcd,
    "log2": math.log2, "comb": math.comb, "factorial": math.factorial, "True": True, "False": False,
}
"""What an expression may call besides its columns."""

_NAMESPACE = {"__builtins__": {}, **CHECK_FUNCTIONS}
"""An expression's globals; its row is its locals, so a column hides a function of the same name."""

_REFUSED = (ast.Lambda, ast.ListComp, ast.SetComp, ast.DictComp, ast.GeneratorExp, ast.NamedExpr, ast.Await,
            ast.Yield, ast.YieldFrom)


@dataclass(frozen=True)
class Check:
    """One expression, compiled; ``column`` is the output an ``--expect`` compares (None for ``--check``)."""
    text: str
    column: str | None
    code: object

    def value(self, row: dict):
        """The expression's value for ``row``; an exception it raises is returned, not raised."""
        try:
            return eval(self.code, _NAMESPACE, row)
        except Exception as exc:  # noqa: BLE001 — a row's own error is that row's result
            return exc

    def passes(self, row: dict) -> bool:
        value = self.value(row)
        if isinstance(value, Exception):
            return False
        if self.column is None:
            return bool(value)
        return row[self.column] == value


def check_names(text: str) -> list[str]:
    """The names an expression reads, in order (none when it does not parse: ``compile_check``
    then says why)."""
    try:
        tree = ast.parse(text.strip(), mode="eval")
    except SyntaxError:
        return []
    return [node.id for node in ast.walk(tree) if isinstance(node, ast.Name)]


def compile_check(text: str, columns: list[str], option: str, column: str | None = None) -> Check:
    """Parse and vet ``text``; a problem raises SweepSpecError worded for ``option``."""
    text = text.strip()
    try:
        tree = ast.parse(text, mode="eval")
    except SyntaxError as exc:
        column = min(exc.offset or len(text) + 1, len(text) + 1)      # 0 or None: at the end
        raise SweepSpecError(f"argument {option}: {exc.msg}\n    {text}\n    {' ' * (column - 1)}^") from None
    for node in ast.walk(tree):
        if isinstance(node, _REFUSED):
            raise SweepSpecError(f"argument {option}: {type(node).__name__.lower()} is not allowed in a check "
                                 f"(write the condition with the columns and functions directly)")
        if isinstance(node, ast.Attribute) and node.attr.startswith("_"):
            raise SweepSpecError(f"argument {option}: '.{node.attr}' is not allowed in a check")
        if isinstance(node, ast.Name) and node.id not in columns and node.id not in CHECK_FUNCTIONS:
            raise SweepSpecError(f"argument {option}: '{node.id}' is not a column of this sweep "
                                 f"(columns: {', '.join(columns)}; functions: {', '.join(sorted(CHECK_FUNCTIONS))})")
    return Check(text, column, compile(tree, f"<{option}>", "eval"))
