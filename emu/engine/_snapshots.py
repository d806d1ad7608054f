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
    try:
        slots, memory = _checked_state(emu, state)
    except KeyError as exc:
        raise MachineError(f"damaged snapshot (no key {exc})", path=origin) from None
    except (TypeError, ValueError, IndexError, zlib.error, binascii.Error) as exc:
        raise MachineError(f"damaged snapshot ({exc})", path=origin) from None
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
    emu.ports.restore(state["ports"])
    emu._undefined = Counter({a: n for a, n in state["undefined"]})


def _checked_state(emu, state: dict):
    """Every value of a snapshot checked before any is used, so a bad file changes nothing."""
    machine = emu.machine
    if state.get("version") != 1:
        raise ValueError(f"version {state.get('version')!r}; this relaybench reads version 1")
    slots = state["slots"]
    if set(slots) != set(emu._slots):
        raise ValueError("the registers and flags do not match the machine")
    for name, value in slots.items():
        _require_int(value, name, 0, (1 << emu._slots[name][1]) - 1)
    raw = zlib.decompress(base64.b64decode(state["memory"], validate=True))
    if machine.data_bits <= 8:
        memory = raw
    else:
        memory = [int.from_bytes(raw[i:i + 2], "little") & machine.data_mask for i in range(0, len(raw), 2)]
    if len(memory) != machine.memory_words:
        raise ValueError(f"memory holds {len(memory)} words, not {machine.memory_words}")
    ring = state["ring"]
    _require_int(ring["index"], "ring index", 0, len(machine.phases) - 1)
    _require_int(ring["time_ns"], "time", 0, _COUNTER_MAX)
    if len(ring["turn"]) != len(machine.phases):
        raise ValueError("the ring's phase durations do not match the phase table")
    for duration in ring["turn"]:
        _require_int(duration, "phase duration", 1, _COUNTER_MAX)
    for key in ("frozen", "released", "switch_run", "halt_latch"):
        if not isinstance(state[key], bool):
            raise ValueError(f"'{key}' is not true or false")
    index, step = state["sequencer"]
    _require_int(index, "sequencer", -1, len(machine.instructions) - 1)
    steps = machine.fetch if index < 0 else machine.instructions[index].steps
    _require_int(step, "sequencer step", 0, len(steps) - 1)
    top = machine.memory_words - 1
    if state["halt_address"] is not None:
        _require_int(state["halt_address"], "halt address", 0, top)
    _require_int(state["instruction_address"], "instruction address", 0, top)
    _require_int(state["cycles"], "cycles", 0, _COUNTER_MAX)
    _require_int(state["instructions"], "instructions", 0, _COUNTER_MAX)
    for address, count in state["undefined"]:
        _require_int(address, "undefined opcode address", 0, top)
        _require_int(count, "undefined opcode count", 1, _COUNTER_MAX)
    Ports(machine).restore(state["ports"])
    return slots, memory


_COUNTER_MAX = 1 << 63
"""Bound on counters and times read from a snapshot (centuries of simulated time)."""


def _require_int(value, what: str, low: int, high: int | None = None) -> None:
    if not isinstance(value, int) or isinstance(value, bool):
        raise ValueError(f"{what} is not an integer")
    if value < low or high is not None and value > high:
        raise ValueError(f"{what} {value} is out of range")
