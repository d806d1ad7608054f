"""Sequencing statements (end, goto, wait until) resolved against an instruction's steps.

Kept apart from the loader because it is a rule of the control unit (which
step may follow which, and where a decode group's members part), not a
question of file syntax.
"""

from __future__ import annotations

from ._steps import Jump
from .notation import End, Goto, WaitUntil

__all__ = ["resolve_jump"]


def resolve_jump(statement, position, fail) -> Jump:
    """A sequencing statement resolved to step indices, checked against the instruction's steps.

    Steps are numbered as ``isa`` numbers them (fetch steps first, from 1).
    In an instruction decoded by later words, the steps up to its decoding
    step are shared with its decode group: no jump leaves them or enters
    them from after, so the members part only at the decoding step.
    """
    own, fetch_count, count, decode_step = position
    match statement:
        case End(condition):
            if own <= decode_step:
                fail(f"'end' cannot come before the instruction is decoded (after step "
                     f"{fetch_count + decode_step + 1})")
            return Jump(count, condition)
        case WaitUntil(condition):
            return Jump(own, condition, when=False)
        case Goto(number, condition):
            first, last = fetch_count + 1, fetch_count + count
            if not first <= number <= last:
                fetch = f"steps 1…{fetch_count} are" if fetch_count > 1 else "step 1 is"
                fail(f"goto {number}: the instruction's own steps are numbered {first}…{last} "
                     f"({fetch} the fetch)")
            target = number - fetch_count - 1
            if (own <= decode_step) != (target <= decode_step):
                fail(f"goto {number} crosses the decoding step (step {fetch_count + decode_step + 1}): "
                     f"the steps up to it are shared by the instructions decoded there")
            return Jump(target, condition)
    raise AssertionError(statement)
