"""The ``[timing]`` section: parts of each clock-ring stage, and what they imply.

Each ring stage is a relay timed by a capacitor across its coil, fed from
the supply through a series resistor (and any isolating diodes). A stage
lights one phase of the phase table, and its network decides how long the
ring stays there, in one of two ways:

- ``charge`` (slow to pick up): the capacitor charges towards the divider
  voltage of resistor and coil until the coil reaches its pick-up voltage,
  then the armature needs its operate time;
- ``discharge`` (slow to drop out): the capacitor, charged to that divider
  voltage, discharges through the coil alone until the coil falls to its
  drop-out voltage, then the armature needs its release time.

Any stage key may also stand in ``[timing]`` itself as the default for all
stages. ``[timing]`` alone holds the supply (``supply_v``), the datapath's
minimum high pulse (``min_pulse_ms``), how far the phase table may stray
from the parts (``table_tolerance``), how a part falls within its band
(``spread``: uniform or normal) and how much armature times vary from one
operation to the next (``jitter``). Every part value has a relative tolerance ``<part>_tol``; the
defaults are the usual grades of cheap parts. The loader of the machine
file keeps the section raw; this module checks it and says where it is
wrong, and checks that the phase table agrees with what the parts give.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from ..description import Machine
from ..errors import MachineError
from ._rc import divider, time_to_charge, time_to_discharge

__all__ = ["Part", "PARTS", "StageParts", "TimingModel", "timing_model", "has_timing",
           "SILICON_DIODE_DROP_V"]

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
SPREADS = ("uniform", "normal")
_STAGE_KEYS = ("mode", "diodes") + tuple(p.key for p in PARTS.values()) + tuple(f"{n}_tol" for n in PARTS)
_TOP_KEYS = ("supply_v", "supply_tol", "min_pulse_ms", "table_tolerance", "spread", "jitter", "stage")
MAX_TOLERANCE = 0.5


@dataclass(frozen=True)
class StageParts:
    """The checked parts of one ring stage, values in SI units."""
    number: int
    mode: str
    diodes: int
    values: dict[str, float]
    tolerances: dict[str, float]

    @property
    def mechanical(self) -> str:
        """The armature time that ends this stage's phase."""
        return "operate" if self.mode == "charge" else "release"


@dataclass(frozen=True)
class TimingModel:
    """A machine's clock as parts: nominal phase times and the spread of them.

    ``phase_stage[i]`` is the index of the stage that times phase ``i``.
    """
    machine: Machine
    supply: float
    supply_tol: float
    stages: tuple[StageParts, ...]
    phase_stage: tuple[int, ...]
    min_pulse: float | None
    table_tolerance: float
    spread: str
    jitter: float

    # -- the two halves of a phase time: the RC part and the armature part

    def electrical_times(self, supply, values: list[dict]) -> np.ndarray:
        """RC delay of every phase, shape (..., phases); ``values[s]`` per stage.

        ``supply`` and the entries of ``values`` are floats or arrays of one
        shape. An infinite time means that stage never operates.
        """
        per_stage = [_rc_delay(stage, supply, parts) for stage, parts in zip(self.stages, values)]
        return np.stack([np.asarray(per_stage[s], float) for s in self.phase_stage], axis=-1)

    def mechanical_times(self, values: list[dict]) -> np.ndarray:
        per_stage = [parts[stage.mechanical] for stage, parts in zip(self.stages, values)]
        return np.stack([np.asarray(per_stage[s], float) for s in self.phase_stage], axis=-1)

    @property
    def nominal_values(self) -> list[dict]:
        return [stage.values for stage in self.stages]

    def nominal_phase_seconds(self) -> np.ndarray:
        values = self.nominal_values
        return self.electrical_times(self.supply, values) + self.mechanical_times(values)

    # -- drawing built clocks

    def deviations(self, rng: np.random.Generator, shape, tolerance: float) -> np.ndarray:
        """Relative factors 1 + e for parts of the given tolerance.

        ``uniform``: anywhere in the band, all a datasheet promises;
        ``normal``: a bell curve whose 3 sigma is the band.
        """
        if self.spread == "uniform":
            return 1.0 + tolerance * rng.uniform(-1.0, 1.0, shape)
        return 1.0 + (tolerance / 3.0) * rng.standard_normal(shape)

    def draw_parts(self, rng: np.random.Generator, count: int):
        """``count`` clocks built from parts drawn within tolerance.

        Returns (supply array, per-stage dicts of arrays), ready for
        ``electrical_times`` and ``mechanical_times``.
        """
        supply = self.supply * self.deviations(rng, count, self.supply_tol)
        values = []
        for stage in self.stages:
            values.append({name: value * self.deviations(rng, count, stage.tolerances[name])
                           for name, value in stage.values.items()})
        return supply, values

    def jittered(self, rng: np.random.Generator, electrical, mechanical, turns: int) -> np.ndarray:
        """Phase times of ``turns`` consecutive turns, shape (..., turns, phases).

        The RC part stays as the parts made it; the armature time varies
        from one operation to the next by the ``jitter`` fraction.
        """
        electrical = np.asarray(electrical)[..., None, :]
        mechanical = np.asarray(mechanical)[..., None, :]
        shape = electrical.shape[:-2] + (turns, electrical.shape[-1])
        return electrical + mechanical * self.deviations(rng, shape, self.jitter)


