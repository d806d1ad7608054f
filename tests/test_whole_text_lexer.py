"""The whole-text lexer reads what lark's own lexer reads: the same tokens, the same positions.

The reference is lark itself (PyPI ``lark``, its basic lexer: ``Lark.lex``)
over the assembly grammar, on every program shipped or used by the tests, on
disassembled random programs and on random text; the statements a long
program assembles to are checked through their line numbers.
"""

from pathlib import Path

import lark
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

import asm
import emu
from emu.description.notation import WholeTextLexer, packaged_parser
from emu.testing import programs

ROOT = Path(__file__).resolve().parents[1]
REF8 = emu.load_machine("ref8")
ASSEMBLY = packaged_parser("asm", "grammar/assembly.lark")
FAST = WholeTextLexer(ASSEMBLY.lexer_conf)
SOURCES = sorted(p for pattern in ("*.asm", "*.inc") for folder in ("programs", "tests")
                 for p in (ROOT / folder).rglob(pattern))


def _read(tokens):
    """Each token with its position, up to where the lexer stopped: (tokens, (line, column) or None)."""
    seen = []
    try:
        for token in tokens:
            seen.append((token.type, str(token), token.start_pos, token.line, token.column))
    except lark.UnexpectedCharacters as exc:
        return seen, (exc.line, exc.column, exc.pos_in_stream)
    return seen, None


def _same_as_lark(text: str):
    fast, theirs = _read(FAST.lex(text)), _read(ASSEMBLY.lex(text))
    assert fast == theirs
    return fast


def test_the_example_programs_read_as_lark_reads_them():
    assert len(SOURCES) >= 20
    for path in SOURCES:
        tokens, stopped = _same_as_lark(path.read_text(encoding="utf-8").replace("\r\n", "\n"))
        assert stopped is None and tokens, path


def test_blank_and_comment_lines_go_with_the_line_break_before_them():
    tokens, stopped = _same_as_lark("a: nop ; one\n\n   ; two\n\t\n  b\n; end")
    assert stopped is None
    assert tokens == [("NAME", "a", 0, 1, 1), ("COLON", ":", 1, 1, 2), ("NAME", "nop", 3, 1, 4),
                      ("_NL", "\n\n   ; two\n\t\n", 12, 1, 13), ("NAME", "b", 27, 5, 3), ("_NL", "\n", 28, 5, 4)]


def test_a_comment_at_the_very_end_stays_a_comment():
    """Its digits are not given back to the token before it (``nop ; 0000 00`` is no ``nop 0``)."""
    assert _same_as_lark("        nop                ; 0000  00") == ([("NAME", "nop", 8, 1, 9)], None)


def test_a_character_no_terminal_matches_stops_both_at_the_same_place():
    tokens, stopped = _same_as_lark("ld r1, 2\n  ; fine\n  add r1, ?")
    assert stopped == (3, 11, 28)
    assert tokens[-1] == ("COMMA", ",", 26, 3, 9)


@settings(max_examples=300, deadline=None)
@given(st.text(alphabet="ab_rx019 \t\r\n;:,=[]#@()$+-~*/%&|^<>!'\"\\.?é", max_size=60))
def test_random_text_reads_as_lark_reads_it(text):
    _same_as_lark(text)


@settings(max_examples=60, deadline=None)
@given(st.data())
def test_disassembled_programs_read_as_lark_reads_them(data):
    words = data.draw(programs(REF8))
    text = "\n".join(asm.disassemble(REF8, words, 0))
    tokens, stopped = _same_as_lark(text)
    assert stopped is None and tokens


SPACED = lark.Lark(r"""
start: (NUMBER | WORD | "(" start ")")*
NUMBER: /[0-9]+/
WORD: /[a-z]+/
%ignore /#[a-z0-9]*/
%ignore /[ \t\n]+/
""", parser="lalr")
"""A grammar whose ignored text spans lines and may end where a token could begin (``#ab12``)."""


@settings(max_examples=300, deadline=None)
@given(st.text(alphabet="ab19# \t\n()?", max_size=40))
def test_ignored_text_over_several_lines_reads_as_lark_reads_it(text):
    fast = _read(WholeTextLexer(SPACED.lexer_conf).lex(text))
    assert fast == _read(SPACED.lex(text))


def test_ignored_text_is_not_given_back_to_a_token():
    """lark takes the comment ``#ab12`` whole, then stops at '?'; it reads no number 2 in it."""
    tokens, stopped = _read(WholeTextLexer(SPACED.lexer_conf).lex("7\n  #ab12?"))
    assert tokens == [("NUMBER", "7", 0, 1, 1)] and stopped == (2, 8, 9)


def test_a_keyword_that_is_also_a_name_is_refused():
    grammar = 'start: NAME | "if" NAME\nNAME: /[a-z]+/\n%ignore " "\n'
    with pytest.raises(ValueError, match="IF .* is also a NAME"):
        lark.Lark(grammar, parser="lalr", lexer=WholeTextLexer)


def test_statements_after_blank_and_comment_lines_keep_their_lines():
    source = "; head\n\n   ; note\n\nstart:  nop\n\t\n  ; x\n\n\n  jmp start ; back\r\n\r\n  .byte 7\n; tail"
    program = asm.assemble_text(source, REF8, filename="gaps.asm")
    assert [(e.line, e.address, e.kind) for e in program.lines] == [(5, 0, "code"), (10, 1, "code"),
                                                                    (12, 4, "data")]
    listing = program.listing_text().splitlines()
    assert listing[6] == "  0000  00             1  gaps.asm:5     start:  nop"     # ref8.toml: fetch only
    assert listing[4] == " " * 26 + "gaps.asm:3        ; note"                      # the place column, aligned
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_text("\n; a\n\n  nop\n   ; b\n\n    jmp nowhere\n", REF8, filename="gaps.asm")
    [problem] = caught.value.diagnostics
    assert (problem.line, problem.column, problem.message) == (7, 9, "undefined label 'nowhere'")


def test_a_long_file_with_syntax_errors_reports_each_in_its_place():
    """Lines parse in blocks once the whole file fails; a failing block is read line by line."""
    rows = ["  nop"] * 700
    rows[1], rows[299], rows[520], rows[690] = "  li r1, ,", "far: nop", "  .byte 1,, 2", "  jmp far"
    rows[400] = "  jmp nowhere"
    with pytest.raises(asm.AsmError) as caught:
        asm.assemble_text("\n".join(rows) + "\n", REF8, filename="long.asm")
    assert [(d.line, d.column, d.message) for d in caught.value.diagnostics] == [
        (2, 10, "unexpected ','; expected an expression"), (401, 7, "undefined label 'nowhere'"),
        (521, 11, "unexpected ','; expected an expression, a string")]
