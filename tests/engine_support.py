"""Shared helpers for engine tests: the two machines and random programs.

Programs are built with the machine's own encoder, not the assembler, so
the engine tests stand on the description alone. Address-like fields draw
small values so that jumps, loads and stores land inside the program.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

from hypothesis import strategies as st

from emu import Emulator, Observer, load_machine

ACC12_PATH = Path(__file__).parent / "machines" / "acc12.toml"
MACHINES = {"ref8": load_machine("ref8"), "acc12": load_machine(ACC12_PATH)}


def machine_named(name: str):
    return MACHINES[name]


def instruction_named(machine, display: str):
    for ins in machine.instructions:
        if ins.display == display:
            return ins
    raise KeyError(display)


def encode(machine, display: str, **values) -> list[int]:
    return instruction_named(machine, display).encode(values)


@st.composite
def instructions(draw, machine, span: int):
    """One encoded instruction; halting ones drawn about one time in ten."""
    halting = [i for i in machine.instructions if i.drives_halt]
    others = [i for i in machine.instructions if not i.drives_halt]
    ins = draw(st.sampled_from(halting)) if draw(st.integers(0, 9)) == 0 else draw(st.sampled_from(others))
    values = {}
    for name, fld in ins.fields.items():
        kind = fld.kind
        if kind.is_register:
            values[name] = draw(st.integers(0, len(kind.registers) - 1))
        elif kind.high >= span:
            values[name] = draw(st.integers(0, span))
        else:
            values[name] = draw(st.integers(kind.low, kind.high))
    return ins.encode(values)


@st.composite
def programs(draw, machine, max_instructions: int = 24):
    count = draw(st.integers(1, max_instructions))
    words: list[int] = []
    for _ in range(count):
        words.extend(draw(instructions(machine, span=3 * count)))
    return words


def boot(machine, words, switches: int = 0, input_bytes: bytes = b"") -> Emulator:
    emu = Emulator(machine)
    emu.load([(0, words)])
    emu.switches = switches
    emu.input_bytes = input_bytes
    return emu


def datapath_state(emu: Emulator) -> tuple:
    """Registers, flags, memory, ports: everything a program can observe."""
    registers_and_flags = emu._s[:emu.machine.undriven_slot]
    return (tuple(int(v) for v in registers_and_flags), bytes(emu.memory) if isinstance(emu.memory, bytearray)
            else tuple(emu.memory), bytes(emu.output), emu.lamps, emu.ports.input_position)


def full_state(emu: Emulator) -> tuple:
    """The datapath and everything the control unit and the clock hold."""
    return (datapath_state(emu), emu.cycles, emu.instructions, emu.time_ns, emu.phase_index,
            emu._seq, emu.frozen, emu.halt_latch, emu.halt_address)


def run_resuming(emu: Emulator, cycles: int) -> list[str]:
    """Run a cycle budget, pressing RESUME at every halt; the stop reasons in order."""
    target, reasons = emu.cycles + cycles, []
    while emu.cycles < target:
        reason = emu.run(max_cycles=target - emu.cycles)
        reasons.append(reason.kind)
        if reason.kind == "halted":
            emu.press_resume()
    return reasons


# ----- one-program runs for the instruction tests ---------------------------------------

@dataclass
class Run:
    emu: Emulator
    before: dict[str, int]
    memory_before: list[int]
    stop: object


def encode_forms(forms: dict, *parts: tuple[str, dict]) -> list[int]:
    """Words of the instruction forms given as (display, field values)."""
    words = []
    for display, values in parts:
        words += forms[display].encode(values)
    return words


def run_program(machine, words, path: str, *, values=None, memory=None, switches=0, input_bytes=b"",
                max_cycles=200) -> Run:
    """Load, set ``values`` (registers, pairs, flags by name), run on the ``path`` asked for."""
    emulator = Emulator(machine)
    if path == "stepped":
        emulator.observe(Observer())
    emulator.load([(0, words)])
    for address, value in (memory or {}).items():
        emulator.memory[address] = value
    for name, value in (values or {}).items():
        emulator.set(name, value)
    emulator.switches = switches
    emulator.input_bytes = input_bytes
    names = [r.name for r in machine.visible_registers] + list(machine.pairs) + list(machine.flags)
    before = {name: emulator.get(name) for name in names}
    return Run(emulator, before, list(emulator.memory), emulator.run(max_cycles=max_cycles))
