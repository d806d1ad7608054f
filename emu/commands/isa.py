"""``relaybench isa``: the instruction table, generated from the machine description.

Nothing here knows an instruction: syntax, encoding, micro-steps, cycle
counts and flags are all read from the description, so the table is
always the machine that the emulator runs. ``--python`` prints the code the
micro-step compiler generates from the same description.
"""

from __future__ import annotations

import json
import sys

from ..engine import compile_machine
from ..description import ALU_OPS, PORT_DEVICES, Instruction, Machine, resolve_flag
from ..description.notation import Call, walk
from ..formatting import rate_text
from ._options import add_machine_option, keep_parser, machine_from, usage_error



def add_arguments(parser) -> None:
    parser.add_argument("mnemonics", metavar="MNEMONIC", nargs="*", help="show only these instructions")
    add_machine_option(parser)
    view = parser.add_mutually_exclusive_group()
    view.add_argument("--json", action="store_true", help="print the table as one JSON object")
    view.add_argument("--brief", action="store_true", help="one line per instruction, no micro-steps")
    view.add_argument("--python", action="store_true",
                      help="print the Python source the micro-step compiler generates for the machine")
    keep_parser(parser)


def encoding_words(ins: Instruction, machine: Machine) -> list[str]:
    """Each instruction word as fixed bits and field names, as in the machine file."""
    owners = {}
    for name, fld in ins.fields.items():
        for piece in fld.pieces:
            for bit in range(piece.width):
                owners[(piece.word, piece.shift + bit)] = (name, piece, fld.kind.bits)
    words = []
    for index, (mask, value) in enumerate(ins.fixed):
        tokens, bit = [], machine.data_bits - 1
        while bit >= 0:
            if mask >> bit & 1:
                run = ""
                while bit >= 0 and mask >> bit & 1:
                    run += str(value >> bit & 1)
                    bit -= 1
                tokens.append(run)
                continue
            name, piece, bits = owners[(index, bit)]
            whole = piece.width == bits
            tokens.append(name if whole else f"{name}[{piece.field_bit + piece.width - 1}:{piece.field_bit}]")
            bit -= piece.width
        words.append(" ".join(tokens))
    return words


def alu_ops_used(machine: Machine) -> list:
    """The ALU operations the machine's micro-steps use, in first-use order."""
    used = []
    for step in list(machine.fetch) + [s for ins in machine.instructions for s in ins.steps]:
        for st in step.statements:
            for node in walk(st):
                if isinstance(node, Call) and node.op in machine.alu_ops and node.op not in used:
                    used.append(node.op)
    return [machine.alu_ops[name] for name in used]


def flags_set_by(op, machine: Machine) -> list[str]:
    """The machine's flags a step may set with ``op`` (``sets …``)."""
    return [name for name, flag in machine.flags.items() if op.produces(flag) is not None]


def datapath_json(machine: Machine) -> dict:
    """Register groups, what register operands select, flag meanings and the ALU operations: what a
    programmer needs besides the table."""
    return {
        "registers": {r.name: r.width for r in machine.visible_registers},
        "groups": {name: list(group.parts) for name, group in machine.groups.items()},
        "register_operands": {kind.name: list(kind.registers) for kind in machine.operand_kinds.values()
                              if kind.is_register},
        "flags": {name: flag.role for name, flag in machine.flags.items()},
        "alu": [{
            "name": op.name, "operands": op.arity, "result": op.texts["result"],
            "width": op.width if isinstance(op.width, int) else f"as {op.width}",
            "reads": [resolve_flag(ref, machine.flags)[0].name for ref in op.reads],
            "sets": {name: op.texts["flags." + op.produces(machine.flags[name])]
                     for name in flags_set_by(op, machine)},
        } for op in alu_ops_used(machine)],
    }


