"""Bad input gets one clear message and the exit status of "Headless runs"
(emu/machines/ref8.md), never a traceback.

Exit statuses (ref8 reference, "Headless runs"): 1 for a bad program or machine file, 2 for a bad
command line. Intel HEX records follow the Intel Hexadecimal Object File
Format Specification (Rev. A, 1988): ``:LLAAAATT<data>CC`` with CC the
two's complement of the sum of the other bytes.
"""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import time

import pytest

import emu

from cli_support import ACC12, ROOT, cli, cli_process, write

GOOD = "li r0, 1\nhalt\n"


def assert_one_error_line(err: str, starts: str):
    assert "Traceback" not in err
    first = err.splitlines()[0]
    assert first.startswith(starts), err
    assert "error" in first


def test_missing_file(capsys, tmp_path):
    code, out, err = cli(capsys, "run", tmp_path / "nothing.asm")
    assert code == 1 and out == ""
    assert err.strip() == f"{tmp_path / 'nothing.asm'}: error: no such file"


def test_folder_instead_of_file(capsys, tmp_path):
    code, _out, err = cli(capsys, "run", tmp_path)
    assert code == 1
    assert err.strip() == f"{tmp_path}: error: is a folder, not a program file"


@pytest.mark.skipif(hasattr(os, "geteuid") and os.geteuid() == 0, reason="root can read any file")
def test_unreadable_file(capsys, tmp_path):
    path = write(tmp_path, "secret.asm", GOOD)
    path.chmod(0)
    code, _out, err = cli(capsys, "run", path)
    assert code == 1
    assert err.strip() == f"{path}: error: cannot read the file (permission denied)"


def test_text_that_is_no_program(capsys, tmp_path):
    path = write(tmp_path, "letter.txt", "Dear harbourmaster,\nthe ferry was late again.\nRegards\n")
    code, _out, err = cli(capsys, "run", path)
    assert code == 1
    assert err.strip() == (f"{path}: error: this is neither assembly source, Intel HEX nor a raw binary "
                           f"image (none of its 3 lines assembles)")


def test_program_error_is_located_with_caret(capsys, tmp_path):
    path = write(tmp_path, "typo.asm", "li r0, 1\nli r9, 2\nhalt\n")
    code, _out, err = cli(capsys, "run", path)
    assert code == 1
    assert err.splitlines() == [f"{path}:2:4: error: r9 is not a register of ref8 (r0–r7)",
                                "    li r9, 2", "       ^"]


@pytest.mark.parametrize("record, message", [
    # :0300000018011A in the Intel HEX layout; the correct checksum of 03 0000 00 18 01 01 is E3
    (":03000000180101E4", "bad checksum E4 (the record's bytes need E3)"),
    (":04000000180101E2", "the record length says 4 data bytes but the record holds 3"),
    (":03000000180G01E3", "'G' is not a hex digit"),
])
def test_corrupt_hex_record(capsys, tmp_path, record, message):
    path = write(tmp_path, "bad.hex", f"{record}\n:00000001FF\n")
    code, _out, err = cli(capsys, "run", path)
    assert code == 1
    assert_one_error_line(err, f"{path}:1:")
    assert message in err.splitlines()[0]


def test_hex_checksum_example_is_right():
    """The record used above really has checksum E3 (Intel HEX spec arithmetic)."""
    body = bytes.fromhex("03000000180101")
    assert (-sum(body)) & 0xFF == 0xE3


def test_image_larger_than_memory(capsys, tmp_path):
    path = tmp_path / "huge.bin"
    path.write_bytes(bytes(65_537))
    code, _out, err = cli(capsys, "run", path)
    assert code == 1
    assert_one_error_line(err, f"{path}: error:")
    assert "65537" in err and "65536" in err


def test_image_larger_than_acc12_memory(capsys, tmp_path):
    path = tmp_path / "big.bin"
    path.write_bytes(bytes(2 * 300))          # 300 twelve-bit words, two bytes each
    code, _out, err = cli(capsys, "run", "--machine", ACC12, path)
    assert code == 1
    assert_one_error_line(err, f"{path}: error:")


def test_hex_record_past_the_end_of_memory(capsys, tmp_path):
    # 0x0200 words is past acc12's 256; data 00 00, checksum of 02 0400 00 00 00
    path = write(tmp_path, "far.hex", ":02040000" "0000" "FA\n:00000001FF\n")
    code, _out, err = cli(capsys, "run", "--machine", ACC12, path)
    assert code == 1
    assert_one_error_line(err, f"{path}:1:")
    assert "past the end of the memory" in err


