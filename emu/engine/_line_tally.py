"""Counting control lines and ring stages on both paths of the control unit, for wear.

Wear is the number of times each relay operated. Counting it by watching
every phase (an observer) would force the stepping path on a whole run, so
the count is kept the way each path runs:

* the stepping path adds the lines each micro-step drove (``add``);
* the fast path runs a *tallying* variant of the fused functions
  (``_TallyingCompiler``): its free runner counts each first word it ran,
  and an instruction whose steps vary (jumps, decode groups) counts each
  own step it takes; every gated line counts in the generated code when
  its condition holds, read from the description like the step's choices.
  A first word's count stands for its fetch steps and, for an instruction
  that runs straight through, all of its own steps. Translated blocks, their
  dispatch loop and the store-checked instructions count the same way
  (``BlockRunner`` with ``counters``), so counting keeps the block speed;
* the ring stages follow from how many phases the ring ran since counting
  began (the ring goes round in table order, so that number says which
  stages lit and how often).

``counts`` turns the three into operations per relay, the same numbers a
phase-by-phase count gives.
"""

from __future__ import annotations

from collections import Counter

from ..description import Machine
from ._blocks import BlockRunner
from ._emitter import compile_generated
from ._line_gates import TallyLayout, count_gates, per_machine
from ._machine_compiler import _MachineCompiler
from ._microstep_compiler import BoundFunctions, Fallback

__all__ = ["LineTally"]


class _TallyingCompiler(_MachineCompiler):
    """The machine's generated source with counters in the fused functions and free runners."""

    build_parameters = "s, m, in_, out_, Fallback, undefined_, sites_, words_"

    def __init__(self, machine: Machine, layout: TallyLayout):
        super().__init__(machine)
        self.layout = layout

    def count_step(self, translator, step, place, counted) -> None:
        count_gates(self.out, translator, step, place, self.layout, counted)

    def call_fused(self, word: str) -> None:
        if word != "word":
            self.out.line(f"word = {word}")
        self.out.line("cycles += table[word]()")
        self.out.line("words_[word] += 1")


@per_machine
def _tallying(machine: Machine):
    layout = TallyLayout(machine)
    source, _cycles = _TallyingCompiler(machine, layout).source()
    return layout, compile_generated(source, machine.name, f"{machine.name}_tallying")


class LineTally:
    """Operations of every relay of one emulator's machine since counting began.

    ``emulator.count_lines()`` makes one and attaches it; from then on both
    paths add to it. ``counts()`` and ``pulses()`` read it at any time.
    """

    def __init__(self, emu, slots: list, undefined):
        """``slots`` is the emulator's register and flag list, ``undefined`` its count of
        undefined opcodes: the tallying functions run on the emulator's own state."""
        machine = emu.machine
        self.machine = machine
        self.layout, code = _tallying(machine)
        self.sites = [0] * self.layout.size
        self.words = [0] * len(machine.decode_table)
        self.stepped: Counter[str] = Counter()
        namespace: dict = {}
        exec(code, namespace)
        bound = BoundFunctions(*namespace["build"](slots, emu.memory, emu.ports.read, emu.ports.write, Fallback,
                                                   undefined, self.sites, self.words))
        blocks = BlockRunner(machine, slots, emu.memory, emu.ports.read, emu.ports.write, bound.fused,
                             bound.run_free, counters=(self.layout, self.sites, self.words))
        self.paths = (blocks, bound.run_free, bound.run_free_watching, bound.run_free_stopping)
        """The counting fast path: as the emulator's own (``Emulator._paths``), counting."""
        self._emu = emu
        self._end: tuple | None = None
        self._start = self._position()

    @property
    def blocks(self) -> BlockRunner:
        return self.paths[0]

    def stop(self) -> None:
        """Counting ends here: the emulator may run on, the counts stay."""
        self._end = self._position()

    def add(self, lines) -> None:
        """The stepping path ran a micro-step that drove ``lines``."""
        for line in lines:
            self.stepped[line] += 1

    def _position(self) -> tuple[int, int, int, bool, bool]:
        """(phases run, ring index, cycles, frozen, inside a pulse) of the emulator now,
        or where counting stopped."""
        if self._end is not None:
            return self._end
        emu, phases = self._emu, self.machine.phases
        ring = emu.ring
        inside = phases[ring.index - 1].level == 1 and phases[ring.index].level == 1
        return ring.phases_run, ring.index, emu.cycles, emu.frozen, inside

    def pulses(self) -> int:
        """Clock pulses begun since counting began (a pulse in progress counts once it rose)."""
        _run, _index, cycles, _frozen, inside = self._start
        _run_now, _index_now, cycles_now, _frozen_now, inside_now = self._position()
        return cycles_now - cycles + inside_now - inside

    def counts(self) -> dict[str, int]:
        """Operations per relay (ring stages first, then control lines), zero included."""
        machine, layout = self.machine, self.layout
        counts = dict.fromkeys(machine.relay_names(), 0)
        for stage, lit in self._stage_counts().items():
            counts[machine.stage_relay(stage)] += lit
        for line, n in self.stepped.items():
            counts[line] += n
        for (index, k), site in layout.step_site.items():
            for line in machine.instructions[index].steps[k].control_lines:
                counts[line] += self.sites[site]
        for (_place, line), site in layout.gate_site.items():
            counts[line] += self.sites[site]
        for word, n in enumerate(self.words):
            if n:
                for line in layout.word_lines[word]:
                    counts[line] += n
        return counts

    def _stage_counts(self) -> Counter[int]:
        """How often each stage lit: once each time the ring entered a phase lighting it that the
        phase before did not. The phase the ring stood at when counting began was lit already;
        a phase the ring is frozen at has been entered."""
        phases = self.machine.phases
        run, first, _cycles, _frozen, _inside = self._start
        run_now, _index, _cycles_now, frozen_now, _inside_now = self._position()
        entered = run_now - run - (0 if frozen_now else 1)
        size = len(phases)
        newly = [set(phases[i].ring) - set(phases[i - 1].ring) for i in range(size)]
        lit: Counter[int] = Counter()
        turns, rest = divmod(max(entered, 0), size)
        for i in range(size):
            for stage in newly[i]:
                lit[stage] += turns
        for j in range(1, rest + 1):
            for stage in newly[(first + j) % size]:
                lit[stage] += 1
        return lit
