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

In a make-before-break ring (a phase may light two stages) every stage
does both: the next stage picks up while the one before still holds, and
the overlap ends when that one drops out. The loader works out from the
ring which stage's pick-up or drop-out ends each phase
(``phase_stage``, ``phase_event``); a stage drops out from the full
divider voltage, having been lit for several time constants since it
picked up.

Any stage key may also stand in ``[timing]`` itself as the default for all
stages. ``[timing]`` alone holds the supply (``supply_v``), the datapath's
minimum high pulse (``min_pulse_ms``), how far the phase table may stray
from the parts (``table_tolerance``), how a part falls within its band
(``spread``: uniform or normal) and how much armature times vary from one
operation to the next (``jitter``). Every part value has a relative tolerance ``<part>_tol``; the
defaults are the usual grades of cheap parts. The loader of the machine
file checks the section's values (``Machine.timing``); this module works
out what they imply, and refuses parts that could not work or that disagree
with the phase table.
"""

from __future__ import annotations

from dataclasses import dataclass, fields

import numpy as np

from ..description import MECHANICAL, Machine, StageParts, TimingSection
from ..errors import MachineError
from ._rc import divider, time_to_charge, time_to_discharge

__all__ = ["TimingModel", "timing_model", "has_timing"]


@dataclass(frozen=True)
class TimingModel(TimingSection):
    """A machine's clock as parts: the checked ``[timing]`` section with the machine it times.

    ``phase_stage[i]`` is the index of the stage whose event ends phase
    ``i``, ``phase_event[i]`` that event (see ``TimingSection``).
    """
    machine: Machine

    # -- the two halves of a phase time: the RC part and the armature part

    def electrical_times(self, supply, values: list[dict]) -> np.ndarray:
        """RC delay of every phase, shape (..., phases); ``values[s]`` per stage.

        ``supply`` and the entries of ``values`` are floats or arrays of one
        shape. An infinite time means that stage never operates.
        """
        delays = {}
        for s, event in set(zip(self.phase_stage, self.phase_event)):
            delays[s, event] = _rc_delay(self.stages[s], event, supply, values[s])
        return np.stack([np.asarray(delays[key], float) for key in zip(self.phase_stage, self.phase_event)],
                        axis=-1)

    def mechanical_times(self, values: list[dict]) -> np.ndarray:
        return np.stack([np.asarray(values[s][MECHANICAL[event]], float)
                         for s, event in zip(self.phase_stage, self.phase_event)], axis=-1)

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


def _rc_delay(stage: StageParts, event: str, supply, parts: dict):
    """The RC part of ``event`` (charge: picking up; discharge: dropping out from the held voltage)."""
    feed = supply - stage.diodes * parts["diode"]
    held, r_equivalent = divider(feed, parts["r"], parts["coil"])
    if event == "charge":
        return time_to_charge(held, parts["pick_up"], r_equivalent * parts["c"])
    delay = time_to_discharge(held, parts["drop_out"], parts["coil"] * parts["c"])
    return np.where(held > parts["pick_up"], delay, np.inf)


def has_timing(machine: Machine) -> bool:
    return machine.timing is not None


def timing_model(machine: Machine) -> TimingModel:
    """The clock model of the machine's checked ``[timing]`` section.

    Raises MachineError when there is no section, when a stage's coil could
    never reach its pick-up voltage, and (naming the stage and phase) when
    the phase table disagrees with the parts by more than ``table_tolerance``.
    """
    section = machine.timing
    if section is None:
        raise MachineError("no [timing] section: the clock's parts are not described",
                           path=machine.path, where="top level")
    for stage in section.stages:
        _check_pick_up(machine, section.supply, stage)
    model = TimingModel(machine=machine, **{f.name: getattr(section, f.name) for f in fields(section)})
    _check_table(model)
    return model


def _check_pick_up(machine: Machine, supply: float, stage: StageParts):
    values = stage.values
    held, _ = divider(supply - stage.diodes * values["diode"], values["r"], values["coil"])
    if held <= values["pick_up"]:
        raise MachineError(f"the coil only reaches {held:.2f} V through 'r_ohm' = {values['r']:g} ohms, "
                           f"below its 'pick_up_v' of {values['pick_up']:g} V: the relay would never pick up",
                           path=machine.path, where=f"[[timing.stage]] {stage.number}", line=stage.line)


def _check_table(model: TimingModel):
    machine = model.machine
    derived = model.nominal_phase_seconds()
    for i, (phase, seconds) in enumerate(zip(machine.phases, derived)):
        given = phase.duration_ns * 1e-9
        if abs(seconds - given) > model.table_tolerance * given:
            stage = model.stages[model.phase_stage[i]]
            raise MachineError(f"the parts give {seconds * 1e3:.1f} ms but the phase table says "
                               f"{given * 1e3:g} ms, more than 'table_tolerance' "
                               f"({model.table_tolerance:.0%}) apart", path=machine.path,
                               where=f"[[timing.stage]] {stage.number} (phase '{phase.name}')", line=stage.line)
