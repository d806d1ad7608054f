"""Block translation for the fast path: hot straight-line code run as one function a block.

The fast path of the control unit runs whole instructions, one fused
function each. Here, a pc that the fast path has reached ``threshold``
times becomes the start of a *block*: the instructions from there up to a
branch, a halting or undefined instruction, a breakpoint or a length cap,
translated into one function (``_block_translator``). The dispatch loop
runs a block only when its full cycle count fits the budget, so cycle
limits, breakpoints and every panel event land where stepping puts them.
A watched run (``Lookout``) also splits blocks around the instructions it
asks around, translates watching blocks that test its registers and flags
after each instruction that may write one, and counts its watched words in
the code map, so a block leaves right after a store to one or a change.

Compiled blocks are cached per machine, keyed by their start and their
words, so the same image loaded again (in this emulator or another) binds
the compiled code instead of translating it again. Blocks are bound to one
emulator's state and kept valid three ways: stores made by blocks and by the
fast path's instructions check a per-word map of translated words and drop
the blocks they hit; each entry into the loop compares every block's words
with memory, which catches what the stepping path, the debugger or a new
image wrote; and a change of breakpoints drops blocks, to be split anew.
"""

from __future__ import annotations

import weakref
from collections import Counter, OrderedDict
from operator import itemgetter

from ..description import Machine
from ._block_dispatch import checked_fused_source, dispatcher_source, writes_memory
from ._block_translator import MAYBE, NEXT, BlockPlan, block_source, successor
from ._emitter import compile_generated
from ._line_gates import per_machine
from ._lookout import AFTER, BEFORE
from ._microstep_compiler import Fallback, compile_machine

__all__ = ["BlockRunner", "HOT_THRESHOLD", "MAX_BLOCK_INSTRUCTIONS", "WARM_UP_CYCLES"]

WARM_UP_CYCLES = 250_000
"""Cycles an emulator runs on the plain fused path before it counts visits at all: a
run this short cannot repay compiling a block, and counting costs it a few per cent."""

HOT_THRESHOLD = 2000
"""Visits of a pc before its block is translated: translating and compiling a
block costs about as much as running a few thousand fused instructions."""
_PAST_ANY_THRESHOLD = 1 << 62
"""A hit count that never reaches ``threshold``: the pc is never translated there."""

MAX_BLOCK_INSTRUCTIONS = 32
"""Longest block; it bounds compile time and how much budget a block needs."""

MAX_INVALIDATIONS = 8
"""Times one start's block may be dropped by stores before it stays untranslated."""

CACHE_BLOCKS = 4096
"""Compiled blocks kept per machine."""

_BLOCK_HERE = -1
"""The hit count of a pc where a block is in place."""


class _MachineBlocks:
    """What every emulator of one machine shares: the loops, checked instructions, compiled blocks.

    With a ``TallyLayout`` (``layout``) all of them count what they run, for wear; the
    counting code is shared apart from the plain one.
    """

    def __init__(self, machine: Machine, layout=None):
        self.machine = machine
        self.layout = layout
        self.max_fused = compile_machine(machine).max_fused_cycles
        counting = layout is not None
        self.dispatcher = compile_generated(dispatcher_source(machine, self.max_fused, counting),
                                            f"{machine.name}_block_loops{'_counting' if counting else ''}")
        self.successor = [successor(machine, ins) for ins in machine.instructions]
        self.ends = [index < 0 or machine.instructions[index].drives_halt or self.successor[index] != NEXT
                     for index in machine.decode_table]
        self._checked = None
        self.code: OrderedDict[tuple, tuple] = OrderedDict()

    @property
    def checked(self):
        """Compiled when the first block of this machine is: runs without blocks never need it."""
        if self._checked is None:
            counting = "" if self.layout is None else "_counting"
            self._checked = compile_generated(checked_fused_source(self.machine, self.layout),
                                              f"{self.machine.name}_checked_fused{counting}")
        return self._checked

    def compiled_block(self, plan: BlockPlan, loops: bool, watched: tuple[int, ...] = ()) -> tuple:
        """(code, cycles of its longest way through, whether it was compiled just now).

        Compiled once per start, words, whether it may loop back to its start and
        the slots it watches.
        """
        key = (plan.start, plan.words, loops, watched)
        entry = self.code.get(key)
        if entry is not None:
            return (*entry, False)
        source, most = block_source(self.machine, plan, loops, self.layout, watched)
        name = f"{self.machine.name}_block_{plan.start:04x}{'' if loops else '_no_loop'}" \
               f"{'_watching' if watched else ''}{'' if self.layout is None else '_counting'}"
        entry = self.code[key] = (compile_generated(source, name), most)
        if len(self.code) > CACHE_BLOCKS:
            self.code.popitem(last=False)
        return (*entry, True)


