"""Where generated code keeps the machine's state: list slots, or cached locals written back.

``_SlotAccess`` reads and writes ``s[slot]`` directly (the stepping functions: each runs
one micro-step and returns). ``_LocalAccess`` keeps registers in locals for the length of a
fused function and writes back only what changed; ``flush`` and ``forget`` keep the two in
step around code that reads ``s`` itself.
"""

from __future__ import annotations

from ..description import Machine
from ._emitter import Emitter

__all__ = ["_SlotAccess", "_LocalAccess"]


class _SlotAccess:
    """Every read and write goes straight to ``s[slot]``."""

    def __init__(self, out: Emitter):
        self.out = out

    def read(self, slot: int, name: str) -> str:
        return f"s[{slot}]"

    def write(self, slot: int, name: str, value: str) -> None:
        self.out.line(f"s[{slot}] = {value}")

    def forget(self, slots) -> None:
        pass

    def flush(self, slots) -> None:
        pass


class _LocalAccess:
    """Registers live in locals for the whole fused function, written back at the end."""

    def __init__(self, out: Emitter, machine: Machine):
        self.out = out
        self.first_flag_slot = len(machine.registers)
        self.loaded: dict[int, str] = {}
        self.dirty: dict[int, str] = {}

    def local(self, slot: int, name: str) -> str:
        return f"flag_{name}" if slot >= self.first_flag_slot else f"reg_{name}"

    def read(self, slot: int, name: str) -> str:
        if slot not in self.loaded:
            self.loaded[slot] = self.local(slot, name)
            self.out.line(f"{self.loaded[slot]} = s[{slot}]")
        return self.loaded[slot]

    def write(self, slot: int, name: str, value: str) -> None:
        local = self.local(slot, name)
        self.out.line(f"{local} = {value}")
        self.loaded[slot] = local
        self.dirty[slot] = local

    def flush(self, slots) -> None:
        """Before a register is reached by a run-time index, put cached values back."""
        for slot in sorted(slots):
            if slot in self.dirty:
                self.out.line(f"s[{slot}] = {self.dirty.pop(slot)}")

    def forget(self, slots) -> None:
        """After a write by run-time index, cached copies are stale."""
        for slot in slots:
            self.loaded.pop(slot, None)
            self.dirty.pop(slot, None)

    def write_back(self) -> None:
        for slot in sorted(self.dirty):
            self.out.line(f"s[{slot}] = {self.dirty[slot]}")
        self.dirty.clear()
