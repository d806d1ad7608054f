"""Hypothesis strategies for a builder's own tests of a machine description.

``programs(machine)`` draws valid programs from the machine's instruction
table; ``panel_schedules(machine)`` draws panel actions (stop, run, step,
resume, reset) at random cycles and phases of the clock ring, and
``play_schedule`` applies one to an ``emu.Emulator``; ``run_resuming`` runs a cycle budget
through every halt. ``relaybench check
--machine`` is built on them.
"""

from ._programs import instructions, programs
from ._schedules import PANEL_ACTIONS, PanelAction, apply_panel_action, panel_schedules, play_schedule, run_resuming

__all__ = [
    "instructions", "programs",
    "PANEL_ACTIONS", "PanelAction", "apply_panel_action", "panel_schedules", "play_schedule", "run_resuming",
]
