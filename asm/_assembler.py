"""Two passes from source text to a Program.

Pass one walks the statements in source order (includes expanded where they
stand): it defines labels, picks an instruction form for every line by shape
alone, and so knows every address. Pass two evaluates all operand and data
expressions, range-checks them and encodes. Problems are collected, never
raised one by one, so a single run reports every error of every file.
"""

from __future__ import annotations

import difflib
import os
from dataclasses import dataclass, field

from emu.description import Machine

from ._debuginfo import Expect, LineEntry
from ._errors import AsmError, Diagnostic, file_error
from ._expr import EvalError, Expr, Name
from ._forms import PAUSE, Chosen, FormError, MachineSyntax
from ._image import segments_of
from ._machine_directive import MACHINE_DIRECTIVE
from ._program import Program
from ._syntax import Assignment, Comparison, Directive, InstructionLine, Line, Operand, Text, parse_source

__all__ = ["assemble_text", "assemble_file", "MAX_INCLUDE_DEPTH"]

MAX_INCLUDE_DEPTH = 64
"""Far more than any program needs; it keeps a chain of includes inside Python's call stack."""


def assemble_file(path, machine: Machine) -> Program:
    """Assemble a source file; includes are found relative to it."""
    path = os.fspath(path)
    try:
        data = open(path, "rb").read()
    except OSError as exc:
        raise file_error(path, f"cannot read source file ({exc.strerror or exc})") from None
    text = _decode(data, path)
    return assemble_text(text, machine, filename=path)


def assemble_text(text: str, machine: Machine, filename: str = "<input>") -> Program:
    """Assemble source text; raise AsmError with every problem found."""
    return _Assembly(machine).run(text, filename)


def _decode(data: bytes, path: str) -> str:
    """UTF-8 source text; the first byte that is not UTF-8 is a located error.

    The caret points at the character where the stray byte sits (the line
    is shown with it replaced), so an editor can jump to it.
    """
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        line_start = data.rfind(b"\n", 0, exc.start) + 1
        line_end = data.find(b"\n", exc.start)
        line_bytes = data[line_start:line_end if line_end >= 0 else len(data)]
        number = data.count(b"\n", 0, exc.start) + 1
        column = len(data[line_start:exc.start].decode("utf-8")) + 1
        shown = line_bytes.decode("utf-8", errors="replace")
        message = (f"byte 0x{data[exc.start]:02X} is not UTF-8 text "
                   f"(save the file as UTF-8)")
        raise AsmError([Diagnostic(path, number, column, message, shown)]) from None


# ----- what pass one leaves for pass two ------------------------------------

@dataclass(slots=True)
class _Place:
    file: str
    line: int
    column: int


@dataclass(slots=True)
class _Item:
    """Words to produce at ``address``: an instruction, data, or zeros."""
    address: int
    length: int
    place: _Place
    chosen: Chosen | None = None
    data: list | None = None
    """Data parts: (Expr, words per value) or a Text."""


@dataclass(slots=True)
class _Run:
    """Consecutive words laid down without an .org in between."""
    start: int
    end: int
    place: _Place
    order: int


@dataclass(slots=True)
class _Constant:
    expr: Expr
    here: int
    place: _Place
    value: int | None = None
    state: str = "new"


@dataclass(slots=True)
class _PendingExpect:
    address: int
    here: int
    place: _Place
    check: Comparison


class _Broken(EvalError):
    """A value depending on one whose error has been reported already."""

    def __init__(self, node):
        super().__init__(None, node)


class _TooDeep(EvalError):
    """A chain of constants deeper than the call stack: reported once, where it broke."""


