"""Settings for the whole test run.

The assembler's fixture programs are inputs of its tests, not programs to
run as tests (``collect_ignore``). The suite never reads or writes the user's own cache folder: every test,
and every ``relaybench`` process a test starts, uses one temporary folder
made for this run, set as pytest starts. (Importing ``emu`` uses no cache,
so a plugin that imports it before this file is read changes nothing.)
"""

from __future__ import annotations

import os
import shutil
import tempfile

CACHE_VARIABLE = "RELAYBENCH_CACHE"
"""``emu.cache.CACHE_VARIABLE``, written out: this file imports nothing of relaybench."""

collect_ignore = ["asm_fixtures"]

_made: list[str] = []


def pytest_configure(config):
    folder = tempfile.mkdtemp(prefix="relaybench-test-cache-")
    _made.append(folder)
    os.environ[CACHE_VARIABLE] = folder


def pytest_unconfigure(config):
    for folder in _made:
        shutil.rmtree(folder, ignore_errors=True)
