"""Raw binary and Intel HEX images, checked against the Intel specification
and the ``intelhex`` package from PyPI, and the format sniffer."""

import os
from pathlib import Path

import intelhex
import pytest
from hypothesis import given, settings, strategies as st

import asm
import emu
from asm import intel_hex_text, parse_intel_hex

HERE = Path(__file__).parent
REF8 = emu.load_machine("ref8")
ACC12 = emu.load_machine(HERE / "machines" / "acc12.toml")

PROGRAMS = {
    "ref8": (REF8, "start: li r0, 0x41\n out 0, r0\n halt\n .org 0x0100\n .byte \"relay\", 0xFF\n"
                   " .org 0x0200\n .zero 40\n .word start\n"),
    "acc12": (ACC12, "load n\n put 0\n stop\n.org 0x80\nn: .byte 0xFFF, 0x800, 7\n"),
}


def _image_bytes(program):
    """The program's words as the image byte rule says: 1 byte per word up to
    8 bits, else 2 bytes little-endian at 2 x the word address."""
    scale = 1 if program.machine.data_bits <= 8 else 2
    result = {}
    for address, word in program.image().items():
        for i in range(scale):
            result[address * scale + i] = (word >> (8 * i)) & 0xFF
    return result


# Worked records: the data record below is the example commonly quoted from the
# Intel Hexadecimal Object File Format Specification, Rev. A (1988); it, and the
# extended linear address record, are written here from memory. The EOF record
# ":00000001FF" is given literally by that specification.
@pytest.mark.parametrize("segments, expected", [
    ([(0x0100, bytes.fromhex("214601360121470136007EFE09D21901"))],
     ":10010000214601360121470136007EFE09D2190140\n:00000001FF\n"),
    ([], ":00000001FF\n"),
    ([(0x08000000, b"\x55")], ":020000040800F2\n:0100000055AA\n:00000001FF\n"),
])
def test_records_match_the_specification_examples(segments, expected):
    assert intel_hex_text(segments) == expected


def test_extended_segment_address_records_are_read():
    # type 02 holds a paragraph number: base = value x 16 (Intel HEX spec, Rev. A)
    assert parse_intel_hex(":020000021000EC\n:0100000055AA\n:00000001FF\n") == [(0x10000, b"\x55")]


def test_the_specification_record_reads_back():
    text = ":10010000214601360121470136007EFE09D2190140\n:00000001FF\n"
    assert parse_intel_hex(text) == [(0x100, bytes.fromhex("214601360121470136007EFE09D21901"))]


@pytest.mark.parametrize("name", PROGRAMS)
def test_intelhex_package_reads_our_files_as_the_raw_image(name, tmp_path):
    machine, source = PROGRAMS[name]
    program = asm.assemble_text(source, machine)
    asm.write_intel_hex(program, tmp_path / "p.hex")
    asm.write_binary(program, tmp_path / "p.bin")
    reference = intelhex.IntelHex(str(tmp_path / "p.hex"))
    assert reference.todict() == _image_bytes(program)
    raw = (tmp_path / "p.bin").read_bytes()
    assert bytes(reference.tobinarray(start=0, size=len(raw), pad=0)) == raw
    for line in (tmp_path / "p.hex").read_text().splitlines()[:-1]:
        assert int(line[1:3], 16) <= 16


@pytest.mark.parametrize("name", PROGRAMS)
def test_images_read_back_to_the_segments(name, tmp_path):
    machine, source = PROGRAMS[name]
    program = asm.assemble_text(source, machine)
    asm.write_intel_hex(program, tmp_path / "p.hex")
    asm.write_binary(program, tmp_path / "p.bin")
    assert asm.read_image(tmp_path / "p.hex", machine) == program.segments
    assert asm.read_image(tmp_path / "p.bin", machine) == [(0, program.flat())]


def test_acc12_words_take_two_bytes_little_endian(tmp_path):
    program = asm.assemble_text(".org 3\n.byte 0xABC\n", ACC12)
    asm.write_binary(program, tmp_path / "p.bin")
    assert (tmp_path / "p.bin").read_bytes() == bytes([0, 0, 0, 0, 0, 0, 0xBC, 0x0A])
    asm.write_intel_hex(program, tmp_path / "p.hex")
    assert (tmp_path / "p.hex").read_text().splitlines()[0] == ":02000600BC0A32"


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(st.integers(0, 0x2FFFF), st.binary(min_size=1, max_size=40)), max_size=5))
def test_hex_text_agrees_with_intelhex_for_any_bytes(chunks):
    image = {}
    for start, data in chunks:
        for i, b in enumerate(data):
            image[start + i] = b
    segments, previous = [], None
    for address in sorted(image):
        if previous is None or address != previous + 1:
            segments.append([address, bytearray()])
        segments[-1][1].append(image[address])
        previous = address
    text = intel_hex_text([(s, bytes(d)) for s, d in segments])
    reference = intelhex.IntelHex()
    reference.loadhex(__import__("io").StringIO(text))
    assert reference.todict() == image
    back = {}
    for start, data in parse_intel_hex(text):
        for i, b in enumerate(data):
            back[start + i] = b
    assert back == image


