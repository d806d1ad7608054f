"""Machine description files: TOML in, a validated ``Machine`` out.

The description is the one source of truth. The assembler reads syntax and
encodings from it, the disassembler decodes with it, the compiler turns its
micro-steps into Python, the control unit runs its phase table and
``relaybench isa`` prints it. So every mistake in it is caught here, once,
with a message that names the file, the key or instruction, and what was
expected.
"""

from __future__ import annotations

import re
import sys
import tomllib
from importlib import resources
from pathlib import Path

from ..errors import MachineError
from ._alu import RESERVED_OPERATION_NAMES, builtin_alu_ops, read_alu_op
from ._design_rules import StepChecker
from ._call_marks import CALL_KEYS, read_call_marks
from ._clock_panel import read_clock_panel
from ._decoding import decode_groups
from ._group_selection import check_group_selection
from ._instruction_forms import read_encoding, read_syntax, strip_kinds, word_holders
from ._sequencing import resolve_jump
from ._saved_machines import saved_machine
from ._step_lines import STEP_EXPECTED, is_step_entry, read_named_lines, step_entry
from ._model import (FLAG_ROLES, INPUT_DEVICES, OUTPUT_DEVICES, Flag, Instruction,
                     Machine, MachineNames, OperandKind, PLAIN_FLAG, Phase, Register, RegisterGroup, Step)
from ._schema import Table, is_integer
from ._sections import check_stage_names, read_stage_names, read_timing, read_wear
from ._toml_lines import key_line, toml_syntax_error
from ._value_names import check_value_names_against_syntax, read_value_names
from .notation import Assign, Call, Choose, Halt, Input, Mem, Name, Output, parse_step, walk

__all__ = ["load_machine", "machine_from_text", "shipped_machines"]


def shipped_machines() -> dict[str, Path]:
    folder = resources.files("emu").joinpath("machines")
    return {Path(p.name).stem: Path(str(p)) for p in folder.iterdir() if p.name.endswith(".toml")}


