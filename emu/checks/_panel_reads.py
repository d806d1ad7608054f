"""Which instructions make a program's result depend on when the operator acts.

The emulator gives a program its toggles and its whole input stream at
once, so every run of it is the same however the operator stops and steps
it. A real machine is not so obliging in two cases, and the check names the
instruction in each:

* the program reads the *input-ready* port: on the machine, input arrives
  at the pace of a reader or a typist, so what it reads there depends on
  how fast the machine got to the read. Not so for a *stall*, where the
  machine itself waits: a step's ``wait until`` condition, or a conditional
  ``goto`` back to a step of the same instruction when the steps it repeats
  change nothing (they only idle). Such an instruction answers the same
  however long it waited, so its reads are counted as waits and not
  reported; a loop whose steps do work while it waits (counting, say) is
  not a stall, and neither is a program that tests the port with ordinary
  instructions and branches;
* one instruction reads the *panel toggles* more than once between two
  halts: the program waits, running, for the operator to move them (a
  polling loop), so its result depends on when the operator did. Reading
  the toggles once after a halt is the panel's own protocol (the operator
  sets them while the machine stands still) and is not reported.
"""

from __future__ import annotations

from dataclasses import dataclass

from ..description import Instruction
from ..description.notation import Idle, Sequencing
from ..engine import Observer
from ._causes import statement_text

__all__ = ["PanelRead", "panel_reads"]

TIMED_DEVICES = ("switches", "input_ready")
LOCATING_CYCLES = 2_000_000
"""The stepping run that names the reading instructions stops here: a polling loop that never
ends (the emulator's toggles never move by themselves) has shown itself long before."""


@dataclass(frozen=True)
class PanelRead:
    """An instruction that reads the toggles or the input-ready port while the machine runs."""
    address: int
    place: tuple[str, int] | None
    statement: str
    """The statement as written (empty for an image)."""
    device: str
    reads: int
    most_between_halts: int
    stall_reads: int = 0
    """Reads of the input-ready port made by a stall (the machine waiting, not the program asking)."""

    @property
    def depends_on_timing(self) -> bool:
        if self.device == "input_ready":
            return self.reads > self.stall_reads
        return self.most_between_halts > 1

    @property
    def why(self) -> str:
        if self.device == "input_ready":
            return ("it reads the input-ready port: on the machine, input arrives at its own pace, so what "
                    "it answers depends on how fast the program got there")
        return (f"it reads the panel toggles up to {self.most_between_halts} times between two halts: the "
                f"program waits, running, for the operator to move them")


def panel_reads(subject) -> list[PanelRead]:
    """The free run made once more on the stepping path (where the instruction at work is
    known at every port read), with each read of the toggles and input-ready port noted.

    Cheap when there is nothing to find: the first, fast run only counts such reads.
    """
    counted = []
    emulator = subject.power_on()
    emulator.ports.listen(lambda port, device: counted.append(device) if device in TIMED_DEVICES else None)
    free, _outcome = subject.run(emulator=emulator)
    if not counted:
        return []
    emulator = subject.power_on()
    emulator.observe(Observer())       # the stepping path: the instruction's address is current
    halts = [0]
    reads: dict[tuple[int, str], list[int]] = {}
    waits: dict[tuple[int, str], int] = {}
    fetch_steps = len(emulator.machine.fetch)

    def heard(port: int, device: str) -> None:
        if device in TIMED_DEVICES:
            key = (emulator.instruction_address, device)
            reads.setdefault(key, []).append(halts[0])
            instruction, number = emulator.sequencer
            if instruction is not None and _stalls(instruction, number - fetch_steps):
                waits[key] = waits.get(key, 0) + 1

    def halted(_emulator, _address) -> None:
        halts[0] += 1

    emulator.ports.listen(heard)
    subject.run(emulator=emulator, on_halt=halted, max_cycles=min(free.emulator.cycles, LOCATING_CYCLES) or 1)
    found = []
    for (address, device), intervals in sorted(reads.items()):
        most = max(intervals.count(i) for i in set(intervals))
        place = subject.loaded.source_map.get(address)
        statement = statement_text(subject.loaded.sources, *place) if place else ""
        found.append(PanelRead(address, place, statement, device, len(intervals), most,
                               waits.get((address, device), 0)))
    return found


def _stalls(instruction: Instruction, step: int) -> bool:
    """Whether the instruction's step (counted from its first own step) is a stall: its
    condition sends the sequencer back to itself or an earlier step, and every step of that
    loop only idles, so the state the instruction leaves cannot tell how many turns it made."""
    jump = instruction.steps[step].jump
    if jump is None or jump.condition is None or jump.target > step:
        return False
    return all(isinstance(statement, Idle | Sequencing)
               for repeated in instruction.steps[jump.target:step + 1] for statement in repeated.statements)
