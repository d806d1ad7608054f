"""Words back to assembly text, decoded with the machine description.

The output assembles again to the same words: every instruction is written
in one of the machine's forms, words that decode to nothing are written as
``.byte``, and labels from a debug file stand in for addresses where they
are known. Which operands are addresses is read from the micro-steps: a
field that reaches a memory address or the program counter is one.
"""

from __future__ import annotations

import weakref

from emu.description import Instruction, Machine
from emu.description.notation import Assign, Mem, Name, walk


__all__ = ["disassemble", "disassemble_at", "disassemble_image"]

_DATA_PER_LINE = 8
_TEXT_WIDTH = 28


def disassemble(machine: Machine, words, start: int = 0, debug=None) -> list[str]:
    """Assembly lines for ``words`` placed at ``start``; ``debug`` (a Program
    or a DebugInfo) adds labels, pauses and data regions."""
    return disassemble_image(machine, [(start, list(words))], debug)


def disassemble_image(machine: Machine, segments, debug=None) -> list[str]:
    """Assembly lines for a whole image, its segments ``(start, words)`` in order.

    The segments are read together so that each label is written once: as
    ``name:`` where it falls on a statement in any segment, otherwise as
    ``name = address`` at the top (a label inside an instruction, or past
    the image). Read one segment at a time, a label placed in one segment
    and used in another came out both ways and did not assemble again.
    """
    names = _Names(debug)
    decoder = _decoder_for(machine)
    cut = [(start, _pieces(list(words), start, names, decoder)) for start, words in segments]
    boundaries = {address for _start, pieces in cut for address, _ins, _w in pieces}
    placed = {a for a in names.by_address if a in boundaries}
    body, referenced = [], set()
    for start, pieces in cut:
        body.append(f"        .org {decoder.address_text(start)}")
        body.extend(_segment_lines(pieces, names, decoder, placed, referenced))
    header = [f"{name} = {decoder.address_text(value)}"
              for name, value in sorted(names.labels.items()) if name in referenced and value not in placed]
    return header + body


def _pieces(words: list[int], start: int, names: "_Names", decoder: "_Decoder"):
    """The segment cut into (address, instruction or None for data, words)."""
    pieces = []
    offset = 0
    while offset < len(words):
        address = start + offset
        ins = None if names.is_data(address) else decoder.instruction(words[offset:])
        length = ins.word_count if ins else 1
        pieces.append((address, ins, words[offset:offset + length]))
        offset += length
    return pieces


def _segment_lines(pieces, names: "_Names", decoder: "_Decoder", placed: set[int], referenced: set[str]):
    body: list[str] = []
    data_run: list[tuple[int, int]] = []

    def flush():
        if data_run:
            text = ".byte " + ", ".join(decoder.word_text(w) for _a, w in data_run)
            body.append(_line(text, data_run[0][0], [w for _a, w in data_run], decoder))
            data_run.clear()

    for address, ins, chunk in pieces:
        if address in placed:
            flush()
            body.extend(f"{label}:" for label in names.by_address[address])
        if ins is None:
            data_run.append((address, chunk[0]))
            if len(data_run) == _DATA_PER_LINE:
                flush()
            continue
        flush()
        text = decoder.text(ins, chunk, names, placed, referenced, pause=address in names.pauses, address=address)
        body.append(_line(text, address, chunk, decoder))
    flush()
    return body


def disassemble_at(machine: Machine, read_word, address: int, debug=None) -> tuple[str, int]:
    """The instruction at ``address`` (words from ``read_word(a)``) as text, and its length in words."""
    names = _Names(debug)
    decoder = _decoder_for(machine)
    count = min(decoder.longest, machine.memory_words - address)
    words = [read_word(address + i) for i in range(max(count, 1))]
    ins = None if names.is_data(address) else decoder.instruction(words)
    if ins is None:
        return f".byte {decoder.word_text(words[0])}", 1
    everywhere = set(names.by_address)
    text = decoder.text(ins, words[:ins.word_count], names, everywhere, set(), pause=address in names.pauses,
                        address=address)
    return text, ins.word_count


_decoders: dict[int, "_Decoder"] = {}


def _decoder_for(machine: Machine) -> "_Decoder":
    """One decoder per machine object: reading its micro-steps for address operands is not free."""
    decoder = _decoders.get(id(machine))
    if decoder is None or decoder.machine is not machine:
        decoder = _decoders[id(machine)] = _Decoder(machine)
        weakref.finalize(machine, _decoders.pop, id(machine), None)
    return decoder


def _line(text: str, address: int, chunk, decoder: "_Decoder") -> str:
    words = " ".join(decoder.word_hex(w) for w in chunk)
    return f"        {text:<{_TEXT_WIDTH}} ; {decoder.address_hex(address)}  {words}"


