"""Python names for instruction forms in generated code, shared by every generator of it."""

from __future__ import annotations

from ..description import Instruction

__all__ = ["_ident"]


def _ident(ins: Instruction) -> str:
    """A Python name for an instruction form: ``ld rd, [x]`` → ``ld_rd_ix``."""
    parts = [ins.mnemonic]
    for op in ins.operands:
        text = op.text().replace("[", "i").replace("]", "")
        parts.append("".join(ch if ch.isalnum() else "_" for ch in text))
    return "_".join(parts)
