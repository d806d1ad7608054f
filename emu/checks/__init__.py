"""Checks of a program against the machine's halts, stepping and clock.

``relaybench check PROGRAM`` asks whether operator stops and steps, a halt
planted in front of any statement, or an irregular clock change what the
program computes (``_program_checks`` runs them; ``_program_report`` words
the answer). Each compares runs through ``_outcomes``.
"""

from ._program_checks import DEFAULT_EXAMPLES, ProgramCheck, check_program_timing
from ._program_command import check_program_command
from ._program_report import report_json, report_lines

__all__ = ["DEFAULT_EXAMPLES", "ProgramCheck", "check_program_command", "check_program_timing", "report_json",
           "report_lines"]