def test_bad_machine_file(capsys, tmp_path):
    machine = write(tmp_path, "m.toml", '[machine]\nname = "m"\ndata_bits = "eight"\n')
    prog = write(tmp_path, "p.asm", GOOD)
    for command in (["run", prog], ["test", prog], ["asm", prog], ["isa"], ["dis", prog]):
        code, _out, err = cli(capsys, *command, "--machine", machine)
        assert code == 1
        assert err.strip() == f"{machine}:3: error: [machine]: 'data_bits' must be an integer, not a string"


def test_missing_machine_file(capsys, tmp_path):
    code, _out, err = cli(capsys, "isa", "--machine", tmp_path / "none.toml")
    assert code == 1
    assert err.strip().startswith(f"{tmp_path / 'none.toml'}: error:") and "no such machine file" in err


@pytest.mark.parametrize("options, message", [
    (["--max-cycles", "-5"], "argument --max-cycles: must be a positive number of cycles, not -5"),
    (["--max-cycles", "lots"], "argument --max-cycles: 'lots' is not a number"),
    (["--switches", "0x1FF"], "argument --switches: 0x1FF does not fit the 8-bit word of ref8"),
    (["--switches", "-1"], "argument --switches: -1 does not fit the 8-bit word of ref8"),
    (["--dump", "10"], "argument --dump: '10' is not START:LEN (for example 0x100:16)"),
    (["--dump", "0x10:0"], "argument --dump: the length of '0x10:0' must be at least 1"),
    (["--dump", "0xFFF0:32"], "argument --dump: '0xFFF0:32' reaches past the end of memory"),
    (["--input-text", "a\\q"], "argument --input-text: unknown escape '\\q'"),
    (["--frobnicate"], "unrecognized arguments: --frobnicate"),
])
def test_nonsense_options(capsys, tmp_path, options, message):
    prog = write(tmp_path, "p.asm", GOOD)
    code, out, err = cli(capsys, "run", prog, *options)
    assert code == 2 and out == ""
    assert err.startswith("usage: relaybench")
    assert f": error: {message}" in err
    assert "Traceback" not in err


def test_missing_input_file_is_a_usage_error(capsys, tmp_path):
    prog = write(tmp_path, "p.asm", GOOD)
    code, _out, err = cli(capsys, "run", prog, "--input", tmp_path / "none.bin")
    assert code == 2
    assert "argument --input: cannot read" in err


def test_switches_fit_acc12_words(capsys, tmp_path):
    prog = write(tmp_path, "p.asm", "get 0\nstop\n")
    assert cli(capsys, "run", "--machine", ACC12, prog, "--switches", "0xFFF")[0] == 0
    assert cli(capsys, "run", "--machine", ACC12, prog, "--switches", "0x1000")[0] == 2


@pytest.mark.parametrize("text", ["", "; only a comment\n\n", "COUNT = 4\n"])
def test_empty_program(capsys, tmp_path, text):
    prog = write(tmp_path, "empty.asm", text)
    code, _out, err = cli(capsys, "run", prog)
    assert code == 1
    assert err.strip() == f"{prog}: error: the program is empty (no instruction or data to load)"
    code, _out, err = cli(capsys, "asm", prog)
    assert code == 1 and not (tmp_path / "empty.hex").exists()
    assert err.strip() == f"{prog}: error: the program is empty (no instruction or data to write)"


def test_empty_image(capsys, tmp_path):
    prog = write(tmp_path, "empty.hex", ":00000001FF\n")
    code, _out, err = cli(capsys, "run", prog)
    assert code == 1 and "the program is empty" in err


def test_no_command_is_a_usage_error(capsys):
    code, _out, err = cli(capsys)
    assert code == 2 and err.startswith("usage: relaybench")


# ----- real processes ----------------------------------------------------------

def test_real_process_exit_statuses(tmp_path):
    prog = write(tmp_path, "p.asm", "li r0, 1\nhalt\n")
    loop = write(tmp_path, "loop.asm", "top: jmp top\n")
    assert cli_process("run", prog).returncode == 0
    assert cli_process("run", loop, "--max-cycles", "300").returncode == 3
    bad = cli_process("run", tmp_path / "none.asm")
    assert bad.returncode == 1 and bad.stderr.strip().endswith("error: no such file")
    usage = cli_process("run", prog, "--dump", "10")
    assert usage.returncode == 2 and "Traceback" not in usage.stderr


