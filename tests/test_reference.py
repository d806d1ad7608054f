"""The machine-format reference (emu/machines/README.md) describes a format that loads.

Each TOML example marked ``<!-- check: … -->`` in the reference is checked:
``machine`` is a whole machine file; ``adds`` is a part that, appended to
the reference's complete example machine, must still load; ``replaces`` is a
part that must load in place of the example's sections of the same names (its
``[[instruction]]`` tables are added to the example's, never put in place of
them all). Examples marked
``<!-- design: … -->`` describe planned features and are left alone.
"""

from __future__ import annotations

import re
from importlib import resources
from pathlib import Path

import pytest

from asm import assemble_text
from emu import Emulator, MachineError
from emu.description import machine_from_text
from emu.timing import timing_model

REFERENCE = Path(__file__).resolve().parent.parent / "emu" / "machines" / "README.md"
_EXAMPLE = re.compile(r"<!-- (check|design): ([\w-]+)[^>]*-->\s*```toml\n(.*?)```", re.S)


def examples(text: str) -> list[tuple[str, str]]:
    """(mark, TOML text) of every example checked by this file, in page order."""
    return [(mark, body) for kind, mark, body in _EXAMPLE.findall(text) if kind == "check"]


TEXT = REFERENCE.read_text(encoding="utf-8")
CHECKED = examples(TEXT)
COMPLETE = next(body for mark, body in CHECKED if mark == "machine")
COUNTDOWN = """\
        lda 3
loop:   out 1       ; the lamps show 3, 2, 1
        dec
        jnz loop
        stop
"""


_HEADER = re.compile(r"^\[\[?([\w.]+)\]\]?", re.M)


def with_part(mark: str, part: str) -> str:
    """The complete example with ``part`` added, or put in place of its sections of the same names."""
    if mark == "adds":
        return COMPLETE + "\n" + part
    replaced = set(_HEADER.findall(part)) - {"instruction"}
    starts = [m.start() for m in _HEADER.finditer(COMPLETE)] + [len(COMPLETE)]
    kept = COMPLETE[:starts[0]] + "".join(
        COMPLETE[a:b] for a, b in zip(starts, starts[1:]) if _HEADER.match(COMPLETE, a)[1] not in replaced)
    return kept + "\n" + part


def test_the_reference_ships_with_the_package_and_the_readmes_link_it():
    assert resources.files("emu").joinpath("machines", "README.md").is_file()
    readme = (REFERENCE.parent.parent.parent / "README.md").read_text(encoding="utf-8")
    assert "(emu/machines/README.md)" in readme
    assert "(README.md)" in (REFERENCE.parent / "ref8.md").read_text(encoding="utf-8")
    assert "(ref8.md)" in TEXT


def test_the_examples_are_found_and_only_known_marks_are_used():
    marks = [mark for mark, _ in CHECKED]
    assert marks.count("machine") == 1 and marks.count("adds") >= 2 and "replaces" in marks
    assert set(marks) <= {"machine", "adds", "replaces"}
    every_toml_block = TEXT.count("```toml")
    assert every_toml_block == len(_EXAMPLE.findall(TEXT)), "a TOML example without a check/design mark"


def test_the_complete_example_machine_loads():
    machine = machine_from_text(COMPLETE, "count8.toml")
    assert machine.name == "count8" and machine.pause == "stop"
    assert [i.display for i in machine.instructions][:3] == ["stop", "lda imm", "add imm"]


PARTS = [(mark, body) for mark, body in CHECKED if mark != "machine"]


@pytest.mark.parametrize("mark, part", PARTS, ids=[f"{i}-{mark}" for i, (mark, _) in enumerate(PARTS, 1)])
def test_each_part_example_loads_within_the_complete_machine(mark, part):
    machine_from_text(with_part(mark, part), "count8-with-part.toml")


def test_a_replacing_part_takes_the_place_of_the_sections_it_names():
    text = with_part("replaces", "[registers]\na = 8\npc = 8\nb = 4\n")
    assert text.count("[registers]") == 1 and "[internal]" in text
    assert "b" in machine_from_text(text, "count8-b.toml").registers


def test_the_reference_program_runs_as_the_reference_says_on_the_example_machine():
    """Cycles, time and results as the worked example works them out by hand."""
    machine = machine_from_text(COMPLETE, "count8.toml")
    program = assemble_text(COUNTDOWN, machine, "countdown.asm")
    emu = Emulator(machine)
    emu.load(program.segments)
    lamps = []
    reason = emu.run(max_cycles=1_000, until=lambda e: lamps.append(e.lamps) or False)
    assert reason.kind == "halted"
    assert emu.cycles == 25 and emu.time_ns == 2_500_000_000
    assert emu.get("a") == 0 and emu.get("z") == 1
    assert emu.frozen and machine.phases[emu.phase_index].name == "wait"
    assert [value for i, value in enumerate(lamps) if i == 0 or value != lamps[i - 1]] == [0, 3, 2, 1]