def load_machine(name_or_path: str | Path = "ref8") -> Machine:
    """A shipped machine by name (``ref8``) or a description file by path."""
    shipped = shipped_machines()
    if str(name_or_path) in shipped:
        path = shipped[str(name_or_path)]
    else:
        path = Path(name_or_path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        names = ", ".join(sorted(shipped))
        raise MachineError(f"no such machine file (shipped machines: {names})", path=str(path)) from None
    except (OSError, UnicodeDecodeError) as exc:
        raise MachineError(f"cannot read machine file: {exc}", path=str(path)) from None
    return saved_machine(text, str(path), machine_from_text)


def machine_from_text(text: str, path: str = "<machine>") -> Machine:
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise _toml_error(exc, text, path) from None
    except RecursionError:
        raise MachineError("not a machine description (nested too deeply)", path=path) from None
    except ValueError:      # tomllib reads integers with Python's limit on their digits
        raise _too_long_number(text, path) from None
    return _Loader(data, path, text).machine()


def _toml_error(exc: tomllib.TOMLDecodeError, text: str, path: str) -> MachineError:
    message, line, column, source = toml_syntax_error(exc, text)
    return MachineError(f"not valid TOML: {message}", path=path, line=line, column=column, source_line=source)


def _too_long_number(text: str, path: str) -> MachineError:
    digits = sys.get_int_max_str_digits()
    run = re.search(r"[0-9_]{%d,}" % (digits + 1), text)
    line = text.count("\n", 0, run.start()) + 1 if run else None
    return MachineError(f"not valid TOML for relaybench: a number with more than {digits} digits",
                        path=path, line=line)


_SECTIONS = ("machine", "registers", "internal", "groups", "flags", "operands", "ports",
             "clock", "fetch", "instruction", "assembler", "timing", "wear", "alu")
_IDENTIFIER = re.compile(r"^[A-Za-z_]\w*$")
_LONGEST_PHASE_MS = 86_400_000
"""A day: far beyond any relay clock, and well inside the engine's nanosecond counters."""


class _Loader:
    """Reads one TOML document; each method checks and builds one section."""

    def __init__(self, data: dict, path: str, text: str):
        self.path = path
        self.text = text
        self.top = Table(data, "top level", self.fail_at)

    def fail_at(self, where: str | None, key: tuple, message: str):
        raise MachineError(message, path=self.path, where=where, line=key_line(self.text, key), key=key)

    # -- sections

    def machine(self) -> Machine:
        top = self.top
        top.known_keys(_SECTIONS)
        head = top.table("machine", "[machine]")
        head.known_keys(("name", "title", "data_bits", "address_bits", "memory_words",
                         "program_counter", "instruction_register"))
        name = head.string("name")
        data_bits = head.integer("data_bits", low=1, high=16)
        address_bits = head.integer("address_bits", low=1, high=24)
        memory_words = head.integer("memory_words", low=1, high=1 << address_bits, default=1 << address_bits)
        if memory_words & (memory_words - 1):
            head.fail(f"'memory_words' must be a power of two, not {memory_words}", "memory_words")

        registers, groups = self.registers()
        flags = self.flags(len(registers))
        pc = head.string("program_counter", default="pc")
        ir = head.string("instruction_register", default="ir")
        for key, reg in (("program_counter", pc), ("instruction_register", ir)):
            if reg not in registers:
                head.fail(f"'{key}' names '{reg}', which is not a register", key)
        if registers[ir].width != data_bits:
            self.fail_at("[machine]", ("internal" if registers[ir].internal else "registers", ir),
                         f"the instruction register '{ir}' must be {data_bits} bits wide (data_bits)")
        ports_out, ports_in = self.ports()
        names = MachineNames(data_bits, registers, groups, flags, pc, ir, self.alu_ops(flags), ports_out)

        kinds = self.operand_kinds(names)
        stages, phases, stage_names, step_press, power_on = self.clock()
        fetch = self.fetch(names)
        instructions = self.instructions(names, kinds, len(fetch))
        assembler = top.table("assembler", "[assembler]", required=False)
        assembler.known_keys(("pause",))
        pause = assembler.string("pause", default="halt")
        check_value_names_against_syntax(kinds, instructions, pause, lambda kind, name, message: self.fail_at(
            f"[operands] {kind}", ("operands", kind, "names", name), message))
        halting = [i for i in instructions if i.drives_halt and not i.operands]
        if pause.lower() not in {i.mnemonic for i in halting}:
            choices = ", ".join(i.mnemonic for i in halting) or "none"
            assembler.fail(f"'pause' must name an instruction without operands that drives halt "
                           f"(candidates: {choices}), not '{pause}'", "pause")
        decoding = decode_groups(instructions, data_bits, lambda ins, message: self.fail_at(
            f"instruction '{ins.display}'", ("instruction", ins.index, "encoding"), message))
        machine = Machine(
            name=name, title=head.string("title", default=name), path=self.path,
            data_bits=data_bits, address_bits=address_bits, memory_words=memory_words,
            registers=registers, groups=groups, flags=flags, operand_kinds=kinds,
            ports_out=ports_out, ports_in=ports_in, ring_stages=stages, phases=phases,
            fetch=fetch, instructions=instructions, program_counter=pc,
            instruction_register=ir, pause=pause.lower(), step_press=step_press, power_on_phase=power_on,
            decode_groups=decoding, alu_ops=names.alu_ops, stage_names=stage_names,
        )
        check_stage_names(machine, lambda message: self.fail_at("[clock]", ("clock", "stage_names"), message))
        if "timing" in top:
            machine.timing = read_timing(top.table("timing", "[timing]"), stages, phases,
                                         lambda key: key_line(self.text, key))
        if "wear" in top:
            machine.wear = read_wear(top.table("wear", "[wear]"), machine.relay_names())
        return machine

    def registers(self):
        top = self.top
        registers: dict[str, Register] = {}
        for section, internal in (("registers", False), ("internal", True)):
            table = top.table(section, required=not internal)
            for reg_name, width in table.items():
                table.where = f"[{section}] {reg_name}"
                if not _IDENTIFIER.match(reg_name):
                    table.fail("a register name must be an identifier", reg_name)
                if reg_name in registers:
                    table.fail("register declared twice", reg_name)
                if not is_integer(width) or not 1 <= width <= 32:
                    table.fail(f"a register width must be an integer 1…32 (bits), not {width!r}", reg_name)
                registers[reg_name] = Register(reg_name, width, len(registers), internal)
        groups = {}
        table = top.table("groups", required=False)
        for group_name, parts in table.items():
            table.where = f"[groups] {group_name}"
            if (not isinstance(parts, list) or len(parts) < 2
                    or not all(isinstance(p, str) and p in registers for p in parts)):
                table.fail("a group must be a list of two or more registers, most significant first, "
                           "e.g. [\"r6\", \"r7\"]", group_name)
            if len(set(parts)) != len(parts):
                table.fail("a group must not name a register twice", group_name)
            if group_name in registers:
                table.fail("a group must not have the name of a register", group_name)
            groups[group_name] = RegisterGroup(group_name, tuple(parts), sum(registers[p].width for p in parts))
        return registers, groups

    def flags(self, first_slot: int) -> dict[str, Flag]:
        flags = {}
        table = self.top.table("flags", required=False)
        declared = {**self.top.get("registers", {}), **self.top.get("internal", {}), **self.top.get("groups", {})}
        for flag_name, role in table.items():
            table.where = f"[flags] {flag_name}"
            if not _IDENTIFIER.match(flag_name):
                table.fail("a flag name must be an identifier", flag_name)
            if role not in FLAG_ROLES and role != PLAIN_FLAG:
                table.fail(f"a flag's role must be one of {', '.join(FLAG_ROLES)} (set by the ALU) or "
                           f"'{PLAIN_FLAG}' (a 1-bit register transfers write), not {role!r}", flag_name)
            if flag_name in declared:
                table.fail("a flag must not have the name of a register", flag_name)
            flags[flag_name] = Flag(flag_name, role, first_slot + len(flags))
        return flags

    def alu_ops(self, flags: dict[str, Flag]) -> dict:
        """The built-in operations and the file's ``[alu.NAME]`` definitions; a file's own
        definition of a built-in name replaces the built-in (its ALU is the one described)."""
        ops = builtin_alu_ops()
        table = self.top.table("alu", "[alu]", required=False)
        for op_name, raw in table.items():
            where = f"[alu.{op_name}]"
            if not _IDENTIFIER.match(op_name) or op_name in RESERVED_OPERATION_NAMES:
                reserved = ", ".join(sorted(RESERVED_OPERATION_NAMES))
                self.fail_at(where, ("alu", op_name), f"an ALU operation needs an identifier for a name, "
                                                      f"not one of the notation's words ({reserved})")

            def fail(key, message, op_name=op_name, where=where):
                self.fail_at(where, ("alu", op_name) + tuple(key), message)
            ops[op_name] = read_alu_op(op_name, raw, fail, flags)
        return ops

    def operand_kinds(self, names: MachineNames) -> dict[str, OperandKind]:
        kinds = {}
        table = self.top.table("operands")
        for kind_name, raw in table.items():
            where = f"[operands] {kind_name}"
            if not isinstance(raw, dict):
                table.where = where
                table.fail("an operand kind must be a table, e.g. { bits = 8, min = 0, max = 255 }", kind_name)
            spec = table.table(kind_name, where)
            spec.known_keys(("registers", "bits", "min", "max", "signed", "relative", "names"))
            if "registers" in spec:
                for key in ("signed", "relative", "names"):
                    if key in spec:
                        spec.fail(f"'{key}' is for number operands; this kind lists registers", key)
                regs = spec.list_of("registers", lambda r: isinstance(r, str), nonempty=True,
                                    expected="a non-empty list of register or group names")
                for reg in regs:
                    if reg not in names.registers and reg not in names.groups:
                        spec.fail(f"unknown register or group '{reg}' in 'registers'", "registers")
                    if regs.count(reg) > 1:
                        what = "group" if reg in names.groups else "register"
                        spec.fail(f"{what} '{reg}' is listed twice in 'registers'", "registers")
                selects_groups = check_group_selection(spec, regs, names)
                bits = max(1, (len(regs) - 1).bit_length())
                kinds[kind_name] = OperandKind(kind_name, bits, 0, len(regs) - 1, tuple(regs),
                                               selects_groups=selects_groups)
            else:
                bits = spec.integer("bits", low=1, high=32)
                signed = spec.boolean("signed", default=False)
                relative = spec.choice("relative", ("next", "this"), default=None)
                low = spec.integer("min", default=-(1 << (bits - 1)) if signed else 0)
                high = spec.integer("max", default=(1 << (bits - 1)) - 1 if signed else (1 << bits) - 1)
                if low > high:
                    spec.fail(f"'min' ({low}) is above 'max' ({high})", "min")
                if high >= 1 << bits or low < -(1 << (bits - 1)):
                    spec.fail(f"{bits} bits hold {-(1 << (bits - 1))}…{(1 << bits) - 1} at most "
                              f"(signed or unsigned), not {low}…{high}", "max")
                kinds[kind_name] = OperandKind(kind_name, bits, low, high, signed=signed, relative=relative,
                                               value_names=read_value_names(spec, low, high, names))
        return kinds

    def ports(self):
        table = self.top.table("ports", "[ports]", required=False)
        table.known_keys(("in", "out"))
        result = []
        for direction, devices in (("out", OUTPUT_DEVICES), ("in", INPUT_DEVICES)):
            ports = {}
            section = table.table(direction, required=False)
            for number, device in section.items():
                section.where = f"[ports.{direction}] {number}"
                if not number.isdigit() or int(number) > 255:
                    section.fail("a port number must be 0…255", number)
                if device not in devices:
                    section.fail(f"an {direction} port device must be one of {', '.join(devices)}, "
                                 f"not {device!r}", number)
                ports[int(number)] = device
            result.append(ports)
        return result

    def clock(self):
        clock = self.top.table("clock", "[clock]")
        clock.known_keys(("stages", "stage_names", "step", "power_on", "phase"))
        stages = clock.integer("stages", low=1, high=64)
        stage_names = read_stage_names(clock, stages)
        table = clock.get("phase")
        if not isinstance(table, list) or len(table) < 2:
            clock.fail("needs at least two [[clock.phase]] entries (one high, one low)", "phase")
        for number, spec in enumerate(table, 1):
            if not isinstance(spec, dict):
                self.fail_at(f"[[clock.phase]] {number}", ("clock", "phase", number - 1), "a phase must be a table")
        phases = []
        for i, spec in enumerate(clock.tables("phase", lambda n: f"[[clock.phase]] {n}",
                                              expected="every [[clock.phase]] must be a table"), 1):
            spec.known_keys(("name", "level", "ms", "ring", "hold"))
            name = spec.string("name", default=f"phase{i}")
            spec.where = f"[[clock.phase]] {i} ('{name}')"
            if any(p.name == name for p in phases):
                spec.fail(f"two phases are named '{name}'; each phase needs a name of its own", "name")
            level = spec.integer("level", low=0, high=1)
            ms = spec.number("ms", above=0, expected="a positive number of milliseconds")
            if ms > _LONGEST_PHASE_MS:
                spec.fail(f"'ms' must be at most {_LONGEST_PHASE_MS} (a day), not {ms!r}", "ms")
            duration_ns = round(ms * 1_000_000)
            if duration_ns < 1:
                spec.fail(f"'ms' must be at least 0.000001 (one nanosecond, the clock's resolution), not {ms!r}",
                          "ms")
            ring = spec.list_of("ring", lambda s: is_integer(s) and 1 <= s <= stages, default=[],
                                expected=f"a list of lit stage numbers 1…{stages}")
            hold = spec.boolean("hold", default=False)
            if hold and level == 1:
                spec.fail("a hold point must be on a phase with clock level 0; "
                          "this phase has level 1 (holding there would cut a pulse short)", "hold")
            phases.append(Phase(name, level, duration_ns, tuple(ring), hold))
        levels = {p.level for p in phases}
        if levels != {0, 1}:
            clock.fail("the phase table needs at least one high (level 1) and one low (level 0) phase", "phase")
        if not any(p.hold for p in phases):
            clock.fail("the phase table has no hold point (hold = true): "
                       "a stop or a halt could never freeze the clock", "phase")
        phases = tuple(phases)
        return (stages, phases, tuple(stage_names)) + read_clock_panel(clock, phases)

    # -- micro-steps

    def fetch(self, names: MachineNames) -> tuple[Step, ...]:
        spec = self.top.table("fetch", "[fetch]")
        spec.known_keys(("steps",))
        entries = spec.list_of("steps", is_step_entry, nonempty=True, default=None,
                               expected=f"a non-empty list of {STEP_EXPECTED}")
        if entries is None:
            spec.fail(f"'steps' must be a non-empty list of {STEP_EXPECTED}", "steps")
        steps = []
        for i, raw in enumerate(entries, 1):
            where, at = f"[fetch] step {i}", ("fetch", "steps", i - 1)
            text, lines = self.entry(raw, where, at)
            steps.append(self.step(names, self.parse(text, where, at), text, where, at, {}, {}, lines=lines))
        steps = tuple(steps)
        writes_ir = any(isinstance(st, Assign) and st.target == Name(names.ir)
                        for step in steps for st in step.statements)
        if not writes_ir:
            spec.fail(f"the fetch steps must load the instruction register '{names.ir}'", "steps")
        for i, step in enumerate(steps, 1):
            for st in step.statements:
                if isinstance(st, Assign) and isinstance(st.target, Mem) or isinstance(st, (Output, Halt)):
                    self.fail_at(f"[fetch] step {i}", ("fetch", "steps", i - 1),
                                 "fetch steps may only read: no memory writes, output or halt")

        if _computed(steps, names.ir):
            spec.fail("the fetch steps must load the instruction register by plain register transfers "
                      "(no ALU, input or choice)", "steps")
        return steps

    def instructions(self, names: MachineNames, kinds, fetch_count: int) -> list[Instruction]:
        specs = self.top.get("instruction")
        if not isinstance(specs, list) or not specs:
            self.top.fail("needs [[instruction]] entries", "instruction")
        result: list[Instruction] = []
        for spec in specs:
            ins = self.instruction(names, spec, len(result), kinds, fetch_count)
            twin = next((i for i in result if i.mnemonic == ins.mnemonic and i.operands == ins.operands), None)
            if twin is not None:
                self.fail_at(f"instruction '{ins.display}'", ("instruction", ins.index, "syntax"),
                             f"the same assembly form as instruction {twin.index + 1}: forms must differ")
            result.append(ins)
        return result

    def instruction(self, names: MachineNames, raw, index, kinds, fetch_count: int) -> Instruction:
        key = ("instruction", index)
        if not isinstance(raw, dict):
            self.fail_at(f"[[instruction]] {index + 1}", key, "an instruction must be a table")
        spec = Table(raw, f"[[instruction]] {index + 1}", self.fail_at, key)
        spec.known_keys(("syntax", "encoding", "steps", "decode_words") + CALL_KEYS)
        syntax = spec.string("syntax").strip()
        spec.where = f"instruction '{strip_kinds(syntax)}'"
        mnemonic, operands, field_kinds = read_syntax(spec, syntax, kinds, names)
        words = 'a non-empty list of word strings, e.g. ["0001 rd", "imm"]'
        encoding = spec.list_of("encoding", lambda w: isinstance(w, str), nonempty=True, default=None,
                                expected=words)
        if encoding is None:
            spec.fail(f"'encoding' must be {words}", "encoding")
        fixed, fields = read_encoding(spec, encoding, field_kinds, names.data_bits)
        call, returns = read_call_marks(spec, names.registers, names.groups, names.pc)
        entries = spec.get("steps")
        if not isinstance(entries, list) or not all(is_step_entry(t) for t in entries):
            spec.fail(f"'steps' must be a list of {STEP_EXPECTED} (steps = [] for one "
                      "that only fetches)", "steps")
        places = [(f"{spec.where} step {fetch_count + i}", key + ("steps", i - 1))
                  for i in range(1, len(entries) + 1)]
        texts, named = zip(*[self.entry(raw, where, at) for raw, (where, at) in zip(entries, places)]) \
            if entries else ((), ())
        parsed = [self.parse(text, where, at) for text, (where, at) in zip(texts, places)]
        holders = word_holders(spec, names, parsed, len(encoding))
        decode_words = spec.integer("decode_words", low=1, high=len(encoding), default=1,
                                    expected=f"a number of leading encoding words, 1…{len(encoding)}")
        if decode_words - 1 not in holders:
            spec.fail(f"word {decode_words} decodes the instruction (decode_words = {decode_words}), so a "
                      f"step must load it whole into a register (t <- mem[{names.pc}])", "decode_words")
        decode_step = holders[decode_words - 1][0] - 1
        steps = []
        for i, (text, lines, statements, (where, at)) in enumerate(zip(texts, named, parsed, places), 1):
            fetched_words = {w for w, (step_no, _reg) in holders.items() if step_no < i}
            available = {name: f for name, f in fields.items()
                         if all(p.word in fetched_words for p in f.pieces)}
            steps.append(self.step(names, statements, text, where, at, fields, available,
                                   (i - 1, fetch_count, len(texts), decode_step), lines))
        return Instruction(
            index=index, syntax=syntax, mnemonic=mnemonic, operands=operands, fields=fields,
            word_count=len(encoding), fixed=fixed, steps=tuple(steps),
            holders={w: reg for w, (_s, reg) in holders.items()}, call=call, returns=returns,
            decode_words=decode_words, decode_step=decode_step,
        )

    def entry(self, raw, where: str, key: tuple) -> tuple[str, list[str] | None]:
        return step_entry(raw, lambda message: self.fail_at(where, key, message))

    def parse(self, text: str, where: str, key: tuple):
        try:
            return parse_step(text)
        except MachineError as exc:
            self.fail_at(where, key, exc.message)

    def step(self, names: MachineNames, statements, text: str, where: str, key: tuple,
             fields, available, position=None, lines: list[str] | None = None) -> Step:
        """One checked step; ``position`` is (own index, fetch steps, own steps, decode step)
        for an instruction's step, None for a fetch step; ``lines`` the builder's names of its
        control lines (None: the names its statements imply)."""
        checker = StepChecker(names, where, fields, available,
                              lambda at, message: self.fail_at(at, key, message))
        for st in statements:
            checker.statement(st)
        checker.finish()
        if checker.sequencing is not None and position is None:
            checker.fail("fetch steps run in order: no end, goto or wait until (they belong to an "
                         "instruction's own steps)")
        jump = None if checker.sequencing is None else resolve_jump(checker.sequencing, position, checker.fail)
        plain, gated = (tuple(checker.lines), ()) if lines is None else \
            read_named_lines(lines, checker, names, fields, available)
        return Step(text.strip() or "idle", statements, plain, checker.halts, jump, gated)


def _computed(steps: tuple[Step, ...], register: str) -> bool:
    """Whether the value the fetch steps leave in ``register`` passed through the ALU, an
    input port or a choice: the engine peeks at the next opcode by replaying plain transfers."""
    computed: dict[str, bool] = {}
    for step in steps:
        updates = {}
        for st in step.statements:
            if isinstance(st, Assign) and isinstance(st.target, Name):
                nodes = list(walk(st.value))
                updates[st.target.name] = any(isinstance(n, (Input, Call, Choose)) for n in nodes) or any(
                    isinstance(n, Name) and computed.get(n.name, False) for n in nodes)
        computed.update(updates)
    return computed.get(register, False)

