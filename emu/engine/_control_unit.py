"""The control unit and the emulator API that the runner, debugger and tests share.

The control unit is "Clock, halts and the panel" of emu/machines/ref8.md made
executable: the generator runs the phase table; the hold line is (switch at
stop) OR (halt latch); the generator looks at the hold line only on
*entering* a hold point, so it never cuts a pulse short; STEP acts only while the
generator is frozen, giving one panel pulse or (``[clock] step = "hold"``)
letting the ring run to the next hold point;
a step that drives halt sets the latch on its falling edge.

Two paths execute micro-steps. The stepping path runs the generator phase
by phase and calls one compiled function per falling edge; it serves
observers, panel stepping and every position that is not a clean
instruction boundary. The fast path runs fused instructions while nothing
can happen that the stepping path would place differently: no observer,
hold line low, sequencer at the first fetch step, ring just after a falling
edge, and a cycle budget that the next instruction cannot overrun. An
instruction it cannot fuse (a halt, an undefined word, a loop) runs there
one compiled micro-step a cycle, the ring skipping whole cycles, up to the
falling edge that sets the halt latch; only the way from there to the hold
point is walked phase by phase. Both paths come from the same compiled
description, so they agree (P6).
"""

from __future__ import annotations

import json
from collections import Counter
from collections.abc import Callable
from operator import itemgetter

from ._blocks import BlockRunner
from ._observing import Observer, _Observing
from ._run_loop import _FETCH_START, StopReason, _Running
from ._clock_ring import Ring
from ._line_gates import LineGates, per_machine
from ._line_tally import LineTally
from ._fused_functions import halting_step
from ._microstep_compiler import compile_machine
from ..description import Machine, Step
from ..errors import MachineError
from ..files import write_atomic
from ..formatting import address_text
from ._ports import Ports
from ._save_points import StateKeeping
from ._snapshots import read_snapshot, restore_state, snapshot_state

__all__ = ["Emulator", "StopReason"]


@per_machine
def _halting_steps(machine: Machine) -> list[int | None]:
    """Per instruction, the step that drives halt where a halting function reaches it (once per machine)."""
    return [halting_step(ins) for ins in machine.instructions]


