"""Does a planted halt change what a program computes? Two runs compared.

A halt planted in front of a statement (``asm.plant_halts``) and resumed
from should leave the same results as the program without it, unless the
program depends on its own addresses (a table's address used as data, a
computed jump, code that reads its own words). ``compare_runs`` finds the
first result that differs; ``check_planting`` runs both programs and
compares them, which is what a check of every statement needs.
"""

from __future__ import annotations

from dataclasses import dataclass

import asm

from ..description import Machine
from ._headless import DEFAULT_MAX_CYCLES, RunResult, run_loaded
from ._loading import loaded_from_program

__all__ = ["Divergence", "check_planting", "compare_runs"]


@dataclass(frozen=True)
class Divergence:
    """The first result in which the planted run differs from the plain one."""
    what: str
    """``"status"``, ``"stop"``, ``"register r1"``, ``"flag c"``, ``"lamps"``, ``"output"`` or ``"memory NAME"``."""
    plain: object
    planted: object
    text: str


def compare_runs(plain: RunResult, planted: RunResult, planting: asm.Planting) -> Divergence | None:
    """The first difference, in this order: how each run ended, where it stopped
    (as a source line), the registers but pc, the flags, the lamps, the console,
    then the memory named by labels (each label's statement, or one word)."""
    a, b = plain.emulator, planted.emulator
    machine = a.machine
    width = (machine.address_bits + 3) // 4
    if plain.status != planted.status:
        return Divergence("status", plain.status, planted.status,
                          f"the run ended by {_ending(plain.status)} without the halt, "
                          f"by {_ending(planted.status)} with it")
    where = (_stop_place(plain, planting.original.source_map), _stop_place(planted, planting.program.source_map))
    if where[0] != where[1]:
        return Divergence("stop", *where, f"it stopped at {_place_text(where[0])} without the halt, "
                                          f"at {_place_text(where[1])} with it")
    for reg in machine.visible_registers:
        if reg.name != machine.program_counter and a.get(reg.name) != b.get(reg.name):
            return _differ(f"register {reg.name}", a.get(reg.name), b.get(reg.name), width)
    for flag in machine.flags:
        if a.get(flag) != b.get(flag):
            return _differ(f"flag {flag}", a.get(flag), b.get(flag), width)
    if a.lamps != b.lamps:
        return _differ("lamps", a.lamps, b.lamps, width)
    if a.output != b.output:
        return Divergence("output", bytes(a.output), bytes(b.output),
                          f"the console shows {bytes(a.output)!r} without the halt, {bytes(b.output)!r} with it")
    for name, old, length in _named_memory(planting.original):
        new = planting.relocate(old)
        for i in range(length):
            if a.memory[old + i] != b.memory[new + i]:
                word = name if i == 0 else f"{name}+{i}"
                return Divergence(f"memory {word}", a.memory[old + i], b.memory[new + i],
                                  f"memory {word} ({old + i:0{width}X}, now {new + i:0{width}X}) holds "
                                  f"{a.memory[old + i]:#x} without the halt, {b.memory[new + i]:#x} with it")
    return None


def check_planting(original: asm.Program, machine: Machine, before, *, path: str = "<program>",
                   max_cycles: int = DEFAULT_MAX_CYCLES, switches: int = 0,
                   input_bytes: bytes = b"") -> tuple[asm.Planting, Divergence | None]:
    """Run ``original`` and the program with halts planted ``before`` (file, line) places,
    resuming at every pause, and compare what they leave."""
    planting = asm.plant_halts(original, before)
    runs = [run_loaded(loaded_from_program(path, program), machine, max_cycles=max_cycles,
                       switches=switches, input_bytes=input_bytes)
            for program in (original, planting.program)]
    return planting, compare_runs(*runs, planting)


def _named_memory(program: asm.Program):
    """(label, address, words) for each label that names data or free memory, by address."""
    code = [(e.address, e.address + e.length) for e in program.lines if e.kind == "code"]
    data = {e.address: e.length for e in program.lines if e.kind == "data" and e.length}
    for name, address in sorted(program.labels.items(), key=lambda kv: (kv[1], kv[0])):
        if any(start <= address < end for start, end in code):
            continue
        yield name, address, data.get(address, 1)


def _stop_place(result: RunResult, source_map) -> tuple[str, int] | None:
    return None if result.halt_address is None else source_map.get(result.halt_address)


def _place_text(place) -> str:
    return "no source line" if place is None else f"{place[0]}:{place[1]}"


def _ending(status: str) -> str:
    return "a halt" if status == "halted" else "the cycle limit"


def _differ(what: str, plain: int, planted: int, width: int) -> Divergence:
    return Divergence(what, plain, planted, f"{what} is {plain:#x} without the halt, {planted:#x} with it")
