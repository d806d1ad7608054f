"""The micro-step compiler: machine description IR → Python source → code.

Two back ends share one statement translator, so they cannot drift:

* **stepping** — one function per micro-step, reading its operand fields
  from the instruction register (or the latch that holds a later word) at
  run time. The control unit calls one of these per falling clock edge.
* **fused** — one function per instruction *and* per value of the
  register fields in its first word, with those fields baked in as literal
  slot numbers and registers kept in locals. It runs the fetch steps and
  all the instruction's steps in one call and returns its cycle count.
  Instructions that drive halt are not fused: their entry raises
  ``Fallback`` before touching anything, and the control unit steps them,
  so a halt lands exactly where the hardware would put it.

All generated functions are closures inside one ``build(s, m, in_, out_,
Fallback)`` function: ``s`` is the flat list of register and flag slots,
``m`` the memory. The code object is compiled once per machine and cached;
``build`` is called once per emulator (and kept in the user's cache folder
between runs, see ``_code_cache``). Set ``RELAYBENCH_DUMP_CODE`` to a
folder to have the source written there, under the file name that
tracebacks show.

This module is the compiler's front: what the control unit calls and gets
back. The work is done by ``_machine_compiler`` (the whole ``build``
source), ``_fused_functions``, ``_step_translator`` and ``_state_access``.
"""

from __future__ import annotations

import weakref
from dataclasses import dataclass
from typing import Callable, NamedTuple

from ..description import Machine
from ._code_cache import cached_code
from ._emitter import compile_generated
from ._machine_compiler import _MachineCompiler

__all__ = ["CompiledMachine", "compile_machine", "Fallback"]


class Fallback(Exception):
    """Raised by a fused entry that must be stepped instead (halt, undefined opcode)."""


class BoundFunctions(NamedTuple):
    """The generated functions, bound to one emulator's state."""
    fetch_steps: tuple[Callable[[], None], ...]
    instruction_steps: tuple[tuple[Callable[[], bool | None], ...], ...]
    instruction_jumps: tuple[tuple[Callable[[], int] | None, ...], ...]
    """Per own step: None (go on to the next step) or a function, called before the step, returning
    the index of the step to run next (the number of steps: the instruction is finished)."""
    fused: list[Callable[[], int]]
    """First word → its fused function; the free runners index it themselves."""
    run_free: Callable
    run_free_watching: Callable
    run_free_stopping: Callable
    halting: list[Callable[[], bool] | None]
    """First word → its halting function (fetch and steps to the one that drives halt), or None."""
    peek: Callable[[], int]
    """The first word the fetch steps will load, read without loading it."""


@dataclass


class CompiledMachine:
    machine: Machine
    source: str
    code: object
    max_fused_cycles: int

    def build(self, s: list, m, in_, out_, undefined) -> BoundFunctions:
        """Bind to one emulator; ``undefined(address)`` counts an undefined opcode that a fused
        decode group found in a later word (after its shared steps had run)."""
        namespace: dict = {}
        exec(self.code, namespace)
        return BoundFunctions(*namespace["build"](s, m, in_, out_, Fallback, undefined))


_cache: dict[int, CompiledMachine] = {}


def compile_machine(machine: Machine) -> CompiledMachine:
    """Compile once per machine object; later calls return the cached result.

    The cache entry goes when the machine object does. The code itself is
    kept between processes too, in the user's cache folder (``_code_cache``).
    """
    key = id(machine)
    cached = _cache.get(key)
    if cached is not None and cached.machine is machine:
        return cached
    def generate():
        source, max_cycles = _MachineCompiler(machine).source()
        return source, compile_generated(source, machine.name, f"{machine.name}_generated"), max_cycles

    source, code, max_cycles = cached_code(machine, generate)
    compiled = CompiledMachine(machine, source, code, max_cycles)
    _cache[key] = compiled
    weakref.finalize(machine, _cache.pop, key, None)
    return compiled
