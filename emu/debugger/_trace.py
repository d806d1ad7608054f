"""A recording of the last clock cycles, for the timing diagram.

The recorder is an engine observer. Each *column* is one thing the clock
did: a phase the generator ran, a STEP pulse from the panel, or a freeze at
a hold point. Columns keep what a person would see on a logic analyser at
that moment (clock level, lit ring stages, hold line, halt latch) plus the
control lines driven while the clock was high and the panel actions taken,
so the diagram can show where a halt or a stop took effect.

It also keeps what *the bus* carried in each micro-step (``Bus``): the
value of the step's one transfer, as the panel's bus lamps would hold it.
"""

from __future__ import annotations

from collections import deque
from dataclasses import dataclass, field

from emu import Observer
from emu.description.notation import Assign, Call, Const, Join, Mem, Name, Offset, Output, value_width

__all__ = ["Bus", "Column", "Recorder", "bus_probe"]

CAPACITY = 4096
"""Columns kept: with ref8's four phases a cycle, about a thousand cycles."""


@dataclass
class Column:
    kind: str
    """``"phase"``, ``"pulse"`` (a STEP press) or ``"frozen"`` (the generator held)."""
    cycle: int
    """Number of the cycle this column belongs to (the engine's count when it began)."""
    level: int
    ring: tuple[int, ...]
    hold: bool
    latch: bool
    lines: set[str] = field(default_factory=set)
    actions: list[str] = field(default_factory=list)
    """Panel actions taken just before this column, and the latch being set."""
    latched: bool = False
    """A high column whose cycle's micro-step has latched (``bus`` is then known)."""
    bus: "Bus | None" = None
    """What the bus carried in that micro-step; None when it was dark."""
    idle: bool = False
    """True for the high columns of an idle cycle: its micro-step drives no control line."""


@dataclass(frozen=True)
class Bus:
    """The value on the bus in one micro-step, and where it went.

    The bus is taken to be the path of the step's *transfer*: the first
    ``dst <- value``, ``mem[a] <- value`` or ``out(port, value)`` of the
    step, leaving out transfers through the incrementer (``e + 1``) when
    there is another. Its value is what the destination latched, in the
    destination's width. A step with no transfer (``halt``, an empty
    fetch) leaves the bus dark: no ``Bus``.
    """
    value: int
    bits: int
    register: str | None = None
    address: int | None = None
    port: int | None = None


def _transfer(step):
    transfers = [st for st in step.statements if isinstance(st, (Assign, Output))]
    chosen = [st for st in transfers if not isinstance(st.value, Offset)] or transfers
    return chosen[0] if chosen else None


class _BeforeTheStep:
    """Reads plain expressions (names, constants, joins, the incrementer, memory)
    on the state before a micro-step latches; None for anything else."""

    def __init__(self, emu, instruction):
        self.emu, self.instruction = emu, instruction
        self.fields = instruction.fields if instruction is not None else {}

    def field(self, name: str) -> int:
        value = 0
        for piece in self.fields[name].pieces:
            holder = self.emu.get(self.instruction.holders[piece.word])
            value |= (holder >> piece.shift & (1 << piece.width) - 1) << piece.field_bit
        return value

    def register_of(self, name: str) -> str | None:
        """The register or pair that ``name`` (perhaps a register field) stands for."""
        if name in self.fields:
            kind = self.fields[name].kind
            if not kind.is_register:
                return None
            index = self.field(name)
            return kind.registers[index] if index < len(kind.registers) else None
        return name

    def width(self, node) -> int:
        m = self.emu.machine
        return value_width(node, m, self.fields)

    def value(self, node) -> int | None:
        m = self.emu.machine
        match node:
            case Name(name) if name in self.fields and not self.fields[name].kind.is_register:
                return self.field(name)
            case Name(name):
                register = self.register_of(name)
                return None if register is None else self.emu.get(register)
            case Const(value):
                return value
            case Offset(base, delta):
                base_value = self.value(base)
                return None if base_value is None else base_value + delta & (1 << self.width(base)) - 1
            case Join(parts):
                values = [self.value(part) for part in parts]
                if None in values:
                    return None
                joined = 0
                for part, value in zip(parts, values):
                    joined = joined << self.width(part) | value
                return joined
            case Mem(address):
                at = self.value(address)
                return None if at is None else self.emu.memory[at & m.memory_words - 1]
            case Call("hi", (arg,)):
                whole = self.value(arg)
                return None if whole is None else whole >> m.data_bits & m.data_mask
            case Call("lo", (arg,)):
                whole = self.value(arg)
                return None if whole is None else whole & m.data_mask
        return None


