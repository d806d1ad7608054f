"""Checks a builder runs before wiring, and before trusting halts in a program.

``relaybench check --machine FILE``: ``MACHINE_PROPERTIES`` are the clock
and control-unit properties (P1–P7) and the assembler round trip, each
checked on random programs and panel schedules drawn with ``emu.testing``;
``check_property`` runs one with hypothesis; ``failure_lines`` puts a
shrunk counterexample in the builder's terms; ``design_report`` lists what
the phase table makes of halts, STOP and STEP; ``_machine_command`` words
it all. ``PulseWatch`` (P1 as an observer) serves other tests too.

``relaybench check PROGRAM`` asks whether operator stops and steps, a halt
planted in front of any statement, or an irregular clock change what the
program computes (``_program_checks`` runs them; ``_program_report`` words
the answer). Each compares runs through ``_outcomes``.
"""

from ._counterexamples import failure_json, failure_lines, reproduce_command
from ._design_report import DesignReport, HaltFreeze, design_report, design_report_lines
from ._machine_command import DEFAULT_MACHINE_EXAMPLES, check_machine_command
from ._machine_properties import MACHINE_PROPERTIES, Example, MachineProperty
from ._machine_state import PropertyFailed
from ._program_checks import DEFAULT_EXAMPLES, ProgramCheck, check_program_timing
from ._program_command import check_program_command
from ._program_report import report_json, report_lines
from ._property_runner import FAILED, NOT_APPLICABLE, PASSED, PropertyResult, check_property, new_seed
from ._watchers import PulseWatch

__all__ = [
    "MACHINE_PROPERTIES", "Example", "MachineProperty", "PropertyFailed",
    "PASSED", "FAILED", "NOT_APPLICABLE", "PropertyResult", "check_property", "new_seed",
    "failure_json", "failure_lines", "reproduce_command",
    "DesignReport", "HaltFreeze", "design_report", "design_report_lines", "PulseWatch",
    "DEFAULT_MACHINE_EXAMPLES", "check_machine_command",
    "DEFAULT_EXAMPLES", "ProgramCheck", "check_program_command", "check_program_timing", "report_json",
    "report_lines",
]
