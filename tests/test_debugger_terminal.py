"""End to end in a real pseudo-terminal: start, Ctrl-C a long run, step,
look, resume, quit, reading the screen text as a person would."""

from __future__ import annotations

import os
import sys
from pathlib import Path

import pytest

from debugger_programs import SOAK, write

pexpect = pytest.importorskip("pexpect")

ROOT = Path(__file__).resolve().parent.parent
PROMPT = "ref8>"


@pytest.fixture
def debugger(tmp_path):
    write(tmp_path, SOAK, "soak.asm")
    env = {**os.environ, "PYTHONPATH": str(ROOT), "RELAYBENCH_DEBUG_HISTORY": str(tmp_path / "history"),
           "TERM": "xterm", "PROMPT_TOOLKIT_NO_CPR": "1"}
    try:
        child = pexpect.spawn(sys.executable, ["-m", "emu.cli", "debug", "soak.asm"], cwd=str(tmp_path),
                              env=env, encoding="utf-8", timeout=60, dimensions=(40, 120))
    except (OSError, pexpect.ExceptionPexpect) as exc:
        pytest.skip(f"no pseudo-terminal here: {exc}")
    yield child
    child.close(force=True)


def shows(child, line: str, *texts: str) -> None:
    """Type ``line``; each of ``texts`` must appear on the screen, in order, before the next prompt."""
    child.sendline(line)
    for text in texts:
        child.expect_exact(text)
    child.expect_exact(PROMPT)


def test_stop_a_long_run_with_ctrl_c_then_step_look_resume_and_quit(debugger):
    child = debugger
    child.expect_exact("The RUN/STOP switch is at STOP")
    child.expect_exact(PROMPT)
    child.sendline("go")
    child.expect_exact("the clock is running; Ctrl-C throws the stop switch")
    child.sendintr()
    child.expect_exact("stopped by the stop switch (Ctrl-C): the clock froze at the hold point")
    child.expect_exact(PROMPT)
    shows(child, "panel", "frozen: the switch is at STOP", "phase C, clock low, frozen at a hold point")
    shows(child, "instr", "1 instruction done")
    shows(child, "registers", "flags  z")
    shows(child, "put r4 1", "r4 = 0x01 (1)")
    shows(child, "go", "halted by the program: halt at 0012", "soak.asm:11")
    child.sendline("quit")
    child.expect(pexpect.EOF)
    child.close()
    assert child.exitstatus == 0
