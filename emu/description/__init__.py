"""The machine description: what a builder writes down about their machine.

``_model`` holds the parts (registers, flags, phases, instructions, steps);
``_loader`` reads a TOML machine file into them and checks every key;
``_design_rules`` checks each micro-step against the rule a control unit
obeys; ``_alu`` is the table of ALU operations; ``notation/`` is the
micro-step notation and the number notation. Everything downstream (the
assembler, the engine, the debugger, ``isa``) reads a ``Machine``.
"""

from ._alu import ALU_OPS, WORD_SELECTORS
from ._design_rules import StepChecker
from ._loader import load_machine, machine_from_text, shipped_machines
from ._model import (FLAG_ROLES, INPUT_DEVICES, OUTPUT_DEVICES, Field, FieldPiece, Flag, Instruction,
                     Machine, OperandKind, OperandPattern, Phase, Register, RegisterPair, Step)

__all__ = [
    "ALU_OPS", "WORD_SELECTORS", "StepChecker",
    "load_machine", "machine_from_text", "shipped_machines",
    "FLAG_ROLES", "INPUT_DEVICES", "OUTPUT_DEVICES", "Field", "FieldPiece", "Flag", "Instruction",
    "Machine", "OperandKind", "OperandPattern", "Phase", "Register", "RegisterPair", "Step",
]
