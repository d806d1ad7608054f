"""Two passes from source text to a Program.

Pass one walks the statements in source order (includes expanded where they
stand): it defines labels, picks an instruction form for every line by shape
alone, and so knows every address. Pass two evaluates all operand and data
expressions, range-checks them and encodes. Problems are collected, never
raised one by one, so a single run reports every error of every file.
"""

from __future__ import annotations

import difflib
import gc
import os
from contextlib import contextmanager
from dataclasses import dataclass, field

from emu.description import Machine

from ._debuginfo import LineEntry
from ._directives import MAX_INCLUDE_DEPTH, _Directives
from ._errors import AsmError, Diagnostic, file_error
from ._expect_checks import _ExpectChecks
from ._expr import EvalError, Expr
from ._forms import PAUSE, Chosen, FormError, MachineSyntax
from ._image import segments_of
from ._machine_directive import MACHINE_DIRECTIVE
from ._pass_records import _Constant, _Item, _PendingExpect, _Place, _Run
from ._program import Program
from ._source_text import decode_source
from ._syntax import Assignment, Directive, InstructionLine, Line, Text, parse_source
from ._values import _Values

__all__ = ["assemble_text", "assemble_file", "MAX_INCLUDE_DEPTH"]


def assemble_file(path, machine: Machine) -> Program:
    """Assemble a source file; includes are found relative to it."""
    path = os.fspath(path)
    try:
        data = open(path, "rb").read()
    except OSError as exc:
        raise file_error(path, f"cannot read source file ({exc.strerror or exc})") from None
    text = decode_source(data, path)
    return assemble_text(text, machine, filename=path)


def assemble_text(text: str, machine: Machine, filename: str = "<input>") -> Program:
    """Assemble source text; raise AsmError with every problem found."""
    with _collector_paused():   # on again only once the assembly's own records are gone
        return _Assembly(machine).run(text, filename)


@contextmanager
def _collector_paused():
    """Python's cycle collector, off while a program is assembled.

    An assembly makes several small objects per line (tokens, statements,
    expression nodes, records of both passes), all alive until it ends and
    none of them in a reference cycle. Each time the collector runs it walks
    every object still alive, so over a long program its work grows with the
    square of the length: half the time of a 100,000-line program. Off, the
    time per line stays flat; what the assembly leaves behind is freed by
    reference counting as usual, and the collector runs again afterwards.
    Its first run then walks whatever is still alive, so it is turned on
    again only after the records of the passes are dropped (paused twice,
    the inner pause leaves it to the outer one).
    """
    if not gc.isenabled():
        yield
        return
    gc.disable()
    try:
        yield
    finally:
        gc.enable()


_DIRECTIVES = {
    ".org": _Directives.do_org, ".byte": _Directives.do_byte, ".word": _Directives.do_word,
    ".zero": _Directives.do_zero, ".equ": _Directives.do_equ, ".include": _Directives.do_include,
    ".expect": _Directives.do_expect, MACHINE_DIRECTIVE: _Directives.do_machine,
}
"""Directive → the function that runs it, given the assembly. Not a table of bound methods on the
assembly: that would be a reference cycle, keeping every record of both passes alive after the
assembly until the cycle collector came round."""


