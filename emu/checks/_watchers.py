"""Observers that check the clock and control-unit properties while a machine runs.

Each one restates a rule of the clock in its own words and raises
``PropertyFailed`` the moment the engine breaks it, so the failure names
the cycle and phase where it happened. They watch the generator through
the engine's observer events (``emu.Observer``): attaching them puts the
engine on its stepping path, where every phase is seen.
"""

from __future__ import annotations

from ..engine import Observer
from ._machine_state import PropertyFailed

__all__ = ["PulseWatch", "HoldWatch", "MicrostepCount", "LatchWatch", "nominal_high_ns"]


def nominal_high_ns(machine, index: int) -> int:
    """How long the pulse that starts at phase ``index`` stays high, by the phase table."""
    total, phases = 0, machine.phases
    while phases[index].level == 1:
        total += phases[index].duration_ns
        index = (index + 1) % len(phases)
    return total


def _ms(ns: int) -> str:
    return f"{ns / 1e6:g} ms"


class PulseWatch(Observer):
    """P1: each generator pulse lasts its nominal time, and a frozen clock stands low."""

    def __init__(self, machine):
        self.machine = machine
        self.rise = None

    def edge(self, emu, level):
        if emu.frozen:          # a panel STEP pulse, not the generator's
            return
        if level == 1:
            self.rise = (emu.time_ns, emu.phase_index)
        elif self.rise is not None:
            start, index = self.rise
            lasted, nominal = emu.time_ns - start, nominal_high_ns(self.machine, index)
            self.rise = None
            if lasted != nominal:
                raise PropertyFailed(f"the pulse starting at phase {self.machine.phases[index].name} to last "
                                     f"{_ms(nominal)}", f"it lasted {_ms(lasted)}", emu)

    def hold(self, emu, frozen):
        phase = self.machine.phases[emu.phase_index]
        if frozen and phase.level == 1:
            raise PropertyFailed("the clock to stand low while the generator is frozen",
                                 f"it froze in phase {phase.name}, which is high: the pulse is stretched "
                                 f"for as long as it stays frozen", emu)


def _hold_line(emu) -> bool:
    """The hold line as the rule has it, not as the engine computes it: switch at stop OR halt latch."""
    return not emu.switch_run or emu.halt_latch


class HoldWatch(Observer):
    """P2: with the hold line up the generator freezes at the first hold point it enters, and only there."""

    def __init__(self, machine):
        self.machine = machine
        self.released = False

    def phase(self, emu, index):
        phase = self.machine.phases[index]
        if phase.hold and _hold_line(emu) and not self.released:
            why = "the switch at stop" if not emu.switch_run else "the halt latch set"
            raise PropertyFailed(f"the generator to freeze on entering hold point {phase.name} ({why})",
                                 f"it ran phase {phase.name} on", emu)
        self.released = False

    def hold(self, emu, frozen):
        phase = self.machine.phases[emu.phase_index]
        if not frozen:
            self.released = True
            return
        if not phase.hold:
            raise PropertyFailed("the generator to freeze only at a hold point",
                                 f"it froze entering phase {phase.name}, which is not one", emu)
        if not _hold_line(emu):
            raise PropertyFailed("the generator to freeze only while the hold line is up",
                                 "it froze with the switch at run and the latch clear", emu)

    def still_frozen(self, emu) -> None:
        """Checked after each panel action: a frozen generator starts the moment the hold line drops."""
        if emu.frozen and not _hold_line(emu):
            raise PropertyFailed("the clock to start when the hold line drops",
                                 "it stays frozen with the switch at run and the latch clear", emu)


class MicrostepCount(Observer):
    """Counts micro-steps, for P3 (one STEP press, one micro-step)."""

    def __init__(self):
        self.count = 0

    def microstep(self, emu, step, lines):
        self.count += 1


class LatchWatch(Observer):
    """P5: the latch is set by the falling edge of a halt step, and the clock freezes after that
    instruction has finished, never inside it."""

    def __init__(self, machine):
        self.machine = machine
        self.latched_in = None
        """The instruction count while the halting instruction runs, from the latch until the freeze."""
        self.fresh_latch = False

    def latch(self, emu, is_set):
        if is_set:
            self.fresh_latch = True
            self.latched_in = emu.instructions
        else:
            self.latched_in = None

    def microstep(self, emu, step, lines):
        if step.drives_halt and not emu.halt_latch:
            raise PropertyFailed(f"the halt latch set by step '{step.text}'", "it is clear after the step", emu)
        if self.fresh_latch and not step.drives_halt:
            raise PropertyFailed("the halt latch set only by a step that drives halt",
                                 f"step '{step.text}' set it", emu)
        self.fresh_latch = False

    def hold(self, emu, frozen):
        if frozen and self.latched_in is not None and emu.halt_latch:
            if emu.instructions <= self.latched_in:
                raise PropertyFailed("the clock to freeze after the halting instruction has finished",
                                     f"it froze inside it, before its step '{emu.current_step.text}', "
                                     f"which runs only after RESUME", emu)
            self.latched_in = None

    def after_panel(self, emu, action: str, was_frozen: bool, was_latched: bool) -> None:
        """RESUME clears the latch and restarts the clock at run, not at stop; STEP keeps the latch."""
        if action == "resume":
            if emu.halt_latch:
                raise PropertyFailed("RESUME to clear the halt latch", "the latch is still set", emu)
            if emu.switch_run and emu.frozen:
                raise PropertyFailed("RESUME at run to restart the clock", "it stays frozen", emu)
            if not emu.switch_run and emu.frozen != was_frozen:
                raise PropertyFailed("RESUME at stop to leave the clock as it was",
                                     "it started" if was_frozen else "it froze", emu)
        elif action == "step" and was_latched and not emu.halt_latch:
            raise PropertyFailed("the halt latch to stay set through STEP", "STEP cleared it", emu)
