"""Image files: raw binary and Intel HEX, both ways, and telling them apart.

Both formats hold bytes, the machine holds words. The rule, kept here and
only here: a machine whose words have at most 8 bits stores one byte per
word; a wider word takes two bytes, low byte first, at byte address
2 × word address.

Intel HEX follows the Intel Hexadecimal Object File Format Specification
(Rev. A, 1988): data records (type 00) of 16 bytes, an end-of-file record
(01), and an extended linear address record (04) before data whose byte
address needs more than 16 bits. Readers also accept extended segment
address records (02) and ignore start-address records (03, 05).
"""

from __future__ import annotations

import os
import re
from pathlib import Path

from emu.description import Machine

from ._errors import AsmError, Diagnostic, file_error
from ._files import write_atomic

__all__ = [
    "bytes_per_word", "image_bytes", "words_to_bytes", "bytes_to_words", "write_binary", "write_intel_hex",
    "intel_hex_text", "read_image", "parse_intel_hex", "sniff", "RECORD_BYTES",
]

RECORD_BYTES = 16
_DATA, _END, _SEGMENT, _START_SEGMENT, _LINEAR, _START_LINEAR = range(6)


def bytes_per_word(machine: Machine) -> int:
    return 1 if machine.data_bits <= 8 else 2


def words_to_bytes(words, machine: Machine) -> bytes:
    if bytes_per_word(machine) == 1:
        return bytes(words)
    out = bytearray()
    for word in words:
        out += bytes((word & 0xFF, word >> 8))
    return bytes(out)


def bytes_to_words(data: bytes, machine: Machine) -> list[int]:
    """Bytes → words; the caller has checked that a two-byte machine gets whole words."""
    if bytes_per_word(machine) == 1:
        return list(data)
    return [data[i] | data[i + 1] << 8 for i in range(0, len(data), 2)]


# ----- writing ---------------------------------------------------------------

def image_bytes(program, kind: str) -> bytes:
    """The content of an image file: ``kind`` is ``"hex"`` (Intel HEX) or ``"bin"``
    (the words from address 0 to the last one set, gaps as zeros)."""
    if kind == "bin":
        return words_to_bytes(program.flat(), program.machine)
    scale = bytes_per_word(program.machine)
    segments = [(start * scale, words_to_bytes(words, program.machine)) for start, words in program.segments]
    return intel_hex_text(segments).encode("ascii")


def write_binary(program, path) -> None:
    write_atomic(path, image_bytes(program, "bin"))


def write_intel_hex(program, path) -> None:
    write_atomic(path, image_bytes(program, "hex"))


def _record(kind: int, address: int, data: bytes) -> str:
    body = bytes((len(data), address >> 8 & 0xFF, address & 0xFF, kind)) + data
    checksum = -sum(body) & 0xFF
    return ":" + (body + bytes((checksum,))).hex().upper()


def intel_hex_text(segments: list[tuple[int, bytes]]) -> str:
    """Byte segments (start, bytes) → Intel HEX text ending in an EOF record.

    No record crosses a 64 KiB boundary, so every data record's 16-bit
    address plus the current upper address is the true byte address.
    """
    lines, upper = [], 0
    for start, data in segments:
        offset = 0
        while offset < len(data):
            address = start + offset
            if address >> 16 != upper:
                upper = address >> 16
                lines.append(_record(_LINEAR, 0, upper.to_bytes(2, "big")))
            room = min(RECORD_BYTES, 0x10000 - (address & 0xFFFF), len(data) - offset)
            lines.append(_record(_DATA, address & 0xFFFF, data[offset:offset + room]))
            offset += room
    lines.append(_record(_END, 0, b""))
    return "\n".join(lines) + "\n"


# ----- reading ---------------------------------------------------------------

_HEX_DIGITS = set("0123456789abcdefABCDEF")


def parse_intel_hex(text: str, filename: str = "<hex>") -> list[tuple[int, bytes]]:
    """Intel HEX text → byte segments (start, bytes) in file order; every
    problem is reported with its line and column."""
    return [(address, data) for address, data, _line, _column in _hex_chunks(text, filename)]


