"""Register operand kinds that list groups: which lists a pointer-select decoder can drive.

A field of such a kind picks one group, and the generated code reads and writes
it one part at a time across all the groups listed (``Machine.selection_lanes``),
so the list must be all groups, each with parts of the same widths in the same order.
"""

from __future__ import annotations

from ._model import MachineNames
from ._schema import Table

__all__ = ["check_group_selection"]


def check_group_selection(spec: Table, names_listed: list[str], names: MachineNames) -> bool:
    """Whether a register kind lists groups; refuses a mix of groups and registers and groups of
    different shapes, since one selector drives the same part of every group it can pick."""
    groups = [n for n in names_listed if n in names.groups]
    if not groups:
        return False
    if len(groups) != len(names_listed):
        register = next(n for n in names_listed if n not in names.groups)
        spec.fail(f"'registers' lists groups and the register '{register}': a kind selects "
                  f"either registers or groups, not both", "registers")

    def shape(group) -> str:
        """Its parts' widths, most significant first: ``8+8``."""
        return "+".join(str(names.registers[p].width) for p in names.groups[group].parts)
    for group in groups[1:]:
        if shape(group) != shape(groups[0]):
            spec.fail(f"the groups in 'registers' must have the same shape: '{groups[0]}' has parts of "
                      f"{shape(groups[0])} bits, '{group}' of {shape(group)}", "registers")
    return True
