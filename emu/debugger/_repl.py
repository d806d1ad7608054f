"""The terminal side: a prompt_toolkit prompt and the live view.

Everything a command does lives in ``Session``; this module only reads
lines (with history and completion), turns Ctrl-C during a command into
the stop switch, and runs the live view as a small full-width application
that redraws the panel while the clock runs in real time.
"""

from __future__ import annotations

import asyncio
import os
import shutil
import signal
import threading
from contextlib import contextmanager
from pathlib import Path

from prompt_toolkit import PromptSession
from prompt_toolkit.application import Application
from prompt_toolkit.completion import Completer, Completion
from prompt_toolkit.history import FileHistory, InMemoryHistory
from prompt_toolkit.key_binding import KeyBindings
from prompt_toolkit.layout import Layout, Window
from prompt_toolkit.layout.controls import FormattedTextControl

from ._live import LiveClock

__all__ = ["HISTORY_VARIABLE", "history_path", "run_repl", "run_live", "run_script"]

HISTORY_VARIABLE = "RELAYBENCH_DEBUG_HISTORY"
FRAME_SECONDS = 0.04
PIPED_WIDTH = 80
"""Line width of the views when commands come from a file or a pipe."""


def history_path() -> Path:
    """$RELAYBENCH_DEBUG_HISTORY, else relaybench/debug-history under the XDG state folder."""
    chosen = os.environ.get(HISTORY_VARIABLE)
    if chosen:
        return Path(chosen)
    state = os.environ.get("XDG_STATE_HOME") or os.path.join(os.path.expanduser("~"), ".local", "state")
    return Path(state) / "relaybench" / "debug-history"


def _history():
    path = history_path()
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        path.touch(exist_ok=True)
        return FileHistory(str(path))
    except OSError:
        return InMemoryHistory()


class _SessionCompleter(Completer):
    """Tab completion from the session's candidates; a completed command name
    gets its space, so the argument can be typed straight after it."""

    def __init__(self, session):
        self.session = session

    def get_completions(self, document, complete_event):
        before = document.text_before_cursor
        typed = before.split()[-1] if before and not before[-1].isspace() else ""
        naming_the_command = not before[:len(before) - len(typed)].strip()
        after = " " if naming_the_command else ""
        for candidate in self.session.complete(before):
            yield Completion(candidate + after, start_position=-len(typed), display=candidate)


@contextmanager
def ctrl_c_is_the_stop_switch(session):
    """While a command runs, SIGINT only sets a flag that the run turns into the stop switch."""
    if threading.current_thread() is not threading.main_thread():
        yield
        return
    previous = signal.signal(signal.SIGINT, lambda _signum, _frame: session.interrupt())
    try:
        yield
    finally:
        signal.signal(signal.SIGINT, previous)


def _banner(session) -> str:
    m = session.machine
    program = session.view.path or "no program"
    return (f"relaybench debug: {program} on {m.name} ({m.nominal_hz:g} Hz nominal). "
            f"The RUN/STOP switch is at STOP.\n"
            f"'go' runs the program, 'instr' steps it, 'help' lists the commands.")


def run_script(session, lines, write=print) -> int:
    """Commands from a file or a pipe (``relaybench debug prog.asm < steps.txt``), echoed
    after the prompt so the transcript reads like a session; returns the exit status:
    1 when a command was refused (a script that went wrong must not pass a CI step), else 0."""
    write(_banner(session))
    session.announce = None
    session.width = PIPED_WIDTH
    refused = False
    for line in lines:
        command = line.rstrip("\n")
        write(f"{session.machine.name}> {command}")
        if command.strip().lower() == "live" or command.strip().lower().startswith("live "):
            text = "error: live mode needs a terminal"
        else:
            with ctrl_c_is_the_stop_switch(session):
                text = session.execute(command)
        if text:
            write(text)
            refused |= text.startswith("error:")
        if session.finished:
            break
    session.close()
    return 1 if refused else 0


def run_repl(session, *, input=None, output=None, write=print) -> int:
    """Read and run commands until 'quit' or end of input; returns the exit status."""
    prompt = PromptSession(history=_history(), completer=_SessionCompleter(session),
                           complete_while_typing=False, input=input, output=output)
    write(_banner(session))
    session.announce = write
    while not session.finished:
        try:
            line = prompt.prompt(f"{session.machine.name}> ")
        except KeyboardInterrupt:
            continue
        except EOFError:
            break
        session.width = shutil.get_terminal_size().columns
        with ctrl_c_is_the_stop_switch(session):
            text = session.execute(line)
        if text:
            write(text)
        if session.live_factor is not None:
            write(run_live(session, input=input, output=output))
    session.close()
    return 0


def run_live(session, *, input=None, output=None, now=None) -> str:
    """The live view until q; returns what to say back at the prompt."""
    factor, session.live_factor = session.live_factor, None
    clock = LiveClock(session, factor) if now is None else LiveClock(session, factor, now)
    keys = KeyBindings()
    actions = {"s": "stop", "r": "run", "space": "resume", "p": "step"}
    for key, action in actions.items():
        keys.add(key)(lambda _event, action=action: clock.press(action))
    interrupted = []

    @keys.add("q")
    @keys.add("enter")
    @keys.add("escape")
    def _leave(event):
        event.app.exit()

    @keys.add("c-c")
    def _stop_and_leave(event):
        """As during any run: Ctrl-C throws the stop switch and gives the prompt back."""
        clock.press("stop")
        interrupted.append(True)
        event.app.exit()

    app = Application(layout=Layout(Window(FormattedTextControl(clock.screen))), key_bindings=keys,
                      input=input, output=output, full_screen=False)

    async def pace():
        while True:
            clock.tick()
            app.invalidate()
            if clock.finished:
                app.exit()
                return
            await asyncio.sleep(FRAME_SECONDS)

    app.run(pre_run=lambda: app.create_background_task(pace()))
    reason = clock.finished or "left live mode"
    if interrupted and not session.emu.frozen:
        session.settle()
    if interrupted and not clock.finished:
        reason = "stopped by the stop switch (Ctrl-C): left live mode"
    session.last_stop = reason
    return f"{reason}. {session.state_text()}. {session.here_text()}"
