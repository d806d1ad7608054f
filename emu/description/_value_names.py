"""Named values of a number operand kind: ``cond = { bits = 4, names = { nz = 0b1001 } }``.

A goto whose instruction bits choose the flags it tests is one row with a
``cc:cond`` operand; the names let a program write ``goto nz, loop`` and let
the disassembler, ``isa`` and the debugger write the name back. Names are
matched in any case, as registers are, so two names may not differ only in
case; and since a program operand is read before anything is known of its
value, a name may not also be a register, a group, a mnemonic or a literal
word of any instruction's syntax.
"""

from __future__ import annotations

import re

from ._schema import Table

__all__ = ["read_value_names", "check_value_names_against_syntax"]

_ASSEMBLER_NAME = re.compile(r"[A-Za-z_][A-Za-z0-9_]*")
"""What the assembler's grammar reads as a name (asm/grammar/assembly.lark, NAME)."""


def read_value_names(spec: Table, low: int, high: int, names) -> tuple[tuple[str, int], ...]:
    """The ``names`` table of a number kind whose values run ``low…high``; ``names`` (the
    loader's MachineNames) gives the registers and groups a program names."""
    if "names" not in spec:
        return ()
    if spec.get("relative"):
        spec.fail("'names' is for values; a relative kind's operand is a target address", "names")
    taken = {**{r.lower(): f"the register '{r}'" for r, reg in names.registers.items() if not reg.internal},
             **{g.lower(): f"the register group '{g}'" for g in names.groups}}
    table = spec.table("names")
    if not table.data:
        spec.fail("'names' must name at least one value, e.g. { nz = 0b1001 }", "names")
    seen_names: dict[str, str] = {}
    seen_values: dict[int, str] = {}
    for name, _raw in table.items():
        if not _ASSEMBLER_NAME.fullmatch(name):
            table.fail(f"a value name must be a name the assembler reads (letters, digits and _, "
                       f"not starting with a digit), not '{name}'", name)
        value = table.integer(name, low=low, high=high, expected=f"an integer the operand holds ({low}…{high})")
        lowered = name.lower()
        if lowered in taken:
            table.fail(f"the value name '{name}' is also {taken[lowered]}; a program could not tell "
                       f"them apart", name)
        if lowered in seen_names:
            table.fail(f"the value name '{name}' differs from '{seen_names[lowered]}' only in case "
                       f"(names are matched in any case)", name)
        if value in seen_values:
            table.fail(f"'{name}' and '{seen_values[value]}' both stand for {value}; "
                       f"give each value one name", name)
        seen_names[lowered] = seen_values[value] = name
    return tuple((name, value) for value, name in seen_values.items())


def check_value_names_against_syntax(kinds, instructions, pause: str, fail) -> None:
    """Refuse a value name that is also a mnemonic or a literal word of a syntax string;
    ``fail(kind_name, value_name, message)`` raises at the name's line."""
    words: dict[str, str] = {pause.lower(): "the pause mnemonic"}
    for ins in instructions:
        words.setdefault(ins.mnemonic, f"the mnemonic of '{ins.display}'")
        for operand in ins.operands:
            if operand.field is None:
                for word in _ASSEMBLER_NAME.findall(operand.before):
                    words.setdefault(word.lower(), f"a word of the syntax '{ins.display}'")
    for kind in kinds.values():
        for name, _value in kind.value_names:
            if name.lower() in words:
                fail(kind.name, name, f"the value name '{name}' is also {words[name.lower()]}; "
                                      f"a program line would read ambiguously")