def test_ctrl_c_during_a_long_run(tmp_path):
    """SIGINT mid-run: a clean message and status 130, no traceback.

    The program never halts, so the signal cannot come too late; the input
    stream is a FIFO, so the test knows the command has started before it
    signals (the half second after that only covers loading a 1-line program).
    """
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    forever = write(tmp_path, "forever.asm", "top: inc r0\njmp top\n")
    fifo = tmp_path / "input"
    os.mkfifo(fifo)
    process = subprocess.Popen([sys.executable, "-m", "emu.cli", "run", forever, "--input", fifo,
                                "--max-cycles", "10000000000"],
                               stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True, env=env)
    with open(fifo, "w") as stream:
        stream.write("go")
    time.sleep(0.5)
    process.send_signal(signal.SIGINT)
    out, err = process.communicate(timeout=60)
    assert process.returncode == 130
    assert out == ""
    assert "Traceback" not in err
    assert err.startswith("relaybench: run interrupted after ")


def test_a_source_file_full_of_mistakes_gets_every_located_error(tmp_path, capsys):
    """Even when no line assembles, a .asm file is source: each error with its place."""
    program = write(tmp_path, "typos.asm", "loop: li r9, 3\n  jmp lop\n")
    code, _out, err = cli(capsys, "run", program)
    assert code == 1
    assert f"{program}:1:10: error: r9 is not a register of ref8 (r0–r7)" in err
    assert f"{program}:2:7: error: undefined label 'lop' (did you mean 'loop'?)" in err
    assert "neither assembly source" not in err


@pytest.mark.parametrize("damage, message", [
    (lambda d: d["lines"][0].update(length=10**9), "lines[0]: 'length' must be a word count 0…65536, not 1000000000"),
    (lambda d: d["expects"][0].update(item="mem", memory_address=None),
     "expects[0]: 'memory_address' must be an address 0…65535, not None"),
    (lambda d: d["expects"][0].update(item="r9"), "expects[0]: 'item' must be one of"),
    (lambda d: d["expects"][0].update(address=70000), "expects[0]: 'address' must be an address 0…65535, not 70000"),
    (lambda d: d.update(pauses=[-1]),
     "top level: 'pauses' must be a list of addresses 0…65535, not a list holding -1"),
], ids=["huge length", "memory check without address", "unknown item", "address past memory",
        "negative pause"])
def test_a_stale_debug_file_is_refused_with_the_key_named(tmp_path, capsys, damage, message):
    import json
    source = write(tmp_path, "p.asm", "li r0, 1\npause\n.expect r0 == 1\nhalt\n")
    code, _out, _err = cli(capsys, "asm", source)
    assert code == 0
    debug = tmp_path / "p.dbg.json"
    data = json.loads(debug.read_text())
    damage(data)
    debug.write_text(json.dumps(data))
    for command in ("run", "test"):
        code, out, err = cli(capsys, command, tmp_path / "p.hex")
        assert code == 1, (command, out, err)
        assert message in err + out


def test_a_debug_file_left_from_another_assembly_is_refused(tmp_path, capsys):
    """A debug file that no longer fits its image (here: copied back after a new
    assembly) is refused; trusting it would take the new program's halt for the
    old one's pause."""
    source = write(tmp_path, "q.asm", "nop\nnop\npause\nhalt\n")
    assert cli(capsys, "asm", source)[0] == 0
    old_debug = (tmp_path / "q.dbg.json").read_bytes()
    write(tmp_path, "q.asm", "nop\nnop\nhalt\nli r0, 0x55\nout 1, r0\nhalt\n")
    assert cli(capsys, "asm", source)[0] == 0
    (tmp_path / "q.dbg.json").write_bytes(old_debug)
    for command in ("run", "dis"):
        code, _out, err = cli(capsys, command, tmp_path / "q.hex")
        assert code == 1
        assert "this debug file was written for another image than" in err
    assert cli(capsys, "asm", source, "-o", tmp_path / "q.bin")[0] == 0
    code, out, _err = cli(capsys, "run", tmp_path / "q.bin", "--json")
    assert code == 0 and json.loads(out)["pc"] == 3      # the same debug file fits the raw binary


def test_asm_no_debug_removes_an_older_debug_file(tmp_path, capsys):
    """Before the fix ``asm --no-debug`` left the old debug file, which then described another image."""
    source = write(tmp_path, "q.asm", "nop\nnop\npause\nhalt\n")
    assert cli(capsys, "asm", source)[0] == 0
    write(tmp_path, "q.asm", "nop\nnop\nhalt\nli r0, 0x55\nout 1, r0\nhalt\n")
    code, _out, err = cli(capsys, "asm", source, "--no-debug")
    assert code == 0 and "q.dbg.json: removed" in err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["q.asm", "q.hex"]


