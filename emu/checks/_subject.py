"""The program under check: loaded once, with its panel, and its free run.

Every program check compares some run against the *free run*: the program
run as ``relaybench test`` runs it (the panel file's toggles, input and
operator script, pauses resumed), with nothing else touching the panel.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import asm

from ..description import Machine
from ..runs import (DEFAULT_MAX_CYCLES, LoadedProgram, PanelSettings, RunResult, load_program,
                    loaded_from_program, panel_path_for, read_panel_file, run_loaded, start_emulator)
from ._outcomes import CheckRecorder, Outcome, Watched, outcome_of, watched_memory

__all__ = ["COMPARED_RUN_FACTOR", "Subject", "load_subject"]

COMPARED_RUN_FACTOR = 4


@dataclass
class Subject:
    path: str
    machine: Machine
    loaded: LoadedProgram
    program: asm.Program | None
    """The assembled program (None for an image: halts cannot be planted in one)."""
    panel: PanelSettings
    dumps: tuple = ()
    """``--dump`` ranges: (text as given, start, length)."""
    max_cycles: int = DEFAULT_MAX_CYCLES
    watched: list[Watched] = field(default_factory=list)

    def power_on(self, loaded: LoadedProgram | None = None):
        return start_emulator(loaded or self.loaded, self.machine, switches=self.panel.switches,
                              input_bytes=self.panel.input_bytes)

    def run(self, *, loaded: LoadedProgram | None = None, emulator=None, watched=None, on_halt=None,
            max_cycles: int | None = None, planted: frozenset[int] = frozenset()) -> tuple[RunResult, Outcome]:
        """One run as the free run is made (``emulator`` may be prepared: a clock, a listener,
        an operator), and what it computed; ``on_halt`` is told of every halt too."""
        loaded = loaded or self.loaded
        recorder = CheckRecorder(loaded)

        def halted(emu, address) -> None:
            recorder(emu, address)
            if on_halt is not None:
                on_halt(emu, address)

        result = run_loaded(loaded, self.machine, max_cycles=max_cycles or self.max_cycles,
                            emulator=emulator or self.power_on(loaded), operator=self.panel.at_halt,
                            on_halt=halted, planted=planted)
        return result, outcome_of(result, self.watched if watched is None else watched, recorder)

    def bound_by(self, free: RunResult) -> None:
        """Limit the runs compared with ``free`` to what they can honestly need: a planted halt
        adds a few cycles per pass and an operator a few STEP pulses, so a run four times as
        long as the free one has gone astray (and is reported as ending at the limit)."""
        self.max_cycles = min(self.max_cycles, free.emulator.cycles * COMPARED_RUN_FACTOR + 10_000)

    def planted_program(self, planting: asm.Planting) -> LoadedProgram:
        return loaded_from_program(self.path, planting.program)


def load_subject(path: str, machine: Machine, *, dumps=(), max_cycles: int | None = None) -> Subject:
    """Load a program and its panel file; a program or panel file that cannot be read raises
    ProgramError with its located messages."""
    loaded = load_program(path, machine)
    panel_path = panel_path_for(path)
    panel = read_panel_file(panel_path, machine) if panel_path.exists() else PanelSettings()
    program = asm.assemble_file(path, machine) if loaded.kind == "source" else None
    limit = max_cycles or panel.max_cycles or DEFAULT_MAX_CYCLES
    subject = Subject(path, machine, loaded, program, panel, tuple(dumps), limit)
    subject.watched = watched_memory(loaded, dumps)
    return subject
