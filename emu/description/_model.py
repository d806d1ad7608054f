"""The parts of a machine description, as the loader builds them.

These objects are what every other part reads: the assembler's syntax and
encodings, the disassembler's decoding, the compiler's micro-steps, the
control unit's phase table and ``relaybench isa``'s listing. The loader
(``_loader``) checks a file before any of them is built; a micro-step and
its sequencing are in ``_steps``.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from functools import cached_property

from ._alu import builtin_alu_ops
from ._call_marks import CallMark
from ._port_devices import devices_for
from ._sections import TimingSection, WearRatings
from ._steps import Cycles, GatedLine, Jump, Step, step_paths
from .notation import Assign, FlagsOnly, Name

__all__ = [
    "Machine", "MachineNames", "Instruction", "Step", "GatedLine", "Jump", "Cycles", "DecodeGroup", "Register", "RegisterGroup",
    "Flag",
    "OperandKind", "OperandPattern", "Field", "FieldPiece", "Phase",
    "FLAG_ROLES", "PLAIN_FLAG", "INPUT_DEVICES", "OUTPUT_DEVICES", "stage_relay",
]

FLAG_ROLES = ("zero", "negative", "carry", "overflow")
"""What an ALU operation may produce into a flag; a flag may instead be ``PLAIN_FLAG``."""
PLAIN_FLAG = "plain"
"""A 1-bit register that transfers write (``rdy <- in(2)[0]``), with no ALU meaning."""
OUTPUT_DEVICES = devices_for("out")
INPUT_DEVICES = devices_for("in")


# ----- the parts of a machine ----------------------------------------------

@dataclass(frozen=True)
class Register:
    name: str
    width: int
    slot: int
    internal: bool


@dataclass(frozen=True)
class RegisterGroup:
    """Two or more registers read and written as one wider value, most significant first."""
    name: str
    parts: tuple[str, ...]
    width: int


@dataclass(frozen=True)
class Flag:
    name: str
    role: str
    slot: int


@dataclass(frozen=True)
class OperandKind:
    """What may stand in an operand position: a register set, a set of register groups
    (pointer pairs, all of one shape) or a number range."""
    name: str
    bits: int
    low: int
    high: int
    registers: tuple[str, ...] = ()
    """The names a field of this kind selects, by field value: registers, or groups."""
    selects_groups: bool = False
    """``registers`` names groups: a field selects a whole group, read and written as one value."""
    signed: bool = False
    """Values are two's complement (range −2^(bits−1)…2^(bits−1)−1 unless min/max say otherwise)."""
    relative: str | None = None
    """``"next"``: the field holds label − the address after the instruction; ``"this"``: label − its own."""
    value_names: tuple[tuple[str, int], ...] = ()
    """A number kind's named values (``nz`` → 0b1001), as the file spells them, in file order."""

    def value_named(self, text: str) -> int | None:
        """The value a name stands for (any case, as registers are matched), or None."""
        lowered = text.lower()
        return next((value for name, value in self.value_names if name.lower() == lowered), None)

    def name_of(self, value: int) -> str | None:
        """The name the disassembler writes for ``value``, or None when it has none."""
        return next((name for name, named in self.value_names if named == value), None)

    def distance_base(self, address: int, word_count: int) -> int:
        """The address a relative field's distance is counted from, for an instruction at ``address``."""
        return address + word_count if self.relative == "next" else address

    @property
    def is_register(self) -> bool:
        return bool(self.registers)

    def describe(self) -> str:
        """``r0–r7`` for a numbered run of registers, else the names: ``a, b or c``."""
        if self.registers:
            match = [re.fullmatch(r"(\D*)(\d+)", r) for r in self.registers]
            if all(match) and len({m[1] for m in match}) == 1 and len(self.registers) > 2 and \
                    [int(m[2]) for m in match] == list(range(int(match[0][2]), int(match[0][2]) + len(match))):
                return f"{self.registers[0]}–{self.registers[-1]}"
            return ", ".join(self.registers[:-1]) + f" or {self.registers[-1]}" if len(self.registers) > 1 \
                else self.registers[0]
        if self.value_names:
            return ", ".join(name for name, _value in self.value_names) + f" or a number {self.low}…{self.high}"
        return f"{self.low}…{self.high}"


@dataclass(frozen=True)
class FieldPiece:
    """``width`` bits of a field, from its bit ``field_bit`` up, at ``shift`` in word ``word``."""
    word: int
    shift: int
    width: int
    field_bit: int