@dataclass
class _Assembly(_Directives, _Values, _ExpectChecks):
    """One assembly: the state both passes share; directives, values and checks are its mixins."""

    machine: Machine
    syntax: MachineSyntax = field(init=False)
    diagnostics: list[Diagnostic] = field(default_factory=list)
    sources: dict[str, list[str]] = field(default_factory=dict)
    labels: dict[str, int] = field(default_factory=dict)
    constants: dict[str, _Constant] = field(default_factory=dict)
    defined_at: dict[str, _Place] = field(default_factory=dict)
    items: list[_Item] = field(default_factory=list)
    runs: list[_Run] = field(default_factory=list)
    entries: list[LineEntry] = field(default_factory=list)
    listing_rows: list = field(default_factory=list)
    pauses: list[int] = field(default_factory=list)
    expects: list[_PendingExpect] = field(default_factory=list)
    include_stack: list[str] = field(default_factory=list)
    address: int = 0
    here: int = 0
    early: bool = False
    last_halt: int | None = None
    pending_origin: _Place | None = None
    current_run: _Run | None = None
    plant_before: frozenset = frozenset()
    """(file, line) of instructions to get a planted pause in front (see ``_planting``)."""
    planted: dict = field(default_factory=dict)
    """(file, line) → the addresses of the pauses planted there (twice if its file is included twice)."""
    statements_seen: int = 0
    """Statements assembled so far: a ``.machine`` directive after any of them is refused."""

    def __post_init__(self):
        self.syntax = MachineSyntax(self.machine)
        self.data_bits = self.machine.data_bits
        bits = self.data_bits
        self.word_range = (-(1 << (bits - 1)), (1 << bits) - 1)
        self.word_words = max(2, -(-self.machine.address_bits // bits))
        """Words of a ``.word`` item: two, or as many as an address needs (least significant first)."""
        self.char_words_each = -(-8 // bits) if bits < 8 else 1
        """Words of one ``.byte`` character: one, or on a machine narrower than 8 bits as many as a
        character code 0…255 needs (least significant first)."""

    # ----- driving

    def run(self, text: str, filename: str) -> Program:
        try:
            with _collector_paused():
                self.assemble_file_text(text, filename)
                self.resolve_constants()
                self.check_overlaps()
                image = self.pass_two()
                expects = self.finish_expects()
        except RecursionError:
            self.diagnostics.append(Diagnostic(filename, None, None, "expressions or includes nested too deeply"))
        if self.diagnostics:
            order = {name: i for i, name in enumerate(self.sources)}
            # An include that cannot be read comes first: the undefined labels it causes follow from it.
            self.diagnostics.sort(key=lambda d: (not d.message.startswith("cannot read include file"),
                                                 order.get(d.file, -1), d.line or 0, d.column or 0))
            raise AsmError(self.diagnostics)
        return Program(
            machine=self.machine, segments=segments_of(image), labels=dict(self.labels),
            constants={name: c.value for name, c in self.constants.items()},
            lines=self.entries, pauses=self.pauses, expects=expects, sources=self.sources,
            listing_rows=self.listing_rows,
        )

    def error(self, file: str, line: int, column: int, message: str):
        lines = self.sources.get(file, [])
        source = lines[line - 1] if 0 < line <= len(lines) else None
        self.diagnostics.append(Diagnostic(file, line, column, message, source))

    def report(self, exc: EvalError, file: str):
        if exc.message is not None:
            self.error(exc.file or file, exc.node.line, exc.node.column, exc.message)

    def assemble_file_text(self, text: str, filename: str):
        text = text.replace("\r\n", "\n")
        self.sources[filename] = text.split("\n")
        lines, problems = parse_source(text, filename)
        self.diagnostics.extend(problems)
        by_number = {line.number: line for line in lines}
        self.include_stack.append(filename)
        for number in range(1, len(self.sources[filename]) + 1):
            line = by_number.get(number)
            row_index = len(self.listing_rows)
            self.listing_rows.append((filename, number, None))
            if line is not None:
                entry = self.statement(line, filename)
                if entry is not None:
                    self.listing_rows[row_index] = (filename, number, entry)
        self.include_stack.pop()
        if self.listing_rows and self.listing_rows[-1][0] == filename and not self.sources[filename][-1]:
            self.listing_rows.pop()

    # ----- pass one

    def statement(self, line: Line, file: str) -> LineEntry | None:
        try:
            return self.one_statement(line, file)
        finally:
            self.statements_seen += 1

    def one_statement(self, line: Line, file: str) -> LineEntry | None:
        start = self.address
        if line.label is not None:
            label = line.label
            self.define(label.name, _Place(file, label.line, label.column), start)
        body = line.body
        if isinstance(body, InstructionLine):
            if (file, line.number) in self.plant_before:
                pause, place = self.syntax.pause_instruction, _Place(file, body.line, body.column)
                self.planted.setdefault((file, line.number), []).append(self.address)
                self.pauses.append(self.address)
                self.emit(_Item(self.address, pause.word_count, place, chosen=Chosen(pause, {}, {})),
                          "code", pause.cycles(self.machine))
            return self.instruction(body, file)
        if isinstance(body, Assignment):
            self.define_constant(body.name, body.expr, _Place(file, body.line, body.column))
        elif isinstance(body, Directive):
            handler = _DIRECTIVES.get(body.name)
            if handler is None:
                close = difflib.get_close_matches(body.name, list(_DIRECTIVES), n=1)
                hint = f" (did you mean '{close[0]}'?)" if close else ""
                self.error(file, body.line, body.column, f"unknown directive '{body.name}'{hint}")
                return None
            entry = handler(self, body, file)
            if entry is not None:
                return entry
        if line.label is not None or isinstance(body, Directive):
            return LineEntry(self.address if body and body.name == ".org" else start, 0, file, line.number, "data")
        return None

    def reserved_name(self, name: str, place: _Place, what: str) -> bool:
        register = self.syntax.reserved.get(name.lower())
        if register is None:
            return False
        self.error(place.file, place.line, place.column,
                   f"'{name}' is a register of {self.machine.name}; a {what} cannot have its name")
        return True

    def define(self, name: str, place: _Place, address: int):
        if self.reserved_name(name, place, "label") or self.duplicate(name, place):
            return
        self.labels[name] = address
        self.defined_at[name] = place

    def duplicate(self, name: str, place: _Place) -> bool:
        first = self.defined_at.get(name)
        if first is None:
            return False
        self.error(place.file, place.line, place.column,
                   f"duplicate label '{name}' (first defined at {first.file}:{first.line})")
        return True

    def define_constant(self, name: str, expr: Expr, place: _Place):
        if self.reserved_name(name, place, "constant") or self.duplicate(name, place):
            return
        self.constants[name] = _Constant(expr, self.address, place)
        self.defined_at[name] = place

    def instruction(self, body: InstructionLine, file: str) -> LineEntry | None:
        place = _Place(file, body.line, body.column)
        if body.mnemonic.lower() == PAUSE and PAUSE not in self.syntax.forms:
            if body.operands:
                self.error(file, body.line, body.column, "pause takes no operands")
                return None
            chosen = Chosen(self.syntax.pause_instruction, {}, {})
            self.pauses.append(self.address)
        else:
            try:
                chosen = self.syntax.match(body)
            except FormError as exc:
                self.error(file, exc.line, exc.column, exc.message)
                forms = self.syntax.forms.get(body.mnemonic.lower())
                self.address += forms[0].word_count if forms else 0
                return None
        ins = chosen.instruction
        if ins.drives_halt:
            self.last_halt = self.address
        cycles = self.syntax.shortest_cycles[ins.index]  # the shortest path when sequencing makes it vary
        return self.emit(_Item(self.address, ins.word_count, place, chosen=chosen), "code", cycles)

    def emit(self, item: _Item, kind: str, cycles: int | None = None) -> LineEntry | None:
        end = item.address + item.length
        if end > self.machine.memory_words:
            place = item.place
            self.error(place.file, place.line, place.column,
                       f"address {self.address_text(max(item.address, self.machine.memory_words))} is past the end "
                       f"of the memory of {self.machine.name} (last address {self.address_text(self.machine.memory_words - 1)})")
            self.address = end
            return None
        if item.length:
            if self.current_run is not None and self.current_run.end == item.address:
                self.current_run.end = end
            else:
                self.current_run = _Run(item.address, end, self.pending_origin or item.place, len(self.runs))
                self.runs.append(self.current_run)
                self.pending_origin = None
            self.items.append(item)
        self.address = end
        entry = LineEntry(item.address, item.length, item.place.file, item.place.line, kind, cycles)
        if item.length:
            self.entries.append(entry)
        return entry

    def address_text(self, value: int) -> str:
        return f"0x{value:0{(self.machine.address_bits + 3) // 4}X}"

    # ----- layout checks and pass two

    def check_overlaps(self):
        widest = None
        for run in sorted(self.runs, key=lambda r: (r.start, r.order)):
            if widest is not None and run.start < widest.end:
                later, earlier = (run, widest) if run.order > widest.order else (widest, run)
                first, last = run.start, min(run.end, widest.end) - 1
                self.error(later.place.file, later.place.line, later.place.column,
                           f"this region overlaps {self.address_text(first)}…{self.address_text(last)}, already used from "
                           f"{earlier.place.file}:{earlier.place.line}")
            if widest is None or run.end > widest.end:
                widest = run

    def pass_two(self) -> dict[int, int]:
        image = {}
        word_low, word_high = self.word_range
        mask = self.machine.data_mask
        for item in self.items:
            file = item.place.file
            address = item.address
            if item.chosen is not None:
                ins = item.chosen.instruction
                values = dict(item.chosen.registers)
                ok = True
                for name, expr in item.chosen.values.items():
                    kind = ins.fields[name].kind
                    if kind.relative:
                        value = self.distance(expr, address, ins.word_count, file, kind)
                    else:
                        value = self.operand_value(expr, address, file, kind)
                    ok = ok and value is not None
                    values[name] = value
                if not ok:
                    continue
                words = ins.encode(values)
            else:
                words = []
                for part in item.data:
                    if isinstance(part, Text):
                        words.extend(self.char_words(part, file))
                        continue
                    expr, width = part
                    if width == 1:
                        value = self.value(expr, address, file, word_low, word_high, "one data word")
                        words.append((value or 0) & mask)
                    else:
                        bits = width * self.data_bits
                        value = self.value(expr, address, file, -(1 << (bits - 1)), (1 << bits) - 1,
                                           f"{width} data words") or 0
                        words.extend((value >> (i * self.data_bits)) & mask for i in range(width))
                words.extend([0] * (item.length - len(words)))
            for i, word in enumerate(words):
                image[address + i] = word
        return image

    def char_words(self, text: Text, file: str) -> list[int]:
        """A string's words: one per character, or ``char_words_each`` (low word first) when a
        word is narrower than a character."""
        each, bits = self.char_words_each, self.data_bits
        top = self.word_range[1] if each == 1 else 255
        words = []
        for ch in text.value:
            if ord(ch) > top:
                room = "one data word" if each == 1 else f"{each} data words (a character is 8 bits)"
                self.error(file, text.line, text.column,
                           f"character {ch!r} (code {ord(ch)}) does not fit {room} (0…{top})")
                return [0] * (len(text.value) * each)
            words.extend((ord(ch) >> (i * bits)) & self.machine.data_mask for i in range(each))
        return words
