"""Conditions the engine checks at instruction boundaries during a run.

Each is a small object called as ``condition(emu)`` after every instruction
the run completes (the engine's ``until``). They carry state (a count, a
call depth, the values last seen), so each has ``clone()``: the debugger
replays the tail of a long run for the timing diagram and must start the
replay with the condition exactly as it stood at the checkpoint.
"""

from __future__ import annotations

from dataclasses import dataclass

from ._calls import CallShape

__all__ = ["AnyOf", "CallDepth", "Count", "Watch", "Watches"]


class Count:
    """True after ``n`` instructions."""

    def __init__(self, n: int):
        self.left = n
        self.why = f"{n} instruction{'s' if n != 1 else ''} done"

    def __call__(self, emu) -> bool:
        self.left -= 1
        return self.left <= 0

    def clone(self) -> "Count":
        twin = Count.__new__(Count)
        twin.left, twin.why = self.left, self.why
        return twin


class CallDepth:
    """Follows calls and returns; true when the depth falls to ``stop_below``.

    ``stop_below=1`` steps over: one instruction, or a call and everything
    up to its return. ``stop_below=0`` leaves the routine running now.
    The instruction that just finished is the one that started at the
    previous boundary, so its kind is read from memory there.
    """

    def __init__(self, machine, shape: CallShape, start_address: int, stop_below: int, why: str):
        self.machine, self.shape = machine, shape
        self.previous = start_address
        self.depth = 0
        self.stop_below = stop_below
        self.why = why

    def __call__(self, emu) -> bool:
        kind = self.shape.kind(self.machine, emu.memory[self.previous])
        self.previous = emu.pc
        if kind == "call":
            self.depth += 1
        elif kind == "return":
            self.depth -= 1
        return self.depth < self.stop_below

    def clone(self) -> "CallDepth":
        twin = CallDepth(self.machine, self.shape, self.previous, self.stop_below, self.why)
        twin.depth = self.depth
        return twin


@dataclass(frozen=True)
class Watch:
    """One watchpoint: a register, group or flag by name, or a memory word."""
    number: int
    name: str | None = None
    address: int | None = None
    label: str = ""

    def read(self, emu) -> int:
        return emu.get(self.name) if self.name is not None else emu.memory[self.address]


class Watches:
    """True when any watched value differs from the value seen before."""

    def __init__(self, watches, emu):
        self.watches = list(watches)
        self.seen = [w.read(emu) for w in self.watches]
        self.why = ""
        self.hit: tuple[Watch, int, int] | None = None

    def __call__(self, emu) -> bool:
        for i, watch in enumerate(self.watches):
            value = watch.read(emu)
            if value != self.seen[i]:
                self.hit = (watch, self.seen[i], value)
                self.seen[i] = value
                return True
        return False

    def clone(self) -> "Watches":
        twin = Watches.__new__(Watches)
        twin.watches, twin.seen, twin.why, twin.hit = self.watches, list(self.seen), self.why, self.hit
        return twin


class AnyOf:
    """Several conditions at once; ``fired`` is the one that became true."""

    def __init__(self, conditions):
        self.conditions = [c for c in conditions if c is not None]
        self.fired = None

    def __call__(self, emu) -> bool:
        hit = False
        for condition in self.conditions:
            if condition(emu) and not hit:
                self.fired, hit = condition, True
        return hit

    def clone(self) -> "AnyOf":
        twin = AnyOf([c.clone() for c in self.conditions])
        return twin