@dataclass(frozen=True)
class Field:
    name: str
    kind: OperandKind
    pieces: tuple[FieldPiece, ...]


@dataclass(frozen=True)
class OperandPattern:
    """One operand of an assembly form: literal text around at most one field.

    ``[addr:addr]`` is before="[", field="addr", after="]"; ``x`` is a pure
    literal (field None). Literal text is kept in lower case.
    """
    before: str
    field: str | None
    after: str

    def text(self) -> str:
        return self.before + (self.field or "") + self.after


@dataclass(frozen=True)
class Phase:
    name: str
    level: int
    duration_ns: int
    ring: tuple[int, ...]
    hold: bool


@dataclass
class Instruction:
    index: int
    syntax: str
    mnemonic: str
    operands: tuple[OperandPattern, ...]
    fields: dict[str, Field]
    word_count: int
    fixed: tuple[tuple[int, int], ...]
    steps: tuple[Step, ...]
    holders: dict[int, str]
    """word index → the register holding that word after it was fetched."""
    call: CallMark | None = None
    """How it calls a routine, as the machine file marks it (None: no call, or unmarked)."""
    returns: bool = False
    """Marked as the return from a routine (``returns = true``)."""
    decode_words: int = 1
    """How many leading words tell this instruction apart (``decode_words`` in the file)."""
    decode_step: int = -1
    """Index of the own step after which it is decoded (the one fetching its last decoding word); -1: the fetch."""

    @property
    def display(self) -> str:
        """The assembly form without operand kinds, as a programmer writes it."""
        ops = ", ".join(op.text() for op in self.operands)
        return f"{self.mnemonic} {ops}".strip()

    def cycles(self, machine: "Machine") -> Cycles:
        """Clock cycles of the whole instruction, the fetch steps included: shortest and longest path."""
        shortest, longest = step_paths(self.steps)
        fetch = len(machine.fetch)
        return Cycles(fetch + shortest, None if longest is None else fetch + longest)

    @property
    def has_loop(self) -> bool:
        return step_paths(self.steps)[1] is None

    @property
    def has_jumps(self) -> bool:
        return any(step.jump is not None for step in self.steps)

    def first_words(self, data_bits: int):
        """Every first-word value that decodes to this instruction.

        Values whose first-word register fields name no register (3 in a
        2-bit field over three registers) are left out: they are undefined.
        """
        mask, value = self.fixed[0]
        free = [b for b in range(data_bits) if not mask >> b & 1]
        checked = [(f, len(f.kind.registers)) for f in self.fields.values()
                   if f.kind.is_register and len(f.kind.registers) < 1 << f.kind.bits
                   and all(p.word == 0 for p in f.pieces)]
        for combo in range(1 << len(free)):
            word = value
            for i, bit in enumerate(free):
                if combo >> i & 1:
                    word |= 1 << bit
            if all(self.decode([word] + [0] * (self.word_count - 1))[f.name] < count for f, count in checked):
                yield word

    @property
    def drives_halt(self) -> bool:
        return any(step.drives_halt for step in self.steps)

    def encode(self, values: dict[str, int]) -> list[int]:
        """Field values (already range-checked, register fields as indices) → words."""
        words = [value for _mask, value in self.fixed]
        for name, fld in self.fields.items():
            value = values[name] & ((1 << fld.kind.bits) - 1)
            for piece in fld.pieces:
                bits = (value >> piece.field_bit) & ((1 << piece.width) - 1)
                words[piece.word] |= bits << piece.shift
        return words

    def matches(self, words) -> bool:
        return len(words) >= self.word_count and all(
            (words[i] & mask) == value for i, (mask, value) in enumerate(self.fixed))

    def decode(self, words) -> dict[str, int]:
        """Words → raw field values (register fields as indices)."""
        values = {}
        for name, fld in self.fields.items():
            value = 0
            for piece in fld.pieces:
                value |= ((words[piece.word] >> piece.shift) & ((1 << piece.width) - 1)) << piece.field_bit
            values[name] = value
        return values

    def flags_written(self, machine: "Machine") -> tuple[str, ...]:
        written = []
        for step in self.steps:
            for st in step.statements:
                if isinstance(st, (Assign, FlagsOnly)):
                    written.extend(f for f in st.flags if f not in written)
                if isinstance(st, Assign) and isinstance(st.target, Name) and st.target.name in machine.flags:
                    written.append(st.target.name)
        return tuple(f for f in machine.flags if f in written)


