"""Headless runs: run a loaded program, describe the result.

``relaybench run`` is the contract of the machine reference ("Headless
runs" in emu/machines/ref8.md), and ``relaybench test``, the
debugger and the benchmarks must mean exactly the same thing by "run this
program", so the whole of it lives here, free of argparse: how a ``pause``
is told from a ``halt`` and resumed, and the report scripts read.
"""

from __future__ import annotations

from dataclasses import dataclass

import asm

from ..description import Machine
from ..engine import Emulator
from ..errors import MachineError
from ._loading import LoadedProgram, ProgramError
from ._panel_files import HaltAnswer

__all__ = ["DEFAULT_MAX_CYCLES", "RunResult", "program_warnings", "start_emulator", "run_loaded", "report"]

DEFAULT_MAX_CYCLES = 50_000_000


@dataclass
class RunResult:
    program: LoadedProgram
    emulator: Emulator
    status: str
    """``"halted"``, ``"cycle_limit"``, or ``"paused"`` (``stop_at_pause`` only)."""
    pauses: list[dict]
    """One ``{pc, cycles, file, line}`` per pause the run resumed from (or stopped at)."""
    halt_address: int | None
    """Address of the halt or pause the run ended at; None at the cycle limit."""
    answers_left: int = 0
    """Answers of the operator script that no halt used (a script that did not fit the run)."""


def start_emulator(program: LoadedProgram, machine: Machine, *, switches: int = 0,
                   input_bytes: bytes = b"") -> Emulator:
    """Power on with the image in memory, the switch at run, the panel toggles set."""
    emulator = Emulator(machine)
    try:
        emulator.load(program.segments)
    except MachineError as exc:
        raise ProgramError(exc.message, file=program.path) from None
    emulator.switches = switches
    emulator.input_bytes = input_bytes
    emulator.set_switch_run(True)
    return emulator


def run_loaded(program: LoadedProgram, machine: Machine, *, max_cycles: int = DEFAULT_MAX_CYCLES,
               switches: int = 0, input_bytes: bytes = b"", stop_at_pause: bool = False,
               on_halt=None, chunk=None, emulator: Emulator | None = None,
               operator: tuple[HaltAnswer, ...] = (), planted: frozenset[int] = frozenset()) -> RunResult:
    """Run to a halt or the cycle limit, resuming by itself at every pause.

    ``operator`` is the script of a panel file: its answers are given, in
    order, at the halts and pauses the run reaches (``stop_at_pause`` stops
    at the first pause all the same); when it runs out, pauses are resumed
    and a halt ends the run, as without one.
    ``on_halt(emulator, address)`` is called each time the clock freezes on
    a halt or pause (before it is answered or resumed), ``chunk(emulator)``
    between chunks of work. Halts at ``planted`` addresses (halts a check
    planted to see whether one there changes the result) are resumed at
    once: no pause, no answer of the script, no ``on_halt``. ``max_cycles`` counts the whole run, pauses and
    STEP pulses included. An ``emulator`` may be passed in already set up
    (the debugger, timing observers); otherwise one is powered on here.
    """
    emu = emulator or start_emulator(program, machine, switches=switches, input_bytes=input_bytes)
    limit = emu.cycles + max_cycles
    pauses: list[dict] = []
    answers = list(operator)
    while True:
        stop = emu.run(max_cycles=max(limit - emu.cycles, 0), chunk=chunk)
        if stop.kind != "halted":
            return RunResult(program, emu, "cycle_limit", pauses, None, len(answers))
        if stop.address in planted:
            emu.press_resume()
            continue
        if on_halt is not None:
            on_halt(emu, stop.address)
        is_pause = stop.address in program.pauses
        if is_pause:
            file, line = program.source_map.get(stop.address, (None, None))
            pauses.append({"pc": emu.pc, "cycles": emu.cycles, "file": file, "line": line})
            if stop_at_pause:
                return RunResult(program, emu, "paused", pauses, stop.address, len(answers))
        if answers:
            if not _answer(emu, answers.pop(0), limit, chunk):
                return RunResult(program, emu, "halted", pauses, stop.address, len(answers))
        elif is_pause:
            emu.press_resume()
        else:
            return RunResult(program, emu, "halted", pauses, stop.address)


def _answer(emu: Emulator, answer: HaltAnswer, limit: int, chunk) -> bool:
    """The operator's actions at a halt, in their documented order; False when the
    answer ends the run. A halt reached on the way is left for the next answer."""
    if answer.switches is not None:
        emu.switches = answer.switches
    if answer.more_input:
        read = emu.ports.input_position
        emu.input_bytes = emu.input_bytes + answer.more_input
        emu.ports.input_position = read
    if not answer.resume:
        return False
    emu.press_resume()
    if answer.stop_after is None:
        return True
    stop = emu.run(max_cycles=max(min(answer.stop_after, limit - emu.cycles), 0), chunk=chunk)
    if stop.kind == "halted":
        return True
    emu.set_switch_run(False)
    emu.run(max_cycles=max(limit - emu.cycles, 0), chunk=chunk)  # on to the hold point
    for _ in range(answer.steps):
        if emu.halt_latch or emu.cycles >= limit or not emu.press_step():
            break
    emu.set_switch_run(True)
    return True


def program_warnings(result: RunResult) -> list[str]:
    """What the run warns about beyond the machine's own warnings: an image without its
    debug file, an operator script with answers no halt used (unless the run was told
    to stop at its first pause)."""
    notes = []
    if result.answers_left and result.status != "paused":
        notes.append(f"the operator script has {result.answers_left} answer(s) left that no halt used: "
                     f"the run did not stop as often as the script expects")
    program = result.program
    if program.kind == "source" or program.debug_path is not None:
        return notes
    missing = f"no debug file beside the image (looked for {asm.debug_path_for(program.path)})"
    if result.status == "halted":
        return notes + [f"{missing}: a pause cannot be told from a halt, so this halt may be a pause"]
    return notes + [f"{missing}: pauses could not be told from halts"]


def report(result: RunResult, dumps: list[tuple[str, int, int]] = ()) -> dict:
    """The JSON object of ``run --json`` ("Headless runs" in emu/machines/ref8.md);
    ``dumps`` are (text as given, start, length)."""
    emu = result.emulator
    machine = emu.machine
    registers = {reg.name: emu.get(reg.name) for reg in machine.visible_registers
                 if reg.name != machine.program_counter}
    registers.update({group.name: emu.get(group.name) for group in machine.visible_groups})
    return {
        "status": result.status,
        "pc": emu.pc,
        "cycles": emu.cycles,
        "instructions": emu.instructions,
        "sim_seconds": emu.sim_seconds,
        "registers": registers,
        "flags": {name: emu.get(name) for name in machine.flags},
        "lamps": emu.lamps,
        "output": emu.output.decode("latin-1"),
        "pauses": list(result.pauses),
        "warnings": program_warnings(result) + list(emu.warnings),
        "dumps": {text: list(emu.memory[start:start + length]) for text, start, length in dumps},
    }

