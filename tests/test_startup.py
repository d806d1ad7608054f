"""A short run's start-up: only the command that runs is imported, and the parsers, the
machine and its compiled code come from the user's cache folder once they are there.

Each check runs a fresh process (``PROBE``) that counts the work the cache
saves: lark grammars built (``lark.Lark.__init__``), micro-steps parsed
(``parse_step``'s own memo) and lines of machine code generated
(``emu.engine.Emitter.line``), then runs a program and prints the result.
"""

from __future__ import annotations

import json
import multiprocessing
import os
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from emu.cache import CACHE_VARIABLE
from emu.cli import COMMANDS

from cli_support import ROOT, cli_process

PROBE = r"""
import contextlib, io, json, sys
import lark
built = []
plain_init = lark.Lark.__init__
def counting_init(self, *args, **kwargs):
    built.append(1)
    plain_init(self, *args, **kwargs)
lark.Lark.__init__ = counting_init
import emu
from emu.description.notation import parse_step
emitted = []
plain_line = emu.engine.Emitter.line
def counting_line(self, text=""):
    emitted.append(1)
    plain_line(self, text)
emu.engine.Emitter.line = counting_line
machine = emu.load_machine(sys.argv[1])
steps_parsed = parse_step.cache_info().currsize
compiled = emu.engine.compile_machine(machine)
lines_generated = len(emitted)
from emu.cli import main
out = io.StringIO()
with contextlib.redirect_stdout(out):
    status = main(["run", "--json", "--machine", sys.argv[1], sys.argv[2]])
print(json.dumps({"parsers_built": len(built), "steps_parsed": steps_parsed,
                  "lines_generated": lines_generated, "source": compiled.source,
                  "status": status, "report": json.loads(out.getvalue())}))
"""

PROGRAM = ROOT / "tests" / "asm_fixtures" / "blink.asm"       # with an include: two files to assemble


def probe(cache, machine="ref8", program=PROGRAM) -> dict:
    env = {**os.environ, "PYTHONPATH": str(ROOT), CACHE_VARIABLE: str(cache)}
    env.pop("RELAYBENCH_DUMP_CODE", None)
    done = subprocess.run([sys.executable, "-c", PROBE, str(machine), str(program)], capture_output=True,
                          text=True, env=env, timeout=300, cwd=ROOT)
    assert done.returncode == 0, done.stderr
    return json.loads(done.stdout)


def work(result: dict) -> tuple[int, int, int]:
    return result["parsers_built"], result["steps_parsed"], result["lines_generated"]


@pytest.fixture(scope="module")
def cold_and_warm(tmp_path_factory):
    """One cold run into an empty cache, one warm run after it, and one with the cache off."""
    cache = tmp_path_factory.mktemp("cache")
    return cache, probe(cache), probe(cache), probe("off")


def test_a_warm_run_builds_no_parser_parses_no_step_and_generates_no_code(cold_and_warm):
    cache, cold, warm, _off = cold_and_warm
    assert all(count > 0 for count in work(cold)), work(cold)
    assert work(warm) == (0, 0, 0)
    assert {p.name for p in cache.iterdir()} == {"parsers", "machines", "code"}


def test_a_warm_run_gives_the_same_code_and_the_same_result(cold_and_warm):
    _cache, cold, warm, off = cold_and_warm
    assert warm["source"] == cold["source"] == off["source"]
    assert warm["report"] == cold["report"] == off["report"]
    assert warm["status"] == 0 and warm["report"]["status"] == "halted"


