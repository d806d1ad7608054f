"""The engine: where a micro-step runs.

``_microstep_compiler`` turns a machine description's micro-steps into
Python (one function per micro-step, one fused function per instruction):
``_machine_compiler`` writes the whole machine's source through ``_emitter``,
``_step_translator`` translates one micro-step's statements (reading state
as ``_state_access`` says), ``_fused_functions`` writes the fused functions
and free runners; ``_blocks`` translates hot straight-line code
into one function a block (``_block_translator``, ``_block_dispatch``,
``_dead_assignments``). ``_control_unit`` is the hold line, the halt
latch, STEP, RESUME and RESET, and the two paths that run the compiled
steps (``run`` itself in ``_run_loop``, observers and their windows in
``_observing``, free cycles for them as one compact trace in
``_cycle_trace``, its steps numbered in ``_step_places`` and straight runs
of them traced by generated functions from ``_trace_chains``); ``_lookout``
where a watched run must stop; ``_line_gates`` which lines a step drives
now, ``_line_tally`` counting them for wear on
both paths; ``_clock_ring`` the phase table in simulated time; ``_ports`` the
devices on the I/O bus; ``_snapshots`` the whole state as a file,
``_save_points`` kept in memory for ``rewind`` and ``reload``.
"""

from ._clock_ring import Ring
from ._control_unit import Emulator, StopReason
from ._observing import Observer
from ._cycle_trace import CycleTrace
from ._step_places import StepPlaces, step_places
from ._lookout import Lookout
from ._microstep_compiler import CompiledMachine, Fallback, compile_machine
from ._ports import Ports
from ._save_points import SavePoint
from ._snapshots import read_snapshot

from ._alu_codegen import emit_alu
from ._emitter import Emitter

__all__ = ["CycleTrace", "StepPlaces", "step_places", "Emitter", "emit_alu", "CompiledMachine", "Emulator", "Fallback",
           "Lookout", "Observer", "Ports", "Ring", "SavePoint", "StopReason", "read_snapshot",
           "compile_machine"]
