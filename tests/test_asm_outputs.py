"""Listing and debug file contents, with real values."""

import json
import zlib
from pathlib import Path

import pytest

import asm
import emu

HERE = Path(__file__).parent
REF8 = emu.load_machine("ref8")
ACC12 = emu.load_machine(HERE / "machines" / "acc12.toml")
FIXTURES = HERE / "asm_fixtures"

SOURCE = """; greet
start:  li r0, 'h'
        out 0, r0
        pause
        .expect out == "h"
        jmp start
msg:    .byte "hello", 0
"""


def test_listing_rows():
    program = asm.assemble_text(SOURCE, REF8, filename="greet.asm")
    lines = program.listing_text().splitlines()
    assert lines[0] == "; listing of greet.asm for ref8"
    # ref8 cycles: one fetch step plus the instruction's own steps (ref8.toml)
    assert lines[3] == "  0000  18 68          2  greet.asm:2    start:  li r0, 'h'"
    assert lines[4] == "  0002  58 00          3  greet.asm:3            out 0, r0"
    assert lines[5] == "  0004  01             2  greet.asm:4            pause"
    assert lines[7] == "  0005  08 00 00       3  greet.asm:6            jmp start"
    assert lines[8] == "  0008  68 65 6C 6C       greet.asm:7    msg:    .byte \"hello\", 0"
    assert lines[9] == "  000C  6F 00"
    assert lines[2].strip() == "greet.asm:1    ; greet"
    assert lines[-2:] == [";   msg              0x0008  label", ";   start            0x0000  label"]


def test_listing_on_acc12_uses_three_hex_digits():
    program = asm.assemble_text("go here\nhere: stop\n", ACC12, filename="a.asm")
    lines = program.listing_text().splitlines()
    assert lines[2] == "  00  601                2  a.asm:1        go here"
    assert lines[3] == "  01  F00                2  a.asm:2        here: stop"


def test_write_listing(tmp_path):
    program = asm.assemble_text(SOURCE, REF8, filename="greet.asm")
    asm.write_listing(program, tmp_path / "greet.lst")
    assert (tmp_path / "greet.lst").read_text() == program.listing_text()


def test_debug_info_contents():
    program = asm.assemble_text(SOURCE, REF8, filename="greet.asm")
    info = program.debug_info()
    assert info == {
        "format": "relaybench-debug", "version": 1, "machine": "ref8", "machine_file": None, "word_bits": 8,
        "files": ["greet.asm"],
        "labels": {"start": 0, "msg": 8},
        "constants": {},
        "lines": [
            {"address": 0, "length": 2, "file": 0, "line": 2, "kind": "code", "cycles": 2},
            {"address": 2, "length": 2, "file": 0, "line": 3, "kind": "code", "cycles": 3},
            {"address": 4, "length": 1, "file": 0, "line": 4, "kind": "code", "cycles": 2},
            {"address": 5, "length": 3, "file": 0, "line": 6, "kind": "code", "cycles": 3},
            {"address": 8, "length": 6, "file": 0, "line": 7, "kind": "data", "cycles": None},
        ],
        "image_crc32": _crc32_of_memory(program.flat()),
        "pauses": [4],
        "expects": [{"address": 4, "file": 0, "line": 5, "item": "out", "memory_address": None,
                     "op": "==", "value": "h", "text": 'out == "h"'}],
    }
    json.dumps(info)


def _crc32_of_memory(words: list[int]) -> int:
    """The image fingerprint computed apart, with zlib's CRC-32 (ISO 3309 / ITU-T V.42 polynomial)."""
    while words and words[-1] == 0:
        words = words[:-1]
    return zlib.crc32(bytes(b for w in words for b in (w & 0xFF, w >> 8)))


def test_debug_file_round_trip_with_includes(tmp_path):
    program = asm.assemble_file(FIXTURES / "blink.asm", REF8)
    out = tmp_path / "blink.hex"
    asm.write_intel_hex(program, out)
    debug_path = asm.debug_path_for(out)
    assert debug_path == tmp_path / "blink.dbg.json"
    asm.write_debug(program, debug_path)
    stored = json.loads(debug_path.read_text())
    assert all(not Path(f).is_absolute() for f in stored["files"])
    info = asm.read_debug(debug_path)
    assert [Path(f).resolve() for f in info.files] == [(FIXTURES / n).resolve() for n in ("blink.asm", "consts.inc")]
    # word counts from ref8.toml: li rd 2, li sp 3, out 2, call 3, cmp imm 2, jnz 3, halt 1, inc 1, ret 1
    assert info.labels == program.labels == {"start": 0, "again": 5, "bump": 17, "stack_top": 27}
    assert info.constants == {"START": 1, "STOP": 4, "LAMPS": 1}
    assert info.pauses == program.pauses == [15]
    assert [(e.item, e.op, e.value, e.address) for e in info.expects] == [
        ("r0", "==", 4, 15), ("lamps", "==", 3, 15), ("z", "==", 1, 15)]
    assert Path(info.source_map[6][0]).name == "blink.asm" and info.source_map[6][1] == 5
    assert info.symbols == program.symbols
    main = info.files[0]
    starts = {(e.file, e.line): e.address for e in info.lines}
    assert starts[(main, 5)] == 5 and starts[(main, 3)] == 0


@pytest.mark.parametrize("name", ["prog.hex", "prog.bin", "dir/prog.hex"])
def test_debug_path_naming(name):
    assert asm.debug_path_for(name) == Path(name).with_name("prog.dbg.json")


@pytest.mark.parametrize("content, message", [
    ("[1, 2", "not valid JSON"),
    ('{"format": "other"}', "not a relaybench debug file"),
    ('{"format": "relaybench-debug", "version": 9}', "'version' must be 1, not 9"),
    ('{"format": "relaybench-debug", "version": 1, "files": "x"}',
     "'files' must be a list of file names, not a string"),
    ('{"format": "relaybench-debug", "version": 1, "files": [], "labels": {"a": "b"}}',
     "top level: 'a' must be an integer \\(the value of the name\\), not 'b'"),
])
def test_bad_debug_files(content, message, tmp_path):
    path = tmp_path / "p.dbg.json"
    path.write_text(content)
    with pytest.raises(asm.AsmError, match=message):
        asm.read_debug(path)


@pytest.mark.parametrize("bad", ["listing", "image"])
def test_asm_writes_no_file_when_one_output_cannot_be_written(tmp_path, capsys, bad):
    """Before the fix ``--listing /tmp`` exited 1 and left the image and the debug file."""
    from cli_support import cli
    source = tmp_path / "p.asm"
    source.write_text("  nop\n  halt\n")
    (tmp_path / "taken").mkdir()
    options = {"listing": ["--listing", tmp_path / "taken"], "image": ["-o", tmp_path / "taken", "--listing"]}
    code, _out, err = cli(capsys, "asm", source, *options[bad])
    assert code == 1
    assert "cannot write" in err and "no file was written" in err
    assert sorted(p.name for p in tmp_path.iterdir()) == ["p.asm", "taken"]
    assert list((tmp_path / "taken").iterdir()) == []


def test_asm_replaces_all_outputs_together(tmp_path, capsys):
    from cli_support import cli
    source = tmp_path / "p.asm"
    source.write_text("  nop\n  halt\n")
    assert cli(capsys, "asm", source, "--listing")[0] == 0
    assert sorted(p.name for p in tmp_path.iterdir()) == ["p.asm", "p.dbg.json", "p.hex", "p.lst"]
    assert (tmp_path / "p.hex").read_text() == ":020000000001FD\n:00000001FF\n"   # Intel HEX checksum by hand
