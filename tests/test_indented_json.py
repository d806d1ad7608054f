"""``emu.files.indented_json`` and the debug file: the text ``json.dumps(indent=1)`` writes.

The reference is Python's own ``json`` module: on random JSON values (flat
containers, lists of objects of one shape, and everything else), and on debug
files given back to it (``json.loads`` keeps the key order) of the example
programs and of random programs with labels, constants, pauses and
``.expect`` checks of numbers, memory words and text.
"""

import json
from pathlib import Path

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import asm
import emu
from emu.files import indented_json
from emu.runs import MachineChooser
from emu.testing import programs

ROOT = Path(__file__).resolve().parents[1]
REF8 = emu.load_machine("ref8")
EXAMPLES = sorted((ROOT / "programs").rglob("*.asm"))


_SCALARS = st.none() | st.booleans() | st.integers(-10**20, 10**20) | st.floats() | st.text(max_size=6)
_KEYS = st.sampled_from(["a", "b%s", "{c}", "é", '"', "k"])


@st.composite
def _rows(draw):
    """Objects with one set of keys, in one order: the shape written row by row."""
    keys = draw(st.lists(_KEYS, min_size=1, max_size=4, unique=True))
    return [{key: draw(_SCALARS) for key in keys} for _ in range(draw(st.integers(1, 5)))]


_VALUES = st.recursive(_SCALARS | _rows(), lambda inner: st.lists(inner, max_size=5)
                       | st.dictionaries(_KEYS | st.integers(0, 3), inner, max_size=5), max_leaves=30)


@settings(max_examples=400, deadline=None)
@given(_VALUES)
def test_any_json_value_is_written_as_json_dumps_writes_it(value):
    assert indented_json(value) == json.dumps(value, indent=1)


def test_a_list_of_objects_of_one_shape():
    rows = [{"at": 0, "kind": "code", "n%s": None}, {"at": 12, "kind": "data", "n%s": "é"}]
    assert indented_json({"rows": rows}) == (
        '{\n "rows": [\n  {\n   "at": 0,\n   "kind": "code",\n   "n%s": null\n  },\n'
        '  {\n   "at": 12,\n   "kind": "data",\n   "n%s": "\\u00e9"\n  }\n ]\n}')


def _check_layout(program, path: Path) -> dict:
    text = asm.debug_text(program, path)
    data = json.loads(text)
    assert text == json.dumps(data, indent=1) + "\n"
    assert data["lines"] == program.debug_info()["lines"]
    return data


@pytest.mark.parametrize("source", EXAMPLES, ids=lambda p: p.name)
def test_example_programs(source, tmp_path):
    program = asm.assemble_file(source, MachineChooser().machine_for(source))
    data = _check_layout(program, tmp_path / "p.dbg.json")
    assert data["lines"] and data["labels"]


_TEXT = st.text(alphabet='abz %{}é\t€0', max_size=8)


@st.composite
def _annotated_programs(draw):
    """Disassembled random code with constants, a labelled pause and checks after it."""
    code = asm.disassemble(REF8, draw(programs(REF8)), 0)
    lines = [*code, *(f"C{i} = {draw(st.integers(-300, 300))}" for i in range(draw(st.integers(0, 4))))]
    lines += ["here:  pause", f'.expect out == "{draw(_TEXT)}"', f".expect r0 != {draw(st.integers(0, 255))}",
              f".expect [{draw(st.integers(0, 255))}] == {draw(st.integers(0, 255))}", f"again: .byte {draw(st.integers(0, 9))}"]
    return "\n".join(lines) + "\n"


@settings(max_examples=60, deadline=None)
@given(_annotated_programs())
def test_random_programs_with_checks(source):
    program = asm.assemble_text(source, REF8, filename="rand%1.asm")
    data = _check_layout(program, Path("rand.dbg.json"))
    assert [e["item"] for e in data["expects"]] == ["out", "r0", "mem"]
    assert {type(e["value"]) for e in data["expects"]} == {int, str}


def test_names_and_texts_are_escaped_as_json_escapes_them():
    """Non-ASCII as \\u escapes (json.dumps' ensure_ascii), '%' and braces left alone."""
    program = asm.assemble_text('go:  pause\n  .expect out == "é{%s}"\nCOUNT = 3\n', REF8, filename="é%s.asm")
    text = asm.debug_text(program, "x.dbg.json")
    assert '"\\u00e9%s.asm"' in text and '"value": "\\u00e9{%s}"' in text
    assert text == json.dumps(json.loads(text), indent=1) + "\n"
