"""Why a planted halt changed a result: the nearest cause the program's text shows.

A halt moves every word after it, and the assembler moves every name with
them; a program that computes the same with a halt in it is one that
reaches its code and data only through those names. A result changes when
something did not move along, and the program's text usually shows what,
looked for in this order:

* a table that now crosses a page boundary (a word with the high part of
  an address, where code that steps a pointer by its low part alone goes
  wrong);
* an address written as a number (a jump or a table entry, for instance)
  whose code or data moved while the number stayed;
* code that takes the address of code as data: it reads its own words,
  and the planted halt is one of them now;
* a jump to a computed address, whose arithmetic assumes the code it
  lands in stays where it was.

Each cause names the statement (``FILE:LINE``) it stands on.
"""

from __future__ import annotations

import re

import asm

from ..description import Machine
from ..description.notation import parse_number
from ._outcomes import data_tables

__all__ = ["nearest_cause", "statement_text"]

_NUMBER = re.compile(r"(?<![\w$])(0x[0-9a-f_]+|0b[01_]+|\d[\d_]*)(?![\w])", re.IGNORECASE)
_NAME = re.compile(r"[A-Za-z_.][\w.]*")


def nearest_cause(planting: asm.Planting, machine: Machine) -> str | None:
    """The first cause found in the order of the module's list; None when the text shows none."""
    finders = (_table_across_a_page, _address_as_number, _reads_own_words, _computed_jump)
    return next((cause for find in finders if (cause := find(planting, machine)) is not None), None)


def _page_words(machine: Machine) -> int | None:
    """Words in a page: what one data word can index, when an address needs more than one word."""
    return 1 << machine.data_bits if machine.address_bits > machine.data_bits else None


def _table_across_a_page(planting: asm.Planting, machine: Machine) -> str | None:
    page = _page_words(machine)
    if page is None:
        return None
    for name, length in data_tables(planting.original).items():
        old, new = planting.original.labels[name], planting.program.labels[name]
        if length > 1 and old // page == (old + length - 1) // page and new // page != (new + length - 1) // page:
            place = _label_place(planting.original, name)
            return (f"{place}the table {name} ({length} words) now crosses a page boundary at "
                    f"{(new // page + 1) * page:#x} (it starts at {new:#x}, was {old:#x}): code that steps "
                    f"through it by the low part of the address alone goes wrong")
    return None


def _address_as_number(planting: asm.Planting, machine: Machine) -> str | None:
    moved = _moved_places(planting)
    if not moved:
        return None
    old_image, new_image = planting.original.image(), planting.program.image()
    pointers = _pointer_registers(planting.original, machine)
    for entry in planting.original.lines:
        text = _statement_text(planting.original, entry)
        if not entry.length or text is None:
            continue
        new_address = planting.relocate(entry.address)
        same = all(old_image.get(entry.address + i) == new_image.get(new_address + i) for i in range(entry.length))
        if not same:
            continue
        for number in _address_numbers(machine, entry.kind, text, pointers):
            if number not in moved:
                continue
            role = ("a table of addresses written as numbers" if entry.kind == "data" else
                    "a jump to an address written as a number" if _writes_pc(machine, _mnemonic(text))
                    else "an address written as a number")
            return (f"{entry.file}:{entry.line}: `{text}` holds the address of {moved[number]} as the number "
                    f"{number:#x}, which moved to {planting.relocate(number):#x}: {role}")
    return None


