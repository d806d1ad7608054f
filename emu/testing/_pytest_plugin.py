"""pytest plugin: every program with ``.expect`` checks is a test item (entry point ``relaybench``).

``pytest programs/`` collects each ``*.asm`` under the paths named on the
command line (or the current folder when none is named), runs it as
``relaybench test`` does (its machine chosen as ``run`` chooses it, its
panel file's toggles, input and operator script given) and fails it with
``FILE:LINE: expected …, got …`` and the source line of each failing check.
A run that takes its paths from ``testpaths`` collects programs only when
the ini option ``relaybench_programs = true`` is set, so a project's own
test suite is not disturbed. A program that cannot be loaded is a
collection error with its located message, never a pass; one without
checks is no item.

Every item carries the marker ``relaybench`` and the machine's name as a
keyword (``-m relaybench``, ``-k acc12``). The fixture ``powered_on`` gives a
program in a machine just switched on (``emu.testing.power_on``).
"""

from __future__ import annotations

import json
import os

import pytest

__all__ = ["ProgramFailed", "ProgramFile", "ProgramItem", "powered_on"]

MARKER = "relaybench"


def pytest_addoption(parser) -> None:
    parser.addini("relaybench_programs", type="bool", default=False,
                  help="collect *.asm programs with .expect checks also from testpaths")


def pytest_configure(config) -> None:
    config.addinivalue_line("markers", f"{MARKER}: a program run as a test, judged by its .expect checks")


def pytest_collect_file(file_path, parent):
    if file_path.suffix != ".asm":
        return None
    config = parent.config
    if config.args_source == pytest.Config.ArgsSource.TESTPATHS and not config.getini("relaybench_programs"):
        return None
    return ProgramFile.from_parent(parent, path=file_path)


@pytest.fixture(scope="session")
def powered_on():
    """``powered_on(PROGRAM, machine=None)``: the program in a machine at power-on (``PoweredOn``)."""
    from ._fixtures import power_on
    return power_on


class ProgramFailed(Exception):
    """A program's verdict was not a pass; the text says why, check by check."""


class ProgramFile(pytest.File):
    def collect(self):
        from ..errors import RelaybenchError
        from ..runs import MachineChooser, load_program, panel_path_for, read_panel_file
        path = str(self.path)
        try:
            machine = MachineChooser().machine_for(path)
            program = load_program(path, machine)
            if panel_path_for(path).exists():
                read_panel_file(panel_path_for(path), machine)
        except RelaybenchError as exc:
            raise self.CollectError(exc.render() if hasattr(exc, "render") else str(exc)) from None
        if not program.expects:
            return
        item = ProgramItem.from_parent(self, name=self.path.stem, machine=machine)
        item.add_marker(MARKER)
        item.extra_keyword_matches.add(machine.name)
        yield item


class ProgramItem(pytest.Item):
    def __init__(self, *, machine, **kwargs):
        super().__init__(**kwargs)
        self.machine = machine

    def runtest(self) -> None:
        from ..runs import check_program
        verdict = check_program(_shown_path(self.path, self.config), self.machine)
        if not verdict.passed:
            raise ProgramFailed("\n".join(failure_lines(verdict, self.machine)))

    def repr_failure(self, excinfo, style=None):
        if isinstance(excinfo.value, ProgramFailed):
            return str(excinfo.value)
        return super().repr_failure(excinfo, style)

    def reportinfo(self):
        return self.path, None, f"{self.path.name} on {self.machine.name}"


def failure_lines(verdict, machine) -> list[str]:
    """Why a program did not pass: each failing check as ``FILE:LINE: expected …, got …`` with
    its source line, then what else went wrong (an unreached check, the cycle limit, a warning)."""
    if verdict.error is not None:
        return verdict.error.splitlines()
    lines = []
    for failure in verdict.failures:
        expect = failure.expect
        visit = f" (at halt {failure.visit} there)" if failure.visit > 1 else ""
        lines.append(f"{expect.file}:{expect.line}: expected {expect.text}, got {_shown(failure.actual)}{visit}")
        lines.append(f"    {_source_line(expect.file, expect.line)}")
    for expect in verdict.unreached:
        lines.append(f"{expect.file}:{expect.line}: never checked: the run did not halt there")
        lines.append(f"    {_source_line(expect.file, expect.line)}")
    if verdict.status == "cycle_limit":
        lines.append(f"{verdict.path}: ended at the cycle limit of {verdict.max_cycles:,} without reaching a halt")
    lines.extend(f"{verdict.path}: warning: {warning}" for warning in verdict.warnings)
    return lines


def _shown_path(path, config) -> str:
    """The program's path as messages show it: relative to where pytest was started, when inside."""
    relative = os.path.relpath(path, config.invocation_params.dir)
    return str(path) if relative.startswith("..") else relative


def _shown(value) -> str:
    if isinstance(value, str):
        return json.dumps(value, ensure_ascii=False)
    return f"{value} ({value:#x})" if value > 9 else str(value)


def _source_line(file: str, line: int) -> str:
    try:
        with open(file, encoding="utf-8") as text:
            return text.read().splitlines()[line - 1].strip()
    except (OSError, UnicodeDecodeError, IndexError):
        return "(source line not readable)"
