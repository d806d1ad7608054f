"""Headless runs: a program loaded, run, judged and summed up, with no terminal.

``_loading`` decides what a program file is; ``_panel_files`` reads the
toggles, input and operator script kept beside a program; ``_headless``
runs it as ``relaybench run`` does and builds the report; ``_verdicts``
judges its ``.expect`` checks as ``relaybench test`` does; ``_summary``
words a report; ``_which_machine`` settles which machine a program runs on;
``_planting`` compares a run with halts planted against the plain one;
``_sweeps`` runs one program over many inputs (``_sweep_spec`` reads what
varies and what is collected, ``_sweep_checks`` the expressions that judge a row).
"""

from ._headless import DEFAULT_MAX_CYCLES, RunResult, program_warnings, report, run_loaded, start_emulator
from ._loading import SOURCE_SUFFIXES, LoadedProgram, ProgramError, load_program, loaded_from_program
from ._panel_files import (PANEL_SUFFIX, HaltAnswer, PanelMachine, PanelSettings, operator_script_for, panel_machine,
                           panel_path_for, read_panel_file)
from ._planting import Divergence, check_planting, compare_runs
from ._summary import format_summary, pause_place
from ._sweep_checks import CHECK_FUNCTIONS, Check, check_names, compile_check
from ._sweep_spec import RUN_FACTS, SweepInput, SweepOutput, SweepSpecError, parse_input, parse_output
from ._sweeps import SweepPlan, SweepRows, chunk_bounds, run_chunk, sweep_locally, sweep_on_cluster
from ._which_machine import DEFAULT_MACHINE, MachineChoice, MachineChooser
from ._verdicts import PROGRAM_SUFFIX, CheckFailure, Verdict, actual_value, check_program, collect_programs

__all__ = [
    "DEFAULT_MAX_CYCLES", "RunResult", "program_warnings", "report", "run_loaded", "start_emulator",
    "SOURCE_SUFFIXES", "LoadedProgram", "ProgramError", "load_program", "loaded_from_program",
    "Divergence", "check_planting", "compare_runs",
    "PANEL_SUFFIX", "HaltAnswer", "PanelMachine", "PanelSettings", "operator_script_for", "panel_machine",
    "panel_path_for", "read_panel_file",
    "DEFAULT_MACHINE", "MachineChoice", "MachineChooser",
    "format_summary", "pause_place",
    "CHECK_FUNCTIONS", "Check", "check_names", "compile_check",
    "RUN_FACTS", "SweepInput", "SweepOutput", "SweepSpecError", "parse_input", "parse_output",
    "SweepPlan", "SweepRows", "chunk_bounds", "run_chunk", "sweep_locally", "sweep_on_cluster",
    "PROGRAM_SUFFIX", "CheckFailure", "Verdict", "actual_value", "check_program", "collect_programs",
]
