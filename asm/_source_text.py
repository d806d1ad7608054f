"""Source bytes to text: the one place that decides a program file is UTF-8."""

from __future__ import annotations

from ._errors import AsmError, Diagnostic

__all__ = ["decode_source"]


def decode_source(data: bytes, path: str) -> str:
    """UTF-8 source text; the first byte that is not UTF-8 is a located error.

    The caret points at the character where the stray byte sits (the line
    is shown with it replaced), so an editor can jump to it.
    """
    try:
        return data.decode("utf-8")
    except UnicodeDecodeError as exc:
        line_start = data.rfind(b"\n", 0, exc.start) + 1
        line_end = data.find(b"\n", exc.start)
        line_bytes = data[line_start:line_end if line_end >= 0 else len(data)]
        number = data.count(b"\n", 0, exc.start) + 1
        column = len(data[line_start:exc.start].decode("utf-8")) + 1
        shown = line_bytes.decode("utf-8", errors="replace")
        message = (f"byte 0x{data[exc.start]:02X} is not UTF-8 text "
                   f"(save the file as UTF-8)")
        raise AsmError([Diagnostic(path, number, column, message, shown)]) from None
