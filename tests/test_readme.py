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


def test_the_readme_names_no_section_of_an_outside_specification():
    """Before: "keys as in spec §5", a document that is not in the project."""
    text = README.read_text(encoding="utf-8")
    assert "§" not in text and "spec " not in text
    assert "(emu/machines/ref8.md)" in text


def test_the_machine_reference_names_every_json_key_of_run(capsys, tmp_path):
    """Every key ``run --json`` prints has a row in the reference's key table."""
    import json
    from cli_support import cli, write
    reference = (README.parent / "emu" / "machines" / "ref8.md").read_text(encoding="utf-8")
    table = reference.split("## Headless runs")[1]
    prog = write(tmp_path, "p.asm", "halt\n")
    code, out, _ = cli(capsys, "run", prog, "--json", "--wear")
    assert code == 0
    for key in json.loads(out):
        assert f"`{key}`" in table, key


def test_the_setup_commands_make_their_own_virtual_environment():
    """A fresh Debian or Ubuntu refuses ``pip install`` outside a virtual environment."""
    text = README.read_text(encoding="utf-8")
    setup = text.split("## Set up")[1].split("## A short tour")[0]
    commands = [line for line in setup.splitlines() if line.startswith("python3 ")]
    assert len(commands) == 2
    for line in commands:
        assert line.startswith("python3 -m venv .venv && .venv/bin/pip install ")


def test_the_property_of_your_own_routine_in_the_readme_runs_and_holds(tmp_path):
    """The ten-line property the README shows a builder, run as written (its fixture given)."""
    import importlib.util
    from emu.testing import power_on
    text = README.read_text(encoding="utf-8")
    section = text[text.index("### Programs as pytest items"):]
    example = section[section.index("```python\n") + 10:]
    example = example[:example.index("```")]
    assert len(example.strip().splitlines()) == 10
    module_path = tmp_path / "readme_property.py"
    module_path.write_text(example, encoding="utf-8")
    spec = importlib.util.spec_from_file_location("readme_property", module_path)
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    [test] = [value for name, value in vars(module).items() if name.startswith("test_")]
    test(powered_on=lambda program: power_on(README.parent / program))