@pytest.mark.parametrize("text, line, column, message", [
    (":10010000214601360121470136007EFE09D2190141\n:00000001FF\n", 1, 42,
     "bad checksum 41 (the record's bytes need 40)"),
    (":02010021\n:00000001FF\n", 1, 1,
     "a record needs an even number of hex digits, at least 10 (length, address, type, checksum); this one has 8"),
    (":03010000214695\n:00000001FF\n", 1, 2, "the record length says 3 data bytes but the record holds 2"),
    (":02010000214G95\n:00000001FF\n", 1, 13, "'G' is not a hex digit"),
    ("  10010000\n:00000001FF\n", 1, 3, "a record must start with ':'"),
    (":0101000755A2\n:00000001FF\n", 1, 8, "unknown record type 07 with 1 data bytes"),
])
def test_hex_reading_errors_are_located(text, line, column, message, tmp_path):
    path = tmp_path / "bad.hex"
    path.write_text(text)
    with pytest.raises(asm.AsmError) as caught:
        asm.read_image(path, REF8)
    [d] = caught.value.diagnostics
    assert (d.line, d.column, d.message) == (line, column, message)


def test_hex_without_end_record(tmp_path):
    path = tmp_path / "p.hex"
    path.write_text(":0100000055AA\n")
    with pytest.raises(asm.AsmError, match="no end-of-file record"):
        asm.read_image(path, REF8)


def test_images_larger_than_memory(tmp_path):
    big = tmp_path / "big.bin"
    big.write_bytes(bytes(257 * 2))
    with pytest.raises(asm.AsmError, match="the image has 257 words but the memory of acc12 holds 256"):
        asm.read_image(big, ACC12)
    far = tmp_path / "far.hex"
    far.write_text(":020200000000FC\n:00000001FF\n")
    with pytest.raises(asm.AsmError) as caught:
        asm.read_image(far, ACC12)
    [d] = caught.value.diagnostics
    assert (d.line, d.message) == (1, "word address 0x100 is past the end of the memory of acc12 (last address 0xff)")


def test_words_wider_than_the_machine_are_refused(tmp_path):
    path = tmp_path / "wide.bin"
    path.write_bytes(bytes([0xFF, 0xFF]))
    with pytest.raises(asm.AsmError, match="is 0xffff, wider than the 12 bits of acc12"):
        asm.read_image(path, ACC12)


@pytest.mark.parametrize("name, content, kind", [
    ("p.hex", b":00000001FF\n", "hex"),
    ("anything", b"\r\n:0100000055AA\r\n:00000001FF\r\n", "hex"),
    ("p.hex", b":0100000055XX\n:00000001FF\n", "hex"),
    ("p.hex", b"  0100000055AA\n:00000001FF\n", "hex"),
    ("p.asm", b"start: li r0, 1\n  halt\n", "source"),
    ("p.txt", "; caf\u00e9\n  nop\n".encode(), "source"),
    ("p.img", bytes([0x18, 0x05, 0x01]), "binary"),
    ("p.img", bytes([0x80, 0xFF]), "binary"),
    ("p.bin", b"AB", "binary"),
    ("empty.asm", b"", "source"),
])
def test_sniff(name, content, kind, tmp_path):
    path = tmp_path / name
    path.write_bytes(content)
    assert asm.sniff(path) == kind


def test_reading_source_as_an_image_says_so(tmp_path):
    path = tmp_path / "p.asm"
    path.write_text("  nop\n")
    with pytest.raises(asm.AsmError, match="assembly source, not an image"):
        asm.read_image(path, REF8)


def test_outputs_are_written_atomically(tmp_path, monkeypatch):
    program = asm.assemble_text("  nop\n  halt\n", REF8)
    target = tmp_path / "p.bin"
    target.write_bytes(b"old")
    replaced = []
    real_replace = os.replace

    def spy(source, destination):
        replaced.append((Path(source).parent, Path(destination)))
        assert Path(destination).read_bytes() == b"old"
        real_replace(source, destination)

    monkeypatch.setattr(os, "replace", spy)
    asm.write_binary(program, target)
    assert replaced == [(tmp_path, target)]
    assert target.read_bytes() == bytes([0, 1])
    assert sorted(p.name for p in tmp_path.iterdir()) == ["p.bin"]


def test_writing_into_a_missing_folder_is_an_asm_error(tmp_path):
    program = asm.assemble_text("  nop\n", REF8)
    with pytest.raises(asm.AsmError, match="cannot write"):
        asm.write_intel_hex(program, tmp_path / "no" / "p.hex")