def datapath_text(machine: Machine) -> list[str]:
    """The same as ``datapath_json``, as lines for the human table."""
    summary = datapath_json(machine)
    lines = ["registers: " + ", ".join(f"{name} ({bits} bits)" for name, bits in summary["registers"].items())]
    if summary["groups"]:
        lines.append("register groups (most significant first): " + ", ".join(
            f"{name} = {{{', '.join(parts)}}}" for name, parts in summary["groups"].items()))
    if summary["register_operands"]:
        lines.append("register operands (values by field number from 0): " + "; ".join(
            f"{kind} = {', '.join(names)}" for kind, names in summary["register_operands"].items()))
    borrows = [op.name for op in alu_ops_used(machine)
               if op.name in ("sub", "sbc", "dec") and op == ALU_OPS[op.name]]
    borrow_note = f"; carry is a borrow after {', '.join(borrows)}" if borrows else ""
    lines.append("flags: " + (", ".join(f"{name} ({role})" for name, role in summary["flags"].items()) or "none")
                 + borrow_note)
    if summary["alu"]:
        lines.append("ALU operations (a, b: operands; result before it is kept to its width w):")
        for op in summary["alu"]:
            args = ", ".join("abcd"[:op["operands"]])
            reads = f", reads {' '.join(op['reads'])}" if op["reads"] else ""
            sets = "; ".join(f"{name} = {text}" for name, text in op["sets"].items()) or "sets no flag"
            lines.append(f"  {op['name']}({args}) = {op['result']}{reads}: {sets}")
    return lines


def port_lines(machine: Machine) -> list[str]:
    """One line per wired port: its number, its device and what the device promises."""
    lines = []
    for direction, wired in (("in", machine.ports_in), ("out", machine.ports_out)):
        for number, name in sorted(wired.items()):
            device = PORT_DEVICES[name]
            ending = f"; past the end of input it {device.at_end_of_input}" if device.at_end_of_input else ""
            wide = device.wide_values.format(bits=machine.data_bits)
            lines.append(f"  {direction:<3} {number:>3}  {name:<12} {device.does}{ending}; wider: {wide}")
    return lines


def value_name_lines(machine: Machine) -> list[str]:
    """One line per operand kind with named values: each name and its bits, as a program writes it."""
    lines = []
    for kind in machine.operand_kinds.values():
        if kind.value_names:
            named = ", ".join(f"{name} = {value & ((1 << kind.bits) - 1):0{kind.bits}b}"
                              for name, value in kind.value_names)
            lines.append(f"  {kind.name:<8} {named}  (or a number {kind.low}…{kind.high})")
    return lines


def table_json(machine: Machine, instructions: list[Instruction]) -> dict:
    def steps(seq):
        return [{"text": s.text, "control_lines": list(s.control_lines),
                 "gated_lines": [{"line": g.name, "if": g.text} for g in s.gated_lines]} for s in seq]
    return {
        "machine": machine.name, "title": machine.title, "data_bits": machine.data_bits,
        "address_bits": machine.address_bits, "memory_words": machine.memory_words,
        "nominal_hz": machine.nominal_hz, "pause": machine.pause, **datapath_json(machine),
        "panel": panel_json(machine),
        "fetch": steps(machine.fetch),
        "ports": [{"direction": direction, "port": number, "device": name}
                  for direction, wired in (("in", machine.ports_in), ("out", machine.ports_out))
                  for number, name in sorted(wired.items())],
        "operand_values": {kind.name: dict(kind.value_names)
                           for kind in machine.operand_kinds.values() if kind.value_names},
        "instructions": [{
            "syntax": ins.display, "mnemonic": ins.mnemonic, "encoding": encoding_words(ins, machine),
            "words": ins.word_count, **_cycles_json(ins.cycles(machine)),
            "flags": list(ins.flags_written(machine)), "drives_halt": ins.drives_halt,
            "steps": steps(ins.steps),
        } for ins in instructions],
    }


