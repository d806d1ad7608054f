"""relaybench's machine side: the machine description and the engine built from it.

``emu.description`` is what a builder writes down (model, loader, design
rules, notation); ``emu.engine`` is where it runs (micro-step compiler,
control unit, clock ring, ports); ``emu.runs`` loads and runs programs
headless; ``emu.debugger`` is the panel in a terminal; ``emu.timing`` the
clock as parts, waveforms and wear; ``emu.checks`` the properties a machine
description must have and its design report; ``emu.testing`` hypothesis
strategies for anyone's tests; ``emu.commands`` the sub-commands.
"""

__version__ = "0.1.0"
"""The one place the version is written (``pyproject.toml`` reads it from here); set before
the imports below, since ``emu.cache`` reads it while they run."""

from .description import (Field, Flag, Instruction, Machine, OperandKind, OperandPattern, Phase, Register,
                          RegisterGroup, Step, load_machine, machine_from_text, shipped_machines)
from .engine import Emulator, Lookout, Observer, StopReason
from .errors import MachineError

__all__ = [
    "__version__", "Emulator", "Field", "Flag", "Instruction", "Lookout", "Machine", "MachineError", "OperandKind",
    "Observer", "OperandPattern", "Phase", "Register", "RegisterGroup", "Step", "StopReason",
    "load_machine", "machine_from_text", "shipped_machines",
]