def bus_probe(emu):
    """Called just before a micro-step latches: a function that, called after it,
    gives what the bus carried (a ``Bus``), or None when nothing is known."""
    step, (instruction, _) = emu.current_step, emu.sequencer
    transfer = _transfer(step)
    if transfer is None:
        return lambda: None
    m = emu.machine
    before = _BeforeTheStep(emu, instruction)
    if isinstance(transfer, Output):
        value, port = before.value(transfer.value), before.value(transfer.port)
        if value is None:
            return lambda: None
        bits = before.width(transfer.value)     # as wide as the port's device takes: 8 to the console
        return lambda: Bus(value & (1 << bits) - 1, bits, port=port)
    if isinstance(transfer.target, Mem):
        address = before.value(transfer.target.address)
        if address is None:
            return lambda: None
        address &= m.memory_words - 1
        return lambda: Bus(emu.memory[address], m.data_bits, address=address)
    register = before.register_of(transfer.target.name)
    if register is None:
        return lambda: None
    bits = 1 if register in m.flags else m.register_width(register)
    return lambda: Bus(emu.get(register), bits, register=register)


class Recorder(Observer):
    def __init__(self, machine, capacity: int = CAPACITY):
        self.machine = machine
        self.columns: deque[Column] = deque(maxlen=capacity)
        self._pending: list[str] = []
        self._high: list[Column] = []
        self._probe = None
        self.gap = False
        """True when the columns do not reach back to the start of the recording
        (a long run was replayed only for its last cycles)."""

    def clear(self) -> None:
        self.columns.clear()
        self._pending.clear()
        self._high.clear()
        self._probe = None
        self.gap = False

    def _add(self, emu, kind: str, level: int, ring) -> Column:
        column = Column(kind, emu.cycles + 1 if level else emu.cycles, level, tuple(ring),
                        emu.hold_line, emu.halt_latch, actions=self._pending)
        self._pending = []
        self.columns.append(column)
        if level:
            self._high.append(column)
        return column

    def phase(self, emu, index: int) -> None:
        phase = self.machine.phases[index]
        if phase.level and (not self.columns or not self.columns[-1].level):
            self._high = []
        self._add(emu, "phase", phase.level, phase.ring)

    def edge(self, emu, level: int) -> None:
        if level == 0:
            self._probe = bus_probe(emu)
        if level == 1 and emu.frozen:
            self._high = []
            self._add(emu, "pulse", 1, self.machine.phases[emu.phase_index].ring)

    def microstep(self, emu, step, lines) -> None:
        bus = self._probe() if self._probe is not None else None
        self._probe = None
        for column in self._high:
            column.lines.update(lines)
            column.latched, column.bus = True, bus
            column.idle = not lines
        self._high = []
        if emu.frozen:
            self._add(emu, "frozen", 0, self.machine.phases[emu.phase_index].ring)

    def hold(self, emu, frozen: bool) -> None:
        if frozen:
            self._add(emu, "frozen", 0, self.machine.phases[emu.phase_index].ring)

    def latch(self, emu, is_set: bool) -> None:
        self._pending.append("latch set" if is_set else "latch clear")

    def panel(self, emu, action: str) -> None:
        if action != "step":
            self._pending.append(action)

    @property
    def last_bus(self) -> Bus | None:
        """What the bus carried in the last micro-step recorded (kept in the columns,
        so it survives the replay of a fast run); None if nothing is known."""
        for column in reversed(self.columns):
            if column.latched:
                return column.bus
        return None

    def last_cycles(self, count: int) -> list[Column]:
        """The columns of the last ``count`` cycles (a cycle starts at a rising edge)."""
        columns = list(self.columns)
        starts = [i for i, c in enumerate(columns)
                  if c.level and (i == 0 or not columns[i - 1].level)]
        if len(starts) <= count:
            return columns
        return columns[starts[-count]:]
