"""Programs as tests: run each as ``relaybench run`` does and judge its checks.

A program passes when every ``.expect`` check passed each time the machine
halted at the instruction it is attached to, every instruction with checks
was reached at least once, and the run ended at a halt rather than at the
cycle limit. A check that fails is reported once, at its first failing
visit, with the value the machine actually held.

A program that reads the panel switches or the input stream gets them from
an optional *panel file* beside it, ``prog.asm`` → ``prog.panel.toml``::

    switches = 0x2A          # the panel toggles (default 0)
    input = "12,7\\n"        # the input stream as text, or
    input_file = "prog.in"   # its bytes from a file (relative to the panel file)
    max_cycles = 20_000_000  # a tighter (or looser) limit for this program
"""

from __future__ import annotations

import os
import tomllib
from dataclasses import dataclass, field
from pathlib import Path

import asm

from ._description import Machine
from ._emulator import Emulator
from ._runner import DEFAULT_MAX_CYCLES, LoadedProgram, ProgramError, load_program, run_loaded

__all__ = [
    "PROGRAM_SUFFIX", "PANEL_SUFFIX", "CheckFailure", "Verdict", "PanelSettings",
    "collect_programs", "read_panel_file", "actual_value", "check_program",
]

PROGRAM_SUFFIX = ".asm"
"""Directories are searched for programs by this suffix; shared routines use ``.inc``."""
PANEL_SUFFIX = ".panel.toml"


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


@dataclass(frozen=True)
class PanelSettings:
    switches: int = 0
    input_bytes: bytes = b""
    max_cycles: int | None = None


def collect_programs(paths: list[str]) -> list[str]:
    """Files as given; folders replaced by the programs in them, at any depth, sorted."""
    found = []
    for path in paths:
        if os.path.isdir(path):
            found.extend(sorted(str(p) for p in Path(path).rglob(f"*{PROGRAM_SUFFIX}") if p.is_file()))
        else:
            found.append(path)
    return found


def panel_path_for(program_path: str) -> Path:
    path = Path(program_path)
    return path.with_name(path.stem + PANEL_SUFFIX)


def read_panel_file(path: Path, machine: Machine) -> PanelSettings:
    """Read and check a panel file; problems raise ProgramError naming the key."""
    def fail(message):
        raise ProgramError(f"{path}: error: {message}")
    try:
        data = tomllib.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError) as exc:
        fail(f"cannot read the panel file ({exc})")
    except tomllib.TOMLDecodeError as exc:
        fail(f"not valid TOML: {exc}")
    except RecursionError:
        fail("not a panel file (nested too deeply)")
    known = ("switches", "input", "input_file", "max_cycles")
    for key in data:
        if key not in known:
            fail(f"unknown key '{key}' (expected one of: {', '.join(known)})")
    switches = data.get("switches", 0)
    if not isinstance(switches, int) or isinstance(switches, bool) or not 0 <= switches <= machine.data_mask:
        fail(f"'switches' must be an integer 0…{machine.data_mask} (the {machine.data_bits} toggles "
             f"of {machine.name}), not {switches!r}")
    if "input" in data and "input_file" in data:
        fail("give 'input' or 'input_file', not both")
    stream = b""
    if "input" in data:
        if not isinstance(data["input"], str):
            fail(f"'input' must be a string, not {data['input']!r}")
        stream = data["input"].encode("utf-8")
    if "input_file" in data:
        if not isinstance(data["input_file"], str):
            fail(f"'input_file' must be a file name, not {data['input_file']!r}")
        try:
            stream = (path.parent / data["input_file"]).read_bytes()
        except OSError as exc:
            fail(f"'input_file': cannot read '{data['input_file']}' ({exc.strerror})")
    limit = data.get("max_cycles")
    if limit is not None and (not isinstance(limit, int) or isinstance(limit, bool) or limit < 1):
        fail(f"'max_cycles' must be a positive integer, not {limit!r}")
    return PanelSettings(switches, stream, limit)


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
                        input_bytes=panel.input_bytes, on_halt=on_halt, chunk=chunk)
    verdict.status = result.status
    verdict.cycles = result.emulator.cycles
    verdict.sim_seconds = result.emulator.sim_seconds
    verdict.failures = [failed[i] for i in sorted(failed)]
    verdict.unreached = [group[0][1] for address, group in checks.items() if address not in visits]
    verdict.passed = result.status == "halted" and not verdict.failures and not verdict.unreached
    return verdict


def _checks_by_address(program: LoadedProgram) -> dict[int, list[tuple[int, asm.Expect]]]:
    grouped: dict[int, list[tuple[int, asm.Expect]]] = {}
    for index, expect in enumerate(program.expects):
        grouped.setdefault(expect.address, []).append((index, expect))
    return grouped