_shared: dict[tuple[int, bool], _MachineBlocks] = {}


def _machine_blocks(machine: Machine, layout=None) -> _MachineBlocks:
    key = (id(machine), layout is not None)
    shared = _shared.get(key)
    if shared is None:
        shared = _shared[key] = _MachineBlocks(machine, layout)
        weakref.finalize(machine, _shared.pop, key, None)
    return shared


@per_machine
def _covered(machine: Machine) -> bool:
    """``blocks_cover`` once per machine: every new emulator asks, and the answer walks every instruction."""
    return blocks_cover(machine)


def _build(code, *arguments):
    namespace: dict = {}
    exec(code, namespace)
    return namespace["build"](*arguments)


class BlockRunner:
    """Block translation for one emulator; ``run`` is the control unit's fast path when enabled.

    ``enabled`` switches translation off (the fused path runs as before);
    ``warm_up`` is how many cycles run before counting starts, ``threshold``
    how many visits make a pc hot; ``built`` counts the blocks put in place
    so far, ``compiled`` those of them this emulator had to compile (the
    others came from the machine's cache), ``dropped`` those taken out again.
    """

    def __init__(self, machine: Machine, s: list, memory, read_port, write_port, fused: list, run_free,
                 counters: tuple | None = None):
        """``counters``: (``TallyLayout``, sites, words) to run the counting code that wear uses."""
        self.machine = machine
        self._counters = counters
        self.enabled = _covered(machine)
        """Off where blocks cannot be exact yet: see ``blocks_cover``."""
        self.warm_up = WARM_UP_CYCLES
        self.threshold = HOT_THRESHOLD
        self._ran = 0
        self._run_free = run_free
        self._max_fused = compile_machine(machine).max_fused_cycles
        self.built = 0
        self.compiled = 0
        self.dropped = 0
        self._state = (s, memory, read_port, write_port)
        self._plain = fused
        self._loops = None

    def _start(self) -> None:
        """Tables made at the first run, so an emulator that never runs pays nothing for them."""
        machine = self.machine
        s, memory, _read, _write = self._state
        self._shared = _machine_blocks(machine, None if self._counters is None else self._counters[0])
        self._table: dict[int, tuple] = {}
        reach = 1 << machine.registers[machine.program_counter].width
        # pc may point past the end of a memory smaller than its address space (its reads
        # wrap); no block starts there: those hit counts start past any threshold
        self._hits = [0] * machine.memory_words + [_PAST_ANY_THRESHOLD] * max(0, reach - machine.memory_words)
        self._cmap = None
        self._checked = None
        self._active: dict[int, tuple[int, object]] = {}
        self._words_now = None
        """Every block's words read from memory in one call (an ``itemgetter`` of their slices),
        made at a full check and forgotten when a block comes or goes."""
        self._words_seen = None
        """What ``_words_now`` read at that check, when every block matched memory."""
        self._invalidations: Counter[int] = Counter()
        self._points = frozenset()
        self._stops: bytes | None = None
        self._slots: tuple[int, ...] = ()
        self._watched: frozenset[int] = frozenset()
        self.noticed = [False]
        """Set by a store to a watched word or by a watching block that saw a watched slot change;
        the watching loop returns after that instruction."""
        self._no_stops = bytes(len(machine.decode_table))
        self._loops = _build(self._shared.dispatcher, s, memory, self._table, self._hits, self._shared.ends,
                             self._translate, Fallback, *self._counted(words=True, sites=False))

    def run(self, budget: int, points: frozenset, stops: bytes | None = None,
            watched: frozenset[int] = frozenset(), unchanged: bool = False,
            changed=None, slots: tuple[int, ...] = ()) -> tuple[int, int, bool]:
        """Run blocks and fused instructions within ``budget`` cycles; (cycles, instructions, hit).

        ``hit``: stopped at a breakpoint, at a boundary around an instruction
        that ``stops`` marks (see ``Lookout``), after a store to a ``watched``
        word, or once ``changed()``: one of the watched ``slots`` no longer
        holds the value it had when the lookout was taken (the stops mark
        the instructions that may write one).
        ``unchanged``: nothing but this runner has run since
        its last call, so its blocks still match memory without a look.
        """
        watching = bool(points) or stops is not None or bool(watched)
        if self._ran < self.warm_up and not watching:
            cycles, count, hit = self._run_free(budget - self._max_fused)
            self._ran += cycles
            return cycles, count, hit
        if self._loops is None:
            self._start()
        if not unchanged:
            self._check_blocks(points, stops, watched, slots)
        if not watching:
            return self._loops[0](budget, points, self._fused(), self.threshold)
        self.noticed[0] = False
        return self._loops[1](budget, points, self._fused(), self.threshold, stops or self._no_stops, self.noticed,
                              changed or _never)

    def _counted(self, words: bool, sites: bool) -> tuple:
        """The count lists a piece of counting code takes (none for plain code)."""
        if self._counters is None:
            return ()
        _layout, site_counts, word_counts = self._counters
        return (site_counts,) * sites + (word_counts,) * words

    def _fused(self) -> list:
        """Fused instructions, with stores checked once any block is in place or a word is watched."""
        return self._checked if self._active or self._watched else self._plain

    # ----- keeping blocks valid

    def _check_blocks(self, points: frozenset, stops: bytes | None, watched: frozenset[int],
                      slots: tuple[int, ...]) -> None:
        """Drop blocks whose words memory no longer holds, and all of them when breakpoints,
        stop words or watched slots changed (blocks are split at them, or test them);
        mark watched words in the code map."""
        memory = self._state[1]
        if watched != self._watched:
            self._watch_words(watched)
        if points != self._points or stops != self._stops or slots != self._slots:
            self._points, self._stops, self._slots = points, stops, slots
            for start in list(self._active):
                self._drop(start, soon=True)
            return
        if self._words_now is not None and self._words_now(memory) == self._words_seen:
            return          # every block's words as they were: one call, whatever lies between them
        for start, (end, words) in list(self._active.items()):
            if memory[start:end] != words:
                self._drop(start, soon=False)
        if self._active:
            self._words_now = itemgetter(*(slice(start, end) for start, (end, _w) in self._active.items()))
            self._words_seen = self._words_now(memory)

    def _watch_words(self, watched: frozenset[int]) -> None:
        """Count watched words in the code map, so that a store to one calls ``_invalidate``."""
        self._code_map()
        for address in self._watched:
            self._cmap[address] -= 1
        for address in watched:
            self._cmap[address] += 1
        self._watched = watched

    def _invalidate(self, addresses, low: int, high: int) -> bool:
        """Called by a store that hit translated or watched words: drop the blocks covering them.

        True when one of the words lies in ``[low, high)``, the rest of the running
        block, or is watched: the block then leaves after the current instruction.
        """
        if self._watched and not self._watched.isdisjoint(addresses):
            self.noticed[0] = True
        for address in addresses:
            if self._cmap[address]:
                for start in [b for b, (end, _w) in self._active.items() if b <= address < end]:
                    self._invalidations[start] += 1
                    self._drop(start, soon=False)
        return self.noticed[0] or any(low <= address < high for address in addresses)

    def _drop(self, start: int, soon: bool) -> None:
        end, _words = self._active.pop(start)
        self._words_now = None
        del self._table[start]
        cmap = self._cmap
        for address in range(start, end):
            cmap[address] -= 1
        if self._invalidations[start] > MAX_INVALIDATIONS:
            self._hits[start] = self.threshold     # counts on past the threshold: never again
        else:
            self._hits[start] = self.threshold - 1 if soon else 0
        self.dropped += 1

    # ----- translating

    def _code_map(self) -> None:
        """The per-word map of translated (and watched) words, and the fused instructions that check it."""
        if self._cmap is None:
            s, memory, read_port, write_port = self._state
            self._cmap = [0] * self.machine.memory_words
            checked = _build(self._shared.checked, s, memory, read_port, write_port, self._cmap, self._invalidate,
                             *self._counted(words=False, sites=True))
            self._checked = [c if c is not None else f for c, f in zip(checked, self._plain)]

    def _plan(self, start: int) -> BlockPlan | None:
        """The block at ``start``: it ends before a breakpoint; an instruction asked around is a
        block of its own (so a block that loops or leaves early never passes one, and one that
        ends after it says so). Writers of watched slots stay inside: the block tests them."""
        machine, memory, shared = self.machine, self._state[1], self._shared
        decode, size = machine.decode_table, machine.memory_words
        stops = self._stops if self._stops is not None else self._no_stops
        address, instructions = start, []
        while len(instructions) < MAX_BLOCK_INSTRUCTIONS and address < size:
            word = memory[address]
            if address != start and (address in self._points or stops[word] & (AFTER | BEFORE)):
                break
            index = decode[word]
            if index < 0:
                break
            ins = machine.instructions[index]
            if ins.drives_halt or not _fixed_sequence(ins) or address + ins.word_count > size:
                break
            instructions.append((address, ins))
            address += ins.word_count
            if shared.successor[index] not in (NEXT, MAYBE) or stops[word] & (AFTER | BEFORE):
                break
        if not instructions:
            return None
        return BlockPlan(start, tuple(memory[start:address]), tuple(instructions))

    def _translate(self, start: int) -> list:
        """Put a block in place at ``start`` (compiled unless this machine has compiled it before).

        Returns the fused instructions the loop goes on with. A pc where no
        block can start (a halt, an undefined word) counts on past the
        threshold and is not tried again.
        """
        plan = self._plan(start)
        if plan is None:
            return self._fused()
        s, memory, read_port, write_port = self._state
        self._code_map()
        asks = 0 if self._stops is None else self._stops[plan.words[0]] & (AFTER | BEFORE)
        code, most, fresh = self._shared.compiled_block(plan, start not in self._points and not asks, self._slots)
        self.compiled += fresh
        block = _build(code, s, memory, read_port, write_port, self._cmap, self._invalidate,
                       *self._counted(words=True, sites=True), *[self.noticed] * bool(self._slots))
        self._table[start] = (block, most, asks)
        self._hits[start] = _BLOCK_HERE
        self._active[start] = (plan.end, memory[start:plan.end])
        self._words_now = None      # read after the last full check: compared on its own at the next
        for address in range(start, plan.end):
            self._cmap[address] += 1
        for address, _ins in plan.instructions[1:]:
            if self._hits[address] > 0:
                self._hits[address] = 0    # covered now: a count from before would translate it needlessly
        self.built += 1
        return self._checked


def _never() -> bool:
    return False


def _fixed_sequence(ins) -> bool:
    """A block counts each instruction as its steps in order: one that decodes on a
    later word or whose steps end early, jump or wait is left to the fused path."""
    return ins.decode_words == 1 and all(step.jump is None for step in ins.steps)


def blocks_cover(machine) -> bool:
    """Whether translation is exact on this machine.

    Instructions of variable sequence never enter a block, but one that also
    stores would need a checked fused version counting its own cycles; until
    that exists, such machines run without blocks (the fused path as before).
    """
    return not any(writes_memory(ins) and not _fixed_sequence(ins) for ins in machine.instructions)