@pytest.mark.parametrize("damage", ["truncated", "garbage"])
def test_damaged_entries_are_made_anew_without_a_complaint(cold_and_warm, tmp_path, damage):
    cache, cold, _warm, _off = cold_and_warm
    damaged = tmp_path / "cache"
    shutil.copytree(cache, damaged)
    for path in damaged.rglob("*.bin"):
        data = path.read_bytes()
        path.write_bytes(data[:len(data) // 3] if damage == "truncated" else os.urandom(len(data)))
    again = probe(damaged)
    assert all(count > 0 for count in work(again))
    assert again["source"] == cold["source"] and again["report"] == cold["report"]
    assert work(probe(damaged)) == (0, 0, 0)            # and the rewritten entries are good


def test_a_changed_machine_file_is_read_and_compiled_anew(tmp_path):
    machine = tmp_path / "mine.toml"
    text = (ROOT / "emu" / "machines" / "ref8.toml").read_text(encoding="utf-8")
    machine.write_text(text, encoding="utf-8")
    cache = tmp_path / "cache"
    first = probe(cache, machine)
    assert work(probe(cache, machine)) == (0, 0, 0)
    slower = text.replace("\nms = 60\n", "\nms = 90\n", 1)      # phase A of the clock, 60 → 90 ms
    assert slower != text
    machine.write_text(slower, encoding="utf-8")
    changed = probe(cache, machine)
    assert changed["steps_parsed"] > 0 and changed["lines_generated"] > 0
    assert changed["report"]["cycles"] == first["report"]["cycles"]
    assert changed["report"]["sim_seconds"] == pytest.approx(first["report"]["sim_seconds"] * 230 / 200)
    assert len(list((cache / "machines").iterdir())) == 2


def _probe_in_parallel(cache: str) -> dict:
    return probe(cache)


def test_two_processes_filling_one_cache_at_once_both_succeed(tmp_path):
    cache = tmp_path / "cache"
    with multiprocessing.get_context("spawn").Pool(2) as pool:
        first, second = pool.map(_probe_in_parallel, [str(cache), str(cache)])
    assert first["report"] == second["report"] and first["source"] == second["source"]
    after = probe(cache)
    assert work(after) == (0, 0, 0) and after["report"] == first["report"]


def test_the_cache_folder_named_by_the_variable_is_the_one_used(tmp_path, monkeypatch):
    cache = tmp_path / "elsewhere"
    monkeypatch.setenv(CACHE_VARIABLE, str(cache))
    done = cli_process("run", PROGRAM)
    assert done.returncode == 0, done.stderr
    assert sorted(p.name for p in cache.iterdir()) == ["code", "machines", "parsers"]
    monkeypatch.setenv(CACHE_VARIABLE, "off")
    off = cli_process("run", PROGRAM)
    assert off.returncode == 0 and off.stdout == done.stdout


def imported_after(*argv) -> set[str]:
    """Module names a ``relaybench ARGV`` process has imported when it ends."""
    code = ("import sys, atexit\n"
            "atexit.register(lambda: sys.__stderr__.write('MODULES ' + ' '.join(sorted(sys.modules))))\n"
            "from emu.cli import main\nsys.exit(main(sys.argv[1:]))\n")
    done = subprocess.run([sys.executable, "-c", code, *map(str, argv)], capture_output=True, text=True,
                          env={**os.environ, "PYTHONPATH": str(ROOT)}, timeout=120, cwd=ROOT)
    return set(done.stderr.rsplit("MODULES ", 1)[1].split())


def test_importing_relaybench_reads_and_writes_no_cache(tmp_path, monkeypatch):
    """So a pytest plugin (or any program) that imports it early never touches the user's cache."""
    monkeypatch.setenv(CACHE_VARIABLE, str(tmp_path / "cache"))
    done = subprocess.run([sys.executable, "-c", "import emu, emu.cli, emu.commands.run, asm"],
                          env={**os.environ, "PYTHONPATH": str(ROOT)}, capture_output=True, text=True, timeout=120)
    assert done.returncode == 0, done.stderr
    assert not (tmp_path / "cache").exists()


def test_the_overview_lists_every_command_without_importing_one():
    done = cli_process("--help")
    assert done.returncode == 0
    for name, summary in COMMANDS.items():
        assert name in done.stdout and summary.split()[0] in done.stdout
    assert not {f"emu.commands.{name}" for name in COMMANDS} & imported_after("--help")


def test_a_plain_run_imports_neither_numpy_nor_the_panel_nor_the_waveform_writer():
    modules = imported_after("run", PROGRAM)
    assert "emu.commands.run" in modules
    assert not {"numpy", "prompt_toolkit", "vcd", "emu.timing", "emu.debugger", "emu.commands.clock"} & modules
    assert "numpy" in imported_after("run", PROGRAM, "--wear")


@pytest.mark.parametrize("name", list(COMMANDS))
def test_every_command_of_the_table_has_its_module(name):
    done = cli_process(name, "--help")
    assert done.returncode == 0, done.stderr
    assert done.stdout.startswith(f"usage: relaybench {name}")


def test_a_local_sweep_imports_neither_the_cluster_library_nor_numpy():
    """dask comes in only with --cluster; a sweep on this machine's cores needs neither."""
    modules = imported_after("sweep", ROOT / "programs" / "ref8" / "tolls.asm", "--each", "load=1..3",
                             "--workers", "1")
    assert "emu.commands.sweep" in modules
    assert not {"distributed", "dask", "numpy", "prompt_toolkit", "emu.timing", "emu.debugger"} & modules
