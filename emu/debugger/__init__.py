"""The interactive debugger: the machine's panel in a terminal.

``Session`` holds the machine and the command table and turns command lines
into text; ``run_repl`` puts a prompt_toolkit prompt and the live view in
front of it. Keeping the two apart lets every command be tested without a
terminal.
"""

from ._calls import CallShape, call_shape
from ._program import ProgramView, empty_view, load_view
from ._session import COMMANDS, Command, DebugError, Session
from ._trace import Recorder

__all__ = ["COMMANDS", "CallShape", "Command", "DebugError", "ProgramView", "Recorder",
           "Session", "call_shape", "empty_view", "load_view"]
