"""An ALU definition (emu.description ``AluOp``) → lines of Python, as fast as hand-written templates.

The result is computed exactly into a temporary, the flags that need the
exact value (a carry is bit ``w`` of it) are computed next, then the
temporary is kept to ``w`` bits; a flag that reads only bits of the kept
result (zero, negative) is returned as an expression over it, with no line
of its own. Indices and shift amounts are folded to numbers at compile
time, so ``result[w]`` becomes ``r >> 8 & 1`` for an 8-bit operation.
"""

from __future__ import annotations

from ..description.notation import Binary, BitRange, Unary, Var, alu_parts, evaluate, free_names

__all__ = ["emit_alu"]

_LEVEL = {"==": 1, "!=": 1, "|": 2, "^": 3, "&": 4, "<<": 5, ">>": 5, "+": 6, "-": 6}
_UNARY, _ATOM = 7, 8


def _fold(node, w: int) -> int | None:
    """The value of an expression over numbers and ``w`` only, else None."""
    if free_names(node) - {"w"}:
        return None
    return evaluate(node, {"w": w})


class _Printer:
    """Python text of one expression; ``names`` maps operand and flag names to identifiers."""

    def __init__(self, names: dict[str, str], w: int, kept: str | None):
        self.names, self.w, self.kept = names, w, kept

    def text(self, node) -> tuple[str, int]:
        """(text, precedence level of its outermost operator)."""
        constant = _fold(node, self.w)
        if constant is not None:
            return (str(constant), _ATOM) if constant >= 0 else (f"({constant})", _ATOM)
        match node:
            case Var(name):
                return self.names[name], _ATOM
            case Unary(op, x):
                return op + self.wrap(x, _UNARY), _UNARY
            case Binary(op, x, y):
                level = _LEVEL[op]
                left = self.wrap(x, level + 1 if level == 1 else level)
                return f"{left} {op} {self.wrap(y, level + 1)}", level
            case BitRange(x, h, l):
                return self.slice(x, _fold(h, self.w), _fold(l, self.w))
        raise TypeError(f"not an ALU expression: {node!r}")

    def wrap(self, node, level: int) -> str:
        text, own = self.text(node)
        return text if own >= level else f"({text})"

    def slice(self, x, high: int, low: int) -> tuple[str, int]:
        """``x[high:low]``; on the kept result the top bits need no mask (they are the word's top)."""
        if x == Var("result") and self.kept is not None:
            if high == self.w - 1:
                return (self.kept, _ATOM) if low == 0 else (f"{self.kept} >> {low}", _LEVEL[">>"])
            base = self.kept
        else:
            base = self.wrap(x, _LEVEL[">>"] + 1) if low else self.wrap(x, _LEVEL["&"] + 1)
        shifted = f"{base} >> {low}" if low else base
        return f"{shifted} & {(1 << (high - low + 1)) - 1:#x}", _LEVEL["&"]


def _reads_exact_result(node, w: int) -> bool:
    """Whether the expression needs bits of ``result`` above the kept ``w`` (or all of it)."""
    match node:
        case Var("result"):
            return True
        case BitRange(Var("result"), h, _):
            return _fold(h, w) > w - 1
    return any(_reads_exact_result(part, w) for part in alu_parts(node))


def emit_alu(op, operands: list[str], flag_reads: dict[str, str], w: int, wanted: dict[str, str],
             out) -> tuple[str, dict[str, str]]:
    """Emit ``op`` over ``operands`` (identifiers) at width ``w``; return the kept result's name and,
    for each flag name in ``wanted`` (flag name → key of ``op.flags``), its value's text.

    ``flag_reads`` maps each name ``op.reads`` to the text that reads that
    flag before the step; ``out`` is the compiler's emitter (``line``, ``fresh``).
    """
    names = dict(zip(op.operands, operands)) | flag_reads
    result = out.fresh("r")
    out.line(f"{result} = {_Printer(names, w, None).text(op.result)[0]}")
    exact = _Printer(names | {"result": result}, w, None)
    kept = _Printer(names, w, result)
    values: dict[str, str] = {}
    later = []
    for flag_name, key in wanted.items():
        expr = op.flags[key]
        if _reads_exact_result(expr, w):
            temp = out.fresh(key[0])
            out.line(f"{temp} = {exact.text(expr)[0]}")
            values[flag_name] = temp
        else:
            later.append((flag_name, key, expr))
    out.line(f"{result} &= {(1 << w) - 1:#x}")
    for flag_name, key, expr in later:
        text = kept.text(expr)[0]
        if (free_names(expr) - {"result", "w"}) and not text.isidentifier():
            temp = out.fresh(key[0])
            out.line(f"{temp} = {text}")
            text = temp
        values[flag_name] = text
    return result, values
