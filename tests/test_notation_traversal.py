"""The one traversal over the micro-step IR, and what happens to a node nobody taught.

Every node lists its parts (``children``) and is rebuilt from new ones
(``with_children``); ``walk`` is written once on that. A made-up kind of
node must be refused by the design-rule checker, the compiler and the width
rule, never loaded or compiled to nothing.
"""

from __future__ import annotations

from dataclasses import dataclass, replace

import pytest
from hypothesis import given, strategies as st

import emu
from emu.description import StepChecker
from emu.description.notation import (Assign, Call, Choose, Condition, Const, Expression, Extend, FlagsOnly, Halt,
                                      Idle, Input, Join, Logic, Mem, Name, Not, Offset, Output, Slice, StatementNode,
                                      parse_step, value_width, walk)
from emu.engine import compile_machine

names = st.sampled_from(["pc", "t", "rd", "x"]).map(Name)
leaves = names | st.integers(0, 255).map(Const)
conditions = st.recursive(st.sampled_from(["z", "c", "cs"]).map(Name), lambda inner: st.one_of(
    inner.map(Not), st.builds(Logic, st.sampled_from("&^|"), inner, inner)), max_leaves=4).map(Condition)
expressions = st.recursive(leaves, lambda inner: st.one_of(
    inner.map(Mem), inner.map(Input), st.lists(inner, min_size=2, max_size=4).map(lambda p: Join(tuple(p))),
    st.builds(Offset, inner, st.integers(-3, 3)),
    st.builds(Slice, inner, st.integers(0, 7), st.integers(0, 7)),
    st.builds(Extend, inner, st.integers(1, 16), st.booleans()),
    st.builds(Choose, conditions, inner, inner),
    st.lists(inner, min_size=1, max_size=2).map(lambda args: Call("add", tuple(args))),
), max_leaves=12)
statements = st.one_of(
    st.builds(Assign, names | expressions.map(Mem), expressions, st.just(("z",))),
    st.builds(FlagsOnly, st.lists(expressions, min_size=2, max_size=2).map(lambda a: Call("sub", tuple(a))),
              st.just(("z", "c"))),
    st.builds(Output, expressions, expressions), st.just(Halt()), st.just(Idle()))


def size(node) -> int:
    """Nodes in a tree, counted by hand from the dataclass fields (not from children())."""
    parts = [v for v in vars(node).values() if isinstance(v, (Expression, StatementNode))]
    parts += [a for v in vars(node).values() if isinstance(v, tuple) for a in v if isinstance(a, Expression)]
    return 1 + sum(size(p) for p in parts)


@given(statements)
def test_every_node_rebuilds_from_its_children_into_an_equal_node(statement):
    def rebuilt(node):
        return node.with_children(*(rebuilt(child) for child in node.children()))
    assert rebuilt(statement) == statement


@given(expressions)
def test_walk_visits_every_node_of_an_expression_once_outermost_first(expr):
    visited = list(walk(expr))
    assert visited[0] is expr
    assert len(visited) == size(expr)


def test_walk_of_a_statement_yields_what_it_reads_not_what_it_writes():
    [load, step] = parse_step("mem[x] <- t; pc <- pc + 1")
    assert list(walk(load)) == [Name("x"), Name("t")]
    assert list(walk(step)) == [Offset(Name("pc"), 1), Name("pc")]


def test_rebuilding_keeps_the_fields_that_are_not_nodes():
    assert Slice(Name("a"), 7, 4).with_children(Name("b")) == Slice(Name("b"), 7, 4)
    assert Extend(Name("a"), 12, True).with_children(Name("b")) == Extend(Name("b"), 12, True)
    assert Logic("^", Name("a"), Name("b")).with_children(Name("c"), Name("d")) == Logic("^", Name("c"), Name("d"))
    assert Offset(Name("pc"), -2).with_children(Name("x")) == Offset(Name("x"), -2)
    assert Assign(Name("t"), Call("add", (Name("t"), Const(1))), ("z", "c")).with_children(
        Name("pc"), Const(3)) == Assign(Name("pc"), Const(3), ("z", "c"))
    with pytest.raises(TypeError):
        Halt().with_children(Const(1))


@dataclass(frozen=True)
class Beep(StatementNode):
    """A kind of statement nobody taught the checker or the compiler."""


@dataclass(frozen=True)
class Chirp(Expression):
    """A kind of expression nobody taught the width rule or the compiler."""


def test_a_made_up_statement_is_refused_by_the_design_rule_checker():
    checker = StepChecker.__new__(StepChecker)  # the dispatch comes before any machine name is read
    with pytest.raises(TypeError, match="Beep is not a kind of micro-step node"):
        checker.statement(Beep())


def test_a_made_up_expression_is_refused_by_the_width_rule():
    m = emu.load_machine("ref8")
    with pytest.raises(TypeError, match="Chirp is not a kind of micro-step node"):
        value_width(Join((Name("t"), Chirp())), m, {})


def test_a_made_up_node_is_refused_by_walk():
    with pytest.raises(TypeError, match="int is not a kind"):
        list(walk(Mem(7)))


@pytest.mark.parametrize("statement", [Beep(), Assign(Name("t"), Chirp()), Output(Const(0), Chirp())],
                         ids=["statement", "value", "port value"])
def test_a_made_up_node_is_refused_by_the_compiler(statement):
    machine = emu.load_machine("ref8")  # a fresh object: the compiler's cache does not know it
    nop = next(ins for ins in machine.instructions if ins.display == "nop")
    nop.steps = (replace(machine.fetch[0], text="made up", statements=(statement,)),)
    with pytest.raises(TypeError, match=r"(Beep|Chirp) is not a kind of micro-step node"):
        compile_machine(machine)
