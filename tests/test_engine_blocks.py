"""Block translation changes nothing a program or the panel can see (P6 with blocks).

Every emulator here is made hot at once (``threshold`` 1, no warm-up), so
blocks are built at the first pc the fast path looks up; each property
also asserts that blocks were really built and run. The reference is the
stepping path (an observer attached), as in test_engine_paths.
"""

from __future__ import annotations

from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.stateful import initialize

from emu import Emulator, Observer, machine_from_text
from emu.testing import programs, run_resuming

from engine_support import MACHINES, boot, encode, full_state
from test_engine_properties import SETTINGS, PanelMachine

BOTH = pytest.mark.parametrize("machine_name", ["ref8", "acc12"])


def hot(emu: Emulator) -> Emulator:
    emu.blocks.threshold, emu.blocks.warm_up = 1, 0
    return emu


def stepped(emu: Emulator) -> Emulator:
    emu.observe(Observer())
    return emu


@BOTH
def test_fused_and_stepping_agree_with_blocks_on(machine_name):
    """P6 with translation on: state, cycles and time as the stepping path has them."""
    machine = MACHINES[machine_name]
    built = []

    @settings(max_examples=80, deadline=None)
    @given(data=st.data(), cycles=st.integers(1, 3000))
    def check(data, cycles):
        words = data.draw(programs(machine))
        fast, slow = hot(boot(machine, words)), stepped(boot(machine, words))
        assert run_resuming(fast, cycles) == run_resuming(slow, cycles)
        assert full_state(fast) == full_state(slow)
        built.append(fast.blocks.built)

    check()
    assert sum(built) > 0, "no block was ever built: the property tested only the fused path"


@BOTH
def test_cycle_limits_land_on_the_same_cycle_as_stepping(machine_name):
    machine = MACHINES[machine_name]
    built = []

    @settings(max_examples=60, deadline=None)
    @given(data=st.data(), limits=st.lists(st.integers(1, 80), min_size=1, max_size=25))
    def check(data, limits):
        words = data.draw(programs(machine))
        fast, slow = hot(boot(machine, words)), stepped(boot(machine, words))
        for limit in limits:
            reasons = fast.run(max_cycles=limit), slow.run(max_cycles=limit)
            assert reasons[0] == reasons[1]
            assert full_state(fast) == full_state(slow)
            if reasons[0].kind == "halted":
                fast.press_resume()
                slow.press_resume()
        built.append(fast.blocks.built)

    check()
    assert sum(built) > 0


@BOTH
def test_breakpoints_stop_where_stepping_stops(machine_name):
    """Blocks are split at breakpoints; each stop is the stepping path's stop."""
    machine = MACHINES[machine_name]
    built = []

    @settings(max_examples=60, deadline=None)
    @given(data=st.data(), rounds=st.integers(1, 10))
    def check(data, rounds):
        words = data.draw(programs(machine))
        points = data.draw(st.frozensets(st.integers(0, len(words)), max_size=4))
        fast, slow = hot(boot(machine, words)), stepped(boot(machine, words))
        for _ in range(rounds):
            reasons = fast.run(max_cycles=300, breakpoints=points), slow.run(max_cycles=300, breakpoints=points)
            assert reasons[0] == reasons[1]
            assert full_state(fast) == full_state(slow)
            if reasons[0].kind == "halted":
                fast.press_resume()
                slow.press_resume()
        built.append(fast.blocks.built)

    check()
    assert sum(built) > 0


def _loop_with_breakpoint_inside(machine):
    """ref8: r0 counts up in a three-instruction loop; the middle one is a breakpoint."""
    words = encode(machine, "inc rd", rd=0) + encode(machine, "inc rd", rd=1) + encode(machine, "jmp addr", addr=0)
    return words, 1


def test_a_breakpoint_inside_a_hot_loop_stops_every_pass():
    machine = MACHINES["ref8"]
    words, point = _loop_with_breakpoint_inside(machine)
    emu = hot(boot(machine, words))
    emu.run(max_cycles=5000)                    # blocks built without the breakpoint
    assert emu.blocks.built > 0
    before = emu.get("r0")
    for turn in range(1, 4):
        reason = emu.run(max_cycles=5000, breakpoints={point})
        assert reason.kind == "breakpoint" and emu.pc == point
        assert emu.get("r0") == (before + turn) & 0xFF


def test_a_loop_closed_by_a_jump_runs_inside_its_block_and_stops_where_stepping_does():
    """ref8: ``inc r0; inc r1; jmp 0``. The block ends with a jump to its own start, so it goes
    round inside one call while a whole pass fits the budget; every cycle limit still lands on
    the stepping path's cycle, with the same registers."""
    machine = MACHINES["ref8"]
    words, _point = _loop_with_breakpoint_inside(machine)
    fast, slow = hot(boot(machine, words)), stepped(boot(machine, words))
    for limit in [1, 2, 3, 5, 7, 11, 13, 40, 97, 250, 1000]:
        assert fast.run(max_cycles=limit) == slow.run(max_cycles=limit)
        assert full_state(fast) == full_state(slow)
    assert fast.blocks.built > 0
    block, most, asks = fast.blocks._table[0]
    calls = []
    fast.blocks._table[0] = (lambda room: calls.append(room) or block(room), most, asks)
    fast.run(max_cycles=30_000)
    assert len(calls) == 1, "the loop left its block after a pass instead of going round inside it"
    slow.run(max_cycles=30_000)
    assert full_state(fast) == full_state(slow)


