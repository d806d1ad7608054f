"""The prompt_toolkit side, in process: pipe input, a dummy output, a history file.

Also Ctrl-C as a real SIGINT sent to this process while a command runs,
and the live view driven by a fake wall clock.
"""

from __future__ import annotations

import os
import signal
import threading
import time

import pytest
from prompt_toolkit.input import create_pipe_input
from prompt_toolkit.output import DummyOutput

from emu import cli
from emu.debugger import HISTORY_VARIABLE, LiveClock, history_path, run_live, run_repl

from debugger_programs import KILN, SOAK, session_for, write


@pytest.fixture(autouse=True)
def private_history(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    monkeypatch.setenv(HISTORY_VARIABLE, str(tmp_path / "history"))


def drive(session, keys: str) -> list[str]:
    shown: list[str] = []
    with create_pipe_input() as pipe:
        pipe.send_text(keys)
        pipe.close()
        run_repl(session, input=pipe, output=DummyOutput(), write=shown.append)
    return shown


def drive_slowly(session, *parts: str) -> list[str]:
    """Like ``drive``, but each part is typed once the prompt has dealt with the one
    before (completion after Tab runs on prompt_toolkit's event loop)."""
    shown: list[str] = []
    with create_pipe_input() as pipe:
        def type_parts():
            for part in parts:
                time.sleep(0.3)
                pipe.send_text(part)
            pipe.close()
        typist = threading.Thread(target=type_parts)
        typist.start()
        run_repl(session, input=pipe, output=DummyOutput(), write=shown.append)
        typist.join()
    return shown


def test_commands_typed_at_the_prompt_are_answered(tmp_path):
    session = session_for(tmp_path)
    shown = drive(session, "instr\r\r\rregisters\rquit\r")
    assert shown[0].startswith("relaybench debug: kiln.asm on ref8 (5 Hz nominal)")
    assert shown[1].startswith("1 instruction done (2 STEP pulses)")
    assert shown[2].startswith("1 instruction done (3 STEP pulses)")
    assert shown[3].startswith("1 instruction done (5 STEP pulses)")
    assert shown[4].startswith("r0    03      3")
    assert session.finished


def test_end_of_input_leaves_the_debugger(tmp_path):
    session = session_for(tmp_path)
    shown, ended = [], []
    with create_pipe_input() as pipe:
        pipe.send_text("waves kiln.vcd\rinstr\r")
        pipe.close()
        prompt = threading.Thread(target=lambda: ended.append(
            run_repl(session, input=pipe, output=DummyOutput(), write=shown.append)))
        prompt.start()
        prompt.join(timeout=20)
    assert not prompt.is_alive(), "the prompt went on reading after the end of its input"
    assert ended == [0] and len(shown) == 3
    # leaving writes what is open: a VCD file opens with a '$' keyword (IEEE 1364-2005 clause 18, from memory)
    assert session.waves is None and (tmp_path / "kiln.vcd").read_text().startswith("$")


def test_history_is_kept_in_the_file_named_by_the_environment(tmp_path):
    drive(session_for(tmp_path), "panel\rwhy\rquit\r")
    text = (tmp_path / "history").read_text()
    assert "+panel" in text and "+why" in text


def test_history_defaults_to_the_xdg_state_folder(monkeypatch, tmp_path):
    monkeypatch.delenv(HISTORY_VARIABLE)
    monkeypatch.setenv("XDG_STATE_HOME", str(tmp_path / "state"))
    assert history_path() == tmp_path / "state" / "relaybench" / "debug-history"


def test_tab_completes_a_command_name_and_adds_its_space(tmp_path):
    session = session_for(tmp_path)
    # without completion "breamark" is no command; without the space "breakmark" neither
    shown = drive_slowly(session, "brea\t", "mark\rquit\r")
    assert shown[1] == "breakpoint 1 at 0017 mark kiln.asm:14"


def test_tab_completes_a_label_argument(tmp_path):
    session = session_for(tmp_path)
    # "ma" is no label of KILN: only the completer makes it "mark"
    shown = drive_slowly(session, "break ma\t", "\rquit\r")
    assert shown[1] == "breakpoint 1 at 0017 mark kiln.asm:14"


def test_a_real_sigint_during_a_run_throws_the_stop_switch(tmp_path):
    session = session_for(tmp_path, SOAK)

    def press_ctrl_c_once_running():
        while session.emu.cycles < 100_000:
            time.sleep(0.001)
        os.kill(os.getpid(), signal.SIGINT)

    presser = threading.Thread(target=press_ctrl_c_once_running)
    presser.start()
    shown = drive(session, "go\rquit\r")
    presser.join()
    assert "stopped by the stop switch (Ctrl-C)" in shown[1]
    assert session.emu.frozen and not session.emu.switch_run
    assert signal.getsignal(signal.SIGINT) is signal.default_int_handler


def test_live_view_freezes_at_the_halt_and_restarts_on_resume(tmp_path):
    session = session_for(tmp_path)
    wall = [0.0]
    clock = LiveClock(session, 1.0, now=lambda: wall[0])
    clock.press("run")
    # ref8's nominal clock (spec §3): 5 cycles a second, so the pause after 94 cycles comes at 18.8 s
    wall[0] = 18.79
    clock.tick()
    assert not session.emu.frozen and session.emu.cycles == 93
    wall[0] = 18.86
    clock.tick()
    assert session.emu.frozen and session.emu.halt_latch and session.emu.cycles == 94
    wall[0] = 30.0
    clock.tick()
    assert session.emu.cycles == 94, "a frozen clock does not move however long one waits"
    clock.press("resume")
    before = session.emu.time_ns
    wall[0] += 0.43
    clock.tick()
    assert session.emu.time_ns - before == 400_000_000
    assert session.machine.phases[session.emu.phase_index].name == "C"
    assert clock.lag_phases() == 0.0
    wall[0] += 10
    clock.tick()
    assert session.emu.frozen and session.emu.cycles == 101
    assert "frozen: the halt latch is set" in clock.screen()


def test_live_view_stops_at_a_breakpoint(tmp_path):
    session = session_for(tmp_path)
    session.execute("break mark")
    wall = [0.0]
    clock = LiveClock(session, 100.0, now=lambda: wall[0])
    clock.press("run")
    wall[0] = 5.0
    clock.tick()
    assert clock.finished == "breakpoint 1 at 0017 mark kiln.asm:14"
    assert session.emu.pc == 0x17 and session.emu.cycles == 17


def test_live_application_leaves_on_q(tmp_path):
    session = session_for(tmp_path)
    session.execute("live 3")
    with create_pipe_input() as pipe:
        pipe.send_text("sq")
        text = run_live(session, input=pipe, output=DummyOutput())
    assert text.startswith("left live mode. frozen: the switch is at STOP")
    assert session.live_factor is None


def test_ctrl_c_in_live_mode_throws_stop_and_gives_the_prompt_back(tmp_path):
    session = session_for(tmp_path, SOAK)
    session.execute("live 100")
    said = []
    with create_pipe_input() as pipe:
        # r starts the clock; after Ctrl-C the p must not reach the live view as STEP
        pipe.send_text("r")
        live = threading.Thread(target=lambda: said.append(run_live(session, input=pipe, output=DummyOutput())))
        live.start()
        while session.emu.cycles < 20:
            time.sleep(0.01)
        pipe.send_text("\x03p")
        live.join(timeout=10)
        if live.is_alive():
            pipe.send_text("q")
            live.join()
    assert said[0].startswith("stopped by the stop switch (Ctrl-C): left live mode. frozen: the switch is at STOP")
    assert session.emu.frozen and not session.emu.switch_run
    assert session.last_stop == "stopped by the stop switch (Ctrl-C): left live mode"


def test_the_debug_command_reports_a_bad_program_without_a_traceback(tmp_path, capsys):
    write(tmp_path, "li r9, 1\n", "broken.asm")
    assert cli.main(["debug", "broken.asm"]) == 1
    err = capsys.readouterr().err
    assert "broken.asm:1:" in err and "error: r9 is not a register of ref8" in err


def test_the_debug_command_needs_a_program(capsys):
    with pytest.raises(SystemExit) as stop:
        cli.main(["debug"])
    assert stop.value.code == 2
    assert "usage:" in capsys.readouterr().err


def test_the_debug_command_runs_the_prompt(tmp_path, monkeypatch):
    write(tmp_path, KILN)
    calls = []
    monkeypatch.setattr("emu.debugger.run_repl", lambda session: calls.append(session) or 0)
    monkeypatch.setattr("emu.commands.debug.interactive", lambda: True)
    assert cli.main(["debug", "kiln.asm"]) == 0
    assert calls[0].view.labels["mark"] == 0x17


def test_commands_from_a_pipe_give_a_transcript(tmp_path, monkeypatch, capsys):
    """relaybench debug prog.asm < steps.txt: each command echoed after the prompt, then its answer."""
    import io
    write(tmp_path, KILN)
    monkeypatch.setattr("emu.commands.debug.interactive", lambda: False)
    monkeypatch.setattr("sys.stdin", io.StringIO("break mark\ngo\nlive\nquit\nregisters\n"))
    assert cli.main(["debug", "kiln.asm"]) == 1         # 'live' was refused: the script did not go through
    out = capsys.readouterr().out
    assert "ref8> break mark\nbreakpoint 1 at 0017 mark" in out
    assert "ref8> go\nswitch at RUN\nbreakpoint 1 at 0017 mark" in out
    assert "ref8> live\nerror: live mode needs a terminal" in out
    assert "ref8> registers" not in out, "nothing runs after quit"
    monkeypatch.setattr("sys.stdin", io.StringIO("break mark\ngo\nregisters\n"))
    assert cli.main(["debug", "kiln.asm"]) == 0
