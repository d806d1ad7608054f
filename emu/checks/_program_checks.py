"""``relaybench check PROGRAM``: how halts, stepping and the clock interact with one program.

Four questions, each against the free run (``_subject``):

1. panel reads: which instructions make the result depend on when the
   operator acts (``_panel_reads``);
2. operator interleavings: do random scripts of STOP, STEP, RUN and RESUME
   leave the free run's result (``_operator_runs``)?
3. halt placement: in front of which statements may a halt be planted
   without changing the result (``_halt_placement``)?
4. irregular clock: the same result on clocks built from random parts, and
   the real-time spread (``_operator_runs``).

The program passes when its free run ends at a halt and every answer is
yes; a program whose result depends on timing does not pass, and the
instruction that makes it so is named.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from ..description import Machine
from ._halt_placement import Placement, halt_placement, planting_places
from ._operator_runs import ClockSpread, Interleaving, clock_spread, operator_interleavings
from ._panel_reads import PanelRead, panel_reads
from ._subject import load_subject

__all__ = ["DEFAULT_EXAMPLES", "ProgramCheck", "check_program_timing"]

DEFAULT_EXAMPLES = 20
"""Operator scripts and irregular clocks tried, unless ``--examples`` says otherwise."""


@dataclass
class ProgramCheck:
    path: str
    machine: str
    status: str
    """How the free run ended: ``"halted"`` or ``"cycle_limit"``."""
    cycles: int
    seconds: float
    panel_reads: list[PanelRead] = field(default_factory=list)
    scripts: int = 0
    interleavings: list[Interleaving] = field(default_factory=list)
    placements: list[Placement] | None = None
    statements: int = 0
    """Instruction statements in the program (``placements`` may be a sample of them)."""
    placement_skipped: str | None = None
    clock: ClockSpread | None = None

    @property
    def timing_dependent(self) -> list[PanelRead]:
        return [read for read in self.panel_reads if read.depends_on_timing]

    @property
    def unsafe_placements(self) -> list[Placement]:
        return [p for p in self.placements or () if not p.safe]

    @property
    def passed(self) -> bool:
        return (self.status == "halted" and not self.timing_dependent and not self.interleavings
                and not self.unsafe_placements and self.clock is not None and not self.clock.differing)


def check_program_timing(path: str, machine: Machine, *, examples: int = DEFAULT_EXAMPLES, seed: int = 0,
                         sample: int | None = None, dumps=(), max_cycles: int | None = None,
                         workers: int | None = None, progress=None) -> ProgramCheck:
    """Every part of the check; ``progress(part, done, total)`` is told how far each part is.
    A program or panel file that cannot be read raises ProgramError."""
    tell = progress or (lambda part, done, total: None)
    subject = load_subject(path, machine, dumps=dumps, max_cycles=max_cycles)
    free, free_outcome = subject.run()
    report = ProgramCheck(path, machine.name, free.status, free.emulator.cycles, free.emulator.sim_seconds)
    if free.status != "halted":
        return report
    subject.bound_by(free)
    report.panel_reads = panel_reads(subject)
    report.scripts = examples
    report.interleavings = operator_interleavings(subject, free_outcome, free.emulator.cycles, examples, seed,
                                                  done=lambda n: tell("operator scripts", n, examples))
    if subject.program is None:
        report.placement_skipped = (f"{path} is an image ({subject.loaded.kind}): a halt can be planted only "
                                    f"in assembly source")
    else:
        places = planting_places(subject.program, sample, seed)
        report.statements = len(planting_places(subject.program, None, seed))
        report.placements = halt_placement(path, machine, places, dumps=dumps, max_cycles=subject.max_cycles,
                                           workers=workers,
                                           done=lambda n: tell("halt placement", n, len(places)))
    report.clock = clock_spread(subject, free_outcome, free.emulator.sim_seconds, examples, seed,
                                done=lambda n: tell("irregular clocks", n, examples))
    return report
