"""Testing a machine or a program with pytest and Hypothesis.

Strategies a builder draws from in their own properties: ``programs(machine)``
draws valid programs from the machine's instruction table;
``panel_schedules(machine)`` draws panel actions (stop, run, step, resume,
reset) at random cycles and phases of the clock ring, and ``play_schedule``
applies one to an ``emu.Emulator``; ``run_resuming`` runs a cycle budget
through every halt; ``operator_scripts`` and ``spread_clocks`` draw operator
scripts and irregular clocks. ``power_on`` (the ``powered_on`` fixture of the
pytest plugin) gives a program in a machine just switched on. The plugin
(``_pytest_plugin``, registered as the pytest entry point ``relaybench``)
makes each program with ``.expect`` checks a test item. ``relaybench
check`` is built on them.
"""

from ._clocks import spread_clocks
from ._fixtures import PoweredOn, power_on
from ._operators import operator_scripts
from ._programs import instructions, programs
from ._schedules import PANEL_ACTIONS, PanelAction, apply_panel_action, panel_schedules, play_schedule, run_resuming

__all__ = [
    "instructions", "programs",
    "PANEL_ACTIONS", "PanelAction", "apply_panel_action", "panel_schedules", "play_schedule", "run_resuming",
    "PoweredOn", "operator_scripts", "power_on", "spread_clocks",
]