# ----- self-modifying code ---------------------------------------------------------------

def _patching_loop(machine):
    """ref8: each pass stores r2 into the immediate of an ``add r0, imm`` further down the block.

    r3 starts at 0, so the loop runs 256 times and r0 ends as the sum of
    1 … 255 and 0 modulo 256 = 32,640 mod 256 = 128 (arithmetic).
    """
    e = lambda display, **f: encode(machine, display, **f)  # noqa: E731
    words = e("add rd, imm", rd=2, imm=1)
    store_at = len(words)
    words += e("st [addr], rs", addr=0, rs=2)
    patched = len(words)
    words += e("add rd, imm", rd=0, imm=0)
    words += e("dec rd", rd=3) + e("jnz addr", addr=0) + e("halt")
    words[store_at + 1:store_at + 3] = [(patched + 1) & 0xFF, (patched + 1) >> 8]
    return words


def test_a_store_into_the_running_block_gives_the_stepping_result():
    machine = MACHINES["ref8"]
    words = _patching_loop(machine)
    fast, slow = hot(boot(machine, words)), stepped(boot(machine, words))
    assert fast.run(max_cycles=100_000).kind == slow.run(max_cycles=100_000).kind == "halted"
    assert fast.get("r0") == 128
    assert full_state(fast) == full_state(slow)
    assert fast.blocks.built > 1 and fast.blocks.dropped > 0


def _patched_from_outside(machine):
    """ref8: an inner loop of 50 passes adds an immediate to r0; after each, a routine called
    four times in all rewrites that immediate through x, as 2, 3, 4, 5. The routine runs
    too seldom to be translated, so the store is a fused instruction's, outside any block.
    r0 = 50 × (1 + 2 + 3 + 4) = 500, and 500 mod 256 = 244 (arithmetic)."""
    e = lambda display, **f: encode(machine, display, **f)  # noqa: E731
    words = e("li rd, imm", rd=5, imm=4) + e("li rd, imm", rd=4, imm=1)
    outer = len(words)
    words += e("li rd, imm", rd=3, imm=50)
    inner = len(words)
    words += e("add rd, imm", rd=0, imm=1)
    immediate = len(words) - 1
    words += e("dec rd", rd=3) + e("jnz addr", addr=inner) + e("call addr", addr=0)
    call_at = len(words) - 3
    words += e("dec rd", rd=5) + e("jnz addr", addr=outer) + e("halt")
    routine = len(words)
    words += e("li x, addr", addr=immediate) + e("inc rd", rd=4) + e("st [x], rs", rs=4) + e("ret")
    words[call_at + 1:call_at + 3] = [routine & 0xFF, routine >> 8]
    return words


def test_a_store_by_a_fused_instruction_into_a_block_gives_the_stepping_result():
    machine = MACHINES["ref8"]
    words = _patched_from_outside(machine)
    fast, slow = hot(boot(machine, words)), stepped(boot(machine, words))
    fast.blocks.threshold = 10                  # the inner loop hot, the routine (4 calls) not
    assert fast.run(max_cycles=100_000).kind == slow.run(max_cycles=100_000).kind == "halted"
    assert fast.get("r0") == 244
    assert full_state(fast) == full_state(slow)
    assert fast.blocks.dropped > 0


def test_memory_written_between_runs_drops_the_blocks_it_hits():
    """The debugger writes memory directly; the next run must not use the old words."""
    machine = MACHINES["ref8"]
    words = encode(machine, "add rd, imm", rd=0, imm=1) + encode(machine, "jmp addr", addr=0)
    fast, slow = hot(boot(machine, words)), stepped(boot(machine, words))
    for emu in (fast, slow):
        emu.run(max_cycles=500)
        emu.memory[1] = 3
        emu.run(max_cycles=500)
    assert full_state(fast) == full_state(slow)
    assert fast.blocks.dropped > 0


def test_memory_written_between_runs_after_the_blocks_settled_drops_the_blocks_it_hits():
    """A run whose blocks all still match memory keeps their words as one read, and the next
    run compares only that; a word written there between runs (and written back after its
    block was translated anew) must still drop the block holding it.
    ref8: ``add r0, 1; jmp 0``, its immediate set to 3, then back to 1."""
    machine = MACHINES["ref8"]
    words = encode(machine, "add rd, imm", rd=0, imm=1) + encode(machine, "jmp addr", addr=0)
    fast, slow = hot(boot(machine, words)), stepped(boot(machine, words))
    for emu in (fast, slow):
        emu.run(max_cycles=500)
        emu.run(max_cycles=500)        # finds its blocks as they were: keeps their words
        emu.memory[1] = 3
        emu.run(max_cycles=500)        # drops the block, translates it with 3
        emu.memory[1] = 1              # memory is as the kept words were again
        emu.run(max_cycles=500)
    assert full_state(fast) == full_state(slow)
    assert fast.blocks.dropped >= 2


