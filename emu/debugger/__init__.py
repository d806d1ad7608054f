"""The interactive debugger: the machine's panel in a terminal.

``Session`` holds the machine and turns command lines into text through
the command table (``COMMANDS``, filled by the command groups); how a run
or a step stops is one ``RunPolicy`` whose ``Stop`` describes itself;
``run_repl`` puts a prompt_toolkit prompt and the live view in front of
it. Keeping the two apart lets every command be tested without a terminal.
"""

from ._calls import CallShape, call_shape, inferred_call_shape
from ._conditions import AnyOf, CallDepth, Count, Watch, Watches
from ._panel import duration_text
from ._live import LiveClock
from ._program import Places, ProgramView, empty_view, load_view
from ._running import ClockRun, ReplayMismatch, run_clock
from ._session import Session
from ._stopping import (AtBreakpoint, Breakpoint, CycleLimit, GoalReached, HaltedByProgram, PlantedHalt, RunPolicy,
                        Stop, SteppingInterrupted, StoppedBySwitch, WatchFired)
from ._table import COMMANDS, Command, DebugError
from ._repl import (FRAME_SECONDS, HISTORY_VARIABLE, ctrl_c_is_the_stop_switch, history_path, run_live,
                    run_repl, run_script)
from ._trace import Recorder

__all__ = ["inferred_call_shape", "duration_text", "AnyOf", "AtBreakpoint", "CallDepth", "Count", "Watch", "Watches", "Breakpoint", "COMMANDS", "CallShape", "ClockRun", "Command",
           "CycleLimit", "DebugError", "FRAME_SECONDS", "GoalReached", "HISTORY_VARIABLE", "HaltedByProgram",
           "LiveClock", "Places", "PlantedHalt", "ProgramView", "Recorder", "ReplayMismatch", "RunPolicy", "Session",
           "SteppingInterrupted", "Stop", "StoppedBySwitch", "WatchFired", "call_shape",
           "ctrl_c_is_the_stop_switch", "empty_view", "history_path", "load_view", "run_clock", "run_live",
           "run_repl", "run_script"]
