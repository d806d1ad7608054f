"""``relaybench asm``, ``dis`` and ``isa`` on both machines."""

from __future__ import annotations

import json
import sys
import tomllib

import pytest
from intelhex import IntelHex

import asm
import emu
from emu.cli import main as relaybench
from emu.commands.isa import encoding_words

from cli_support import ACC12, PROGRAMS, ROOT, cli, write

SOURCE = """\
start:  li r0, 10
again:  dec r0
        jnz again
        call blink
        pause
        .expect r0 == 0
        halt
blink:  out 1, r0
        ret
text:   .byte "ok", 0
"""

MACHINE_FILES = {"ref8": ROOT / "emu" / "machines" / "ref8.toml", "acc12": ROOT / "tests" / "machines" / "acc12.toml"}


@pytest.fixture
def source(tmp_path):
    return write(tmp_path, "blink.asm", SOURCE)


def test_asm_default_outputs(capsys, source):
    code, out, err = cli(capsys, "asm", source)
    assert code == 0 and err == ""
    image, debug = source.with_suffix(".hex"), source.with_name("blink.dbg.json")
    assert out.strip() == f"{source}: 17 words in 1 segment -> {image}, {debug}"
    program = asm.assemble_file(source, emu.load_machine("ref8"))
    # the Intel HEX file, read by the intelhex package from PyPI, holds the program's bytes
    hexfile = IntelHex(str(image))
    assert hexfile.tobinarray(start=0, size=17).tolist() == program.flat()
    info = json.loads(debug.read_text())
    assert info["labels"]["blink"] == 11 and info["pauses"] == [9]
    # nothing left behind by the atomic writes
    assert sorted(p.name for p in source.parent.iterdir()) == ["blink.asm", "blink.dbg.json", "blink.hex"]


def test_asm_binary_and_listing(capsys, source, tmp_path):
    out_path = tmp_path / "out" / "b.bin"
    out_path.parent.mkdir()
    code, out, _ = cli(capsys, "asm", source, "-o", out_path, "--listing")
    assert code == 0
    program = asm.assemble_file(source, emu.load_machine("ref8"))
    assert out_path.read_bytes() == bytes(program.flat())
    assert (tmp_path / "out" / "b.dbg.json").exists()
    listing = source.with_suffix(".lst").read_text()
    assert "  0000  18 0A          2" in listing     # li: fetch + one step (the ref8 file)
    assert "blink" in listing


def test_asm_listing_to_stdout_and_check_only(capsys, source):
    code, out, _ = cli(capsys, "asm", source, "--check")
    assert code == 0 and out.strip() == f"{source}: 17 words in 1 segment, no errors"
    assert sorted(p.name for p in source.parent.iterdir()) == ["blink.asm"]
    code, out, _ = cli(capsys, "asm", source, "--listing", "-", "--no-debug")
    assert code == 0 and out.startswith(f"; listing of {source} for ref8")


def test_asm_refuses_to_overwrite_the_source(capsys, source):
    code, _out, err = cli(capsys, "asm", source, "-o", source)
    assert code == 2 and "would overwrite the source" in err


def test_asm_errors_exit_1(capsys, tmp_path):
    bad = write(tmp_path, "bad.asm", "li r0, 300\nlop: jmp loop\n")
    code, _out, err = cli(capsys, "asm", bad)
    assert code == 1
    assert f"{bad}:1:8: error: 300 does not fit imm8 (-128…255)" in err
    assert not (tmp_path / "bad.hex").exists()


def test_dis_uses_the_debug_file(capsys, source):
    cli(capsys, "asm", source)
    code, out, _ = cli(capsys, "dis", source.with_suffix(".hex"))
    assert code == 0
    assert "blink:" in out and "call blink" in out and "pause" in out
    code, plain, _ = cli(capsys, "dis", source.with_suffix(".hex"), "--no-debug")
    assert "blink:" not in plain and "call 0x000B" in plain


@pytest.mark.parametrize("machine", ["ref8", ACC12])
def test_dis_text_assembles_to_the_same_image(capsys, tmp_path, machine):
    m = emu.load_machine(machine)
    text = SOURCE if machine == "ref8" else "top: set 3\nplus one\ngozero top\nstop\none: .word 1\n"
    prog = write(tmp_path, "p.asm", text)
    assert cli(capsys, "asm", prog, "--machine", machine)[0] == 0
    out_file = tmp_path / "p.dis.asm"
    code, out, _ = cli(capsys, "dis", prog.with_suffix(".hex"), "--machine", machine, "-o", out_file)
    assert code == 0 and out == ""
    again = asm.assemble_file(out_file, m)
    assert again.image() == asm.assemble_file(prog, m).image()


def test_dis_refuses_source(capsys, source):
    code, _out, err = cli(capsys, "dis", source)
    assert code == 1 and "dis reads images" in err