@pytest.mark.parametrize("text, message", [
    ('{"format": "relaybench-debug", \n', "not valid JSON"),
    ("[" * 100_000 + "]" * 100_000, "nested too deeply"),
], ids=["cut off after a newline", "nested too deeply"])
def test_a_broken_debug_file_is_one_line_not_a_traceback(tmp_path, capsys, text, message):
    source = write(tmp_path, "p.asm", "halt\n")
    assert cli(capsys, "asm", source)[0] == 0
    (tmp_path / "p.dbg.json").write_text(text)
    for command in ("run", "dis", "test"):
        code, out, err = cli(capsys, command, tmp_path / "p.hex")
        assert code == 1 and message in err + out and "Traceback" not in err


def test_deeply_nested_machine_file_and_snapshot_are_refused(tmp_path, capsys):
    deep = write(tmp_path, "deep.toml", "a = " + "[" * 100_000 + "]" * 100_000 + "\n")
    code, _out, err = cli(capsys, "isa", "--machine", deep)
    assert code == 1 and "nested too deeply" in err
    snapshot = write(tmp_path, "deep.json", "[" * 100_000 + "]" * 100_000)
    with pytest.raises(emu.MachineError, match="not a relaybench snapshot"):
        emu.Emulator.restore(snapshot, emu.load_machine("ref8"))


REF8_TOML = (ROOT / "emu" / "machines" / "ref8.toml").read_text(encoding="utf-8")


@pytest.mark.parametrize("old, new, line, message", [
    ("rated_operations = 10_000_000", "rated_operations = -5", 499,
     "[wear]: 'rated_operations' must be a positive number of operations, not -5"),
    ("supply_v = 24.0", "supply_v = -24", 460, "[timing]: 'supply_v' must be above zero, not -24"),
    ("ms = 40", "ms = inf", 85, "[[clock.phase]] 2 ('B'): 'ms' must be a positive number of milliseconds, "
                                "not inf"),
], ids=["wear", "timing", "clock phase"])
def test_a_bad_section_stops_every_command_at_load(capsys, tmp_path, old, new, line, message):
    """Not only `clock` or `--wear`: every command loads the machine, and the load refuses it."""
    assert REF8_TOML.count(old) == 1
    machine = write(tmp_path, "m.toml", REF8_TOML.replace(old, new))
    prog = write(tmp_path, "p.asm", GOOD)
    for command in (["run", prog], ["isa"], ["test", prog], ["asm", prog]):
        code, out, err = cli(capsys, *command, "--machine", machine)
        assert code == 1 and out == "", command
        assert err == f"{machine}:{line}: error: {message}\n", command


def test_a_broken_toml_machine_file_points_at_the_column(capsys, tmp_path):
    machine = write(tmp_path, "m.toml", '[machine]\nname = "m\n')
    code, _out, err = cli(capsys, "isa", "--machine", machine)
    assert code == 1
    assert err == (f"{machine}:2:10: error: not valid TOML: Illegal character '\\n'\n"
                   f'    name = "m\n'
                   f"             ^\n")


def test_a_program_error_keeps_the_assemblers_located_diagnostics(tmp_path):
    from emu.runs import ProgramError, load_program
    program = write(tmp_path, "typos.asm", "li r9, 3\n  jmp lop\n")
    with pytest.raises(ProgramError) as caught:
        load_program(program, emu.load_machine("ref8"))
    found = [(d.file, d.line, d.column) for d in caught.value.diagnostics]
    assert found == [(str(program), 1, 4), (str(program), 2, 7)]
    assert (caught.value.file, caught.value.line, caught.value.column) == (str(program), 1, 4)


def test_every_user_facing_error_is_one_family():
    import asm
    from emu.debugger import DebugError
    from emu.errors import RelaybenchError
    from emu.runs import ProgramError
    from asm import EvalError, FormError
    for error in (emu.MachineError, asm.AsmError, ProgramError, DebugError, EvalError, FormError):
        assert issubclass(error, RelaybenchError), error


@pytest.mark.parametrize("damage, message", [
    (lambda s: s.update(slots=list(s["slots"])), "damaged snapshot ('slots' must be a table, not a list)"),
    (lambda s: s["ports"].update(unmapped=[["in", 5, -3]]),
     "damaged snapshot (ports: 'unmapped' must be a list of [\"in\"|\"out\", port, count] with a count of "
     "1 or more, not a list holding ['in', 5, -3])"),
], ids=["slots as a list", "negative count of unmapped reads"])
def test_a_damaged_snapshot_is_a_machine_error(tmp_path, damage, message):
    machine = emu.load_machine("ref8")
    state = emu.Emulator(machine).snapshot_state()
    damage(state)
    path = tmp_path / "s.json"
    path.write_text(json.dumps(state))
    with pytest.raises(emu.MachineError) as caught:
        emu.Emulator.restore(path, machine)
    assert str(caught.value) == f"{path}: error: {message}"
