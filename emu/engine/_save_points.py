"""Save points: the whole state of an emulator kept in memory, to go back to cheaply.

An emulator's compiled functions are bound to its register list, its memory
and its ports, so building one costs hundreds of closures. A sweep runs the
same program thousands of times; it builds one emulator and, before each
run, puts the state back in place (the same list, the same memory object)
instead. A snapshot (``_snapshots``) is the same state as a checked JSON
file for people and other sessions; a save point is for the same process
and is trusted, so going back is a few copies.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass

__all__ = ["SavePoint", "rewind", "save_point"]


@dataclass(frozen=True)
class SavePoint:
    """What ``Emulator.save_point`` kept; only ``Emulator.rewind`` of the same machine reads it."""
    machine: object
    slots: tuple
    memory: bytes | tuple
    ring: dict
    control: tuple
    ports: tuple


def save_point(emu) -> SavePoint:
    memory = emu.memory
    return SavePoint(emu.machine, tuple(emu._s), bytes(memory) if isinstance(memory, bytearray) else tuple(memory),
                     emu.ring.state(),
                     (emu.switch_run, emu.halt_latch, emu.halt_address, emu.frozen, emu._released, emu._seq,
                      emu._instruction_address, emu.cycles, emu.instructions, tuple(emu._undefined.items())),
                     emu.ports.kept())


def rewind(emu, point: SavePoint) -> None:
    """Put ``point`` back into the emulator's own list, memory and ports, so bound code stays valid."""
    emu._s[:] = point.slots
    emu.memory[:] = point.memory
    emu.ring.restore(point.ring)
    (emu.switch_run, emu.halt_latch, emu.halt_address, emu.frozen, emu._released, emu._seq,
     emu._instruction_address, emu.cycles, emu.instructions, undefined) = point.control
    if undefined or emu._undefined:
        emu._undefined = Counter(dict(undefined))
    emu.ports.put_back(point.ports)