def _rc_delay(stage: StageParts, supply, parts: dict):
    feed = supply - stage.diodes * parts["diode"]
    held, r_equivalent = divider(feed, parts["r"], parts["coil"])
    if stage.mode == "charge":
        return time_to_charge(held, parts["pick_up"], r_equivalent * parts["c"])
    delay = time_to_discharge(held, parts["drop_out"], parts["coil"] * parts["c"])
    return np.where(held > parts["pick_up"], delay, np.inf)


def has_timing(machine: Machine) -> bool:
    return "timing" in machine.extra


def timing_model(machine: Machine) -> TimingModel:
    """Check the machine's ``[timing]`` section and build its model.

    Raises MachineError naming the key when a value is wrong, and naming the
    stage and phase when the phase table disagrees with the parts by more
    than ``table_tolerance``.
    """
    return _TimingReader(machine).model()


class _TimingReader:
    def __init__(self, machine: Machine):
        self.machine = machine

    def fail(self, where: str, message: str):
        raise MachineError(message, path=self.machine.path, where=where)

    def model(self) -> TimingModel:
        machine = self.machine
        if "timing" not in machine.extra:
            self.fail("top level", "no [timing] section: the clock's parts are not described")
        top = machine.extra["timing"]
        if not isinstance(top, dict):
            self.fail("top level", f"'timing' must be a table, not {_kind(top)}")
        self.top = top
        for key in top:
            if key not in _TOP_KEYS + _STAGE_KEYS:
                self.fail("[timing]", f"unknown key '{key}' (expected one of: {', '.join(_TOP_KEYS + _STAGE_KEYS)})")
        supply = self.number(top, "supply_v", "[timing]", required=True, what="the supply voltage")
        supply_tol = self.tolerance(top, "supply_tol", "[timing]", 0.05)
        min_pulse = self.number(top, "min_pulse_ms", "[timing]")
        table_tolerance = self.number(top, "table_tolerance", "[timing]")
        if table_tolerance is None:
            table_tolerance = 0.05
        elif table_tolerance >= 1:
            self.fail("[timing]", f"'table_tolerance' must be a fraction below 1 (0.05 is 5 %), not {table_tolerance}")
        spread = top.get("spread", "uniform")
        if spread not in SPREADS:
            self.fail("[timing]", f"'spread' must be one of {', '.join(SPREADS)}, not {spread!r}")
        jitter = self.tolerance(top, "jitter", "[timing]", 0.10)

        specs = top.get("stage")
        count = machine.ring_stages
        if not isinstance(specs, list) or not all(isinstance(s, dict) for s in specs):
            self.fail("[timing]", f"needs one [[timing.stage]] table per ring stage ({count})")
        if len(specs) != count:
            self.fail("[timing]", f"has {len(specs)} [[timing.stage]] tables but the ring has {count} stages")
        stages = tuple(self.stage(i, spec, supply) for i, spec in enumerate(specs, 1))
        model = TimingModel(machine, supply, supply_tol, stages, self.phase_stages(),
                            None if min_pulse is None else min_pulse * 1e-3,
                            table_tolerance, spread, jitter)
        self.check_table(model)
        return model

    def phase_stages(self) -> tuple[int, ...]:
        owners: dict[int, str] = {}
        result = []
        for i, phase in enumerate(self.machine.phases, 1):
            if len(phase.ring) != 1:
                self.fail(f"[[clock.phase]] {i} ('{phase.name}')",
                          f"a timed clock needs each phase to light exactly one ring stage, not {len(phase.ring)}")
            stage = phase.ring[0]
            if stage in owners:
                self.fail(f"[[clock.phase]] {i} ('{phase.name}')",
                          f"ring stage {stage} already times phase '{owners[stage]}'; "
                          f"a timed clock gives each phase its own stage")
            owners[stage] = phase.name
            result.append(stage - 1)
        unused = [s for s in range(1, self.machine.ring_stages + 1) if s not in owners]
        if unused:
            self.fail("[clock]", f"ring stage {unused[0]} lights in no phase, so its parts time nothing")
        return tuple(result)

    def stage(self, number: int, spec: dict, supply: float) -> StageParts:
        where = f"[[timing.stage]] {number}"
        for key in spec:
            if key not in _STAGE_KEYS:
                self.fail(where, f"unknown key '{key}' (expected one of: {', '.join(_STAGE_KEYS)})")

        def pick(key):
            if key in spec:
                return spec, where
            return self.top, "[timing]"

        table, at = pick("mode")
        if "mode" not in table:
            self.fail(where, f"missing key 'mode' ({' or '.join(MODES)})")
        mode = table["mode"]
        if mode not in MODES:
            self.fail(at, f"'mode' must be one of {', '.join(MODES)}, not {mode!r}")
        table, at = pick("diodes")
        diodes = table.get("diodes", 0)
        if not isinstance(diodes, int) or isinstance(diodes, bool) or diodes < 0:
            self.fail(at, f"'diodes' must be a whole number of series diodes, not {diodes!r}")
        values, tolerances = {}, {}
        needed = ("operate",) if mode == "charge" else ("drop_out", "release")
        for name, part in PARTS.items():
            table, at = pick(part.key)
            required = name in ("r", "c", "coil", "pick_up") + needed
            value = self.number(table, part.key, at if part.key in table else where,
                                required=required, zero=part.zero_allowed, what=part.what)
            if value is None:
                value = part.default if part.default is not None else 0.0
            values[name] = value * part.scale
            table, at = pick(f"{name}_tol")
            tolerances[name] = self.tolerance(table, f"{name}_tol", at, part.tolerance)
        if mode == "discharge" and values["drop_out"] >= values["pick_up"]:
            self.fail(where, f"'drop_out_v' ({values['drop_out']:g} V) must be below "
                             f"'pick_up_v' ({values['pick_up']:g} V): a relay lets go below where it picks up")
        feed = supply - diodes * values["diode"]
        held, _ = divider(feed, values["r"], values["coil"])
        if held <= values["pick_up"]:
            self.fail(where, f"the coil only reaches {held:.2f} V through 'r_ohm' = {values['r']:g} ohms, "
                             f"below its 'pick_up_v' of {values['pick_up']:g} V: the relay would never pick up")
        return StageParts(number, mode, diodes, values, tolerances)

    def check_table(self, model: TimingModel):
        derived = model.nominal_phase_seconds()
        for i, (phase, seconds) in enumerate(zip(self.machine.phases, derived)):
            given = phase.duration_ns * 1e-9
            if abs(seconds - given) > model.table_tolerance * given:
                stage = model.phase_stage[i] + 1
                self.fail(f"[[timing.stage]] {stage} (phase '{phase.name}')",
                          f"the parts give {seconds * 1e3:.1f} ms but the phase table says "
                          f"{given * 1e3:g} ms, more than 'table_tolerance' "
                          f"({model.table_tolerance:.0%}) apart")

    # -- typed access

    def number(self, table: dict, key: str, where: str, *, required=False, zero=False, what="a number"):
        if key not in table:
            if required:
                self.fail(where, f"missing key '{key}' ({what})")
            return None
        value = table[key]
        if not isinstance(value, (int, float)) or isinstance(value, bool):
            self.fail(where, f"'{key}' must be a number, not {_kind(value)}")
        if not math.isfinite(value):
            self.fail(where, f"'{key}' must be a finite number, not {value}")
        if value < 0 or (value == 0 and not zero):
            bound = "zero or more" if zero else "above zero"
            self.fail(where, f"'{key}' must be {bound}, not {value}")
        return float(value)

    def tolerance(self, table: dict, key: str, where: str, default: float) -> float:
        value = self.number(table, key, where, zero=True)
        if value is None:
            return default
        if value > MAX_TOLERANCE:
            self.fail(where, f"'{key}' must be a fraction from 0 to {MAX_TOLERANCE} (0.05 is ±5 %), not {value:g}")
        return value


def _kind(value) -> str:
    return {bool: "a boolean", int: "an integer", float: "a number", str: "a string",
            list: "a list", dict: "a table"}.get(type(value), type(value).__name__)
