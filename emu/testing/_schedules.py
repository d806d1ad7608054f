"""Schedules of panel actions at chosen cycles and phases of the clock ring.

An operator does not wait for instruction boundaries: STOP is thrown, STEP
and RESUME are pressed whenever a hand gets there, mid-pulse or between
two micro-steps. A schedule says for each action the cycle (pulses since
power-on) and the ring phase at which it happens; ``play_schedule`` lets
the generator run until the machine stands there, or until the clock has
frozen (then the operator acts at once, as at a frozen panel nothing
moves), and applies the action.
"""

from __future__ import annotations

from dataclasses import dataclass

from hypothesis import strategies as st

from ..description import Machine

__all__ = ["PANEL_ACTIONS", "PanelAction", "panel_schedules", "play_schedule", "apply_panel_action", "run_resuming"]

PANEL_ACTIONS = ("stop", "run", "step", "resume", "reset")
"""Throw the switch to stop or run; press STEP, RESUME or RESET."""


@dataclass(frozen=True)
class PanelAction:
    action: str
    cycle: int
    """Wait until at least this many pulses have run since power-on …"""
    phase: int
    """… and the ring is about to run this phase (an index into the phase table)."""


@st.composite
def panel_schedules(draw, machine: Machine, actions=PANEL_ACTIONS[:4], max_actions: int = 10,
                    max_gap: int = 40):
    """A list of panel actions in time order, each at a random cycle and phase.

    Reset is left out by default: it sends the program back to address 0, so
    a property comparing a run with its free-running twin cannot use it.
    """
    schedule, cycle = [], 0
    for _ in range(draw(st.integers(0, max_actions))):
        cycle += draw(st.integers(0, max_gap))
        phase = draw(st.integers(0, len(machine.phases) - 1))
        schedule.append(PanelAction(draw(st.sampled_from(actions)), cycle, phase))
    return schedule


_PRESS = {
    "stop": lambda emu: emu.set_switch_run(False),
    "run": lambda emu: emu.set_switch_run(True),
    "step": lambda emu: emu.press_step(),
    "resume": lambda emu: emu.press_resume(),
    "reset": lambda emu: emu.press_reset(),
}


def apply_panel_action(emu, action: str) -> None:
    """One panel action on an ``emu.Emulator``."""
    try:
        press = _PRESS[action]
    except KeyError:
        raise ValueError(f"no panel action '{action}' (one of {', '.join(PANEL_ACTIONS)})") from None
    press(emu)


def wait_for(emu, cycle: int, phase: int) -> None:
    """Let the generator run until the machine stands at ``cycle`` and ``phase``, or freezes."""
    if emu.cycles < cycle:
        emu.run(max_cycles=cycle - emu.cycles)
    phases = len(emu.machine.phases)
    for _ in range(phases + 1):
        if emu.frozen or (emu.cycles >= cycle and emu.phase_index == phase):
            return
        emu.advance_phase()


def play_schedule(emu, schedule, before=None, after=None) -> None:
    """Apply each action where the schedule puts it; ``before(action)``/``after(action)`` around each."""
    for planned in schedule:
        wait_for(emu, planned.cycle, planned.phase)
        if before is not None:
            before(planned)
        apply_panel_action(emu, planned.action)
        if after is not None:
            after(planned)


def run_resuming(emu, cycles: int) -> list[str]:
    """Run a cycle budget, pressing RESUME at every halt; the stop reasons in order.

    A program with pauses runs through them as a free run does; a clock
    that RESUME does not restart (the switch at stop) ends the run early.
    """
    target, reasons = emu.cycles + cycles, []
    while emu.cycles < target:
        reason = emu.run(max_cycles=target - emu.cycles)
        reasons.append(reason.kind)
        if reason.kind == "halted":
            emu.press_resume()
        if emu.frozen:
            break
    return reasons
