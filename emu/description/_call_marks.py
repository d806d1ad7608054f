"""Which instructions call a routine and which return from one, as the builder marks them.

A debugger that steps over a call or runs to the end of a routine must know
what a call is. Guessing it from the micro-steps only works for a machine
that pushes its return address on a stack; a machine that keeps it in a
link register (``jal``-style: the return address goes to a register, the
return jumps through it) looks like any other jump. So an instruction may
say what it is::

    call = "stack"    # with  stack = "sp":  the return address goes on the stack at sp
    call = "link"     # with  link = "lr":   the return address goes to lr
    returns = true    # it returns to the caller

The loader checks the marks here: a known kind, the one register key that
kind needs naming a register or register group (not the program counter),
no register key without its kind, and no instruction both a call and a return.
"""

from __future__ import annotations

from dataclasses import dataclass

from ._schema import Table

__all__ = ["CALL_KEYS", "CallMark", "read_call_marks"]

CALL_KEYS = ("call", "stack", "link", "returns")
"""The ``[[instruction]]`` keys read here."""

_REGISTER_KEY = {"stack": "stack", "link": "link"}
"""A call kind → the key that names its register."""


@dataclass(frozen=True)
class CallMark:
    """How an instruction calls: through a stack pointer or a link register."""
    kind: str
    """``"stack"`` or ``"link"``."""
    register: str
    """The stack pointer or the link register (a register or register group)."""


def read_call_marks(spec: Table, registers, groups, program_counter: str) -> tuple[CallMark | None, bool]:
    """The instruction's call mark (None when it is no call) and whether it returns."""
    returns = spec.boolean("returns", default=False)
    kind = spec.choice("call", tuple(_REGISTER_KEY), default=None)
    for other_kind, key in _REGISTER_KEY.items():
        if key in spec and kind != other_kind:
            spec.fail(f"'{key}' names the register of a call = \"{other_kind}\"; "
                      f"this instruction is {'a call through a ' + kind if kind else 'no such call'}", key)
    if kind is None:
        return None, returns
    if returns:
        spec.fail("an instruction is a call or a return, not both ('call' and 'returns = true')", "returns")
    key = _REGISTER_KEY[kind]
    what = "the stack pointer" if kind == "stack" else "the link register"
    if key not in spec:
        spec.fail(f"a call = \"{kind}\" needs '{key}', naming {what}", "call")
    register = spec.string(key, expected=f"the name of {what}")
    if register not in registers and register not in groups:
        known = ", ".join(list(registers) + list(groups))
        spec.fail(f"'{key}': there is no register '{register}' (registers: {known})", key)
    if register == program_counter:
        spec.fail(f"'{key}': the program counter cannot be {what}", key)
    return CallMark(kind, register), returns
