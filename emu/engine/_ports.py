"""The I/O bus: the panel's switches and lamps, the console and the input stream.

Which device answers at which port number is the machine file's business
(``[ports]``); what each kind of device does is the description's table of
devices (``emu.description.PORT_DEVICES``), which this bus calls. A
transfer to a port with no device is ignored and counted, and so is a read
past the end of the input stream: it gives 0, as the machine's reference
says ("I/O ports"), but a program that reads more input than it was given
has usually gone wrong, so the run says how often it happened.
"""

from __future__ import annotations

from collections import Counter

from ..description import PORT_DEVICES, Machine, Table, is_integer

__all__ = ["Ports"]


class Ports:
    def __init__(self, machine: Machine):
        self.machine = machine
        self.data_mask = machine.data_mask
        self._readers = {port: PORT_DEVICES[name].read for port, name in machine.ports_in.items()}
        self._writers = {port: PORT_DEVICES[name].write for port, name in machine.ports_out.items()}
        self.power_on()

    def power_on(self) -> None:
        """Console empty, lamps dark, toggles at 0, no input, nothing counted."""
        self.output = bytearray()
        self.lamps = 0
        self.switches = 0
        self.input_bytes = b""
        self.input_position = 0
        self.unmapped = Counter()
        self.reads_past_end = 0

    def kept(self) -> tuple:
        """Everything a device or a program can see, for ``put_back`` (a save point in memory)."""
        return (bytes(self.output), self.lamps, self.switches, self.input_bytes, self.input_position,
                tuple(self.unmapped.items()), self.reads_past_end)

    def put_back(self, kept: tuple) -> None:
        output, self.lamps, self.switches, self.input_bytes, self.input_position, unmapped, \
            self.reads_past_end = kept
        self.output = bytearray(output)
        if unmapped or self.unmapped:
            self.unmapped = Counter(dict(unmapped))

    def read(self, port: int) -> int:
        reader = self._readers.get(port)
        if reader is None:
            self.unmapped[("in", port)] += 1
            return 0
        return reader(self)

    def listen(self, listener) -> None:
        """Call ``listener(port, device)`` at every read of a port with a device, before it answers.

        For a check that must know whether a program reads the panel while it
        runs; the readers are wrapped, so a run without a listener pays nothing.
        """
        for port, reader in list(self._readers.items()):
            self._readers[port] = _heard(reader, port, self.machine.ports_in[port], listener)

    def write(self, port: int, value: int) -> None:
        writer = self._writers.get(port)
        if writer is None:
            self.unmapped[("out", port)] += 1
            return
        writer(self, value)

    @property
    def warned(self) -> bool:
        """Whether ``warnings`` has anything to say (cheap: a sweep asks after every run)."""
        return bool(self.unmapped) or self.reads_past_end > 0

    def warnings(self) -> list[str]:
        notes = []
        for (direction, port), count in sorted(self.unmapped.items()):
            noun, preposition = ("read", "from") if direction == "in" else ("write", "to")
            plural = "s" if count != 1 else ""
            notes.append(f"{count} {noun}{plural} {preposition} port {port}, which has no device")
        if self.reads_past_end:
            times = f"{self.reads_past_end} reads" if self.reads_past_end != 1 else "1 read"
            size = f"{len(self.input_bytes)} byte{'s' if len(self.input_bytes) != 1 else ''}"
            notes.append(f"{times} past the end of the input stream ({size}), answered with 0")
        return notes

    def state(self) -> dict:
        return {
            "output": self.output.hex(), "lamps": self.lamps, "switches": self.switches,
            "input": bytes(self.input_bytes).hex(), "input_position": self.input_position,
            "unmapped": [[d, p, n] for (d, p), n in sorted(self.unmapped.items())],
            "reads_past_end": self.reads_past_end,
        }

    def checked_state(self, state: Table) -> dict:
        """The ports part of a snapshot, every value checked; ``state`` fails with the reader's error."""
        for key, top in (("lamps", self.data_mask), ("switches", self.data_mask), ("input_position", 1 << 63),
                         ("reads_past_end", 1 << 63)):
            state.integer(key, low=0, high=top, expected="a word or count of this machine")
        for key in ("output", "input"):
            text = state.string(key)
            try:
                bytes.fromhex(text)
            except ValueError:
                state.fail(f"'{key}' must be bytes written in hex, not {text[:20]!r}", key)
        state.list_of("unmapped", _unmapped_entry,
                      expected='a list of ["in"|"out", port, count] with a count of 1 or more')
        if state.get("input_position") > len(state.get("input")) // 2:
            state.fail("the input position is past the input stream", "input_position")
        return state.data

    def restore(self, state: dict) -> None:
        """Take the ports part of a snapshot, as ``checked_state`` passed it."""
        self.output = bytearray.fromhex(state["output"])
        self.lamps = state["lamps"]
        self.switches = state["switches"]
        self.input_bytes = bytes.fromhex(state["input"])
        self.input_position = state["input_position"]
        self.reads_past_end = state["reads_past_end"]
        self.unmapped = Counter({(d, p): n for d, p, n in state["unmapped"]})


def _heard(reader, port: int, device: str, listener):
    def read(bus) -> int:
        listener(port, device)
        return reader(bus)
    return read


def _unmapped_entry(entry) -> bool:
    """``["in", 3, 12]``: twelve reads from port 3, which has no device."""
    return (isinstance(entry, list) and len(entry) == 3 and entry[0] in ("in", "out")
            and is_integer(entry[1]) and 0 <= entry[1] <= 255 and is_integer(entry[2]) and entry[2] >= 1)