def _address_numbers(machine: Machine, kind: str, text: str, pointers: set[str]) -> list[int]:
    """The numbers of a statement that may be addresses. In data: each number of a ``.word``
    (as wide as an address), or as many ``.byte`` words as an address takes, low word first;
    none in a ``.byte`` with a string (text: its numbers are characters and terminators) or a
    ``.zero`` (a count), and never a zero (an initial value or a terminator, far more often
    than the address of the first word). In an instruction, only where it jumps, reaches
    memory (``[...]``), loads a pointer or takes an address operand."""
    numbers = list(_numbers(_operands(text)))
    if kind != "data":
        return numbers if _may_hold_address(machine, text, pointers) else []
    directive = _mnemonic(text)
    if directive != ".word" and (directive != ".byte" or '"' in text or "'" in text):
        return []
    words = 1 if directive == ".word" else -(-machine.address_bits // machine.data_bits)
    addresses = [sum(n << (machine.data_bits * i) for i, n in enumerate(numbers[start:start + words]))
                 for start in range(len(numbers) - words + 1)]
    return [address for address in addresses if address]


def _may_hold_address(machine: Machine, text: str, pointers: set[str]) -> bool:
    """Whether an instruction's number may be an address: it is address-wide, and the
    instruction jumps, reaches memory (``[...]``), loads a pointer (a register group, or a
    register the program reads memory through), or every form of it takes an address operand
    (one that admits no negative number). A number loaded into any other register is data:
    on a machine whose registers are all as wide as an address, ``ldi a, 0`` is a zero."""
    mnemonic, operands = _mnemonic(text), _operands(text)
    forms = [i for i in machine.instructions if i.mnemonic == mnemonic]
    wide = [[f.kind for f in i.fields.values() if f.kind.bits >= machine.address_bits and not f.kind.registers]
            for i in forms]
    if not any(wide):
        return False
    addresses = all(kinds and all(kind.low >= 0 for kind in kinds) for kinds in wide)
    pointer = any(re.search(rf"\b{re.escape(name)}\b", operands) for name in (*machine.groups, *pointers))
    return addresses or "[" in operands or pointer or _writes_pc(machine, mnemonic)


def _pointer_registers(program: asm.Program, machine: Machine) -> set[str]:
    """The registers the program reads or writes memory through: those it names inside ``[...]``."""
    registers = {reg.name for reg in machine.visible_registers}
    return {name for entry in program.lines if entry.kind == "code"
            and (text := _statement_text(program, entry)) is not None
            for inside in re.findall(r"\[([^\]]*)\]", text) for name in _NAME.findall(inside) if name in registers}


def _moved_places(planting: asm.Planting) -> dict[int, str]:
    """Old address → what stood there (a label, else the statement's ``FILE:LINE``), for what moved."""
    places = {}
    for entry in planting.original.lines:
        if entry.length and planting.relocate(entry.address) != entry.address:
            places.setdefault(entry.address, f"{entry.file}:{entry.line}")
    for name, address in planting.original.labels.items():
        if address in places and ":" in places[address]:
            places[address] = name
    return places


def _reads_own_words(planting: asm.Planting, machine: Machine) -> str | None:
    code_starts = {e.address for e in planting.original.lines if e.kind == "code"}
    code_labels = {name for name, address in planting.original.labels.items() if address in code_starts}
    for entry in planting.original.lines:
        text = _statement_text(planting.original, entry)
        if entry.kind != "code" or text is None or _writes_pc(machine, _mnemonic(text)):
            continue
        named = [name for name in _NAME.findall(_operands(text)) if name in code_labels]
        if named:
            return (f"{entry.file}:{entry.line}: `{text}` takes the address of code ({named[0]}) as data: "
                    f"code that reads its own words reads the planted halt too")
    return None


def _computed_jump(planting: asm.Planting, machine: Machine) -> str | None:
    for entry in planting.original.lines:
        text = _statement_text(planting.original, entry)
        if entry.kind != "code" or text is None:
            continue
        forms = [i for i in machine.instructions
                 if i.mnemonic == _mnemonic(text) and not i.returns and _writes_pc_form(machine, i)]
        if forms and all(all(f.kind.registers for f in i.fields.values()) for i in forms):
            return (f"{entry.file}:{entry.line}: `{text}` jumps to a computed address: the arithmetic that "
                    f"computes it assumes the code it lands in stays where it was")
    return None


def _statement_text(program: asm.Program, entry) -> str | None:
    return statement_text(program.sources, entry.file, entry.line) or None


def statement_text(sources: dict, file: str, line: int) -> str:
    """The statement at ``file:line`` as written, without its label and comment ("" when none)."""
    lines = sources.get(file)
    if lines is None or not 0 < line <= len(lines):
        return ""
    text = lines[line - 1].split(";")[0].strip()
    if re.match(r"^[A-Za-z_.][\w.]*:", text):
        text = text.split(":", 1)[1].strip()
    return text


def _mnemonic(text: str) -> str:
    return text.split(None, 1)[0].lower()


def _operands(text: str) -> str:
    parts = text.split(None, 1)
    return parts[1] if len(parts) > 1 else ""


def _numbers(text: str):
    for match in _NUMBER.finditer(text):
        try:
            yield parse_number(match.group(1))
        except ValueError:
            continue


def _writes_pc_form(machine: Machine, instruction) -> bool:
    pc = re.escape(machine.program_counter)
    writes = re.compile(rf"(^|;)\s*{pc}\s*<-(?!\s*{pc}\s*[+-])")
    return any(writes.search(step.text) for step in instruction.steps)


def _writes_pc(machine: Machine, mnemonic: str) -> bool:
    return any(i.mnemonic == mnemonic and _writes_pc_form(machine, i) for i in machine.instructions)


def _label_place(program: asm.Program, name: str) -> str:
    address = program.labels[name]
    entry = next((e for e in program.lines if e.address == address and e.length), None)
    return f"{entry.file}:{entry.line}: " if entry is not None else ""
