"""The engine properties find their machines: every file under emu/machines/ and tests/machines/."""

from __future__ import annotations

from types import SimpleNamespace

import pytest

from engine_support import MACHINE_FOLDERS, MACHINES, property_skip_reason, skip_unless_properties_run


def test_every_machine_file_in_both_folders_is_discovered():
    on_disk = {p.stem for folder in MACHINE_FOLDERS for p in folder.glob("*.toml")}
    assert {"ref8", "acc12"} <= on_disk
    assert set(MACHINES) == on_disk
    assert all(machine.path.endswith(f"{name}.toml") for name, machine in MACHINES.items())


def _machine(*halts: bool):
    return SimpleNamespace(name="sketch", instructions=[SimpleNamespace(drives_halt=h) for h in halts])


def test_a_machine_the_properties_cannot_run_on_is_skipped_with_the_reason():
    assert property_skip_reason(_machine(True, False)) is None
    assert property_skip_reason(_machine(False, False)) == "sketch has no instruction that drives halt"
    assert property_skip_reason(_machine(True)) == "sketch has only halting instructions"
    with pytest.raises(pytest.skip.Exception, match="no instruction that drives halt"):
        skip_unless_properties_run(_machine(False))
