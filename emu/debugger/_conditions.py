"""Conditions the engine checks at instruction boundaries during a run.

Each is a small object called as ``condition(emu)`` at instruction
boundaries (the engine's ``until``). Each also says, with ``lookout(emu)``,
where it can become true (an ``emu.Lookout``), and the engine asks it only
there, so a watched run keeps the fast path; the stepping drives still ask
after every instruction, which gives the same answers. They carry state (a
call depth, the values last seen), so each has ``clone()``: the debugger
replays the tail of a long run for the timing diagram and must start the
replay with the condition exactly as it stood at the checkpoint.
"""

from __future__ import annotations

from dataclasses import dataclass

from emu import Lookout

from ._calls import CallShape

__all__ = ["AnyOf", "CallDepth", "Count", "Watch", "Watches"]


class Count:
    """True once ``n`` instructions have been done from now (by the emulator's count)."""

    def __init__(self, n: int, emu):
        self.target = emu.instructions + n
        self.why = f"{n} instruction{'s' if n != 1 else ''} done"

    def __call__(self, emu) -> bool:
        return emu.instructions >= self.target

    def lookout(self, emu) -> Lookout:
        return Lookout(within=self.target - emu.instructions)

    def clone(self) -> "Count":
        twin = Count.__new__(Count)
        twin.target, twin.why = self.target, self.why
        return twin


class CallDepth:
    """Follows calls and returns; true when the depth falls to ``stop_below``.

    ``stop_below=1`` steps over: one instruction, or a call and everything
    up to its return. ``stop_below=0`` leaves the routine running now.
    The instruction that just finished is the one that started at the
    boundary where it was last asked, so its kind is read from memory there.
    That holds when it is asked at the boundaries before and after every
    call and return (its lookout): between those, no instruction moves the
    depth. The first answer may be true at once, so it is asked after the
    first instruction too.
    """

    def __init__(self, machine, shape: CallShape, start_address: int, stop_below: int, why: str):
        self.machine, self.shape = machine, shape
        self.previous = start_address
        self.depth = 0
        self.stop_below = stop_below
        self.why = why
        self.asked = False

    def __call__(self, emu) -> bool:
        self.asked = True
        kind = self.shape.kind(self.machine, emu.memory[self.previous])
        self.previous = emu.pc
        if kind == "call":
            self.depth += 1
        elif kind == "return":
            self.depth -= 1
        return self.depth < self.stop_below

    def lookout(self, emu) -> Lookout:
        return Lookout(instructions=self.shape.calls | self.shape.returns, within=None if self.asked else 1)

    def clone(self) -> "CallDepth":
        twin = CallDepth(self.machine, self.shape, self.previous, self.stop_below, self.why)
        twin.depth, twin.asked = self.depth, self.asked
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
        self._lookout = Lookout(registers=frozenset(w.name for w in self.watches if w.name is not None),
                                memory=frozenset(w.address for w in self.watches if w.name is None))

    def __call__(self, emu) -> bool:
        for i, watch in enumerate(self.watches):
            value = watch.read(emu)
            if value != self.seen[i]:
                self.hit = (watch, self.seen[i], value)
                self.seen[i] = value
                return True
        return False

    def lookout(self, emu) -> Lookout:
        """The same for the whole run: the watches are fixed when it starts (asked at every stop)."""
        return self._lookout

    def clone(self) -> "Watches":
        twin = Watches.__new__(Watches)
        twin.watches, twin.seen, twin.why, twin.hit = self.watches, list(self.seen), self.why, self.hit
        twin._lookout = self._lookout
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

    def lookout(self, emu) -> Lookout:
        if len(self.conditions) == 1:
            return self.conditions[0].lookout(emu)
        found = Lookout()
        for condition in self.conditions:
            found |= condition.lookout(emu)
        return found

    def clone(self) -> "AnyOf":
        twin = AnyOf([c.clone() for c in self.conditions])
        return twin