class _Names:
    """What a debug source knows about addresses, whatever form it came in."""

    def __init__(self, debug):
        self.labels: dict[str, int] = dict(getattr(debug, "labels", {}) or {})
        self.pauses = set(getattr(debug, "pauses", ()) or ())
        self.by_address: dict[int, list[str]] = {}
        for name, value in sorted(self.labels.items(), key=lambda kv: (kv[1], kv[0])):
            self.by_address.setdefault(value, []).append(name)
        self.data = set()
        for entry in getattr(debug, "lines", ()) or ():
            if entry.kind == "data":
                self.data.update(range(entry.address, entry.address + entry.length))

    def is_data(self, address: int) -> bool:
        return address in self.data


class _Decoder:
    def __init__(self, machine: Machine):
        self.machine = machine
        self.longest = max(ins.word_count for ins in machine.instructions)
        self.address_kinds = _address_kinds(machine)
        self.pause = machine.pause

    def instruction(self, words) -> Instruction | None:
        ins = self.machine.instruction_at(words[:self.longest])
        if ins is None or len(words) < ins.word_count or self.fields(ins, words) is None:
            return None
        return ins

    def fields(self, ins: Instruction, words) -> dict[str, int] | None:
        """Decoded field values, or None when one is outside its kind (no form writes it)."""
        values = ins.decode(words)
        for name, raw in values.items():
            kind = ins.fields[name].kind
            if kind.is_register:
                if raw >= len(kind.registers):
                    return None
            elif not kind.low <= raw <= kind.high:
                signed = raw - (1 << kind.bits)
                if not kind.low <= signed <= kind.high:
                    return None
                values[name] = signed
        return values

    def text(self, ins: Instruction, words, names: _Names, placed, referenced, pause=False, address=0) -> str:
        """The instruction as a programmer writes it; a relative operand shows its target address
        (or label), which is what the assembler reads back."""
        if pause and ins.mnemonic == self.pause and not ins.operands:
            return "pause"
        values = self.fields(ins, words)
        operands = []
        for pattern in ins.operands:
            if pattern.field is None:
                operands.append(pattern.before)
                continue
            kind = ins.fields[pattern.field].kind
            value = values[pattern.field]
            if kind.relative:
                value = (kind.distance_base(address, ins.word_count) + value) % self.machine.memory_words
            if kind.is_register:
                shown = kind.registers[value]
            elif kind.value_names:
                shown = kind.name_of(value) or str(value)
            elif kind.relative or kind.name in self.address_kinds:
                shown = self.address_text(value)
                labels = names.by_address.get(value)
                if labels:
                    shown = labels[0]
                    referenced.add(shown)
            else:
                shown = str(value)
            operands.append(f"{pattern.before}{shown}{pattern.after}")
        return f"{ins.mnemonic} {', '.join(operands)}".strip()

    def address_text(self, value: int) -> str:
        return f"0x{value:0{(self.machine.address_bits + 3) // 4}X}"

    def address_hex(self, value: int) -> str:
        return f"{value:0{(self.machine.address_bits + 3) // 4}X}"

    def word_hex(self, value: int) -> str:
        return f"{value:0{(self.machine.data_bits + 3) // 4}X}"

    def word_text(self, value: int) -> str:
        return "0x" + self.word_hex(value)


def _address_kinds(machine: Machine) -> set[str]:
    """Operand kinds whose values some instruction uses as a memory address or a jump target."""
    pc = Name(machine.program_counter)
    # A group carries what its registers hold: `pc <- m` with m = {mhi, mlo} jumps to the latched words.
    parts = {name: group.parts for name, group in machine.groups.items()}
    kinds = set()
    for ins in machine.instructions:
        carriers: dict[str, set[str]] = {}
        for name, fld in ins.fields.items():
            if fld.kind.is_register:
                continue
            holders = {ins.holders[p.word] for p in fld.pieces if p.word and p.word in ins.holders}
            for carrier in {name} | holders:
                carriers.setdefault(carrier, set()).add(name)
        fetched_late = {name for name, fld in ins.fields.items()
                        if not fld.kind.is_register and any(p.word for p in fld.pieces)}
        used: set[str] = set()

        def mark(expr):
            for node in walk(expr):
                if isinstance(node, Name):
                    for register in parts.get(node.name, (node.name,)):
                        used.update(carriers.get(register, ()))

        for step in ins.steps:
            for statement in step.statements:
                if not isinstance(statement, Assign):
                    continue
                if isinstance(statement.target, Mem):
                    mark(statement.target.address)
                for node in walk(statement.value):
                    if isinstance(node, Mem):
                        mark(node.address)
                if statement.target == pc:
                    mark(statement.value)
                    if Mem(pc) in walk(statement.value):
                        used.update(fetched_late)
        kinds.update(ins.fields[name].kind.name for name in used)
    return kinds
