"""The interactive debugger: the machine's panel in a terminal.

``Session`` holds the machine and the command table and turns command lines
into text; ``run_repl`` puts a prompt_toolkit prompt and the live view in
front of it. Keeping the two apart lets every command be tested without a
terminal.
"""

from ._calls import CallShape, call_shape
from ._live import LiveClock
from ._program import ProgramView, empty_view, load_view
from ._session import COMMANDS, Command, DebugError, Session
from ._repl import (FRAME_SECONDS, HISTORY_VARIABLE, ctrl_c_is_the_stop_switch, history_path, run_live,
                    run_repl, run_script)
from ._trace import Recorder

__all__ = ["COMMANDS", "CallShape", "Command", "DebugError", "FRAME_SECONDS", "HISTORY_VARIABLE", "LiveClock",
           "ProgramView", "Recorder", "Session", "call_shape", "ctrl_c_is_the_stop_switch", "empty_view",
           "history_path", "load_view", "run_live", "run_repl", "run_script"]