def test_a_block_translated_after_the_last_full_check_is_still_checked_at_the_next_entry():
    """ref8: two loops, ``add r0, 1; jmp 0`` and at 0x10 ``add r1, 1; jmp 0x10``. The first is
    translated and checked; the run moves to the second, which is translated inside a run; its
    immediate is then changed between runs, and the next run must not use the old block."""
    machine = MACHINES["ref8"]
    first = encode(machine, "add rd, imm", rd=0, imm=1) + encode(machine, "jmp addr", addr=0)
    second = encode(machine, "add rd, imm", rd=1, imm=1) + encode(machine, "jmp addr", addr=0x10)
    words = first + [0] * (0x10 - len(first)) + second
    fast, slow = hot(boot(machine, words)), stepped(boot(machine, words))
    for emu in (fast, slow):
        emu.run(max_cycles=500)
        emu.run(max_cycles=500)        # a full check at entry: the first loop's words kept
        emu.set("pc", 0x10)
        emu.run(max_cycles=500)        # the second loop translated inside this run
        emu.memory[0x11] = 5
        emu.run(max_cycles=500)
    assert full_state(fast) == full_state(slow)
    assert fast.blocks.built >= 3 and fast.get("r1") == slow.get("r1")


# ----- what runs without blocks, and what is reused ------------------------------------------

def test_until_conditions_run_without_blocks():
    machine = MACHINES["ref8"]
    emu = hot(boot(machine, encode(machine, "inc rd", rd=0) + encode(machine, "jmp addr", addr=0)))
    reason = emu.run(max_cycles=10_000, until=lambda e: e.get("r0") == 200)
    assert reason.kind == "condition" and emu.get("r0") == 200
    assert emu.blocks.built == 0


def test_the_same_image_in_another_emulator_reuses_the_compiled_blocks():
    machine = MACHINES["ref8"]
    words = _patching_loop(machine)[:-1] + encode(machine, "jmp addr", addr=0) + [0x5A]
    first, second = hot(boot(machine, words)), hot(boot(machine, words))
    first.run(max_cycles=3000)
    second.run(max_cycles=3000)
    assert first.blocks.compiled > 0
    assert second.blocks.built > 0 and second.blocks.compiled == 0
    assert full_state(first) == full_state(second)


def test_translation_off_builds_nothing():
    machine = MACHINES["ref8"]
    emu = hot(boot(machine, encode(machine, "inc rd", rd=0) + encode(machine, "jmp addr", addr=0)))
    emu.blocks.enabled = False
    emu.run(max_cycles=10_000)
    assert emu.blocks.built == 0 and emu.get("r0") == 10_000 // 5 & 0xFF


# ----- the stateful panel properties with translation on -------------------------------------

class _HotPanel(PanelMachine):
    """The panel properties on the fast path, with blocks built at the first look-up."""

    observed = False
    built: list[int] = []

    @initialize(data=st.data())
    def power_on(self, data):
        super().power_on(data)
        hot(self.emu)

    def teardown(self):
        _HotPanel.built.append(self.emu.blocks.built)


class Ref8Blocks(_HotPanel):
    machine_name = "ref8"


class Acc12Blocks(_HotPanel):
    machine_name = "acc12"


@pytest.mark.parametrize("panel_machine", [Ref8Blocks, Acc12Blocks], ids=["ref8", "acc12"])
def test_panel_actions_keep_the_program_semantics_with_blocks(panel_machine):
    _HotPanel.built.clear()
    case = panel_machine.TestCase
    case.settings = SETTINGS
    case("runTest").runTest()
    assert sum(_HotPanel.built) > 0


@pytest.mark.parametrize("watching", [False, True], ids=["plain", "with a breakpoint"])
def test_pc_running_past_a_small_memory_wraps_as_stepping_does(watching):
    """ref8 with 4,096 words under its 16-bit pc: empty memory is all `nop`, so pc runs past
    the end and reads wrap. Blocks hot at once must neither fail nor differ from stepping
    (before, the block loops indexed their tables by the unwrapped pc: IndexError)."""
    text = Path(MACHINES["ref8"].path).read_text(encoding="utf-8")
    small = machine_from_text(text.replace("memory_words = 65536", "memory_words = 4096"))
    assert small.memory_words == 4096
    breakpoints = (0x7000,) if watching else ()
    fast, slow = hot(boot(small, [0])), stepped(boot(small, [0]))
    for emu in (fast, slow):
        emu.run(max_cycles=9_000, breakpoints=breakpoints)
    assert full_state(fast) == full_state(slow) and fast.pc == 9_000
