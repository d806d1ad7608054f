"""What one STEP press gives, as the machine description says.

A description without ``[clock] step`` gives one pulse from the panel with
the ring standing still (``"pulse"``); ``step = "hold"`` lets the ring run
its own pulses, at their own lengths, up to the next hold point. P3 and
the design report both read it from here.
"""

from __future__ import annotations

__all__ = ["step_press_kind", "after_step_press"]


def step_press_kind(machine) -> str:
    """``"pulse"`` or ``"hold"``; a machine model without the ``[clock] step`` key gives pulses."""
    return getattr(machine, "step_press", "pulse")


def after_step_press(machine, index: int) -> tuple[int, int]:
    """(micro-steps given, phase index after) of one press with the ring frozen at phase ``index``."""
    if step_press_kind(machine) == "pulse":
        return 1, index
    phases, pulses = machine.phases, 0
    while True:
        following = (index + 1) % len(phases)
        pulses += phases[index].level == 1 and phases[following].level == 0
        index = following
        if phases[index].hold:
            return pulses, index
