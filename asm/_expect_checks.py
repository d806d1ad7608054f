"""``.expect`` checks finished after pass two: the item checked, its range and the value compared.

A mixin of ``_Assembly``: the checks were attached to a halt in pass one and
are evaluated here, once every label is known.
"""

from __future__ import annotations

from ._debuginfo import Expect
from ._pass_records import _PendingExpect
from ._syntax import Operand, Text

__all__ = ["_ExpectChecks"]


class _ExpectChecks:
    """Turning pending ``.expect`` checks of ``_Assembly`` into Expect records."""

    def finish_expects(self) -> list[Expect]:
        result = []
        for pending in self.expects:
            expect = self.expect(pending)
            if expect is not None:
                result.append(expect)
        return result

    def expect(self, pending: _PendingExpect) -> Expect | None:
        check, file = pending.check, pending.place.file
        item_operand, value_arg = check.item, check.value
        memory_address = None
        if item_operand.opening == "[" and item_operand.closing == "]":
            item = "mem"
            memory_address = self.value(item_operand.expr, pending.here, file, 0,
                                        self.machine.memory_words - 1, "an address")
            if memory_address is None:
                return None
            low, high, what = *self.word_range, f"[{self.address_text(memory_address)}]"
        else:
            text = item_operand.literal_text()
            item = self.expect_item(text) if not item_operand.opening else None
            if item is None:
                names = ", ".join(self.syntax.checkable.values())
                self.error(file, item_operand.line, item_operand.column,
                           f"cannot check '{item_operand.expr.text()}': .expect items are {names}, "
                           f"[address], lamps and out")
                return None
            low, high, what = *self.item_range(item), item
        if item == "out":
            if not isinstance(value_arg, Text):
                self.error(file, value_arg.line, value_arg.column,
                           'out is compared with a string literal, e.g. out == "done\\n"')
                return None
            if value_arg.problem:
                self.error(file, value_arg.line, value_arg.column, value_arg.problem)
                return None
            value = value_arg.value
            shown = f'"{value_arg.value}"'
        else:
            if not isinstance(value_arg, Operand) or value_arg.opening or value_arg.closing:
                self.error(file, value_arg.line, value_arg.column,
                           f"{what} is compared with a number; only out takes a string")
                return None
            value = self.value(value_arg.expr, pending.here, file, low, high, what)
            if value is None:
                return None
            shown = value_arg.expr.text()
            value &= (1 << (high.bit_length())) - 1
        item_text = f"[{item_operand.expr.text()}]" if item == "mem" else item
        return Expect(pending.address, file, check.line, item, check.op, value, memory_address,
                      f"{item_text} {check.op} {shown}")

    def expect_item(self, text: str | None) -> str | None:
        if text is None:
            return None
        if text in ("lamps", "out"):
            return text
        return self.syntax.checkable.get(text)

    def item_range(self, item: str) -> tuple[int, int]:
        if item in self.machine.flags:
            return 0, 1
        if item in ("lamps", "out"):
            return self.word_range
        width = self.machine.register_width(item)
        return -(1 << (width - 1)), (1 << width) - 1
