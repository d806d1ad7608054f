"""The clock keys a builder sets about the panel: what STEP does, and where the ring powers on.

``[clock] step`` says what one press of STEP gives: ``"pulse"`` (one clock
pulse from the panel, the ring standing still) or ``"hold"`` (the hold is
let go for one stretch: the ring runs every pulse up to the next hold
point and stops there, so a machine whose micro-step takes two pulses of
different lengths steps one whole micro-step at its own pace).
``[clock] power_on`` names the phase the ring stands in at power-on; it
must be low, since starting inside a pulse would clip it.
"""

from __future__ import annotations

from typing import TYPE_CHECKING

from ._schema import Table

if TYPE_CHECKING:
    from ._model import Phase

__all__ = ["STEP_PRESSES", "default_power_on", "read_clock_panel"]

STEP_PRESSES = {
    "pulse": "one clock pulse from the panel (one micro-step); the ring stands still",
    "hold": "every pulse up to the next hold point; the ring runs there and stops",
}
"""``[clock] step`` value → what one STEP press gives."""


def default_power_on(phases: tuple[Phase, ...]) -> int:
    """The first phase that follows a falling edge in table order."""
    return next(i for i in range(len(phases)) if phases[i - 1].level == 1 and phases[i].level == 0)


def read_clock_panel(clock: Table, phases: tuple[Phase, ...]) -> tuple[str, int]:
    """``(step, power-on phase index)`` from ``[clock]``, checked against the phase table."""
    step = clock.get("step", "pulse")
    if step not in STEP_PRESSES:
        clock.fail(f"'step' must be \"pulse\" (one STEP press gives one pulse) or \"hold\" (one press "
                   f"runs every pulse up to the next hold point), not {step!r}", "step")
    if "power_on" not in clock:
        return step, default_power_on(phases)
    names = [p.name for p in phases]
    name = clock.string("power_on", expected=f"the name of a phase ({', '.join(names)})")
    if name not in names:
        clock.fail(f"'power_on' must name a phase of the table ({', '.join(names)}), not {name!r}", "power_on")
    index = names.index(name)
    if phases[index].level == 1:
        clock.fail(f"'power_on' names '{name}', a high phase: the ring would come up in the middle of "
                   f"a pulse and clip it; name a low phase", "power_on")
    return step, index
