"""The README's examples stay true: its assembly tour passes ``relaybench test``."""

from __future__ import annotations

from pathlib import Path

from cli_support import cli

README = Path(__file__).resolve().parent.parent / "README.md"


def test_the_assembly_tour_in_the_readme_assembles_runs_and_passes_its_checks(tmp_path, capsys):
    text = README.read_text(encoding="utf-8")
    section = text[text.index("## The assembly language"):]
    example = section[section.index("```\n") + 4:]
    example = example[:example.index("```")]
    program = tmp_path / "tour.asm"
    program.write_text(example, encoding="utf-8")
    code, out, _err = cli(capsys, "test", program)
    assert code == 0
    assert "pass" in out and "4 checks at 2 halts" in out