def _part_with(text: str) -> tuple[str, str]:
    return next((mark, body) for mark, body in PARTS if text in body)


def _run_with_parts(snippets: list[str], source: str, input_bytes: bytes = b""):
    """count8 with the part examples holding each snippet, running ``source``: the emulator and lamp values."""
    text = COMPLETE + "".join("\n" + _part_with(s)[1] for s in snippets)
    machine = machine_from_text(text, "count8-landed.toml")
    emu = Emulator(machine)
    emu.load(assemble_text(source, machine, "landed.asm").segments)
    emu.ports.input_bytes = input_bytes
    lamps = []
    reason = emu.run(max_cycles=10_000, until=lambda e: lamps.append(e.lamps) or False)
    assert reason.kind == "halted" and emu.warnings == []
    return machine, emu, [v for i, v in enumerate(lamps) if i == 0 or v != lamps[i - 1]]


def test_the_width_examples_compute_what_their_comments_say():
    _machine, _emu, lamps = _run_with_parts(['"swn"'], """
        lda 0x35
        swn
        out 1       ; 0x53
        lda 0x0B
        sx4
        out 1       ; 0xFB
        lda 0x81
        rr
        out 1       ; 0xC0
        stop
    """)
    assert lamps == [0, 0x53, 0xFB, 0xC0]


def test_the_sequencing_examples_take_the_cycles_the_reference_gives():
    machine, emu, lamps = _run_with_parts(['"skz"', '"clr"'], """
        lda 3
        drain       ; 1 + 2 x 3 cycles
        out 1
        lda 7
        neg
        out 1       ; -7
        getc
        out 1       ; the input byte
        clr
        out 1
        stop
    """, b"A")
    cycles = {i.display: str(i.cycles(machine)) for i in machine.instructions}
    assert cycles["skz"] == "2–3" and cycles["getc"] == "3–∞" and cycles["drain"] == "3–∞"
    assert cycles["clr"] == cycles["neg"] == "3"
    assert lamps == [0, 0xF9, ord("A"), 0]
    assert emu.get("a") == 0 and emu.cycles == 2 + 7 + 3 + 2 + 3 + 3 + 3 + 3 + 3 + 3 + 2


def test_a_part_example_that_breaks_the_format_would_be_caught():
    """The checker is not vacuous: a misspelt key in an added part is refused."""
    with pytest.raises(MachineError, match="unknown key"):
        machine_from_text(COMPLETE + "\n[wear]\nrated_operation = 5\n", "count8-broken.toml")


def _slug(heading: str) -> str:
    """A heading's anchor as Markdown renderers on code hosts make it (common practice)."""
    kept = re.sub(r"[^\w\- ]", "", heading.strip().lower())
    return kept.replace(" ", "-")


def test_every_link_inside_the_reference_reaches_a_heading():
    anchors = {_slug(h) for h in re.findall(r"^#+ (.+)$", TEXT, re.M)}
    links = re.findall(r"\]\(#([^)]+)\)", TEXT)
    assert len(links) > 10
    assert [link for link in links if link not in anchors] == []


def test_the_two_pulse_clock_example_steps_to_its_hold_point_and_is_timed_by_its_parts():
    """The clock example: STEP gives both pulses of a turn (60 + 100 ms high), and the
    parts give the phase table (within the file's default 5 %)."""
    part = next(body for mark, body in CHECKED if 'power_on = "C"' in body)
    machine = machine_from_text(with_part("replaces", part), "count8-two-pulse.toml")
    assert machine.step_press == "hold" and machine.phases[machine.power_on_phase].name == "C"
    assert machine.pulses_per_step_press() == {"C": 2}
    assert machine.timing.phase_event == ("charge", "discharge") * 3
    seconds = timing_model(machine).nominal_phase_seconds()
    assert seconds == pytest.approx([0.020, 0.060, 0.020, 0.100, 0.030, 0.060], rel=0.01)
    emu = Emulator(machine)
    emu.load([(0, [1, 9, 0])])          # lda 9, stop
    emu.set_switch_run(False)
    emu.run(max_cycles=10)
    assert emu.press_step() and (emu.cycles, emu.time_ns) == (2, 290_000_000)
    assert emu.get("a") == 9