@pytest.mark.parametrize("name", ["ref8", "acc12"])
def test_isa_encodings_match_the_machine_file(name):
    """The table is rebuilt from parsed fields; it must read as the file does."""
    machine = emu.load_machine(MACHINE_FILES[name])
    raw = tomllib.loads(MACHINE_FILES[name].read_text())["instruction"]
    assert len(raw) == len(machine.instructions)
    for spec, ins in zip(raw, machine.instructions):
        written = [" ".join(w.split()) for w in spec["encoding"]]
        assert [_merge_bits(w) for w in encoding_words(ins, machine)] == [_merge_bits(w) for w in written]


def _merge_bits(word: str) -> str:
    """'0001 0 rd' and '00010 rd' are the same word: join neighbouring bit groups."""
    out = []
    for token in word.split():
        if out and set(token) <= {"0", "1"} and set(out[-1]) <= {"0", "1"}:
            out[-1] += token
        else:
            out.append(token)
    return " ".join(out)


@pytest.mark.parametrize("name", ["ref8", "acc12"])
def test_isa_json(capsys, name):
    code, out, _ = cli(capsys, "isa", "--json", "--machine", MACHINE_FILES[name])
    assert code == 0
    data = json.loads(out)
    machine = emu.load_machine(MACHINE_FILES[name])
    raw = tomllib.loads(MACHINE_FILES[name].read_text())
    assert data["machine"] == name and len(data["instructions"]) == len(raw["instruction"])
    fetch_steps = len(raw["fetch"]["steps"])
    for entry, spec in zip(data["instructions"], raw["instruction"]):
        assert entry["cycles"] == fetch_steps + len(spec.get("steps", []))
        assert [s["text"] for s in entry["steps"]] == [s.strip() for s in spec.get("steps", [])]
    assert data["nominal_hz"] == {"ref8": 5.0, "acc12": 10.0}[name]   # ref8: ref8 reference, "Clock, halts and the panel"; acc12: its table
    assert machine.name == name


def test_isa_text_rows(capsys):
    code, out, _ = cli(capsys, "isa", "add", "call")
    assert code == 0
    assert "add rd, rs   10100000 | 00 rd rs                     3  z n c v" in out
    assert "call addr    00001001 | addr[7:0] | addr[15:8]       5  -" in out
    assert "   4  mem[sp - 1] <- hi(pc); sp <- sp - 1" in out
    assert "nop" not in out


def test_isa_brief_and_unknown(capsys):
    code, out, _ = cli(capsys, "isa", "--brief", "--machine", ACC12)
    assert code == 0 and "stop" in out and "halt" not in out.split("instruction")[-1].split()
    code, _out, err = cli(capsys, "isa", "frob")
    assert code == 2 and "ref8 has no instruction 'frob'" in err


def test_isa_python_source(capsys):
    """The printed source is valid Python with one fused function per non-halting form."""
    code, out, _ = cli(capsys, "isa", "--python")
    assert code == 0
    compile(out, "generated", "exec")
    raw = tomllib.loads(MACHINE_FILES["ref8"].read_text())
    for spec in raw["instruction"]:
        if "halt" in spec["steps"]:
            continue
        display = " ".join(spec["syntax"].replace(":reg", "").replace(":imm8", "").replace(":addr", "")
                           .replace(":port", "").split())
        cycles = len(raw["fetch"]["steps"]) + len(spec["steps"])
        assert f'"""{display} — {cycles} cycle' in out, display


def test_shipped_programs_assemble(capsys, tmp_path):
    for program in sorted(PROGRAMS.rglob("*.asm")):
        code, _out, err = cli(capsys, "asm", program, "--check")
        assert code == 0, err


def test_a_command_whose_module_cannot_be_imported_stops_the_program(monkeypatch):
    """A broken install must not look like a working command: the import error surfaces."""
    monkeypatch.setitem(sys.modules, "emu.commands.clock", None)  # import of it now fails
    with pytest.raises(ImportError, match="emu.commands.clock"):
        relaybench(["clock"])


def test_isa_shows_groups_flag_meanings_and_the_alu_operations(capsys):
    """What a programmer needs without the TOML: ref8's pair x, its four flag roles, and for
    each ALU operation the flags it sets (values from ref8.toml and the built-in table)."""
    code, out, _ = cli(capsys, "isa", "--brief")
    assert code == 0
    assert "register groups (most significant first): x = {r6, r7}" in out
    assert "flags: z (zero), n (negative), c (carry), v (overflow); carry is a borrow after dec, sub, sbc" in out
    assert "  adc(a, b) = a + b + carry, reads c: z = result[w-1:0] == 0; n = result[w-1]; c = result[w]; " \
           "v = ((a ^ result) & (b ^ result))[w-1]" in out
    alu4 = str(ROOT / "tests" / "machines" / "alu4.toml")
    code, out, _ = cli(capsys, "isa", "--json", "--machine", alu4)
    data = json.loads(out)
    assert data["flags"] == {"z": "zero", "c": "carry"} and data["groups"] == {}
    sub = next(op for op in data["alu"] if op["name"] == "sub")
    assert sub["sets"] == {"z": "result[w-1:0] == 0", "c": "result[w] ^ 1"}   # alu4's own sub: no borrow
    code, out, _ = cli(capsys, "isa", "--brief", "--machine", alu4)
    assert "flags: z (zero), c (carry)\n" in out   # its sub is not the built-in: no borrow note
