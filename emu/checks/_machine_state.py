"""The state of an emulated machine as named items, and how two states differ.

Properties compare a machine with a twin (free running, fused, restored
from a snapshot); a failure must say in the builder's terms what differs
("r3: 5 here, 6 there"), so the state is a flat dict of named items read
through the emulator's public surface, never its internal slots.
"""

from __future__ import annotations

from ..formatting import address_text

__all__ = ["PropertyFailed", "datapath_state", "machine_state", "differences"]


class PropertyFailed(AssertionError):
    """A property does not hold: what the property expected and what the machine did.

    ``cycle`` and ``phase`` say where the machine stood when it was noticed.
    """

    def __init__(self, expected: str, happened: str, emu=None):
        super().__init__(f"expected {expected}; {happened}")
        self.expected, self.happened = expected, happened
        self.cycle = emu.cycles if emu is not None else None
        self.phase = emu.machine.phases[emu.phase_index].name if emu is not None else None


def datapath_state(emu) -> dict:
    """Everything a program can observe: registers (internal ones too), flags, memory, ports."""
    machine = emu.machine
    state = {name: emu.get(name) for name in machine.registers}
    state.update({name: emu.get(name) for name in machine.flags})
    state["memory"] = bytes(emu.memory) if isinstance(emu.memory, bytearray) else tuple(emu.memory)
    state["console output"] = bytes(emu.output)
    state["lamps"] = emu.lamps
    state["input read"] = emu.ports.input_position
    return state


def machine_state(emu) -> dict:
    """The datapath and everything the control unit and the clock hold."""
    instruction, step = emu.sequencer
    return {**datapath_state(emu), "cycles": emu.cycles, "instructions": emu.instructions,
            "time (ns)": emu.time_ns, "phase": emu.machine.phases[emu.phase_index].name,
            "sequencer": (instruction.display if instruction is not None else "fetch", step),
            "frozen": emu.frozen, "halt latch": emu.halt_latch, "halt address": emu.halt_address}


def differences(machine, ours: dict, theirs: dict, limit: int = 4) -> str:
    """The first few items that differ, as ``name ours vs theirs``."""
    found = []
    for name, value in ours.items():
        other = theirs.get(name)
        if value == other:
            continue
        if name == "memory":
            address = next(a for a, (x, y) in enumerate(zip(value, other)) if x != y)
            found.append(f"memory at {address_text(address, machine)}: {value[address]} vs {other[address]}")
        else:
            found.append(f"{name}: {value!r} vs {other!r}")
    shown = ", ".join(found[:limit])
    return shown + (f" and {len(found) - limit} more" if len(found) > limit else "")

