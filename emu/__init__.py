"""relaybench's engine: machine descriptions, the micro-step compiler, the
clock and control unit, and the emulator built from them."""

from ._description import (Field, Flag, Instruction, Machine, OperandKind, OperandPattern,
                           Phase, Register, RegisterPair, Step, load_machine,
                           machine_from_text, shipped_machines)
from ._emulator import Emulator, Observer, StopReason
from ._errors import MachineError

__all__ = [
    "Emulator", "Field", "Flag", "Instruction", "Machine", "MachineError", "OperandKind",
    "Observer", "OperandPattern", "Phase", "Register", "RegisterPair", "Step", "StopReason",
    "load_machine", "machine_from_text", "shipped_machines",
]
