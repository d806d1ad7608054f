"""How instructions are told apart: by the first word, or by later words within a decode group.

Instructions whose first words overlap form a decode group; the loader
calls ``decode_groups`` once all instructions are read, and every refusal
(an overlap that later words cannot settle, shared steps that differ, two
members no decoding word tells apart) names both instructions.
"""

from __future__ import annotations

from ._model import DecodeGroup, Instruction
from .notation import Name, walk

__all__ = ["decode_groups"]

_MOST_FREE_BITS = 16
"""A member may leave at most this many bits of its group's decoding bits free (its table rows: 2^bits)."""


def decode_groups(instructions: list[Instruction], data_bits: int, fail) -> dict[int, DecodeGroup]:
    """First member's index → its group, for every instruction decoded by more than its first word.

    ``fail(instruction, message)`` raises the loader's located error.
    """
    first_words = {ins.index: set(ins.first_words(data_bits)) for ins in instructions}
    owner: dict[int, int] = {}
    parent = list(range(len(instructions)))

    def root(i):
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    for ins in instructions:
        for word in sorted(first_words[ins.index]):
            if word in owner:
                other = instructions[owner[word]]
                _check_pair(ins, other, word, data_bits, fail)
                parent[root(ins.index)] = root(other.index)
            else:
                owner[word] = ins.index
    members: dict[int, list[Instruction]] = {}
    for ins in instructions:
        members.setdefault(root(ins.index), []).append(ins)
    groups = {}
    for group in members.values():
        if group[0].decode_words == 1:
            continue
        for ins in group[1:]:
            _check_shared_steps(group[0], ins, fail)
        groups[group[0].index] = _group(group, data_bits, fail)
    return groups


def _check_pair(ins: Instruction, other: Instruction, word: int, data_bits: int, fail) -> None:
    """Two instructions sharing first word ``word``: later decoding words must tell them apart."""
    width = (data_bits + 3) // 4
    if ins.decode_words == 1 or other.decode_words == 1:
        fail(ins, f"its encoding overlaps instruction '{other.display}' at first word 0x{word:0{width}X}; "
                  f"the first word alone must tell them apart, or both must say decode_words ≥ 2")
    if ins.decode_words != other.decode_words:
        fail(ins, f"it shares first word 0x{word:0{width}X} with instruction '{other.display}', so both "
                  f"must decode on the same words (decode_words {ins.decode_words} and {other.decode_words})")


def _check_shared_steps(first: Instruction, ins: Instruction, fail) -> None:
    """Members run the first member's steps up to the decoding step, so those must be the same."""
    count = first.decode_step + 1
    if ins.decode_step != first.decode_step or \
            [(s.text, s.listed_lines) for s in ins.steps[:count]] != \
            [(s.text, s.listed_lines) for s in first.steps[:count]]:
        fail(ins, f"it is decoded together with instruction '{first.display}', so their steps up to "
                  f"the one fetching the last decoding word must be the same text, driving the same "
                  f"control lines; they differ")
    named = {node.name for step in first.steps[:count] for st in step.statements for node in walk(st)
             if isinstance(node, Name)}
    named |= {st.target.name for step in first.steps[:count] for st in step.statements
              if isinstance(getattr(st, "target", None), Name)}
    for name in sorted(named & (set(first.fields) | set(ins.fields))):
        if first.fields.get(name) != ins.fields.get(name):
            fail(ins, f"its shared steps name field '{name}', which is not the same field in instruction "
                      f"'{first.display}' (the shared steps must mean the same in both)")
    if [ins.holders.get(w) for w in range(ins.decode_words)] != \
            [first.holders.get(w) for w in range(first.decode_words)]:
        fail(ins, f"its decoding words land in other registers than those of instruction '{first.display}'")


def _group(group: list[Instruction], data_bits: int, fail) -> DecodeGroup:
    words = group[0].decode_words
    masks = tuple(_union(ins.fixed[k][0] for ins in group) for k in range(words))
    table: dict[int, int] = {}
    for ins in group:
        free = [(k, bit) for k in range(words) for bit in range(data_bits)
                if masks[k] >> bit & 1 and not ins.fixed[k][0] >> bit & 1]
        if len(free) > _MOST_FREE_BITS:
            fail(ins, f"its decoding words leave {len(free)} of the group's fixed bits free; at most "
                      f"{_MOST_FREE_BITS} can be (fix more bits in its encoding)")
        base = [value for _mask, value in ins.fixed[:words]]
        for combo in range(1 << len(free)):
            chosen = list(base)
            for i, (k, bit) in enumerate(free):
                if combo >> i & 1:
                    chosen[k] |= 1 << bit
            key = sum(w << (data_bits * k) for k, w in enumerate(chosen))
            if key in table:
                other = next(i for i in group if i.index == table[key])
                shown = " ".join(f"{w:0{(data_bits + 3) // 4}X}" for w in chosen)
                fail(ins, f"it is ambiguous with instruction '{other.display}': their fixed bits overlap "
                          f"on every decoding word (both decode words {shown}, hex)")
            table[key] = ins.index
    holders = tuple(group[0].holders[w] for w in range(words))
    return DecodeGroup(tuple(i.index for i in group), group[0].decode_step, holders, masks, data_bits, table)


def _union(masks) -> int:
    result = 0
    for mask in masks:
        result |= mask
    return result
