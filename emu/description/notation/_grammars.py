"""Every LALR parser of relaybench, built from its packaged grammar file once per user.

Building a parser (reading the grammar, computing the LALR tables) takes
tens of milliseconds per grammar, more than a short run spends emulating;
loading the saved tables takes a few. So each parser is saved in the user's
cache folder (``emu.cache``) under a key made of its grammar, the grammar
files it may import, its options and the lark version, and loaded from there
by the next process. An embedded transformer is saved by reference to its
class, so a changed transformer is used as soon as it changes.
"""

from __future__ import annotations

import io
from functools import cache
from importlib import resources

import lark
from lark.load_grammar import FromPackageLoader

from ...cache import cached, entry_key

__all__ = ["packaged_parser"]

_IMPORTED_GRAMMARS = "emu.description.notation"
_GRAMMAR_IMPORTS = FromPackageLoader(_IMPORTED_GRAMMARS)
"""Where a grammar finds ``%import numbers (NUMBER, CHAR)``."""


@cache
def _grammar_files_text() -> str:
    folder = resources.files(_IMPORTED_GRAMMARS)
    return "".join(sorted(p.read_text(encoding="utf-8") for p in folder.iterdir() if p.name.endswith(".lark")))


def packaged_parser(package: str, grammar_file: str, **options) -> lark.Lark:
    """A LALR parser for ``grammar_file`` in ``package``, as ``lark.Lark`` would build it,
    from the cache when it holds one (``%import`` finds the notation's grammars)."""
    grammar = resources.files(package).joinpath(grammar_file).read_text(encoding="utf-8")
    described = {name: (_class_name(value) if name == "transformer" else value)
                 for name, value in sorted(options.items())}
    key = entry_key("lark parser", lark.__version__, package, grammar_file, grammar, _grammar_files_text(),
                    repr(described))
    return cached("parsers", key,
                  lambda: lark.Lark(grammar, parser="lalr", import_paths=[_GRAMMAR_IMPORTS], **options),
                  _saved, lambda data: lark.Lark.load(io.BytesIO(data)))


def _class_name(value) -> str:
    """Where an embedded transformer's class lives: the saved parser names it so."""
    return f"{type(value).__module__}.{type(value).__qualname__}"


def _saved(parser: lark.Lark) -> bytes:
    stream = io.BytesIO()
    parser.save(stream)
    return stream.getvalue()