@dataclass
class _Assembly:
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
        self.directives = {
            ".org": self.do_org, ".byte": self.do_byte, ".word": self.do_word, ".zero": self.do_zero,
            ".equ": self.do_equ, ".include": self.do_include, ".expect": self.do_expect,
            MACHINE_DIRECTIVE: self.do_machine,
        }

    # ----- driving

    def run(self, text: str, filename: str) -> Program:
        try:
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
            handler = self.directives.get(body.name)
            if handler is None:
                close = difflib.get_close_matches(body.name, list(self.directives), n=1)
                hint = f" (did you mean '{close[0]}'?)" if close else ""
                self.error(file, body.line, body.column, f"unknown directive '{body.name}'{hint}")
                return None
            entry = handler(body, file)
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
        cycles = ins.cycles(self.machine).shortest  # the shortest path when sequencing makes it vary
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

    # ----- directives (pass one)

    def expressions(self, body: Directive, file: str, count: int | None, usage: str) -> list[Expr] | None:
        args = body.arguments
        ok = (count is None or len(args) == count) and args and all(
            isinstance(a, Operand) and not a.opening and not a.closing for a in args)
        if not ok:
            self.error(file, body.line, body.column, f"{body.name} takes {usage}")
            return None
        return [a.expr for a in args]

    def early_value(self, expr: Expr, file: str) -> int | None:
        """A value needed in pass one (.org, .zero): only what is defined above counts."""
        self.early, self.here = True, self.address
        try:
            return expr.evaluate(self)
        except EvalError as exc:
            self.report(exc, file)
            return None
        finally:
            self.early = False

    def do_org(self, body: Directive, file: str):
        exprs = self.expressions(body, file, 1, "one address, e.g. .org 0x100")
        if exprs is None:
            return
        value = self.early_value(exprs[0], file)
        if value is None:
            return
        if not 0 <= value < self.machine.memory_words:
            self.error(file, exprs[0].line, exprs[0].column,
                       f"{value} is not an address of {self.machine.name} (0…{self.machine.memory_words - 1})")
            return
        self.address = value
        self.current_run = None
        self.pending_origin = _Place(file, body.line, body.column)

    def do_zero(self, body: Directive, file: str):
        exprs = self.expressions(body, file, 1, "one word count, e.g. .zero 16")
        if exprs is None:
            return None
        count = self.early_value(exprs[0], file)
        if count is None:
            return None
        if count < 0:
            self.error(file, exprs[0].line, exprs[0].column, f"a word count cannot be negative ({count})")
            return None
        return self.emit(_Item(self.address, count, _Place(file, body.line, body.column), data=[]), "data")

    def do_byte(self, body: Directive, file: str):
        parts, length = [], 0
        for arg in body.arguments:
            if isinstance(arg, Text):
                if arg.problem:
                    self.error(file, arg.line, arg.column, arg.problem)
                parts.append(arg)
                length += len(arg.value) * self.char_words_each
            elif isinstance(arg, Operand) and not arg.opening and not arg.closing:
                parts.append((arg.expr, 1))
                length += 1
            else:
                self.error(file, arg.line, arg.column, ".byte takes expressions and \"strings\"")
        if not body.arguments:
            self.error(file, body.line, body.column, ".byte takes expressions and \"strings\"")
        return self.emit(_Item(self.address, length, _Place(file, body.line, body.column), data=parts), "data")

    def do_word(self, body: Directive, file: str):
        exprs = self.expressions(body, file, None, "expressions, e.g. .word 0x1234, start")
        if exprs is None:
            return None
        count = self.word_words
        return self.emit(_Item(self.address, count * len(exprs), _Place(file, body.line, body.column),
                               data=[(e, count) for e in exprs]), "data")

    def do_equ(self, body: Directive, file: str):
        args = body.arguments
        if (len(args) != 2 or not all(isinstance(a, Operand) and not a.opening and not a.closing for a in args)
                or not isinstance(args[0].expr, Name)):
            self.error(file, body.line, body.column, ".equ takes a name and a value, e.g. .equ COUNT, 10")
            return
        name = args[0].expr
        self.define_constant(name.name, args[1].expr, _Place(file, name.line, name.column))

    def do_machine(self, body: Directive, file: str):
        """The machine was chosen before assembly (``machine_directive``); here only its place is checked."""
        args = body.arguments
        if len(args) != 1 or not isinstance(args[0], Text) or not args[0].value.strip():
            self.error(file, body.line, body.column, '.machine takes one "machine name or path"')
        elif len(self.include_stack) > 1 or self.statements_seen:
            self.error(file, body.line, body.column,
                       ".machine must be the first statement of the program file (the machine decides "
                       "how every other line assembles)")

    def do_include(self, body: Directive, file: str):
        args = body.arguments
        if len(args) != 1 or not isinstance(args[0], Text):
            self.error(file, body.line, body.column, '.include takes one "file name"')
            return
        arg = args[0]
        folder = "" if file.startswith("<") else os.path.dirname(file)
        path = os.path.normpath(os.path.join(folder, arg.value))
        if len(self.include_stack) >= MAX_INCLUDE_DEPTH:
            self.error(file, arg.line, arg.column, f"includes nested more than {MAX_INCLUDE_DEPTH} deep")
            return
        chain = [os.path.realpath(f) for f in self.include_stack]
        if os.path.realpath(path) in chain:
            loop = " → ".join([*self.include_stack[chain.index(os.path.realpath(path)):], path])
            self.error(file, arg.line, arg.column, f"include loop: {loop}")
            return
        try:
            data = open(path, "rb").read()
        except OSError as exc:
            self.error(file, arg.line, arg.column,
                       f"cannot read include file '{arg.value}' ({exc.strerror or exc})")
            return
        try:
            text = _decode(data, path)
        except AsmError as exc:
            self.diagnostics.extend(exc.diagnostics)
            return
        if path in self.sources:
            path = os.path.join(folder, arg.value)
        self.assemble_file_text(text, path)

    def do_expect(self, body: Directive, file: str):
        if not body.arguments or not all(isinstance(a, Comparison) for a in body.arguments):
            self.error(file, body.line, body.column, ".expect takes checks like r0 == 5, out == \"ok\"")
            return
        if self.last_halt is None:
            self.error(file, body.line, body.column,
                       ".expect has no halt or pause above it to attach to")
            return
        for check in body.arguments:
            self.expects.append(_PendingExpect(self.last_halt, self.address,
                                               _Place(file, check.line, check.column), check))

    # ----- values

    def lookup(self, node: Name) -> int:
        name = node.name
        if name in self.labels:
            return self.labels[name]
        constant = self.constants.get(name)
        if constant is not None:
            return self.constant_value(name, constant, node)
        if name.lower() in self.syntax.reserved:
            raise EvalError(f"the register {name} cannot be used in an expression", node)
        register_hint = self.syntax.looks_like_register(name)
        if register_hint:
            raise EvalError(register_hint, node)
        if self.early:
            raise EvalError(f"'{name}' must be defined above this line: its value is needed here "
                            f"to lay out the program", node)
        close = difflib.get_close_matches(name, [*self.labels, *self.constants], n=1)
        hint = f" (did you mean '{close[0]}'?)" if close else ""
        raise EvalError(f"undefined label '{name}'{hint}", node)

    def constant_value(self, name: str, constant: _Constant, node: Name) -> int:
        if constant.state == "done":
            return constant.value
        if constant.state == "broken":
            raise _Broken(node)
        if constant.state == "busy":
            raise EvalError(f"'{name}' is defined in terms of itself", node)
        constant.state = "busy"
        saved, self.here = self.here, constant.here
        try:
            try:
                constant.value = constant.expr.evaluate(self)
            except RecursionError:
                raise _TooDeep(f"'{name}' is defined through a chain of constants too long to follow "
                                f"(each defined by the next); define them in order", node) from None
        except EvalError as exc:
            constant.state = "broken" if isinstance(exc, _TooDeep) else "new"
            exc.file = exc.file or constant.place.file
            raise
        finally:
            self.here = saved
        constant.state = "done"
        return constant.value

    def resolve_constants(self):
        chain_reported = False
        for name, constant in self.constants.items():
            if constant.state == "new":
                try:
                    self.constant_value(name, constant, Name(name, constant.place.line, constant.place.column))
                except EvalError as exc:
                    if not (isinstance(exc, _TooDeep) and chain_reported):   # one long chain, one message
                        self.report(exc, constant.place.file)
                    chain_reported = chain_reported or isinstance(exc, _TooDeep)
                    constant.state = "broken"

    def value(self, expr: Expr, here: int, file: str, low: int, high: int, what: str) -> int | None:
        self.here = here
        try:
            value = expr.evaluate(self)
        except EvalError as exc:
            self.report(exc, file)
            return None
        if not low <= value <= high:
            self.error(file, expr.line, expr.column, f"{value} does not fit {what} ({low}…{high})")
            return None
        return value

    def distance(self, expr: Expr, here: int, word_count: int, file: str, kind) -> int | None:
        """A pc-relative operand: the target's distance from the address the kind counts from."""
        target = self.value(expr, here, file, -(1 << 64), 1 << 64, kind.name)
        if target is None:
            return None
        base = kind.distance_base(here, word_count)
        distance = target - base
        if not kind.low <= distance <= kind.high:
            counted = "the next instruction" if kind.relative == "next" else "this instruction"
            self.error(file, expr.line, expr.column,
                       f"the target {self.address_text(target)} is {distance} words from {counted} "
                       f"({self.address_text(base)}); {kind.name} reaches {kind.low}…{kind.high}")
            return None
        return distance

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
                        value = self.value(expr, address, file, kind.low, kind.high, kind.name)
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

    def finish_expects(self) -> list[Expect]:
        result = []
        for pending in self.expects:
            expect = self.expect(pending)
            if expect is not None:
                result.append(expect)
        return result

    def expect(self, pending: _PendingExpect) -> Expect | None:
        check, file = pending.check, pending.place.file
        item_operand, value_arg = check.item, check.value
        memory_address = None
        if item_operand.opening == "[" and item_operand.closing == "]":
            item = "mem"
            memory_address = self.value(item_operand.expr, pending.here, file, 0,
                                        self.machine.memory_words - 1, "an address")
            if memory_address is None:
                return None
            low, high, what = *self.word_range, f"[{self.address_text(memory_address)}]"
        else:
            text = item_operand.literal_text()
            item = self.expect_item(text) if not item_operand.opening else None
            if item is None:
                names = ", ".join(self.syntax.checkable.values())
                self.error(file, item_operand.line, item_operand.column,
                           f"cannot check '{item_operand.expr.text()}': .expect items are {names}, "
                           f"[address], lamps and out")
                return None
            low, high, what = *self.item_range(item), item
        if item == "out":
            if not isinstance(value_arg, Text):
                self.error(file, value_arg.line, value_arg.column,
                           'out is compared with a string literal, e.g. out == "done\\n"')
                return None
            if value_arg.problem:
                self.error(file, value_arg.line, value_arg.column, value_arg.problem)
                return None
            value = value_arg.value
            shown = f'"{value_arg.value}"'
        else:
            if not isinstance(value_arg, Operand) or value_arg.opening or value_arg.closing:
                self.error(file, value_arg.line, value_arg.column,
                           f"{what} is compared with a number; only out takes a string")
                return None
            value = self.value(value_arg.expr, pending.here, file, low, high, what)
            if value is None:
                return None
            shown = value_arg.expr.text()
            value &= (1 << (high.bit_length())) - 1
        item_text = f"[{item_operand.expr.text()}]" if item == "mem" else item
        return Expect(pending.address, file, check.line, item, check.op, value, memory_address,
                      f"{item_text} {check.op} {shown}")

    def expect_item(self, text: str | None) -> str | None:
        if text is None:
            return None
        if text in ("lamps", "out"):
            return text
        return self.syntax.checkable.get(text)

    def item_range(self, item: str) -> tuple[int, int]:
        if item in self.machine.flags:
            return 0, 1
        if item in ("lamps", "out"):
            return self.word_range
        width = self.machine.register_width(item)
        return -(1 << (width - 1)), (1 << width) - 1
