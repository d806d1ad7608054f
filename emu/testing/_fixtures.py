"""A program in a machine just switched on: what the ``powered_on`` fixture gives a test."""

from __future__ import annotations

from ..description import Machine
from ..runs import (DEFAULT_MAX_CYCLES, MachineChooser, PanelSettings, RunResult, load_program, panel_path_for,
                    read_panel_file, run_loaded, start_emulator)
from ._machines import machine_of

__all__ = ["PoweredOn", "power_on"]


class PoweredOn:
    """A program loaded into a machine at power-on, the toggles and input of its panel file set.

    ``emulator`` is the machine (step it, look at it); ``run`` runs it as
    ``relaybench run`` does, resuming at pauses, with the panel file's
    operator script or the one given, on the nominal clock or the one given.
    """

    def __init__(self, path: str, machine: Machine):
        self.path = str(path)
        self.machine = machine
        self.program = load_program(self.path, machine)
        panel_path = panel_path_for(self.path)
        self.panel = read_panel_file(panel_path, machine) if panel_path.exists() else PanelSettings()
        self.emulator = start_emulator(self.program, machine, switches=self.panel.switches,
                                       input_bytes=self.panel.input_bytes)

    def run(self, *, operator=None, clock=None, max_cycles: int | None = None) -> RunResult:
        """Run to the final halt (or the cycle limit); ``clock`` is a ``spread_clocks`` draw."""
        if clock is not None:
            self.emulator.clock_source = clock
        return run_loaded(self.program, self.machine, emulator=self.emulator,
                          operator=self.panel.at_halt if operator is None else tuple(operator),
                          max_cycles=max_cycles or self.panel.max_cycles or DEFAULT_MAX_CYCLES)


def power_on(program, machine: Machine | str | None = None) -> PoweredOn:
    """``program`` (a path) in its machine: ``machine`` if given, else the one the program or its
    panel file names, else ref8 (as ``relaybench run`` chooses). A program that cannot be
    loaded raises ProgramError with its located messages."""
    chosen = machine_of(machine) if machine is not None else MachineChooser().machine_for(program)
    return PoweredOn(program, chosen)
