"""The debug file: what the runner and the debugger know about an image.

An image (raw binary or Intel HEX) holds only words. The debug file the
assembler writes beside it, ``prog.hex`` → ``prog.dbg.json``, keeps the rest:
names, where each address came from, which halts are checkpoints and what
to check there. Schema (version 1)::

    {
      "format": "relaybench-debug",
      "version": 1,
      "machine": "ref8",              # name from the machine description
      "machine_file": null,           # null for a shipped machine, else the machine file's path
                                      #   (relative to the debug file's folder; absolute when it cannot be)
      "word_bits": 8,                 # data_bits of that machine
      "files": ["demo.asm", "lib.asm"],
      "labels": {"loop": 4},          # label name → address
      "constants": {"COUNT": 10},     # .equ / NAME = e → value
      "lines": [                      # one entry per statement that emits words,
        {"address": 0, "length": 2,   #   in address order
         "file": 0, "line": 3,        #   file: index into "files"; line from 1
         "kind": "code",              #   "code" (an instruction) or "data"
         "cycles": 2}                 #   clock cycles of the instruction; null for data
      ],
      "image_crc32": 1234567890,      # fingerprint of the image it describes (image_fingerprint)
      "pauses": [12],                 # addresses of `pause` instructions
      "expects": [                    # .expect checks, in source order
        {"address": 12,               #   the halt/pause they are attached to
         "file": 0, "line": 14,
         "item": "r0",                #   register, group or flag name, "mem", "lamps" or "out"
         "memory_address": null,      #   the address when item is "mem"
         "op": "==",                  #   "==" or "!="
         "value": 5,                  #   an integer (masked to the item's width), or a string for "out"
         "text": "r0 == 5"}           #   the check as written, for reports
      ]
    }

File names (and the machine file) are written relative to the folder of the
debug file, and ``read_debug`` turns them back into paths usable from the
current folder: an image moved together with its debug file, its sources and
its machine file still finds them all. A file without ``machine_file`` (from
earlier releases) is read as one for a shipped machine.
"""

from __future__ import annotations

import json
import zlib
import os
from dataclasses import dataclass, field
from pathlib import Path

from emu.description import Table, is_integer, shipped_machines
from emu.files import indented_json

from ._errors import AsmError, Diagnostic, file_error
from ._files import write_atomic

__all__ = ["Expect", "LineEntry", "DebugInfo", "DebugMachine", "debug_dict", "debug_text", "write_debug", "read_debug",
           "read_debug_machine",
           "debug_path_for", "source_map_of", "image_fingerprint", "FORMAT", "VERSION"]

FORMAT = "relaybench-debug"
VERSION = 1


@dataclass(frozen=True)
class Expect:
    """One ``.expect`` check, attached to the halt or pause at ``address``."""
    address: int
    file: str
    line: int
    item: str
    op: str
    value: int | str
    memory_address: int | None = None
    text: str = ""


@dataclass(frozen=True)
class LineEntry:
    """The words one statement put at ``address``."""
    address: int
    length: int
    file: str
    line: int
    kind: str
    cycles: int | None = None


@dataclass
class DebugInfo:
    """A debug file read back; the runner and debugger use it like a Program's names."""
    machine: str
    word_bits: int
    files: list[str]
    labels: dict[str, int]
    constants: dict[str, int]
    lines: list[LineEntry]
    pauses: list[int]
    expects: list[Expect]
    image_crc32: int | None = None
    """Fingerprint of the image the file was written for (None in files that predate it)."""
    machine_file: str | None = None
    """The machine file the image was assembled for, as a path usable from the current folder;
    None for a shipped machine (named by ``machine``)."""
    source_map: dict[int, tuple[str, int]] = field(init=False)

    def __post_init__(self):
        self.source_map = source_map_of(self.lines)

    @property
    def symbols(self) -> dict[str, int]:
        return {**self.constants, **self.labels}


def source_map_of(lines: list[LineEntry]) -> dict[int, tuple[str, int]]:
    """Every word address → (file, line) of the statement that put it there."""
    result = {}
    for entry in lines:
        place = (entry.file, entry.line)
        for address in range(entry.address, entry.address + entry.length):
            result[address] = place
    return result


def image_fingerprint(segments) -> int:
    """CRC-32 of the image as memory sees it: words from address 0, gaps as 0, trailing zeros dropped.

    The same for the HEX and the raw binary of one program, so a debug file
    can tell whether an image is still the one it was written for.
    """
    flat: dict[int, int] = {}
    for start, words in segments:
        for offset, word in enumerate(words):
            flat[start + offset] = word
    used = [a for a, w in flat.items() if w]
    end = max(used) + 1 if used else 0
    data = b"".join(flat.get(a, 0).to_bytes(2, "little") for a in range(end))
    return zlib.crc32(data)