def _hex_chunks(text: str, filename: str):
    """The data records as (byte address, bytes, line number, column)."""
    problems, chunks = [], []
    upper = 0
    ended = False
    lines = text.split("\n")

    def problem(number, column, message):
        problems.append(Diagnostic(filename, number, column, message, lines[number - 1]))

    for number, raw in enumerate(lines, 1):
        line = raw.rstrip("\r")
        stripped = line.strip()
        if not stripped or ended:
            continue
        column = line.index(stripped[0]) + 1
        if stripped[0] != ":":
            problem(number, column, "a record must start with ':'")
            continue
        digits = stripped[1:]
        bad = next((i for i, ch in enumerate(digits) if ch not in _HEX_DIGITS), None)
        if bad is not None:
            problem(number, column + 1 + bad, f"{digits[bad]!r} is not a hex digit")
            continue
        if len(digits) % 2 or len(digits) < 10:
            problem(number, column, f"a record needs an even number of hex digits, at least 10 "
                                    f"(length, address, type, checksum); this one has {len(digits)}")
            continue
        record = bytes.fromhex(digits)
        count, address, kind, data = record[0], record[1] << 8 | record[2], record[3], record[4:-1]
        if len(data) != count:
            problem(number, column + 1, f"the record length says {count} data bytes but the record "
                                        f"holds {len(data)}")
            continue
        if sum(record) & 0xFF:
            expected = -sum(record[:-1]) & 0xFF
            problem(number, column + len(digits) - 1,
                    f"bad checksum {record[-1]:02X} (the record's bytes need {expected:02X})")
            continue
        if kind == _DATA:
            chunks.append((upper + address, data, number, column))
        elif kind == _END:
            ended = True
        elif kind in (_SEGMENT, _LINEAR) and count == 2:
            value = data[0] << 8 | data[1]
            upper = value << 4 if kind == _SEGMENT else value << 16
        elif kind in (_START_SEGMENT, _START_LINEAR) and count == 4:
            pass
        else:
            problem(number, column + 7, f"unknown record type {kind:02X} with {count} data bytes")
    if not ended and not problems:
        problems.append(Diagnostic(filename, None, None, "no end-of-file record (:00000001FF)"))
    if problems:
        raise AsmError(problems)
    return chunks


def read_image(path, machine: Machine) -> list[tuple[int, list[int]]]:
    """An image file (Intel HEX or raw binary, told apart by ``sniff``) → word segments."""
    path = os.fspath(path)
    kind = sniff(path)
    if kind == "source":
        raise file_error(path, "this is assembly source, not an image; assemble it first")
    data = Path(path).read_bytes()
    scale = bytes_per_word(machine)
    if kind == "binary":
        if len(data) % scale:
            raise file_error(path, f"{len(data)} bytes is not a whole number of {scale}-byte words")
        words = bytes_to_words(data, machine)
        if len(words) > machine.memory_words:
            raise file_error(path, f"the image has {len(words)} words but the memory of {machine.name} "
                                   f"holds {machine.memory_words}")
        _check_width(words, 0, machine, path, None)
        return [(0, words)] if words else []
    text = data.decode("latin-1")  # every byte a character: a stray one is "not a hex digit", located
    chunks = _hex_chunks(text, path)
    lines = text.split("\n")
    image: dict[int, int] = {}
    for byte_address, data, number, column in chunks:
        where = (number, column, lines[number - 1])
        if byte_address % scale or len(data) % scale:
            _fail(path, where, f"a record must hold whole {scale}-byte words at an even byte address")
        start = byte_address // scale
        words = bytes_to_words(data, machine)
        if start + len(words) > machine.memory_words:
            last = start + len(words) - 1
            _fail(path, where, f"word address {last:#x} is past the end of the memory of {machine.name} "
                               f"(last address {machine.memory_words - 1:#x})")
        _check_width(words, start, machine, path, where)
        for i, word in enumerate(words):
            image[start + i] = word
    return segments_of(image)


def _fail(path, where, message):
    number, column, line = where
    raise AsmError([Diagnostic(path, number, column, message, line)])


def _check_width(words, start, machine: Machine, path, where):
    for i, word in enumerate(words):
        if word > machine.data_mask:
            message = (f"the word at address {start + i:#x} is {word:#x}, wider than the "
                       f"{machine.data_bits} bits of {machine.name}")
            if where is None:
                raise file_error(path, message)
            _fail(path, where, message)


def segments_of(image: dict[int, int]) -> list[tuple[int, list[int]]]:
    segments, previous = [], None
    for address in sorted(image):
        if previous is None or address != previous + 1:
            segments.append((address, []))
        segments[-1][1].append(image[address])
        previous = address
    return segments


# ----- telling formats apart -------------------------------------------------

_RECORD = re.compile(r"\s*:")
_SUFFIX_KINDS = {".asm": "source", ".inc": "source", ".hex": "hex", ".ihx": "hex", ".bin": "binary"}
"""File names that settle the kind: a stray byte must never turn a named file into another kind."""
_CONTROL = re.compile(r"[\x00-\x08\x0b\x0e-\x1f\x7f]")


def sniff(path) -> str:
    """``"source"``, ``"hex"`` or ``"binary"``: by the name first, else by the content.

    A ``.asm``/``.inc`` name means source, ``.hex``/``.ihx`` Intel HEX and
    ``.bin`` a raw binary, whatever the bytes: one damaged byte in a named
    file must give a located error from the reader of that kind, not a run
    of the file as something else. Other names are judged by content: text
    whose every non-blank line starts with ':' is Intel HEX (no assembly
    line can start so); bytes that are not UTF-8 text, or text with control
    characters, are a raw binary; other text is source.
    """
    path = os.fspath(path)
    try:
        data = Path(path).read_bytes()
    except OSError as exc:
        raise file_error(path, f"cannot read ({exc.strerror or exc})") from None
    named = _SUFFIX_KINDS.get(Path(path).suffix.lower())
    if named is not None:
        return named
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError:
        return "binary"
    if _CONTROL.search(text):
        return "binary"
    lines = [line for line in text.split("\n") if line.strip()]
    if lines and all(_RECORD.match(line) for line in lines):
        return "hex"
    return "source"