def _cycles_json(cycles) -> dict:
    """``cycles`` as a number when fixed; with sequencing, also the shortest and longest (null: a loop)."""
    if cycles.fixed:
        return {"cycles": cycles.shortest}
    return {"cycles": str(cycles), "shortest": cycles.shortest, "longest": cycles.longest}


def panel_json(machine: Machine) -> dict:
    """What one STEP press gives (and, from each hold point, how many pulses), and the power-on phase."""
    return {"step": machine.step_press, "pulses_per_step_press": machine.pulses_per_step_press(),
            "power_on": machine.phases[machine.power_on_phase].name}


def panel_text(machine: Machine) -> str:
    power_on = machine.phases[machine.power_on_phase].name
    if machine.step_press == "pulse":
        return f"panel: a STEP press gives one pulse (one micro-step), the ring standing still; powers on at {power_on}"
    reach = ", ".join(f"{n} pulse{'s' if n != 1 else ''} from {name}"
                      for name, n in machine.pulses_per_step_press().items())
    return (f"panel: a STEP press lets the ring run to the next hold point ({reach}); "
            f"powers on at {power_on}")


def table_text(machine: Machine, instructions: list[Instruction], brief: bool) -> str:
    holds = ", ".join(p.name for p in machine.phases if p.hold)
    fetch = len(machine.fetch)
    lines = [
        f"{machine.name} — {machine.title}",
        f"{machine.data_bits}-bit words, {machine.address_bits}-bit addresses, {machine.memory_words:,} "
        f"words of memory; {rate_text(machine.nominal_hz)} nominal clock, {len(machine.phases)} phases "
        f"(hold at {holds}); one micro-step per cycle",
        panel_text(machine),
        *datapath_text(machine),
        f"every instruction begins with the fetch ({fetch} cycle{'s' if fetch != 1 else ''}):",
    ]
    lines += [step_row(i, step) for i, step in enumerate(machine.fetch, 1)]
    ports = port_lines(machine)
    if ports:
        lines += ["ports:"] + ports
    named = value_name_lines(machine)
    if named:
        lines += ["operand values (name = bits):"] + named
    lines.append("")
    syntax_width = max([len(i.display) for i in instructions] + [11])
    encodings = {ins.index: " | ".join(encoding_words(ins, machine)) for ins in instructions}
    encoding_width = max([len(e) for e in encodings.values()] + [8])
    lines.append(f"{'instruction':<{syntax_width}}  {'encoding':<{encoding_width}}  cycles  flags")
    for ins in instructions:
        flags = " ".join(ins.flags_written(machine)) or "-"
        lines.append(f"{ins.display:<{syntax_width}}  {encodings[ins.index]:<{encoding_width}}  "
                     f"{str(ins.cycles(machine)):>6}  {flags}")
        if not brief:
            lines += [step_row(i, step) for i, step in enumerate(ins.steps, fetch + 1)]
    return "\n".join(lines) + "\n"


def step_row(number: int, step) -> str:
    """A micro-step as the table lists it: its number, its text and the control lines it drives."""
    driven = f"   [{', '.join(step.listed_lines)}]" if step.listed_lines else ""
    return f"  {number:>2}  {step.text}{driven}"


def main(args) -> int:
    machine = machine_from(args)
    if args.python:
        sys.stdout.write(compile_machine(machine).source)
        return 0
    wanted = [m.lower() for m in args.mnemonics]
    known = {ins.mnemonic for ins in machine.instructions}
    unknown = [m for m in wanted if m not in known]
    if unknown:
        usage_error(args, f"{machine.name} has no instruction '{unknown[0]}' "
                          f"(mnemonics: {', '.join(sorted(known))})")
    chosen = [ins for ins in machine.instructions if not wanted or ins.mnemonic in wanted]
    if args.json:
        print(json.dumps(table_json(machine, chosen), indent=1, ensure_ascii=False))
    else:
        sys.stdout.write(table_text(machine, chosen, args.brief))
    return 0
