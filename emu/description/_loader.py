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
import tomllib
from importlib import resources
from pathlib import Path

from ..errors import MachineError
from ._design_rules import StepChecker
from ._model import (FLAG_ROLES, INPUT_DEVICES, OUTPUT_DEVICES, Field, FieldPiece, Flag, Instruction,
                     Machine, OperandKind, OperandPattern, Phase, Register, RegisterPair, Step)
from .notation import Assign, Halt, Mem, Name, Output, parse_step, walk

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
    return machine_from_text(text, str(path))


def machine_from_text(text: str, path: str = "<machine>") -> Machine:
    try:
        data = tomllib.loads(text)
    except tomllib.TOMLDecodeError as exc:
        raise MachineError(f"not valid TOML: {exc}", path=path) from None
    except RecursionError:
        raise MachineError("not a machine description (nested too deeply)", path=path) from None
    return _Loader(data, path).machine()


_SECTIONS = ("machine", "registers", "internal", "pairs", "flags", "operands", "ports",
             "clock", "fetch", "instruction", "assembler", "timing", "wear")
_SYNTAX_OPERAND = re.compile(r"^(?P<before>[^A-Za-z_]*)(?P<field>[A-Za-z_]\w*):(?P<kind>[A-Za-z_]\w*)(?P<after>.*)$")
_ENCODING_TOKEN = re.compile(r"^(?:(?P<bits>[01]+)|(?P<field>[A-Za-z_]\w*)(?:\[(?P<hi>\d+):(?P<lo>\d+)\])?)$")
_IDENTIFIER = re.compile(r"^[A-Za-z_]\w*$")


