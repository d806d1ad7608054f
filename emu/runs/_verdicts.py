"""Programs as tests: run each as ``relaybench run`` does and judge its checks.

A program passes when it has checks, every ``.expect`` check passed each
time the machine halted at the instruction it is attached to, every
instruction with checks was reached at least once, the run ended at a halt
rather than at the cycle limit, and the run gave no warning (an undefined
opcode, a port with no device, a read past the end of the input, an
operator script with answers left over): a program
that went astray must not pass because its checks happened to hold. A check
that fails is reported once, at its first failing visit, with the value the
machine actually held. The panel file's toggles, input and operator script
are what the run is given. An image without its debug file is not run at all:
it has no checks, and its pauses cannot be told from halts.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from pathlib import Path

import asm

from ..description import Machine
from ..engine import Emulator
from ._headless import DEFAULT_MAX_CYCLES, program_warnings, run_loaded
from ._loading import LoadedProgram, load_program, ProgramError
from ._panel_files import PanelSettings, panel_path_for, read_panel_file

__all__ = [
    "PROGRAM_SUFFIX", "CheckFailure", "Verdict", "collect_programs", "actual_value", "check_program",
]

PROGRAM_SUFFIX = ".asm"
"""Directories are searched for programs by this suffix; shared routines use ``.inc``."""


@dataclass(frozen=True)
class CheckFailure:
    expect: asm.Expect
    actual: int | str
    visit: int
    """Which halt at that instruction it failed on, counted from 1."""


@dataclass
class Verdict:
    path: str
    passed: bool = False
    status: str | None = None
    """``"halted"`` or ``"cycle_limit"``; None when the program could not be loaded."""
    cycles: int = 0
    sim_seconds: float = 0.0
    checks_run: int = 0
    halts: int = 0
    failures: list[CheckFailure] = field(default_factory=list)
    unreached: list[asm.Expect] = field(default_factory=list)
    """The first check of each checked instruction that the run never reached."""
    error: str | None = None
    max_cycles: int = DEFAULT_MAX_CYCLES
    checks_defined: int = 0
    """How many ``.expect`` checks the program has; none means nothing was tested."""
    warnings: list[str] = field(default_factory=list)
    """What the run warned about; any warning fails the program."""


def collect_programs(paths: list[str]) -> list[str]:
    """Files as given; folders replaced by the programs in them, at any depth, sorted."""
    found = []
    for path in paths:
        if os.path.isdir(path):
            found.extend(sorted(str(p) for p in Path(path).rglob(f"*{PROGRAM_SUFFIX}") if p.is_file()))
        else:
            found.append(path)
    return found


def actual_value(emu: Emulator, expect: asm.Expect) -> int | str:
    """What the machine holds for an ``.expect`` item right now."""
    if expect.item == "mem":
        return emu.memory[expect.memory_address]
    if expect.item == "lamps":
        return emu.lamps
    if expect.item == "out":
        return emu.output.decode("latin-1")
    return emu.get(expect.item)


def _holds(expect: asm.Expect, actual) -> bool:
    return (actual == expect.value) == (expect.op == "==")


def check_program(path: str, machine: Machine, *, max_cycles: int | None = None, chunk=None) -> Verdict:
    """Load, run and judge one program; nothing but the verdict comes back."""
    verdict = Verdict(path)
    try:
        program = load_program(path, machine)
        panel_path = panel_path_for(path)
        panel = read_panel_file(panel_path, machine) if panel_path.exists() else PanelSettings()
    except ProgramError as exc:
        verdict.error = str(exc)
        return verdict
    if program.kind != "source" and program.debug_path is None:
        verdict.error = (f"{path}: error: no debug file beside the image (looked for "
                         f"{asm.debug_path_for(path)}), so it has no checks and its pauses cannot be "
                         f"told from halts; test the source file, or assemble it again with its debug file")
        return verdict
    verdict.checks_defined = len(program.expects)
    verdict.max_cycles = max_cycles or panel.max_cycles or DEFAULT_MAX_CYCLES
    checks = _checks_by_address(program)
    visits: dict[int, int] = {}
    failed: dict[int, CheckFailure] = {}

    def on_halt(emu: Emulator, address: int) -> None:
        verdict.halts += 1
        if address not in checks:
            return
        visits[address] = visits.get(address, 0) + 1
        for index, expect in checks[address]:
            verdict.checks_run += 1
            actual = actual_value(emu, expect)
            if not _holds(expect, actual) and index not in failed:
                failed[index] = CheckFailure(expect, actual, visits[address])

    result = run_loaded(program, machine, max_cycles=verdict.max_cycles, switches=panel.switches,
                        input_bytes=panel.input_bytes, on_halt=on_halt, chunk=chunk, operator=panel.at_halt)
    verdict.status = result.status
    verdict.cycles = result.emulator.cycles
    verdict.sim_seconds = result.emulator.sim_seconds
    verdict.failures = [failed[i] for i in sorted(failed)]
    verdict.unreached = [group[0][1] for address, group in checks.items() if address not in visits]
    verdict.warnings = program_warnings(result) + result.emulator.warnings
    verdict.passed = (result.status == "halted" and verdict.checks_defined > 0 and not verdict.failures
                      and not verdict.unreached and not verdict.warnings)
    return verdict


def _checks_by_address(program: LoadedProgram) -> dict[int, list[tuple[int, asm.Expect]]]:
    grouped: dict[int, list[tuple[int, asm.Expect]]] = {}
    for index, expect in enumerate(program.expects):
        grouped.setdefault(expect.address, []).append((index, expect))
    return grouped
