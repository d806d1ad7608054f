"""What STEP presses did: the micro-steps each ran, a halt driven, a rule that fired.

On most machines a press is one pulse from the panel; on a machine whose
``[clock] step`` is ``"hold"`` a press lets the ring run every pulse up to
the next hold point, so one press may run several micro-steps and pass an
instruction boundary on the way. An observer attached for the press sees
each of them, so the stopping rules are checked at every boundary passed
and the ``pulse`` command can list every micro-step, whichever the press.
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import TYPE_CHECKING, Callable

from emu import Observer
from emu.description import Instruction, Step

if TYPE_CHECKING:
    from ._stopping import Stop

__all__ = ["PressWatch", "PressedStep", "Presses", "press_count_text"]


@dataclass(frozen=True)
class PressedStep:
    """One micro-step a press ran: the press's number, where the sequencer stood, the bus."""
    press: int
    instruction: Instruction | None
    """The instruction running, None while fetching."""
    index: int
    """The step's index counted from 0 (fetch steps first), as ``Emulator.sequencer`` gives it."""
    step: Step
    lines: tuple[str, ...]
    """The control lines it drove (a gated line only where its condition held)."""
    bus: object
    """What the bus carried (the recorder's ``Bus``), None when it was dark."""


@dataclass
class Presses:
    """What a series of presses gave: why it ended early (None if it did not), how many
    presses and pulses, and the first micro-steps they ran."""
    stop: Stop | None
    presses: int
    pulses: int
    first_steps: list[PressedStep] = field(default_factory=list)


class PressWatch(Observer):
    """Attached for the presses of one command: what each ran, and the first rule that fired.

    ``rule()`` is called at every instruction boundary passed (None: no
    rule is checked); ``bus()`` gives the bus of the micro-step just
    latched; the first ``keep`` micro-steps are kept for the listing.
    """

    def __init__(self, rule: Callable[[], Stop | None] | None, bus: Callable[[], object], keep: int):
        self.rule = rule
        self.bus = bus
        self.keep = keep
        self.steps: list[PressedStep] = []
        self.press = 0
        self.halted = False
        self.fired: Stop | None = None
        self._place = (None, 0)

    def start_press(self) -> None:
        self.press += 1
        self.halted = False
        self.fired = None

    def edge(self, emu, level: int) -> None:
        if level == 0:
            self._place = emu.sequencer

    def microstep(self, emu, step, lines) -> None:
        self.halted = self.halted or step.drives_halt
        if len(self.steps) < self.keep:
            instruction, index = self._place
            self.steps.append(PressedStep(self.press, instruction, index, step, lines, self.bus()))

    def instruction(self, emu) -> None:
        if self.rule is not None and self.fired is None:
            self.fired = self.rule()


def press_count_text(machine, given: Presses) -> str:
    """"3 STEP pulses", or where a press runs to the hold point "2 STEP presses, 4 pulses"."""
    if machine.step_press == "pulse":
        return f"{given.presses:,} STEP pulse{'s' if given.presses != 1 else ''}"
    pulses = f"{given.pulses:,} pulse{'s' if given.pulses != 1 else ''}"
    return f"{given.presses:,} STEP press{'es' if given.presses != 1 else ''}, {pulses}"
