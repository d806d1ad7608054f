"""The machine description: what a builder writes down about their machine.

``_model`` holds the parts (registers, flags, phases, instructions, steps);
``_loader`` reads a TOML machine file into them and checks every key;
``_schema`` are the typed getters every file
reader shares, ``_toml_lines`` finds the line of a key, ``_sections`` reads
``[timing]`` and ``[wear]``; ``_port_devices`` is the table of port devices,
``_call_marks`` reads which instructions call and return;
``_design_rules`` checks each micro-step against the rule a control unit
obeys; ``_alu`` is the table of ALU operations (built-in definitions and ``[alu.NAME]``); ``notation/`` is the
micro-step notation and the number notation. Everything downstream (the
assembler, the engine, the debugger, ``isa``) reads a ``Machine``.
"""

from ._alu import (ALU_OPS, BUILTIN_DEFINITIONS, RESERVED_OPERATION_NAMES, WORD_SELECTORS, AluOp, builtin_alu_ops,
                   read_alu_op, resolve_flag)
from ._design_rules import StepChecker
from ._loader import load_machine, machine_from_text, shipped_machines
from ._model import (FLAG_ROLES, INPUT_DEVICES, OUTPUT_DEVICES, Field, FieldPiece, Flag, Instruction,
                     Machine, MachineNames, OperandKind, OperandPattern, Phase, Register, RegisterGroup,
                     Step, GatedLine, Jump, Cycles, DecodeGroup, stage_relay)
from ._schema import REQUIRED, Table, is_integer, is_number, kind_of
from ._call_marks import CallMark
from ._clock_panel import STEP_PRESSES
from ._port_devices import PORT_DEVICES, PortDevice
from ._sections import (MAX_TOLERANCE, MECHANICAL, MODES, PARTS, SILICON_DIODE_DROP_V, SPREADS, Part, StageParts,
                        TimingSection, WearRatings, read_timing, read_wear, timing_section,
                        wear_section)
from ._toml_lines import key_line, toml_syntax_error

__all__ = [
    "ALU_OPS", "BUILTIN_DEFINITIONS", "RESERVED_OPERATION_NAMES", "WORD_SELECTORS", "AluOp", "builtin_alu_ops",
    "read_alu_op", "resolve_flag", "StepChecker",
    "MachineNames", "load_machine", "machine_from_text", "shipped_machines",
    "FLAG_ROLES", "INPUT_DEVICES", "OUTPUT_DEVICES", "Field", "FieldPiece", "Flag", "Instruction",
    "Machine", "OperandKind", "OperandPattern", "Phase", "Register", "RegisterGroup", "Step",
    "stage_relay", "GatedLine", "PORT_DEVICES", "PortDevice", "CallMark", "STEP_PRESSES",
    "Jump", "Cycles", "DecodeGroup",
    "REQUIRED", "Table", "is_integer", "is_number", "kind_of",
    "MAX_TOLERANCE", "MECHANICAL", "MODES", "PARTS", "SILICON_DIODE_DROP_V", "SPREADS", "Part", "StageParts",
    "TimingSection", "WearRatings", "read_timing", "read_wear", "timing_section", "wear_section",
    "key_line", "toml_syntax_error",
]
