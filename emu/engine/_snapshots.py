"""Snapshots: the whole state of a powered-on machine as JSON, and back.

A snapshot is read by the debugger's ``load`` and by tests that continue a
run; since the file may be damaged or hand-edited, every value is checked
against the machine before any of it is applied.
"""

from __future__ import annotations

import base64
import binascii
import json
import zlib
from collections import Counter

from ..description import Table, is_integer
from ..errors import MachineError
from ._ports import Ports

__all__ = ["read_snapshot", "restore_state", "snapshot_state"]

_SNAPSHOT_FORMAT = "relaybench-snapshot"


def snapshot_state(emu) -> dict:
    machine = emu.machine
    if machine.data_bits <= 8:
        raw = bytes(emu.memory)
    else:
        raw = b"".join(w.to_bytes(2, "little") for w in emu.memory)
    index, step = emu._seq
    return {
        "format": _SNAPSHOT_FORMAT, "version": 1, "machine": machine.name,
        "slots": {name: int(emu._s[slot]) for name, (slot, _w) in emu._slots.items()},
        "memory": base64.b64encode(zlib.compress(raw)).decode("ascii"),
        "ring": emu.ring.state(), "frozen": emu.frozen, "released": emu._released,
        "switch_run": emu.switch_run, "halt_latch": emu.halt_latch, "halt_address": emu.halt_address,
        "sequencer": [index, step], "instruction_address": emu.instruction_address,
        "cycles": emu.cycles, "instructions": emu.instructions,
        "ports": emu.ports.state(), "undefined": [[a, n] for a, n in emu._undefined.items()],
    }


def read_snapshot(path) -> dict:
    try:
        with open(path, encoding="utf-8") as stream:
            return json.load(stream)
    except OSError as exc:
        raise MachineError(f"cannot read snapshot ({exc.strerror or exc})", path=str(path)) from None
    except (ValueError, RecursionError):
        raise MachineError("not a relaybench snapshot (not readable JSON)", path=str(path)) from None


def restore_state(emu, state: dict, origin: str) -> None:
    if not isinstance(state, dict) or state.get("format") != _SNAPSHOT_FORMAT:
        raise MachineError("not a relaybench snapshot", path=origin)
    if state.get("machine") != emu.machine.name:
        raise MachineError(f"the snapshot is of machine '{state.get('machine')}', "
                           f"not '{emu.machine.name}'", path=origin)

    def fail(where, key, message):
        raise MachineError(f"damaged snapshot ({where}{message})", path=origin, key=key)

    slots, memory, ports = _checked_state(emu, Table(state, "", fail))
    for name, value in slots.items():
        emu._s[emu._slots[name][0]] = value
    emu.memory[:] = memory
    emu.ring.restore(state["ring"])
    emu.frozen, emu._released = state["frozen"], state["released"]
    emu.switch_run, emu.halt_latch = state["switch_run"], state["halt_latch"]
    emu.halt_address = state["halt_address"]
    emu._seq = tuple(state["sequencer"])
    emu._instruction_address = state["instruction_address"]
    emu.cycles, emu.instructions = state["cycles"], state["instructions"]
    emu.ports.restore(ports)
    emu._undefined = Counter({a: n for a, n in state["undefined"]})


def _checked_state(emu, state: Table):
    """Every value of a snapshot checked before any is used, so a bad file changes nothing."""
    machine = emu.machine
    state.integer("version", low=1, high=1, expected="1 (the version this relaybench reads)")
    slots = state.table("slots", "slots: ")
    if set(slots.data) != set(emu._slots):
        state.fail("the registers and flags do not match the machine", "slots")
    for name in slots.data:
        slots.integer(name, low=0, high=(1 << emu._slots[name][1]) - 1)
    memory = _memory(machine, state)
    ring = state.table("ring", "ring: ")
    ring.integer("index", low=0, high=len(machine.phases) - 1)
    ring.integer("time_ns", low=0, high=_COUNTER_MAX)
    turn = ring.list_of("turn", lambda d: is_integer(d) and 1 <= d <= _COUNTER_MAX,
                        expected="the durations of the phase table in ns")
    if len(turn) != len(machine.phases):
        ring.fail("the ring's phase durations do not match the phase table", "turn")
    for key in ("frozen", "released", "switch_run", "halt_latch"):
        state.boolean(key)
    sequencer = state.list_of("sequencer", is_integer, expected="[instruction, step]")
    if len(sequencer) != 2:
        state.fail("'sequencer' must be [instruction, step]", "sequencer")
    index, step = sequencer
    if not -1 <= index < len(machine.instructions):
        state.fail(f"sequencer {index} is out of range", "sequencer")
    steps = machine.fetch if index < 0 else machine.instructions[index].steps
    if not 0 <= step < len(steps):
        state.fail(f"sequencer step {step} is out of range", "sequencer")
    top = (1 << machine.registers[machine.program_counter].width) - 1   # pc may run past a small memory
    if "halt_address" not in state:
        state.fail("missing key 'halt_address' (an address or null)", "halt_address")
    if state.get("halt_address") is not None:
        state.integer("halt_address", low=0, high=top)
    state.integer("instruction_address", low=0, high=top)
    state.integer("cycles", low=0, high=_COUNTER_MAX)
    state.integer("instructions", low=0, high=_COUNTER_MAX)
    pairs = state.list_of("undefined", lambda e: isinstance(e, list) and len(e) == 2 and all(map(is_integer, e)),
                          expected="a list of [address, count]")
    for address, count in pairs:
        if not (0 <= address <= top and 1 <= count <= _COUNTER_MAX):
            state.fail(f"undefined opcode entry [{address}, {count}] is out of range", "undefined")
    ports = state.table("ports", "ports: ")
    return slots.data, memory, Ports(machine).checked_state(ports)


def _memory(machine, state: Table):
    text = state.string("memory")
    try:
        raw = zlib.decompress(base64.b64decode(text, validate=True))
    except (ValueError, zlib.error, binascii.Error) as exc:
        state.fail(f"memory: {exc}", "memory")
    if machine.data_bits <= 8:
        memory = raw
    else:
        memory = [int.from_bytes(raw[i:i + 2], "little") & machine.data_mask for i in range(0, len(raw), 2)]
    if len(memory) != machine.memory_words:
        state.fail(f"memory holds {len(memory)} words, not {machine.memory_words}", "memory")
    return memory


_COUNTER_MAX = 1 << 63
"""Bound on counters and times read from a snapshot (centuries of simulated time)."""
