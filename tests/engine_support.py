"""Shared helpers for engine tests: every machine file of the project, booting and running.

Random programs come from the public strategies in ``emu.testing`` (drawn from
the machine's own instruction table), which ``relaybench check`` uses too.
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

import pytest

from emu import Emulator, Observer, load_machine

ROOT = Path(__file__).resolve().parent.parent
MACHINE_FOLDERS = (ROOT / "emu" / "machines", ROOT / "tests" / "machines")
ACC12_PATH = ROOT / "tests" / "machines" / "acc12.toml"
COND4_PATH = ROOT / "tests" / "machines" / "cond4.toml"
NIB4_PATH = ROOT / "tests" / "machines" / "nib4.toml"


def machine_files() -> dict[str, Path]:
    """Every machine file under emu/machines/ and tests/machines/, by file stem.

    Discovered, not listed, so a machine file added to either folder is run
    by every property at once; two files with one stem would make the ids
    ambiguous, so that is refused here rather than one shadowing the other.
    """
    found: dict[str, Path] = {}
    for folder in MACHINE_FOLDERS:
        for path in sorted(folder.glob("*.toml")):
            if path.stem in found:
                raise RuntimeError(f"two machine files named {path.stem}: {found[path.stem]} and {path}")
            found[path.stem] = path
    return found


MACHINE_FILES = machine_files()
MACHINES = {name: load_machine(path) for name, path in MACHINE_FILES.items()}


def property_skip_reason(machine) -> str | None:
    """Why the random-program properties cannot run on ``machine``, or None when they can.

    The programs mix halting and other instructions, and the halt properties
    (P5) need a halt; a machine lacking either is skipped with this reason.
    """
    if not any(i.drives_halt for i in machine.instructions):
        return f"{machine.name} has no instruction that drives halt"
    if all(i.drives_halt for i in machine.instructions):
        return f"{machine.name} has only halting instructions"
    return None


def skip_unless_properties_run(machine) -> None:
    reason = property_skip_reason(machine)
    if reason is not None:
        pytest.skip(reason)


def machine_named(name: str):
    return MACHINES[name]


def _plain_value(kind) -> int:
    return 0 if kind.low <= 0 <= kind.high else kind.low


def plain_words(ins) -> list[int]:
    """``ins`` encoded with every field at zero (or its lowest value when zero is out of range)."""
    return ins.encode({name: _plain_value(fld.kind) for name, fld in ins.fields.items()})


def trivial_program(machine) -> list[int]:
    """Each instruction once, fields at zero, ending in the machine's pause instruction.

    Not a meaningful program: a smoke run that visits every instruction's
    micro-steps on both paths (a jump to 0 only makes it loop).
    """
    pause = next(i for i in machine.instructions if i.mnemonic == machine.pause and not i.operands)
    words: list[int] = []
    for ins in machine.instructions:
        if not ins.drives_halt:
            words += plain_words(ins)
    return words + plain_words(pause)


def instruction_named(machine, display: str):
    for ins in machine.instructions:
        if ins.display == display:
            return ins
    raise KeyError(display)


def encode(machine, display: str, **values) -> list[int]:
    return instruction_named(machine, display).encode(values)


def after_step_press(machine, index: int) -> tuple[int, int]:
    """(pulses given, phase index after) of one STEP press with the ring frozen at ``index``,
    as the description says: one panel pulse with the ring standing still, or
    (``step = "hold"``) the ring's own pulses up to the hold point it reaches next."""
    if machine.step_press == "pulse":
        return 1, index
    pulses = machine.pulses_per_step_press()[machine.phases[index].name]
    index = (index + 1) % len(machine.phases)
    while not machine.phases[index].hold:
        index = (index + 1) % len(machine.phases)
    return pulses, index


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


# ----- one-program runs for the instruction tests ---------------------------------------

@dataclass
class Run:
    emu: Emulator
    before: dict[str, int]
    memory_before: list[int]
    stop: object


def assert_only_changes(run: Run, names: list[str], expected: dict[str, int], memory_changes=None) -> None:
    """Each of ``names`` holds its ``expected`` value, every memory word its value from
    before the run but for ``memory_changes`` ({address: value})."""
    machine = run.emu
    for name in names:
        assert machine.get(name) == expected[name], f"{name}: {machine.get(name):#x} != {expected[name]:#x}"
    expected_memory = list(run.memory_before)
    for address, value in (memory_changes or {}).items():
        expected_memory[address] = value
    assert list(machine.memory) == expected_memory


def encode_forms(forms: dict, *parts: tuple[str, dict]) -> list[int]:
    """Words of the instruction forms given as (display, field values)."""
    words = []
    for display, values in parts:
        words += forms[display].encode(values)
    return words


def one_instruction(machine, words, path: str, at: int, values=None) -> Emulator:
    """An emulator that has run exactly one instruction: ``words`` loaded at ``at`` and
    started there, with ``values`` set first, on the ``path`` asked for."""
    emulator = Emulator(machine)
    if path == "stepped":
        emulator.observe(Observer())
    emulator.load([(at, words)])
    for name, value in {machine.program_counter: at, **(values or {})}.items():
        emulator.set(name, value)
    emulator.advance_instruction()
    assert emulator.instructions == 1
    return emulator


def run_program(machine, words, path: str, *, values=None, memory=None, switches=0, input_bytes=b"",
                max_cycles=200) -> Run:
    """Load, set ``values`` (registers, groups, flags by name), run on the ``path`` asked for."""
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
    names = [r.name for r in machine.visible_registers] + list(machine.groups) + list(machine.flags)
    before = {name: emulator.get(name) for name in names}
    return Run(emulator, before, list(emulator.memory), emulator.run(max_cycles=max_cycles))
