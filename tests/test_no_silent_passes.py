"""Damaged or incomplete input never passes: named files keep their kind, images need
their debug file, warnings and programs without checks fail, short input is reported."""

from __future__ import annotations

import json

import pytest

import asm
from cli_support import cli, write
from emu import load_machine

REF8 = load_machine("ref8")

CHECKED = "start:  li r0, 5   ; five\n        halt\n        .expect r0 == 5\n"


@pytest.mark.parametrize("damage, line, column, message", [
    (lambda data: data + b"\x1a", 4, 1, "unexpected character '\\x1a'"),
    (lambda data: data.replace(b"five", b"f\xe4nf"), 1, 23, "byte 0xE4 is not UTF-8 text"),
], ids=["0x1A at the end", "Latin-1 a-umlaut in a comment"])
def test_a_named_source_with_a_stray_byte_is_a_located_error(capsys, tmp_path, damage, line, column, message):
    """Before the fix the content sniffing took such a file for a raw binary and ran it."""
    path = tmp_path / "prog.asm"
    path.write_bytes(damage(CHECKED.encode()))
    code, out, _err = cli(capsys, "test", path)
    assert code == 1
    assert out.startswith(f"FAIL  {path}: cannot run it")
    assert f"{path}:{line}:{column}: error: {message}" in out
    assert out.splitlines()[3].strip() == "^"


def test_a_named_hex_file_with_a_nul_byte_is_a_located_error(capsys, tmp_path):
    """Before the fix a NUL made the file a raw binary, run to the cycle limit."""
    source = write(tmp_path, "prog.asm", CHECKED)
    assert cli(capsys, "asm", source)[0] == 0
    image = tmp_path / "prog.hex"
    data = bytearray(image.read_bytes())
    data[5] = 0
    image.write_bytes(bytes(data))
    code, _out, err = cli(capsys, "run", image)
    assert code == 1
    assert err.startswith(f"{image}:1:6: error: '\\x00' is not a hex digit")


@pytest.mark.parametrize("name, content, kind", [
    ("p.asm", b"  nop\n\x1a", "source"),
    ("p.inc", b"; caf\xe9\n", "source"),
    ("p.hex", b":00\x0000001FF\n", "hex"),
    ("p.ihx", b"\xff\xfe", "hex"),
    ("p.img", b"  nop\n\x1a", "binary"),
])
def test_the_name_settles_the_kind_before_the_content(tmp_path, name, content, kind):
    path = tmp_path / name
    path.write_bytes(content)
    assert asm.sniff(path) == kind


def _image_without_debug_file(capsys, tmp_path):
    source = write(tmp_path, "prog.asm", "        li r0, 1\n        pause\n        .expect r0 == 1\n"
                                         "        li r0, 2\n        halt\n        .expect r0 == 2\n")
    assert cli(capsys, "asm", source, "--no-debug")[0] == 0
    return tmp_path / "prog.hex"


def test_test_refuses_an_image_without_its_debug_file(capsys, tmp_path):
    """Before the fix it ran to the first pause, took it for the end and passed with 0 checks."""
    image = _image_without_debug_file(capsys, tmp_path)
    code, out, _err = cli(capsys, "test", image)
    assert code == 1
    assert out.startswith(f"FAIL  {image}: cannot run it")
    assert "no debug file beside the image" in out and "pauses cannot be told from halts" in out


def test_run_says_an_image_without_its_debug_file_may_have_stopped_at_a_pause(capsys, tmp_path):
    image = _image_without_debug_file(capsys, tmp_path)
    code, out, _err = cli(capsys, "run", image, "--json")
    facts = json.loads(out)
    assert code == 0 and facts["pc"] == 3            # stopped at the pause, two words in
    assert facts["warnings"] == [f"no debug file beside the image (looked for {tmp_path / 'prog.dbg.json'}): "
                                 f"a pause cannot be told from a halt, so this halt may be a pause"]
    code, text, _err = cli(capsys, "run", image)
    assert "this halt may be a pause" in text


@pytest.mark.parametrize("body, warning", [
    ("        .byte 0x98\n", "undefined opcode at 0x0000 ran as a no-op"),
    ("        out 9, r0\n", "1 write to port 9, which has no device"),
    ("        in r1, 1\n", "1 read past the end of the input stream (0 bytes), answered with 0"),
], ids=["undefined opcode", "port with no device", "read past the input"])
def test_a_run_with_a_warning_fails_its_test_and_shows_it(capsys, tmp_path, body, warning):
    """Before the fix these programs passed and the warnings were not shown."""
    prog = write(tmp_path, "w.asm", body + "        halt\n        .expect r0 == 0\n")
    code, out, _err = cli(capsys, "test", prog)
    assert code == 1
    assert out.splitlines()[:2] == [f"FAIL  {prog}  (1 check at 1 halt, {out.split('halt, ')[1].split(')')[0]})",
                                    f"      warning: {warning}"]
    code, out, _err = cli(capsys, "test", prog, "--json")
    assert json.loads(out)["programs"][0]["warnings"] == [warning]


def test_a_program_without_checks_fails_with_the_reason(capsys, tmp_path):
    prog = write(tmp_path, "n.asm", "        li r0, 1\n        halt\n")
    code, out, _err = cli(capsys, "test", prog)
    assert code == 1
    assert out.splitlines()[1] == "      the program has no .expect checks, so nothing was tested"


def test_reading_past_the_input_gives_0_and_is_reported_by_run(capsys, tmp_path):
    """The value stays 0, as the reference says for an exhausted stream; the run now says so."""
    prog = write(tmp_path, "r.asm", "        in r0, 1\n        in r1, 1\n        in r2, 1\n        halt\n")
    code, out, _err = cli(capsys, "run", prog, "--input-text", "A", "--json")
    facts = json.loads(out)
    assert code == 0
    assert [facts["registers"][r] for r in ("r0", "r1", "r2")] == [ord("A"), 0, 0]
    assert facts["warnings"] == ["2 reads past the end of the input stream (1 byte), answered with 0"]
    code, text, _err = cli(capsys, "run", prog, "--input-text", "A")
    assert "    - 2 reads past the end of the input stream (1 byte), answered with 0" in text.splitlines()


def test_the_read_past_the_input_count_survives_a_snapshot():
    from emu import Emulator
    machine = Emulator(REF8)
    machine.ports.read(1)
    other = Emulator(REF8)
    other.ports.restore(machine.ports.state())
    assert other.ports.reads_past_end == 1
