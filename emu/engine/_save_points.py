"""Save points: the whole state of an emulator kept in memory, to go back to cheaply.

An emulator's compiled functions are bound to its register list, its memory
and its ports, so building one costs hundreds of closures. A sweep runs the
same program thousands of times; it builds one emulator and, before each
run, puts the state back in place (the same list, the same memory object)
instead. A snapshot (``_snapshots``) is the same state as a checked JSON
file for people and other sessions; a save point is for the same process
and is trusted, so going back is a few copies.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass

from ..errors import MachineError

__all__ = ["SavePoint", "StateKeeping"]


@dataclass(frozen=True)
class SavePoint:
    """What ``Emulator.save_point`` kept; only ``Emulator.rewind`` of the same machine reads it."""
    machine: object
    slots: tuple
    memory: bytes | tuple
    ring: dict
    control: tuple
    ports: tuple


class StateKeeping:
    """The ``Emulator`` methods that put a whole state back in place: a save point, or power-on."""

    def reload(self, segments, *, switches: int = 0, input_bytes: bytes = b"") -> None:
        """Power on again with ``segments`` loaded, keeping the compiled functions.

        The machine is then exactly as a new ``Emulator`` given ``load(segments)``,
        ``switches`` and ``input_bytes``: registers, memory, ports, ring, latch and
        counters as at power-on. What is attached to it stays: observers (those of a
        window of cycles still waiting count from cycle 0 again), the clock source
        (which gives the next turn) and blocks already translated (checked against
        memory before they run again). Counting wear (``count_lines``) ends here;
        the tally keeps what it counted.
        """
        self.stop_counting_lines()
        self._s[:] = self._blank_slots
        self._whole_memory[:] = self._blank_memory
        self.ports.power_on()
        self.ring.power_on()
        self._power_on_control()
        self.load(segments)
        self.switches = switches
        self.input_bytes = input_bytes

    def save_point(self) -> SavePoint:
        """The whole state kept in memory, for ``rewind`` (cheap; a snapshot file is ``snapshot``)."""
        memory = self.memory
        return SavePoint(self.machine, tuple(self._s),
                         bytes(memory) if isinstance(memory, bytearray) else tuple(memory), self.ring.state(),
                         (self.switch_run, self.halt_latch, self.halt_address, self.frozen, self._released,
                          self._seq, self._instruction_address, self.cycles, self.instructions,
                          tuple(self._undefined.items())),
                         self.ports.kept())

    def rewind(self, point: SavePoint) -> None:
        """Back to the state of ``point``, taken from an emulator of the same machine (this one or another).

        Everything goes back into this emulator's own list, memory and ports, so bound code stays valid.
        Counting wear ends here, as at ``reload``: relays do not un-wear going back.
        """
        if point.machine is not self.machine:
            raise MachineError(f"the save point is of machine '{point.machine.name}', not '{self.machine.name}'")
        self.stop_counting_lines()
        self._s[:] = point.slots
        self._whole_memory[:] = point.memory
        self.ring.restore(point.ring)
        (self.switch_run, self.halt_latch, self.halt_address, self.frozen, self._released, self._seq,
         self._instruction_address, self.cycles, self.instructions, undefined) = point.control
        if undefined or self._undefined:
            self._undefined = Counter(dict(undefined))
        self.ports.put_back(point.ports)