def debug_path_for(image_path) -> Path:
    """``prog.hex`` / ``prog.bin`` → ``prog.dbg.json`` beside it."""
    path = Path(image_path)
    return path.with_name(path.stem + ".dbg.json")


def debug_dict(program, relative_to: str | None = None) -> dict:
    files = list(program.sources)
    index = {name: i for i, name in enumerate(files)}
    return {
        "format": FORMAT,
        "version": VERSION,
        "machine": program.machine.name,
        "machine_file": _machine_file(program.machine, relative_to),
        "word_bits": program.machine.data_bits,
        "files": [_relative(name, relative_to) for name in files],
        "labels": dict(program.labels),
        "constants": dict(program.constants),
        "lines": [{"address": e.address, "length": e.length, "file": index[e.file], "line": e.line,
                   "kind": e.kind, "cycles": e.cycles}
                  for e in sorted(program.lines, key=lambda e: e.address)],
        "image_crc32": image_fingerprint(program.segments),
        "pauses": list(program.pauses),
        "expects": [{"address": x.address, "file": index[x.file], "line": x.line, "item": x.item,
                     "memory_address": x.memory_address, "op": x.op, "value": x.value, "text": x.text}
                    for x in program.expects],
    }


def _machine_file(machine, folder: str | None) -> str | None:
    """None for a shipped machine (its name finds it), else its file's path as the debug file keeps it."""
    if not os.path.isfile(machine.path):
        return None
    shipped = {os.path.realpath(path) for path in shipped_machines().values()}
    return None if os.path.realpath(machine.path) in shipped else _relative(machine.path, folder)


def _relative(name: str, folder: str | None) -> str:
    if folder is None or name.startswith("<"):
        return name
    try:
        return os.path.relpath(os.path.abspath(name), folder)
    except ValueError:
        return os.path.abspath(name)


def debug_text(program, path) -> str:
    """The debug file's content for ``program``, its file names relative to ``path``'s folder."""
    folder = os.path.dirname(os.path.abspath(path))
    return indented_json(debug_dict(program, relative_to=folder)) + "\n"


def write_debug(program, path) -> None:
    write_atomic(path, debug_text(program, path).encode("utf-8"))


def read_debug(path, machine=None) -> DebugInfo:
    """Read a debug file; a broken one raises AsmError naming the key and what was expected.

    Given the machine the image is for, every address, length and checked
    item is also checked against it, so a stale or hand-edited file cannot
    reach the runner with values it cannot use.
    """
    path = str(path)
    return _Reader(path, machine).info(_decoded(path))


@dataclass(frozen=True)
class DebugMachine:
    """The machine a debug file was written for: its name, and its file (a path usable from the
    current folder) when it is no shipped machine."""
    name: str
    file: str | None


def read_debug_machine(path) -> DebugMachine:
    """Only the machine a debug file names, for choosing the machine the rest is then read against
    (``read_debug``); a broken header raises AsmError as ``read_debug`` does."""
    path = str(path)
    reader = _Reader(path)
    top = reader.header(_decoded(path))
    return DebugMachine(top.string("machine", expected="a machine name"), reader.machine_file(top))


def _decoded(path: str):
    try:
        text = Path(path).read_text(encoding="utf-8")
    except (OSError, UnicodeDecodeError) as exc:
        raise file_error(path, f"cannot read debug file ({getattr(exc, 'strerror', None) or exc})") from None
    try:
        return json.loads(text)
    except RecursionError:
        raise file_error(path, "not a relaybench debug file (nested too deeply)") from None
    except json.JSONDecodeError as exc:
        lines = text.splitlines()
        line_text = lines[exc.lineno - 1] if exc.lineno <= len(lines) else ""
        raise AsmError([Diagnostic(path, exc.lineno, exc.colno, f"not valid JSON: {exc.msg}", line_text)]) from None


