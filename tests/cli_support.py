"""Helpers for the command-line tests: run ``relaybench`` in-process or for real."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

from emu.cli import main

ROOT = Path(__file__).resolve().parent.parent
PROGRAMS = ROOT / "programs"
REF8_PROGRAMS = PROGRAMS / "ref8"
ACC12 = str(ROOT / "tests" / "machines" / "acc12.toml")


def cli(capsys, *argv) -> tuple[int, str, str]:
    """Run ``relaybench ARGV`` in this process: (exit status, stdout, stderr)."""
    try:
        code = main([str(a) for a in argv])
    except SystemExit as exc:
        code = exc.code
    captured = capsys.readouterr()
    return code, captured.out, captured.err


def cli_process(*argv, timeout=120, **kwargs) -> subprocess.CompletedProcess:
    """Run ``python -m emu.cli ARGV`` as a real process."""
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    return subprocess.run([sys.executable, "-m", "emu.cli", *map(str, argv)], capture_output=True,
                          text=True, timeout=timeout, env=env, **kwargs)


def write(folder: Path, name: str, text: str) -> Path:
    path = folder / name
    path.write_text(text, encoding="utf-8")
    return path