class Emulator(_Observing, _Running, StateKeeping):
    """One powered-on machine: datapath, memory, ports, clock ring and control unit.

    ``run`` (letting the generator go, on the fast path where it can) is in ``_run_loop``."""

    def __init__(self, machine: Machine):
        self.machine = machine
        compiled = compile_machine(machine)
        self._s = [0] * machine.slot_count
        self.memory = bytearray(machine.memory_words) if machine.data_bits <= 8 else [0] * machine.memory_words
        self._whole_memory = memoryview(self.memory) if isinstance(self.memory, bytearray) else self.memory
        """What a whole image of memory is put back through: a view copies bytes twice as fast as the
        bytearray's own slice assignment (1.5 µs against 3 µs for 64 KB), which a sweep does every run."""
        self.ports = Ports(machine)
        bound = compiled.build(self._s, self.memory, self.ports.read, self.ports.write, self._count_undefined)
        self._fetch_steps, self._instruction_steps = bound.fetch_steps, bound.instruction_steps
        self._jumps = bound.instruction_jumps
        self._groups = {index: (group, [machine.registers[r].slot for r in group.holders])
                        for index, group in machine.decode_groups.items()}
        self._run_free, self._run_free_watching = bound.run_free, bound.run_free_watching
        self._run_free_stopping = bound.run_free_stopping
        self._halting, self._peek = bound.halting, bound.peek
        self._halting_steps = _halting_steps(machine)
        self._stop_tables: dict[tuple, tuple[bytes, tuple[int, ...]]] = {}
        self._max_fused = compiled.max_fused_cycles
        self.blocks = BlockRunner(machine, self._s, self.memory, self.ports.read, self.ports.write,
                                  bound.fused, self._run_free)
        self._phases = machine.phases
        self._decode = machine.decode_table
        self._pc = machine.registers[machine.program_counter].slot
        self._ir = machine.registers[machine.instruction_register].slot
        self._slots = {**{n: (r.slot, r.width) for n, r in machine.registers.items()},
                       **{n: (f.slot, 1) for n, f in machine.flags.items()}}
        self.ring = Ring(machine)
        self._observers: list[Observer] = []
        self._scheduled: list[tuple[int, bool, Observer]] = []
        """(cycle, attach or detach, observer) for observers of a window of cycles, by cycle."""
        self._next_scheduled: int | None = None
        self._gates = LineGates(machine, self._s, self.memory)
        self._tally: LineTally | None = None
        self._blank_slots = tuple(self._s)
        self._blank_memory = bytes(self.memory) if isinstance(self.memory, bytearray) else tuple(self.memory)
        self._power_on_control()

    def _power_on_control(self) -> None:
        """The control unit, counters and warnings as power-on leaves them."""
        self.switch_run = True
        self.halt_latch = False
        self.halt_address: int | None = None
        self.frozen = False
        self._released = False
        self._seq = _FETCH_START
        self._instruction_address = 0
        self.cycles = 0
        self.instructions = 0
        self._undefined: Counter[int] = Counter()

    # ----- loading and looking --------------------------------------------

    def load(self, segments) -> None:
        """Put an image into memory: ``[(start, [words]), …]``."""
        size = self.machine.memory_words
        for start, words in segments:
            if start < 0 or start + len(words) > size:
                raise MachineError(f"the image reaches address {start + len(words) - 1:#x}, "
                                   f"past the {size} words of memory of {self.machine.name}")
            mask = self.machine.data_mask
            self.memory[start:start + len(words)] = [w & mask for w in words]

    def get(self, name: str) -> int:
        """A register, register group (its parts side by side, first most significant) or flag by name."""
        group = self.machine.groups.get(name)
        if group is not None:
            value = 0
            for part in group.parts:
                value = value << self.machine.registers[part].width | self.get(part)
            return value
        try:
            slot, _width = self._slots[name]
        except KeyError:
            raise MachineError(f"{self.machine.name} has no register or flag '{name}'") from None
        return int(self._s[slot])

    def set(self, name: str, value: int) -> None:
        group = self.machine.groups.get(name)
        if group is not None:
            for part in reversed(group.parts):
                self.set(part, value)
                value >>= self.machine.registers[part].width
            return
        try:
            slot, width = self._slots[name]
        except KeyError:
            raise MachineError(f"{self.machine.name} has no register or flag '{name}'") from None
        self._s[slot] = value & ((1 << width) - 1)

    @property
    def pc(self) -> int:
        return self._s[self._pc]

    @property
    def hold_line(self) -> bool:
        return not self.switch_run or self.halt_latch

    @property
    def phase_index(self) -> int:
        return self.ring.index

    @property
    def time_ns(self) -> int:
        return self.ring.time_ns

    @property
    def sim_seconds(self) -> float:
        return self.ring.time_ns / 1e9

    @property
    def at_instruction_boundary(self) -> bool:
        return self._seq == _FETCH_START

    @property
    def sequencer(self):
        """(instruction or None while fetching, index of the next micro-step counted from 0)."""
        index, step = self._seq
        if index < 0:
            return None, step
        return self.machine.instructions[index], len(self.machine.fetch) + step

    @property
    def current_step(self) -> Step:
        index, step = self._seq
        return self.machine.fetch[step] if index < 0 else self.machine.instructions[index].steps[step]

    def driven_lines(self) -> tuple[str, ...]:
        """The control lines the next micro-step drives in the present state (its gated lines
        whose condition holds now, on the state before the step, among them)."""
        return self._gates.driven(*self._seq)

    def reader(self, names) -> Callable[[], tuple[int, ...]]:
        """A function returning the present values of these registers and flags (not groups)
        as a tuple: for observers that look at them every cycle, where ``get`` costs too much."""
        slots = [self._slots[name][0] for name in names]
        if not slots:
            return tuple
        pick = itemgetter(*slots)
        state = self._s
        if len(slots) == 1:
            return lambda: (pick(state),)
        return lambda: pick(state)

    def word_at(self, address: int) -> int:
        """The memory word an address reaches: addresses wrap to the memory's size, as the
        datapath's reads do when pc runs past the end of a memory smaller than its reach."""
        return self.memory[address % self.machine.memory_words]

    @property
    def instruction_address(self) -> int:
        """Address of the instruction in progress (pc itself at a boundary)."""
        return self.pc if self._seq == _FETCH_START else self._instruction_address

    @property
    def output(self) -> bytearray:
        return self.ports.output

    @property
    def lamps(self) -> int:
        return self.ports.lamps

    @property
    def switches(self) -> int:
        return self.ports.switches

    @switches.setter
    def switches(self, value: int) -> None:
        self.ports.switches = value & self.machine.data_mask
        self._notify("panel", "switches")

    @property
    def input_bytes(self) -> bytes:
        return self.ports.input_bytes

    @input_bytes.setter
    def input_bytes(self, data: bytes) -> None:
        self.ports.input_bytes = bytes(data)
        self.ports.input_position = 0

    @property
    def has_warnings(self) -> bool:
        """Whether ``warnings`` would say anything, without wording it."""
        return self.ports.warned or bool(self._undefined)

    @property
    def warnings(self) -> list[str]:
        notes = self.ports.warnings()
        for address, count in sorted(self._undefined.items()):
            times = f" ({count} times)" if count > 1 else ""
            notes.append(f"undefined opcode at {address_text(address, self.machine)} ran as a no-op{times}")
        return notes

    @property
    def clock_source(self):
        return self.ring.source

    @clock_source.setter
    def clock_source(self, source) -> None:
        self.ring.set_source(source)

    # ----- counting wear --------------------------------------------------

    def count_lines(self) -> LineTally:
        """Count the operations of every relay from now on, on both paths (see ``LineTally``)."""
        self._tally = LineTally(self, self._s, self._count_undefined)
        return self._tally

    def stop_counting_lines(self) -> None:
        if self._tally is not None:
            self._tally.stop()
            self._tally = None

    # ----- the panel --------------------------------------------------------

    def set_switch_run(self, run: bool) -> None:
        """The RUN/STOP switch: True is *run*."""
        self.switch_run = bool(run)
        self._notify("panel", "run" if run else "stop")
        self._hold_changed()

    def press_step(self) -> bool:
        """STEP while the generator is frozen (ignored while it runs); True when it did something.

        What a press gives is the machine's ``step_press``: ``"pulse"``, one
        pulse from the panel as long as the generator's first pulse, the ring
        standing still; ``"hold"``, the hold let go for one stretch, so the
        ring runs its own pulses, at their own lengths, up to the next hold
        point, where the hold line (still up) stops it again.
        """
        self._notify("panel", "step")
        if not self.frozen:
            return False
        if self.machine.step_press == "hold":
            self.frozen = False
            self._released = True
            self._notify("hold", False)
            while self.advance_phase():
                pass
            return True
        self._notify("edge", 1)
        self.ring.time_ns += self.ring.manual_pulse_ns
        self._notify("edge", 0)
        self._microstep()
        return True

    def press_resume(self) -> None:
        """RESUME: clear the halt latch; the clock restarts only if the switch is at run."""
        self._notify("panel", "resume")
        self._set_latch(False)
        self._hold_changed()

    def press_reset(self) -> None:
        """RESET: pc, sequencer, flags and latch to zero; registers and memory kept."""
        self._notify("panel", "reset")
        self._s[self._pc] = 0
        for flag in self.machine.flags.values():
            self._s[flag.slot] = 0
        self._seq = _FETCH_START
        self._set_latch(False)
        self._hold_changed()

    def _set_latch(self, value: bool) -> None:
        if self.halt_latch != value:
            self.halt_latch = value
            if not value:
                self.halt_address = None
            if self._observers:
                self._notify("latch", value)

    def _hold_changed(self) -> None:
        """A frozen generator starts the moment the hold line drops."""
        if self.frozen and not self.hold_line:
            self.frozen = False
            self._released = True
            self._notify("hold", False)

    # ----- the generator and the sequencer ------------------------------------

    def _hold_if_due(self) -> bool:
        """Freeze when the phase at hand is a hold point and the hold line is up (unless the
        generator was just released there): the check the generator makes before each phase."""
        if self._phases[self.ring.index].hold and self.hold_line and not self._released:
            self.frozen = True
            if self._observers:
                self._notify("hold", True)
            return True
        return False

    def advance_phase(self) -> bool:
        """Let the generator take one phase; False when it is (or just became) frozen."""
        ring = self.ring
        index = ring.index
        phase = self._phases[index]
        if self.frozen or self._hold_if_due():
            return False
        self._released = False
        if self._observers:
            if phase.level == 1 and self._phases[index - 1].level == 0:
                self._notify("edge", 1)
            self._notify("phase", index)
        ring.run_phase()
        if phase.level == 1 and self._phases[ring.index].level == 0:
            self._notify("edge", 0)
            self._microstep()
        return True

    def _microstep(self) -> None:
        """The falling edge: the datapath latches the current micro-step."""
        index, step = self._seq
        watched = self._observers or self._tally is not None or self._next_scheduled is not None
        lines = self._gates.driven(index, step) if watched else ()
        if index < 0:
            if step == 0:
                self._instruction_address = self._s[self._pc]
            self._fetch_steps[step]()
            step_info = self.machine.fetch[step]
            halted = False
            if step + 1 < len(self._fetch_steps):
                self._seq = (-1, step + 1)
            else:
                decoded = self._decode[self._s[self._ir]]
                if decoded < 0:
                    self._count_undefined(self._instruction_address)
                if decoded < 0 or not self._instruction_steps[decoded]:
                    self._seq = _FETCH_START
                else:
                    self._seq = (decoded, 0)
        else:
            jump = self._jumps[index][step]
            following = step + 1 if jump is None else jump()
            step_info = self.machine.instructions[index].steps[step]
            halted = self._instruction_steps[index][step]()
            grouped = self._groups.get(index)
            if grouped is not None and step == grouped[0].decode_step:
                index = grouped[0].member_for([self._s[slot] for slot in grouped[1]])
                if index < 0:
                    self._count_undefined(self._instruction_address)
            self._seq = (index, following) if index >= 0 and following < len(self._instruction_steps[index]) \
                else _FETCH_START
        self.cycles += 1
        if self._next_scheduled is not None and self.cycles >= self._next_scheduled:
            self._attend()
        if halted:
            self.halt_address = self._instruction_address
            self._set_latch(True)
        if self._seq == _FETCH_START:
            self.instructions += 1
        if self._tally is not None:
            self._tally.add(lines)
        if self._observers:
            self._notify("microstep", step_info, lines)
            if self._seq == _FETCH_START:
                self._notify("instruction")

    def _count_undefined(self, address: int) -> None:
        self._undefined[address] += 1

    def _paths(self) -> tuple:
        """The fast path's runners now: blocks, and the free runners of fused instructions (plain,
        watching, stopping); the counting ones of ``LineTally`` while lines are counted."""
        if self._tally is not None:
            return self._tally.paths
        return self.blocks, self._run_free, self._run_free_watching, self._run_free_stopping

    def _fast_path_open(self) -> bool:
        if self._next_scheduled is not None and self.cycles >= self._next_scheduled:
            self._attend()
        return (not self._observers and self._seq == _FETCH_START and not self.frozen
                and not self.hold_line and self.ring.at_boundary)

    def _frozen_reason(self) -> StopReason:
        if self.halt_latch:
            return StopReason("halted", self.pc, self.halt_address)
        return StopReason("stopped", self.pc)

    def advance_instruction(self) -> StopReason:
        """Run the generator to the next instruction boundary (or until it freezes)."""
        return self.run(until=lambda emu: True)

    # ----- snapshots ------------------------------------------------------------

    def snapshot(self, path) -> None:
        """Save the whole machine state as JSON (atomic write)."""
        write_atomic(path, json.dumps(self.snapshot_state(), indent=1))

    def snapshot_state(self) -> dict:
        return snapshot_state(self)

    @classmethod
    def restore(cls, path, machine: Machine) -> "Emulator":
        emu = cls(machine)
        emu.restore_state(read_snapshot(path), str(path))
        return emu

    def restore_state(self, state: dict, origin: str = "<snapshot>") -> None:
        """Apply a snapshot; every value is checked before any is used, so a bad one changes nothing."""
        restore_state(self, state, origin)