class _Reader:
    """Checks a decoded debug file key by key, through the getters every relaybench file reader shares."""

    def __init__(self, path: str, machine=None):
        self.path = path
        self.folder = os.path.dirname(path)
        self.machine = machine
        self.words = machine.memory_words if machine is not None else 1 << 24
        self.items = None
        if machine is not None:
            names = machine.visible_names
            self.items = {*names, "mem", "lamps", "out"}

    def fail(self, where: str, _key, message: str):
        raise file_error(self.path, f"{where}: {message}" if where else message)

    def address(self, entry: Table, key: str) -> int:
        return entry.integer(key, low=0, high=self.words - 1, expected=f"an address 0…{self.words - 1}")

    def entries(self, top: Table, key: str, where: str) -> list[Table]:
        """A list of objects, each read as a table named ``where[i]``."""
        items = top.list_of(key, lambda e: isinstance(e, dict), expected="a list of objects")
        return [Table(item, f"{where}[{i}]", self.fail, (key, i)) for i, item in enumerate(items)]

    def header(self, data) -> Table:
        """The top level, once its format and version are known to be this reader's."""
        if not isinstance(data, dict) or data.get("format") != FORMAT:
            self.fail("", (), f"not a relaybench debug file ('format' must be \"{FORMAT}\")")
        if data.get("version") != VERSION:
            self.fail("", ("version",), f"'version' must be {VERSION}, not {data.get('version')!r}")
        return Table(data, "top level", self.fail)

    def machine_file(self, top: Table) -> str | None:
        machine_file = top.string("machine_file", default=None, expected="a machine file's path or null")
        return None if machine_file is None else self.usable(machine_file)

    def info(self, data) -> DebugInfo:
        top = self.header(data)
        if self.machine is not None:        # a file for another machine is that, before any detail
            name = top.string("machine", expected="a machine name")
            if name != self.machine.name:
                self.fail("", ("machine",), f"the debug file is for machine '{name}', not '{self.machine.name}'")
        files = top.list_of("files", lambda f: isinstance(f, str), expected="a list of file names")
        files = [self.usable(f) for f in files]
        labels = self.names(top, "labels")
        for name, value in labels.items():
            if not 0 <= value < self.words:
                top.fail(f"label '{name}' must be an address 0…{self.words - 1}, not {value}", "labels")
        constants = self.names(top, "constants")
        lines = [self.line(entry, files) for entry in self.entries(top, "lines", "lines")]
        pauses = top.list_of("pauses", lambda a: is_integer(a) and 0 <= a < self.words,
                             expected=f"a list of addresses 0…{self.words - 1}")
        expects = [self.expect(entry, files) for entry in self.entries(top, "expects", "expects")]
        name = top.string("machine", expected="a machine name")
        crc = top.integer("image_crc32", default=None)
        return DebugInfo(name, top.integer("word_bits"), files, labels, constants, lines, pauses, expects, crc,
                         machine_file=self.machine_file(top))

    def usable(self, name: str) -> str:
        """A file name as written (relative to the debug file's folder) → a path from the current folder."""
        return name if name.startswith("<") or os.path.isabs(name) else os.path.normpath(os.path.join(self.folder, name))

    def names(self, top: Table, key: str) -> dict[str, int]:
        table = top.table(key)
        for name in table.data:
            table.integer(name, expected="an integer (the value of the name)")
        return table.data

    def file(self, entry: Table, files) -> str:
        return files[entry.integer("file", low=0, high=len(files) - 1,
                                   expected=f"an index into 'files' (0…{len(files) - 1})")]

    def line(self, entry: Table, files) -> LineEntry:
        kind = entry.choice("kind", ("code", "data"))
        cycles = entry.integer("cycles", default=None, expected="an integer or null")
        address = self.address(entry, "address")
        length = entry.integer("length", low=0, high=self.words - address,
                               expected=f"a word count 0…{self.words - address}")
        return LineEntry(address, length, self.file(entry, files), entry.integer("line", expected="a line number"),
                         kind, cycles)

    def expect(self, entry: Table, files) -> Expect:
        value = entry.get("value")
        if not (is_integer(value) or isinstance(value, str)):
            entry.fail(f"'value' must be an integer or a string, not {value!r}", "value")
        op = entry.choice("op", ("==", "!="))
        item = entry.string("item", expected="an item name")
        if self.items is not None and item not in self.items:
            entry.fail(f"'item' must be one of {', '.join(sorted(self.items))}, not {item!r}", "item")
        memory = self.address(entry, "memory_address") if item == "mem" else None
        if (item == "out") != isinstance(value, str):
            entry.fail("'value' must be a string for out and an integer otherwise", "value")
        text = entry.get("text", "")
        return Expect(self.address(entry, "address"), self.file(entry, files),
                      entry.integer("line", expected="a line number"), item, op, value, memory,
                      text if isinstance(text, str) else "")