@dataclass(frozen=True)
class DecodeGroup:
    """Instructions told apart only after some of their own steps (``decode_words`` ≥ 2).

    Every member shares the steps up to ``decode_step``; the sequencer runs
    them as the first member's, then looks the decoding words up in
    ``table`` (the words masked by ``masks`` and laid side by side, first
    word lowest) and goes on with the member found — or, when none is, ends
    the instruction as an undefined opcode.
    """
    members: tuple[int, ...]
    decode_step: int
    holders: tuple[str, ...]
    """The register holding each decoding word once the shared steps have run (the first: ir)."""
    masks: tuple[int, ...]
    data_bits: int
    table: dict[int, int]

    def key(self, words) -> int:
        return sum((word & mask) << (self.data_bits * k) for k, (word, mask) in enumerate(zip(words, self.masks)))

    def member_for(self, words) -> int:
        """The member the decoding words select, or -1 (an undefined opcode)."""
        return self.table.get(self.key(words), -1)


def stage_relay(stage: int) -> str:
    """The relay of clock-ring stage ``stage`` (from 1) of a ring whose stages the file does not name."""
    return f"stage {stage}"


@dataclass(frozen=True)
class MachineNames:
    """What the micro-steps may name, fixed once ``[machine]``, the registers and flags are read.

    The loader passes it to each later section (and to the design-rule
    checker) instead of keeping it on itself, so no section depends on the
    order in which another was read.
    """
    data_bits: int
    registers: dict[str, Register]
    groups: dict[str, RegisterGroup]
    flags: dict[str, Flag]
    pc: str
    ir: str
    alu_ops: dict = field(default_factory=builtin_alu_ops)
    """Operation name → ``AluOp``: the built-ins and the file's ``[alu.NAME]`` definitions."""
    ports_out: dict[int, str] = field(default_factory=dict)
    """Output port number → device name (``[ports] out``): what a step's ``out(N, …)`` may carry."""

    @property
    def kinds_of_name(self) -> dict[str, str]:
        return {**{n: "register" for n in self.registers}, **{n: "register group" for n in self.groups},
                **{n: "flag" for n in self.flags}}


