"""The ``[timing]`` and ``[wear]`` sections and the ring's stage names, read into typed parts.

The engine does not use them, but a bad one must stop every command, not
only ``clock`` or ``--wear``; so they are read and checked when the machine
loads. What the parts *imply* (RC delays, whether the stages agree with
the phase table) is worked out by ``emu.timing``.

``[timing]`` holds the supply (``supply_v``), the datapath's minimum high
pulse (``min_pulse_ms``), how far the phase table may stray from the parts
(``table_tolerance``), how a part falls within its band (``spread``) and how
much armature times vary from one operation to the next (``jitter``); each
``[[timing.stage]]`` the parts of one ring stage, any of which may stand in
``[timing]`` itself as the default for all stages. ``[wear]`` holds the rated
mechanical life of every relay (``rated_operations``) and of those that
differ (``[wear.relays]``), named as ``[clock] stage_names`` names the ring's
stages (a named stage is a relay of that name).
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import TYPE_CHECKING

from ..errors import MachineError
from ._schema import Table, kind_of

if TYPE_CHECKING:
    from ._model import Phase

__all__ = ["LINE_NAME", "MECHANICAL", "MODES", "PARTS", "SPREADS", "MAX_TOLERANCE", "SILICON_DIODE_DROP_V", "Part",
           "StageParts", "TimingSection", "WearRatings", "check_stage_names", "read_stage_names", "read_timing",
           "read_wear", "timing_section", "wear_section"]

LINE_NAME = re.compile(r"[A-Za-z0-9_-]+")
"""The name a builder gives a control line or a ring stage: letters, digits, ``-`` and ``_`` (it is
also the name of a waveform's signal)."""

SILICON_DIODE_DROP_V = 0.7
"""Forward drop of a small-signal silicon diode (common practice)."""


@dataclass(frozen=True)
class Part:
    """One toleranced value of a stage: its key, SI scale, default tolerance."""
    key: str
    scale: float
    tolerance: float
    what: str
    default: float | None = None
    zero_allowed: bool = False
    """Zero is a valid value (times, diode drop); other parts must be above zero."""


PARTS = {
    "r": Part("r_ohm", 1.0, 0.05, "the series resistor in ohms"),
    "c": Part("c_uf", 1e-6, 0.20, "the timing capacitor in microfarads"),
    "coil": Part("coil_ohm", 1.0, 0.10, "the coil resistance in ohms"),
    "pick_up": Part("pick_up_v", 1.0, 0.05, "the pick-up voltage in volts"),
    "drop_out": Part("drop_out_v", 1.0, 0.10, "the drop-out voltage in volts"),
    "operate": Part("operate_ms", 1e-3, 0.20, "the operate time in milliseconds", zero_allowed=True),
    "release": Part("release_ms", 1e-3, 0.20, "the release time in milliseconds", zero_allowed=True),
    "diode": Part("diode_v", 1.0, 0.05, "the forward drop of each series diode in volts",
                  default=SILICON_DIODE_DROP_V, zero_allowed=True),
}
MODES = ("charge", "discharge")
MECHANICAL = {"charge": "operate", "discharge": "release"}
"""The armature time that follows each RC event: picking up needs the operate time, dropping out the release."""
SPREADS = ("uniform", "normal")
MAX_TOLERANCE = 0.5
_STAGE_KEYS = ("mode", "diodes") + tuple(p.key for p in PARTS.values()) + tuple(f"{n}_tol" for n in PARTS)
_TOP_KEYS = ("supply_v", "supply_tol", "min_pulse_ms", "table_tolerance", "spread", "jitter", "stage")


@dataclass(frozen=True)
class StageParts:
    """The checked parts of one ring stage, values in SI units."""
    number: int
    mode: str | None
    """``charge`` or ``discharge`` in a ring of one stage a phase; None in a make-before-break
    ring, where the stage does both and the ring says which ends which phase."""
    diodes: int
    values: dict[str, float]
    tolerances: dict[str, float]
    line: int | None = None
    """Its header's line in the machine file, so a later finding about it can name the line."""

    @property
    def mechanical(self) -> str:
        """The armature time that ends this stage's phase (in a ring of one stage a phase)."""
        return MECHANICAL[self.mode]


@dataclass(frozen=True)
class TimingSection:
    """``[timing]`` as checked values.

    ``phase_stage[i]`` is the index of the stage whose event ends phase ``i``,
    ``phase_event[i]`` that event: ``charge`` (it picks up) or ``discharge``
    (it drops out).
    """
    supply: float
    supply_tol: float
    stages: tuple[StageParts, ...]
    phase_stage: tuple[int, ...]
    phase_event: tuple[str, ...]
    min_pulse: float | None
    table_tolerance: float
    spread: str
    jitter: float


@dataclass(frozen=True)
class WearRatings:
    """Rated mechanical life in operations: one default, and the relays that differ."""
    default: float | None = None
    relays: dict[str, float] = field(default_factory=dict)

    def life(self, relay: str) -> float | None:
        return self.relays.get(relay, self.default)


def read_timing(top: Table, ring_stages: int, phases: tuple[Phase, ...],
                locate=lambda key: None) -> TimingSection:
    """Check ``[timing]`` against the clock it times; ``top`` fails with the loader's error,
    ``locate(key)`` gives the line of a key path."""
    top.known_keys(_TOP_KEYS + _STAGE_KEYS)
    supply = top.number("supply_v", above=0, what="the supply voltage")
    supply_tol = _tolerance(top, "supply_tol", 0.05)
    min_pulse = top.number("min_pulse_ms", above=0, default=None)
    table_tolerance = top.number("table_tolerance", above=0, default=0.05)
    if table_tolerance >= 1:
        top.fail(f"'table_tolerance' must be a fraction below 1 (0.05 is 5 %), not {table_tolerance}",
                 "table_tolerance")
    spread = top.choice("spread", SPREADS, default="uniform")
    jitter = _tolerance(top, "jitter", 0.10)
    specs = top.tables("stage", lambda n: f"[[timing.stage]] {n}",
                       expected=f"needs one [[timing.stage]] table per ring stage ({ring_stages})")
    if len(specs) != ring_stages:
        top.fail(f"has {len(specs)} [[timing.stage]] tables but the ring has {ring_stages} stages", "stage")
    odd = next((p for p in phases if len(set(p.ring)) != 1), None)
    if odd is None:
        stages = tuple(_stage(i, spec, top, locate(spec.key), None) for i, spec in enumerate(specs, 1))
        phase_stage = _phase_stages(top, ring_stages, phases)
        phase_event = tuple(stages[s].mode for s in phase_stage)
    else:
        phase_stage, phase_event = _make_before_break_events(top, ring_stages, phases)
        stages = tuple(_stage(i, spec, top, locate(spec.key), odd) for i, spec in enumerate(specs, 1))
    return TimingSection(supply, supply_tol, stages, phase_stage, phase_event,
                         None if min_pulse is None else min_pulse * 1e-3, table_tolerance, spread, jitter)


def _tolerance(table: Table, key: str, default: float) -> float:
    value = table.number(key, low=0, default=None)
    if value is None:
        return default
    if value > MAX_TOLERANCE:
        table.fail(f"'{key}' must be a fraction from 0 to {MAX_TOLERANCE} (0.05 is ±5 %), not {value:g}", key)
    return value


def _stage(number: int, spec: Table, top: Table, line: int | None, odd: Phase | None) -> StageParts:
    """One stage's parts; ``odd`` is a phase lighting other than one stage (then the ring,
    not 'mode', says what each stage's events end), None in a ring of one stage a phase."""
    spec.known_keys(_STAGE_KEYS)

    def pick(key) -> Table:
        return spec if key in spec else top

    if odd is not None:
        if "mode" in pick("mode"):
            pick("mode").fail(f"'mode' has no place when a phase lights {len(set(odd.ring))} stages "
                              f"('{odd.name}'): then each stage picks up, ending one phase, and drops out, "
                              f"ending another, as the ring says; leave 'mode' out", "mode")
        mode, needed = None, ("operate", "drop_out", "release")
    else:
        if "mode" not in pick("mode"):
            spec.fail(f"missing key 'mode' ({' or '.join(MODES)})", "mode")
        mode = pick("mode").choice("mode", MODES)
        needed = ("operate",) if mode == "charge" else ("drop_out", "release")
    diodes = pick("diodes").integer("diodes", low=0, default=0, expected="a whole number of series diodes")
    values, tolerances = {}, {}
    for name, part in PARTS.items():
        table = pick(part.key)
        required = name in ("r", "c", "coil", "pick_up") + needed
        if required and part.key not in table:
            spec.fail(f"missing key '{part.key}' ({part.what})", part.key)
        bound = {"low": 0} if part.zero_allowed else {"above": 0}
        value = table.number(part.key, default=None, **bound)
        if value is None:
            value = part.default if part.default is not None else 0.0
        values[name] = value * part.scale
        tolerances[name] = _tolerance(pick(f"{name}_tol"), f"{name}_tol", part.tolerance)
    if "drop_out" in needed and values["drop_out"] >= values["pick_up"]:
        spec.fail(f"'drop_out_v' ({values['drop_out']:g} V) must be below 'pick_up_v' "
                  f"({values['pick_up']:g} V): a relay lets go below where it picks up")
    return StageParts(number, mode, diodes, values, tolerances, line)


def _phase_stages(top: Table, ring_stages: int, phases: tuple[Phase, ...]) -> tuple[int, ...]:
    """Which stage times each phase: a timed clock gives every phase a stage of its own."""
    def fail(number, message, key=()):
        top.fail_at(f"[[clock.phase]] {number} ('{phases[number - 1].name}')",
                  ("clock", "phase", number - 1) + key, message)

    owners: dict[int, str] = {}
    result = []
    for i, phase in enumerate(phases, 1):
        if len(phase.ring) != 1:
            fail(i, f"a timed clock needs each phase to light exactly one ring stage, not {len(phase.ring)}",
                 ("ring",))
        stage = phase.ring[0]
        if stage in owners:
            fail(i, f"ring stage {stage} already times phase '{owners[stage]}'; "
                    f"a timed clock gives each phase its own stage", ("ring",))
        owners[stage] = phase.name
        result.append(stage - 1)
    unused = [s for s in range(1, ring_stages + 1) if s not in owners]
    if unused:
        top.fail_at("[clock]", ("clock", "stages"),
                  f"ring stage {unused[0]} lights in no phase, so its parts time nothing")
    return tuple(result)


def _make_before_break_events(top: Table, ring_stages: int, phases: tuple[Phase, ...]):
    """Which stage ends each phase of a make-before-break ring, and by which event.

    In such a ring the next stage picks up while the one before still
    holds, and the overlap ends when that one drops out; so every phase
    ends with exactly one stage changing. If the next phase lights a stage
    this one does not, that stage's pick-up (its charge) ends this phase;
    if it lacks a stage this one lights, that stage's drop-out (its
    discharge) does. Both start at the phase's beginning: the change that
    began the phase is what feeds, or cuts, the stage that ends it.
    """
    result_stage, result_event, timing = [], [], set()
    for i, phase in enumerate(phases):
        following = phases[(i + 1) % len(phases)]
        lit, next_lit = set(phase.ring), set(following.ring)
        gained, lost = next_lit - lit, lit - next_lit
        if len(gained) + len(lost) != 1:
            top.fail_at(f"[[clock.phase]] {i + 1} ('{phase.name}')", ("clock", "phase", i, "ring"),
                        f"a timed make-before-break ring changes one stage from each phase to the next "
                        f"(one picks up, or one drops out), but from {sorted(lit)} to {sorted(next_lit)} "
                        f"(in '{following.name}') {_changes(gained, lost)}")
        stage = next(iter(gained or lost))
        timing.add(stage)
        result_stage.append(stage - 1)
        result_event.append("charge" if gained else "discharge")
    idle = [s for s in range(1, ring_stages + 1) if s not in timing]
    if idle:
        top.fail_at("[clock]", ("clock", "stages"),
                    f"ring stage {idle[0]} never picks up or drops out, so its parts time nothing")
    return tuple(result_stage), tuple(result_event)


def _changes(gained: set, lost: set) -> str:
    """"stage 1 picks up and stage 3 drops out", "stages 1 and 3 pick up", "nothing changes"."""
    def stages(numbers: set, one: str, many: str) -> str:
        listed = sorted(numbers)
        if len(listed) == 1:
            return f"stage {listed[0]} {one}"
        return f"stages {', '.join(map(str, listed[:-1]))} and {listed[-1]} {many}"
    parts = ([stages(gained, "picks up", "pick up")] if gained else []) + \
            ([stages(lost, "drops out", "drop out")] if lost else [])
    return " and ".join(parts) or "nothing changes"


def read_stage_names(clock: Table, stages: int) -> tuple[str, ...]:
    """``[clock] stage_names``: one name per ring stage, each different (none: the stages are numbered)."""
    names = clock.list_of("stage_names", lambda n: isinstance(n, str) and LINE_NAME.fullmatch(n), default=[],
                          expected=f"a list of {stages} stage names (letters, digits, '-', '_'), one per ring stage")
    if names and len(names) != stages:
        clock.fail(f"'stage_names' names {len(names)} stages, but the ring has {stages} ('stages')", "stage_names")
    twice = next((n for n in names if names.count(n) > 1), None)
    if twice is not None:
        clock.fail(f"'stage_names' names two stages '{twice}'; each stage needs a name of its own", "stage_names")
    return tuple(names)


def check_stage_names(machine, fail) -> None:
    """A named stage is a relay of its own: it may not share its name with a control line."""
    lines = set(machine.control_lines())
    clash = next((n for n in machine.stage_names if n in lines), None)
    if clash is not None:
        fail(f"'stage_names' names a stage '{clash}', which is also a control line of the machine "
             f"(wear and waveforms name relays by these names)")


def read_wear(spec: Table, relays: list[str]) -> WearRatings:
    """Check ``[wear]``; ``relays`` are the names a rating may be given for."""
    spec.known_keys(("rated_operations", "relays"))
    expected = "a positive number of operations"
    default = spec.number("rated_operations", above=0, default=None, expected=expected)
    if "relays" in spec and not isinstance(spec.get("relays"), dict):
        spec.fail("'relays' must be a table of relay name = rated operations", "relays")
    table = spec.table("relays", "[wear.relays]", required=False)
    checked = {}
    for name in table.data:
        if name not in relays:
            table.fail(f"no relay named '{name}' (relays: {', '.join(relays)})", name)
        checked[name] = float(table.number(name, above=0, expected=expected))
    return WearRatings(None if default is None else float(default), checked)


def _fail_in(path: str):
    def fail(where: str, key: tuple, message: str):
        raise MachineError(message, path=path, where=where, key=key)
    return fail


def timing_section(data, machine) -> TimingSection:
    """``[timing]`` given as a table rather than read from the machine's file (to vary the parts)."""
    if not isinstance(data, dict):
        _fail_in(machine.path)("top level", ("timing",), "'timing' must be a table, not " + kind_of(data))
    return read_timing(Table(data, "[timing]", _fail_in(machine.path), ("timing",)),
                       machine.ring_stages, machine.phases)


def wear_section(data, machine) -> WearRatings:
    """``[wear]`` given as a table rather than read from the machine's file."""
    return read_wear(Table(data, "[wear]", _fail_in(machine.path), ("wear",)), machine.relay_names())
