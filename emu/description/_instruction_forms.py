"""An instruction's assembly form and encoding words, as a machine file spells them.

``syntax = "ld rd:reg, imm:byte"`` and ``encoding = ["0001 rd", "imm"]`` are
read here into operand patterns, fixed opcode bits and the place of every
field bit; the loader checks the rest of an instruction (its micro-steps).
"""

from __future__ import annotations

import re

from ._model import Field, FieldPiece, MachineNames, OperandPattern
from ._schema import Table
from ._syntax_forms import SyntaxFormError, parse_syntax_form
from .notation import Assign, Mem, Name, walk

__all__ = ["read_encoding", "read_syntax", "strip_kinds", "word_holders"]

_ENCODING_TOKEN = re.compile(r"^(?:(?P<bits>[01]+)|(?P<field>[A-Za-z_]\w*)(?:\[(?P<hi>\d{1,9}):(?P<lo>\d{1,9})\])?)$")


def read_syntax(spec: Table, syntax: str, kinds, names: MachineNames):
    """The mnemonic, the operand patterns and the kind of each operand field of ``syntax``."""
    try:
        mnemonic, shapes = parse_syntax_form(syntax)
    except SyntaxFormError as exc:
        spec.fail(str(exc), "syntax")
    taken = names.kinds_of_name
    operands, field_kinds = [], {}
    for shape in shapes:
        if shape.field is None:
            operands.append(OperandPattern(shape.before + shape.name + shape.after, None, ""))
            continue
        if shape.kind not in kinds:
            spec.fail(f"unknown operand kind '{shape.kind}' (kinds: {', '.join(kinds)})", "syntax")
        if shape.field in field_kinds:
            spec.fail(f"operand field '{shape.field}' appears twice", "syntax")
        if shape.field in taken:
            spec.fail(f"operand field '{shape.field}' has the name of a {taken[shape.field]}", "syntax")
        field_kinds[shape.field] = kinds[shape.kind]
        operands.append(OperandPattern(shape.before, shape.field, shape.after))
    return mnemonic, tuple(operands), field_kinds


def read_encoding(spec: Table, words, field_kinds, data_bits: int):
    """The fixed (mask, value) of each encoding word and where each operand field's bits stand."""
    def fail(message):
        spec.fail(message, "encoding")

    fixed, pieces = [], {name: [] for name in field_kinds}
    for w, text in enumerate(words):
        position, mask, value = data_bits, 0, 0
        for token in text.split():
            m = _ENCODING_TOKEN.match(token)
            if not m:
                fail(f"cannot read encoding token '{token}' in word {w + 1} "
                     f"(expected bits like 0101, a field name, or field[hi:lo])")
            if m["bits"]:
                position -= len(m["bits"])
                if position >= 0:
                    mask |= ((1 << len(m["bits"])) - 1) << position
                    value |= int(m["bits"], 2) << position
                continue
            name = m["field"]
            if name not in field_kinds:
                fail(f"encoding word {w + 1} names '{name}', which is not an operand field "
                     f"of this instruction (fields: {', '.join(field_kinds) or 'none'})")
            kind = field_kinds[name]
            hi, lo = (int(m["hi"]), int(m["lo"])) if m["hi"] else (kind.bits - 1, 0)
            if hi < lo or hi >= kind.bits:
                fail(f"slice {name}[{hi}:{lo}] is outside the {kind.bits} bits of '{name}'")
            position -= hi - lo + 1
            pieces[name].append(FieldPiece(w, max(position, 0), hi - lo + 1, lo))
        if position != 0:
            fail(f"encoding word {w + 1} has {data_bits - position} bits, expected {data_bits} (data_bits)")
        fixed.append((mask, value))
    fields = {}
    for name, kind in field_kinds.items():
        covered = [0] * kind.bits
        for piece in pieces[name]:
            for b in range(piece.field_bit, piece.field_bit + piece.width):
                covered[b] += 1
        if covered != [1] * kind.bits:
            fail(f"the encoding must place each of the {kind.bits} bits of '{name}' exactly once")
        fields[name] = Field(name, kind, tuple(pieces[name]))
    if fixed[0][0] == 0:
        fail("the first encoding word needs fixed opcode bits")
    return tuple(fixed), fields


def word_holders(spec: Table, names: MachineNames, parsed, word_count: int):
    """Which step fetches each later word (a step reading mem[pc]) and where it lands."""
    pc_word = Mem(Name(names.pc))
    holders = {0: (0, names.ir)}
    fetch_reads = 0
    for i, statements in enumerate(parsed, 1):
        if not any(node == pc_word for st in statements for node in walk(st)):
            continue
        fetch_reads += 1
        for st in statements:
            # Only a plain register holds a word for its fields: a pair or a register
            # field is not one place the fields can be read back from.
            if (isinstance(st, Assign) and st.value == pc_word and isinstance(st.target, Name)
                    and st.target.name in names.registers):
                holders[fetch_reads] = (i, st.target.name)
    if fetch_reads != word_count - 1:
        plural = "s" if word_count != 1 else ""
        spec.fail(f"the encoding has {word_count} word{plural} but the micro-steps read {fetch_reads} "
                  f"after the opcode (each later word needs a step that reads mem[{names.pc}])", "encoding")
    return holders


def strip_kinds(syntax: str) -> str:
    """The syntax as a programmer writes it: ``ld rd:reg`` reads ``ld rd``."""
    return re.sub(r":[A-Za-z_]\w*", "", syntax)