class _Loader:
    """Reads one TOML document; each method checks and builds one section."""

    def __init__(self, data: dict, path: str):
        self.data = data
        self.path = path

    def fail(self, where: str | None, message: str):
        raise MachineError(message, path=self.path, where=where)

    # -- typed access with messages that say what was expected

    def table(self, parent: dict, key: str, where: str, required=True) -> dict:
        value = parent.get(key)
        if value is None:
            if required:
                self.fail(where, f"missing key '{key}' (a table)")
            return {}
        if not isinstance(value, dict):
            self.fail(where, f"'{key}' must be a table, not {_kind(value)}")
        return value

    def integer(self, parent: dict, key: str, where: str, *, low=None, high=None, default=None) -> int:
        value = parent.get(key, default)
        if value is None:
            self.fail(where, f"missing key '{key}' (an integer)")
        if not isinstance(value, int) or isinstance(value, bool):
            self.fail(where, f"'{key}' must be an integer, not {_kind(value)}")
        if low is not None and value < low or high is not None and value > high:
            span = f"{low}…{high}" if high is not None else f"at least {low}"
            self.fail(where, f"'{key}' must be {span}, not {value}")
        return value

    def string(self, parent: dict, key: str, where: str, default=None) -> str:
        value = parent.get(key, default)
        if value is None:
            self.fail(where, f"missing key '{key}' (a string)")
        if not isinstance(value, str):
            self.fail(where, f"'{key}' must be a string, not {_kind(value)}")
        return value

    def known_keys(self, table: dict, allowed: tuple[str, ...], where: str):
        for key in table:
            if key not in allowed:
                self.fail(where, f"unknown key '{key}' (expected one of: {', '.join(allowed)})")

    # -- sections

    def machine(self) -> Machine:
        self.known_keys(self.data, _SECTIONS, "top level")
        head = self.table(self.data, "machine", "top level")
        self.known_keys(head, ("name", "title", "data_bits", "address_bits", "memory_words",
                               "program_counter", "instruction_register"), "[machine]")
        name = self.string(head, "name", "[machine]")
        data_bits = self.integer(head, "data_bits", "[machine]", low=1, high=16)
        address_bits = self.integer(head, "address_bits", "[machine]", low=1, high=24)
        memory_words = self.integer(head, "memory_words", "[machine]", low=1, high=1 << address_bits,
                                    default=1 << address_bits)
        if memory_words & (memory_words - 1):
            self.fail("[machine]", f"'memory_words' must be a power of two, not {memory_words}")
        self.data_bits = data_bits
        self.address_bits = address_bits

        registers, pairs = self.registers()
        flags = self.flags(len(registers))
        self.names = {**{n: "register" for n in registers}, **{n: "register pair" for n in pairs},
                      **{n: "flag" for n in flags}}
        pc = self.string(head, "program_counter", "[machine]", default="pc")
        ir = self.string(head, "instruction_register", "[machine]", default="ir")
        for key, reg in (("program_counter", pc), ("instruction_register", ir)):
            if reg not in registers:
                self.fail("[machine]", f"'{key}' names '{reg}', which is not a register")
        if registers[ir].width != data_bits:
            self.fail("[machine]", f"the instruction register '{ir}' must be {data_bits} bits wide (data_bits)")
        self.registers_, self.pairs_, self.flags_ = registers, pairs, flags
        self.pc, self.ir = pc, ir

        kinds = self.operand_kinds()
        ports_out, ports_in = self.ports()
        stages, phases = self.clock()
        fetch = self.fetch()
        instructions = self.instructions(kinds)
        assembler = self.table(self.data, "assembler", "top level", required=False)
        self.known_keys(assembler, ("pause",), "[assembler]")
        pause = self.string(assembler, "pause", "[assembler]", default="halt")
        halting = [i for i in instructions if i.drives_halt and not i.operands]
        if pause.lower() not in {i.mnemonic for i in halting}:
            choices = ", ".join(i.mnemonic for i in halting) or "none"
            self.fail("[assembler]", f"'pause' must name an instruction without operands that drives halt "
                                     f"(candidates: {choices}), not '{pause}'")

        machine = Machine(
            name=name, title=self.string(head, "title", "[machine]", default=name), path=self.path,
            data_bits=data_bits, address_bits=address_bits, memory_words=memory_words,
            registers=registers, pairs=pairs, flags=flags, operand_kinds=kinds,
            ports_out=ports_out, ports_in=ports_in, ring_stages=stages, phases=phases,
            fetch=fetch, instructions=instructions, program_counter=pc,
            instruction_register=ir, pause=pause.lower(),
            extra={k: self.data[k] for k in ("timing", "wear") if k in self.data},
        )
        self.check_overlaps(machine)
        return machine

    def registers(self):
        registers: dict[str, Register] = {}
        for section, internal in (("registers", False), ("internal", True)):
            table = self.table(self.data, section, "top level", required=not internal)
            for reg_name, width in table.items():
                where = f"[{section}] {reg_name}"
                if not _IDENTIFIER.match(reg_name):
                    self.fail(where, "a register name must be an identifier")
                if reg_name in registers:
                    self.fail(where, "register declared twice")
                if not isinstance(width, int) or isinstance(width, bool) or not 1 <= width <= 32:
                    self.fail(where, f"a register width must be an integer 1…32 (bits), not {width!r}")
                registers[reg_name] = Register(reg_name, width, len(registers), internal)
        pairs = {}
        for pair_name, parts in self.table(self.data, "pairs", "top level", required=False).items():
            where = f"[pairs] {pair_name}"
            if (not isinstance(parts, list) or len(parts) != 2
                    or not all(isinstance(p, str) and p in registers for p in parts)):
                self.fail(where, "a pair must be a list of two registers, high first, e.g. [\"r6\", \"r7\"]")
            if pair_name in registers:
                self.fail(where, "a pair must not have the name of a register")
            high, low = parts
            pairs[pair_name] = RegisterPair(pair_name, high, low, registers[high].width + registers[low].width)
        return registers, pairs

    def flags(self, first_slot: int) -> dict[str, Flag]:
        flags = {}
        for flag_name, role in self.table(self.data, "flags", "top level").items():
            where = f"[flags] {flag_name}"
            if role not in FLAG_ROLES:
                self.fail(where, f"a flag's role must be one of {', '.join(FLAG_ROLES)}, not {role!r}")
            if any(f.role == role for f in flags.values()):
                self.fail(where, f"two flags have the role '{role}'")
            if flag_name in self.data.get("registers", {}) or flag_name in self.data.get("internal", {}):
                self.fail(where, "a flag must not have the name of a register")
            flags[flag_name] = Flag(flag_name, role, first_slot + len(flags))
        return flags

    def operand_kinds(self) -> dict[str, OperandKind]:
        kinds = {}
        for kind_name, spec in self.table(self.data, "operands", "top level").items():
            where = f"[operands] {kind_name}"
            if not isinstance(spec, dict):
                self.fail(where, "an operand kind must be a table, e.g. { bits = 8, min = 0, max = 255 }")
            self.known_keys(spec, ("registers", "bits", "min", "max"), where)
            if "registers" in spec:
                regs = spec["registers"]
                if not isinstance(regs, list) or not regs:
                    self.fail(where, "'registers' must be a non-empty list of register names")
                for reg in regs:
                    if reg not in self.registers_:
                        self.fail(where, f"unknown register '{reg}' in 'registers'")
                    if regs.count(reg) > 1:
                        self.fail(where, f"register '{reg}' is listed twice in 'registers'")
                bits = max(1, (len(regs) - 1).bit_length())
                kinds[kind_name] = OperandKind(kind_name, bits, 0, len(regs) - 1, tuple(regs))
            else:
                bits = self.integer(spec, "bits", where, low=1, high=32)
                low = self.integer(spec, "min", where, default=0)
                high = self.integer(spec, "max", where, default=(1 << bits) - 1)
                if low > high:
                    self.fail(where, f"'min' ({low}) is above 'max' ({high})")
                if high >= 1 << bits or low < -(1 << (bits - 1)):
                    self.fail(where, f"{bits} bits hold {-(1 << (bits - 1))}…{(1 << bits) - 1} at most "
                                     f"(signed or unsigned), not {low}…{high}")
                kinds[kind_name] = OperandKind(kind_name, bits, low, high)
        return kinds

    def ports(self):
        table = self.table(self.data, "ports", "top level", required=False)
        self.known_keys(table, ("in", "out"), "[ports]")
        result = []
        for direction, devices in (("out", OUTPUT_DEVICES), ("in", INPUT_DEVICES)):
            ports = {}
            for number, device in self.table(table, direction, "[ports]", required=False).items():
                where = f"[ports.{direction}] {number}"
                if not number.isdigit() or int(number) > 255:
                    self.fail(where, "a port number must be 0…255")
                if device not in devices:
                    self.fail(where, f"an {direction} port device must be one of {', '.join(devices)}, not {device!r}")
                ports[int(number)] = device
            result.append(ports)
        return result

    def clock(self):
        clock = self.table(self.data, "clock", "top level")
        self.known_keys(clock, ("stages", "phase"), "[clock]")
        stages = self.integer(clock, "stages", "[clock]", low=1, high=64)
        table = clock.get("phase")
        if not isinstance(table, list) or len(table) < 2:
            self.fail("[clock]", "needs at least two [[clock.phase]] entries (one high, one low)")
        phases = []
        for i, spec in enumerate(table, 1):
            where = f"[[clock.phase]] {i}"
            if not isinstance(spec, dict):
                self.fail(where, "a phase must be a table")
            self.known_keys(spec, ("name", "level", "ms", "ring", "hold"), where)
            name = self.string(spec, "name", where, default=f"phase{i}")
            where = f"[[clock.phase]] {i} ('{name}')"
            if any(p.name == name for p in phases):
                self.fail(where, f"two phases are named '{name}'; each phase needs a name of its own")
            level = self.integer(spec, "level", where, low=0, high=1)
            ms = spec.get("ms")
            if not isinstance(ms, (int, float)) or isinstance(ms, bool) or ms <= 0:
                self.fail(where, f"'ms' must be a positive number of milliseconds, not {ms!r}")
            ring = spec.get("ring", [])
            if not isinstance(ring, list) or not all(isinstance(s, int) and 1 <= s <= stages for s in ring):
                self.fail(where, f"'ring' must be a list of lit stage numbers 1…{stages}, not {ring!r}")
            hold = spec.get("hold", False)
            if not isinstance(hold, bool):
                self.fail(where, f"'hold' must be true or false, not {hold!r}")
            if hold and level == 1:
                self.fail(where, "a hold point must be on a phase with clock level 0; "
                                 "this phase has level 1 (holding there would cut a pulse short)")
            phases.append(Phase(name, level, round(ms * 1_000_000), tuple(ring), hold))
        levels = {p.level for p in phases}
        if levels != {0, 1}:
            self.fail("[clock]", "the phase table needs at least one high (level 1) and one low (level 0) phase")
        if not any(p.hold for p in phases):
            self.fail("[clock]", "the phase table has no hold point (hold = true): "
                                 "a stop or a halt could never freeze the clock")
        return stages, tuple(phases)

    # -- micro-steps

    def fetch(self) -> tuple[Step, ...]:
        spec = self.table(self.data, "fetch", "top level")
        self.known_keys(spec, ("steps",), "[fetch]")
        texts = spec.get("steps")
        if not isinstance(texts, list) or not texts or not all(isinstance(t, str) for t in texts):
            self.fail("[fetch]", "'steps' must be a non-empty list of micro-step strings")
        steps = tuple(self.step(text, f"[fetch] step {i}", {}, {}) for i, text in enumerate(texts, 1))
        writes_ir = any(isinstance(st, Assign) and st.target == Name(self.ir)
                        for step in steps for st in step.statements)
        if not writes_ir:
            self.fail("[fetch]", f"the fetch steps must load the instruction register '{self.ir}'")
        for i, step in enumerate(steps, 1):
            for st in step.statements:
                if isinstance(st, Assign) and isinstance(st.target, Mem) or isinstance(st, (Output, Halt)):
                    self.fail(f"[fetch] step {i}", "fetch steps may only read: no memory writes, output or halt")
        return steps

    def instructions(self, kinds) -> list[Instruction]:
        specs = self.data.get("instruction")
        if not isinstance(specs, list) or not specs:
            self.fail("top level", "needs [[instruction]] entries")
        result: list[Instruction] = []
        for spec in specs:
            ins = self.instruction(spec, len(result), kinds)
            twin = next((i for i in result if i.mnemonic == ins.mnemonic and i.operands == ins.operands), None)
            if twin is not None:
                self.fail(f"instruction '{ins.display}'", f"the same assembly form as instruction "
                                                          f"{twin.index + 1}: forms must differ")
            result.append(ins)
        return result

    def instruction(self, spec, index, kinds) -> Instruction:
        if not isinstance(spec, dict):
            self.fail(f"[[instruction]] {index + 1}", "an instruction must be a table")
        where = f"[[instruction]] {index + 1}"
        self.known_keys(spec, ("syntax", "encoding", "steps"), where)
        syntax = self.string(spec, "syntax", where).strip()
        where = f"instruction '{_strip_kinds(syntax)}'"
        mnemonic, operands, field_kinds = self.syntax(syntax, kinds, where)
        encoding = spec.get("encoding")
        if not isinstance(encoding, list) or not encoding or not all(isinstance(w, str) for w in encoding):
            self.fail(where, "'encoding' must be a non-empty list of word strings, e.g. [\"0001 rd\", \"imm\"]")
        fixed, fields = self.encoding(encoding, field_kinds, where)
        texts = spec.get("steps")
        if not isinstance(texts, list) or not all(isinstance(t, str) for t in texts):
            self.fail(where, "'steps' must be a list of micro-step strings (steps = [] for one "
                             "that only fetches)")
        holders = self.word_holders(texts, len(encoding), where)
        steps = []
        for i, text in enumerate(texts, 1):
            fetched_words = {w for w, (step_no, _reg) in holders.items() if step_no < i}
            available = {name: f for name, f in fields.items()
                         if all(p.word in fetched_words for p in f.pieces)}
            steps.append(self.step(text, f"{where} step {len(self.fetch_texts()) + i}", fields, available))
        return Instruction(
            index=index, syntax=syntax, mnemonic=mnemonic, operands=operands, fields=fields,
            word_count=len(encoding), fixed=fixed, steps=tuple(steps),
            holders={w: reg for w, (_s, reg) in holders.items()},
        )

    def fetch_texts(self):
        return self.data["fetch"]["steps"]

    def syntax(self, syntax: str, kinds, where):
        head, _, rest = syntax.partition(" ")
        mnemonic = head.lower()
        if not _IDENTIFIER.match(mnemonic):
            self.fail(where, "the syntax must start with a mnemonic")
        operands, field_kinds = [], {}
        for part in filter(None, (p.strip() for p in rest.split(","))) if rest.strip() else ():
            m = _SYNTAX_OPERAND.match(part)
            if m:
                if m["kind"] not in kinds:
                    self.fail(where, f"unknown operand kind '{m['kind']}' (kinds: {', '.join(kinds)})")
                if m["field"] in field_kinds:
                    self.fail(where, f"operand field '{m['field']}' appears twice")
                if m["field"] in self.names:
                    self.fail(where, f"operand field '{m['field']}' has the name of a {self.names[m['field']]}")
                field_kinds[m["field"]] = kinds[m["kind"]]
                operands.append(OperandPattern(m["before"].lower().replace(" ", ""), m["field"],
                                               m["after"].lower().replace(" ", "")))
            else:
                operands.append(OperandPattern(part.lower().replace(" ", ""), None, ""))
        return mnemonic, tuple(operands), field_kinds

    def encoding(self, words, field_kinds, where):
        fixed, pieces = [], {name: [] for name in field_kinds}
        for w, text in enumerate(words):
            position, mask, value = self.data_bits, 0, 0
            for token in text.split():
                m = _ENCODING_TOKEN.match(token)
                if not m:
                    self.fail(where, f"cannot read encoding token '{token}' in word {w + 1} "
                                     f"(expected bits like 0101, a field name, or field[hi:lo])")
                if m["bits"]:
                    position -= len(m["bits"])
                    if position >= 0:
                        mask |= ((1 << len(m["bits"])) - 1) << position
                        value |= int(m["bits"], 2) << position
                    continue
                name = m["field"]
                if name not in field_kinds:
                    self.fail(where, f"encoding word {w + 1} names '{name}', which is not an operand field "
                                     f"of this instruction (fields: {', '.join(field_kinds) or 'none'})")
                kind = field_kinds[name]
                hi, lo = (int(m["hi"]), int(m["lo"])) if m["hi"] else (kind.bits - 1, 0)
                if hi < lo or hi >= kind.bits:
                    self.fail(where, f"slice {name}[{hi}:{lo}] is outside the {kind.bits} bits of '{name}'")
                position -= hi - lo + 1
                pieces[name].append(FieldPiece(w, max(position, 0), hi - lo + 1, lo))
            if position != 0:
                used = self.data_bits - position
                self.fail(where, f"encoding word {w + 1} has {used} bits, expected {self.data_bits} (data_bits)")
            fixed.append((mask, value))
        fields = {}
        for name, kind in field_kinds.items():
            covered = [0] * kind.bits
            for piece in pieces[name]:
                for b in range(piece.field_bit, piece.field_bit + piece.width):
                    covered[b] += 1
            if covered != [1] * kind.bits:
                self.fail(where, f"the encoding must place each of the {kind.bits} bits of '{name}' exactly once")
            fields[name] = Field(name, kind, tuple(pieces[name]))
        if fixed[0][0] == 0:
            self.fail(where, "the first encoding word needs fixed opcode bits")
        return tuple(fixed), fields

    def word_holders(self, texts, word_count, where):
        """Which step fetches each later word (a step reading mem[pc]) and where it lands."""
        holders = {0: (0, self.ir)}
        fetch_reads = 0
        for i, text in enumerate(texts, 1):
            try:
                statements = parse_step(text)
            except MachineError as exc:
                self.fail(f"{where} step {len(self.fetch_texts()) + i}", exc.message)
            if not any(node == Mem(Name(self.pc)) for st in statements for node in walk(st)):
                continue
            fetch_reads += 1
            for st in statements:
                if isinstance(st, Assign) and st.value == Mem(Name(self.pc)) and isinstance(st.target, Name):
                    holders[fetch_reads] = (i, st.target.name)
        if fetch_reads != word_count - 1:
            plural = "s" if word_count != 1 else ""
            self.fail(where, f"the encoding has {word_count} word{plural} but the micro-steps read {fetch_reads} "
                             f"after the opcode (each later word needs a step that reads mem[{self.pc}])")
        return holders

    def step(self, text, where, fields, available) -> Step:
        try:
            statements = parse_step(text)
        except MachineError as exc:
            self.fail(where, exc.message)
        checker = StepChecker(self, where, fields, available)
        for st in statements:
            checker.statement(st)
        checker.finish()
        return Step(text.strip(), statements, tuple(checker.lines), checker.halts)

    def check_overlaps(self, machine: Machine):
        owner = [-1] * (1 << self.data_bits)
        for ins in machine.instructions:
            for word in ins.first_words(self.data_bits):
                if owner[word] >= 0:
                    other = machine.instructions[owner[word]]
                    width = (self.data_bits + 3) // 4
                    self.fail(f"instruction '{ins.display}'",
                              f"its encoding overlaps instruction '{other.display}' at first word "
                              f"0x{word:0{width}X}; the first word alone must tell instructions apart")
                owner[word] = ins.index


def _strip_kinds(syntax: str) -> str:
    return re.sub(r":[A-Za-z_]\w*", "", syntax)


def _kind(value) -> str:
    return {bool: "a boolean", int: "an integer", float: "a number", str: "a string",
            list: "a list", dict: "a table"}.get(type(value), type(value).__name__)