@dataclass
class Machine:
    name: str
    title: str
    path: str
    data_bits: int
    address_bits: int
    memory_words: int
    registers: dict[str, Register]
    groups: dict[str, RegisterGroup]
    flags: dict[str, Flag]
    operand_kinds: dict[str, OperandKind]
    ports_out: dict[int, str]
    ports_in: dict[int, str]
    ring_stages: int
    phases: tuple[Phase, ...]
    fetch: tuple[Step, ...]
    instructions: list[Instruction]
    program_counter: str
    instruction_register: str
    pause: str
    step_press: str
    """What one STEP press gives (``[clock] step``): ``"pulse"``, one pulse from the panel with the
    ring standing still, or ``"hold"``, the ring running every pulse up to the next hold point."""
    power_on_phase: int
    """The index of the phase the ring stands in at power-on (``[clock] power_on``)."""
    timing: TimingSection | None = None
    """The checked ``[timing]`` section (the clock ring's parts), None when the file has none."""
    wear: WearRatings = field(default_factory=WearRatings)
    """The checked ``[wear]`` section; without one no rated life is known."""
    decode_groups: dict[int, DecodeGroup] = field(default_factory=dict)
    """First member's index → its decode group; ``decode_table`` sends the group's first words there."""
    alu_ops: dict = field(default_factory=builtin_alu_ops)
    """Operation name → ``AluOp``: the built-ins, then the file's own (a file's definition wins)."""
    stage_names: tuple[str, ...] = ()
    """The ring stages' names from ``[clock] stage_names``; empty: the stages are numbered."""

    def control_lines(self) -> list[str]:
        """Every control line some micro-step of the machine drives, in first-use order."""
        lines: list[str] = []
        for step in list(self.fetch) + [s for ins in self.instructions for s in ins.steps]:
            lines.extend(line for line in step.line_names if line not in lines)
        return lines

    def stage_relay(self, stage: int) -> str:
        """Ring stage ``stage`` (from 1) as wear, ``[wear.relays]`` and the scope name it."""
        return self.stage_names[stage - 1] if self.stage_names else stage_relay(stage)

    def stage_signal(self, stage: int) -> str:
        """Ring stage ``stage`` (from 1) as a waveform names it: its name, else ``stageN``."""
        return self.stage_names[stage - 1] if self.stage_names else f"stage{stage}"

    def relay_names(self) -> list[str]:
        """The relays whose wear is counted: the ring stages, then the control lines."""
        return [self.stage_relay(s) for s in range(1, self.ring_stages + 1)] + self.control_lines()

    @property
    def slot_count(self) -> int:
        """Registers, flags, and two spare slots for register fields that name no register.

        A 2-bit field over three registers can hold 3: such a value reads the
        first spare slot (always 0, an undriven bus) and writes the second.
        """
        return len(self.registers) + len(self.flags) + 2

    @property
    def undriven_slot(self) -> int:
        return len(self.registers) + len(self.flags)

    @property
    def data_mask(self) -> int:
        return (1 << self.data_bits) - 1

    @property
    def visible_registers(self) -> list[Register]:
        return [r for r in self.registers.values() if not r.internal]

    @property
    def visible_groups(self) -> list[RegisterGroup]:
        """The groups a program and the debugger see: a group made only of internal registers is internal."""
        return [g for g in self.groups.values() if not all(self.registers[p].internal for p in g.parts)]

    @property
    def visible_names(self) -> list[str]:
        """What ``.expect``, watches and the debugger's commands may name: visible registers, groups, flags."""
        return [r.name for r in self.visible_registers] + [g.name for g in self.visible_groups] + list(self.flags)

    @cached_property
    def decode_table(self) -> tuple[int, ...]:
        """First word value → instruction index (a decode group's first member), or -1 for an undefined opcode."""
        first_member = {m: first for first, group in self.decode_groups.items() for m in group.members}
        table = [-1] * (1 << self.data_bits)
        for ins in self.instructions:
            for word in ins.first_words(self.data_bits):
                table[word] = first_member.get(ins.index, ins.index)
        return tuple(table)

    @cached_property
    def cycle_ns(self) -> int:
        """Nominal time of one full turn of the phase table."""
        return sum(p.duration_ns for p in self.phases)

    @cached_property
    def pulses_per_turn(self) -> int:
        return sum(1 for i, p in enumerate(self.phases)
                   if p.level == 1 and self.phases[i - 1].level == 0)

    def after_step_press(self, index: int) -> tuple[int, int]:
        """(pulses given, phase index after) of one STEP press with the ring frozen at phase ``index``:
        one panel pulse with the ring standing still, or (``step = "hold"``) the ring's own
        pulses up to the next hold point it reaches."""
        if self.step_press == "pulse":
            return 1, index
        phases, pulses = self.phases, 0
        while True:
            following = (index + 1) % len(phases)
            pulses += phases[index].level == 1 and phases[following].level == 0
            index = following
            if phases[index].hold:
                return pulses, index

    def pulses_per_step_press(self) -> dict[str, int]:
        """Hold point name → the pulses (micro-steps) one STEP press gives while the ring stands there."""
        return {phase.name: self.after_step_press(i)[0] for i, phase in enumerate(self.phases) if phase.hold}

    @property
    def nominal_hz(self) -> float:
        return self.pulses_per_turn / (self.cycle_ns * 1e-9)

    def instruction_at(self, words) -> Instruction | None:
        index = self.decode_table[words[0]] if words else -1
        group = self.decode_groups.get(index)
        if group is not None:
            index = group.member_for(words[:len(group.masks)]) if len(words) >= len(group.masks) else -1
        if index < 0:
            return None
        ins = self.instructions[index]
        return ins if ins.matches(words) else None

    def selection_lanes(self, kind: OperandKind) -> list[tuple[str, ...]]:
        """What a register field selects among, one lane per part, most significant first.

        A register kind has one lane, its registers; a group kind one lane per part
        position, holding that part of each group (``ef``, ``gh`` → ``(e, g)``, ``(f, h)``):
        a field value picks the same entry of every lane, which is how the generated code
        reads and writes a group chosen at run time.
        """
        if not kind.selects_groups:
            return [kind.registers]
        return list(zip(*(self.groups[g].parts for g in kind.registers)))

    def selectable_registers(self, kind: OperandKind) -> set[str]:
        """Every register a field of this register or group kind may reach."""
        return {reg for lane in self.selection_lanes(kind) for reg in lane}

    def register_width(self, name: str) -> int:
        if name in self.groups:
            return self.groups[name].width
        return self.registers[name].width
