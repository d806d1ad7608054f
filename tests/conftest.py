"""Settings for the whole test run.

The suite never reads or writes the user's own cache folder: every test,
and every ``relaybench`` process a test starts, uses one temporary folder
made for this run (set before any test module imports ``emu``, since
importing it already builds a parser through the cache).
"""

from __future__ import annotations

import os
import shutil
import tempfile

CACHE_VARIABLE = "RELAYBENCH_CACHE"
"""``emu.cache.CACHE_VARIABLE``, written out: importing ``emu`` here would use the cache too early."""

_made: list[str] = []


def pytest_configure(config):
    folder = tempfile.mkdtemp(prefix="relaybench-test-cache-")
    _made.append(folder)
    os.environ[CACHE_VARIABLE] = folder


def pytest_unconfigure(config):
    for folder in _made:
        shutil.rmtree(folder, ignore_errors=True)
