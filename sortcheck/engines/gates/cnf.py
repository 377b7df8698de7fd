"""Tseitin encoding of gate circuits, with constant folding and structural hashing.

A :class:`CnfBuilder` hands out literals (python-sat integers, ``-x`` is NOT
``x``) for AND, XOR and MUX nodes; every other op of the netlist format is
one of those with negated literals (OR is NOT AND of NOT, NAND, NOR and XNOR
negate the result, NOT costs nothing).  Each node is looked up by its
normalised inputs first, so a node built twice, by one circuit or by two
circuits sharing the builder (a miter), gets one variable and one set of
clauses; constants are folded away.  ``encodings/gate-circuit-cnf.md`` gives
the clauses and why they are right.

Variables come from a :class:`pysat.formula.IDPool` with readable keys:
``("bit", word, i)`` for bit ``i`` of input word ``word`` (or what the caller
names), ``("and", n)``, ``("xor", n)``, ``("mux", n)`` for nodes and
``("true",)`` for the constant.

Examples
--------
>>> builder = CnfBuilder()
>>> a, b = builder.variable("a"), builder.variable("b")
>>> builder.and_([a, b]) == builder.and_([b, a]), builder.or_([a, -a]) == builder.true
(True, True)
>>> builder.xor_([a, builder.true]) == -a
True
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Hashable, Iterable, Sequence

from pysat.formula import IDPool

from sortcheck.model.circuit import GateCircuit, Signal, bit_name

Clause = list[int]


class CnfBuilder:
    """Literals for Boolean nodes, each node encoded once; the clauses collect in :attr:`clauses`.

    Parameters
    ----------
    pool : IDPool or None
        Where variables come from (a new pool by default).
    """

    def __init__(self, pool: IDPool | None = None):
        self.pool = pool or IDPool()
        self.clauses: list[Clause] = []
        self.true = self.pool.id(("true",))
        self.clauses.append([self.true])
        self._nodes: dict[tuple, int] = {}
        #: Nodes asked for and nodes actually encoded; the difference was hashed or folded away.
        self.asked = 0
        self.encoded = 0

    @property
    def false(self) -> int:
        return -self.true

    def variable(self, key: Hashable) -> int:
        """The free variable named ``key`` (the same key gives the same variable)."""
        return self.pool.id(key)

    def constant(self, value: int | bool) -> int:
        """The literal of a constant 0 or 1."""
        return self.true if value else self.false

    def _node(self, kind: str, key: tuple) -> tuple[int, bool]:
        """The variable of node ``(kind, key)`` and whether it is new (its clauses still to add)."""
        self.asked += 1
        found = self._nodes.get((kind, key))
        if found is not None:
            return found, False
        self.encoded += 1
        literal = self.pool.id((kind, self.encoded))
        self._nodes[(kind, key)] = literal
        return literal, True

    def and_(self, literals: Iterable[int]) -> int:
        """The literal of the AND of ``literals`` (the empty AND is true).

        >>> builder = CnfBuilder()
        >>> x = builder.variable("x")
        >>> builder.and_([x, builder.true]) == x, builder.and_([x, -x]) == builder.false
        (True, True)
        """
        distinct = set()
        for literal in literals:
            if literal == self.false or -literal in distinct:
                self.asked += 1
                return self.false
            if literal != self.true:
                distinct.add(literal)
        if not distinct:
            return self.true
        if len(distinct) == 1:
            return next(iter(distinct))
        key = tuple(sorted(distinct))
        output, new = self._node("and", key)
        if new:
            self.clauses.extend([-output, literal] for literal in key)
            self.clauses.append([output, *(-literal for literal in key)])
        return output

    def or_(self, literals: Iterable[int]) -> int:
        """The literal of the OR of ``literals`` (NOT AND of the negations)."""
        return -self.and_(-literal for literal in literals)

    def xor2(self, left: int, right: int) -> int:
        """The literal of ``left XOR right``; negations are pulled out so ``x XOR NOT y`` shares ``x XOR y``."""
        if left == right:
            return self.false
        if left == -right:
            return self.true
        for constant, other in ((left, right), (right, left)):
            if constant == self.false:
                return other
            if constant == self.true:
                return -other
        flip = (left < 0) != (right < 0)
        a, b = sorted((abs(left), abs(right)))
        output, new = self._node("xor", (a, b))
        if new:
            self.clauses.extend([[-output, a, b], [-output, -a, -b], [output, -a, b], [output, a, -b]])
        return -output if flip else output

    def xor_(self, literals: Iterable[int]) -> int:
        """The literal of the XOR of ``literals``, as a chain of two-input XORs (the empty XOR is false)."""
        result = self.false
        for literal in literals:
            result = self.xor2(result, literal)
        return result

    def mux(self, select: int, when0: int, when1: int) -> int:
        """The literal of ``when1 if select else when0``.

        >>> builder = CnfBuilder()
        >>> s, a = builder.variable("s"), builder.variable("a")
        >>> builder.mux(s, a, a) == a, builder.mux(s, builder.false, builder.true) == s
        (True, True)
        """
        if select == self.true or when0 == when1:
            return when1
        if select == self.false:
            return when0
        if select < 0:
            select, when0, when1 = -select, when1, when0
        if when0 == -when1:
            return self.xor2(select, when0)
        # A data input that is constant, or that is the select itself, makes the mux an AND or an OR.
        if when0 == self.false or when0 == select:
            return self.and_([select, when1])
        if when1 == self.false or when1 == -select:
            return self.and_([-select, when0])
        if when0 == self.true or when0 == -select:
            return self.or_([-select, when1])
        if when1 == self.true or when1 == select:
            return self.or_([select, when0])
        output, new = self._node("mux", (select, when0, when1))
        if new:
            self.clauses.extend([[-select, -when1, output], [-select, when1, -output],
                                 [select, -when0, output], [select, when0, -output],
                                 [-when0, -when1, output], [when0, when1, -output]])
        return output

    def op(self, name: str, literals: Sequence[int]) -> int:
        """The literal of one op of the netlist format applied to ``literals``."""
        if name == "not":
            return -literals[0]
        if name == "mux":
            return self.mux(*literals)
        if name in ("and", "nand"):
            result = self.and_(literals)
        elif name in ("or", "nor"):
            result = self.or_(literals)
        elif name in ("xor", "xnor"):
            result = self.xor_(literals)
        else:
            raise ValueError(f"unknown op {name!r}")
        return -result if name in ("nand", "nor", "xnor") else result


@dataclass(frozen=True)
class CircuitLiterals:
    """The literals of one encoded circuit: input words and output words, bits least significant first."""

    inputs: tuple[tuple[int, ...], ...]
    outputs: tuple[tuple[int, ...], ...]
    signals: dict


def input_literals(builder: CnfBuilder, circuit: GateCircuit, tag: Hashable = None) -> tuple[tuple[int, ...], ...]:
    """Fresh variables ``("bit", word, i)`` (or ``(tag, word, i)``) for every input bit of ``circuit``."""
    name = "bit" if tag is None else tag
    return tuple(tuple(builder.variable((name, word.name, i)) for i in range(word.width)) for word in circuit.inputs)


def encode_circuit(builder: CnfBuilder, circuit: GateCircuit,
                   inputs: Sequence[Sequence[int]] | None = None,
                   overrides: dict[str, int] | None = None) -> CircuitLiterals:
    """Encode ``circuit`` into ``builder``; ``inputs`` gives the input words' literals (fresh by default).

    ``overrides`` maps gate outputs to literals that replace the gate (a free
    variable for a gate whose function is unknown, for example).

    Examples
    --------
    >>> from sortcheck.model import Gate, OutputWord, Word
    >>> circuit = GateCircuit((Word("a", 1), Word("b", 1)),
    ...     (Gate("lo", "and", ("a[0]", "b[0]")), Gate("hi", "or", ("a[0]", "b[0]"))),
    ...     (OutputWord("y0", ("lo",)), OutputWord("y1", ("hi",))))
    >>> builder = CnfBuilder()
    >>> encoded = encode_circuit(builder, circuit)
    >>> encoded.inputs, len(builder.clauses)
    (((2,), (3,)), 7)
    """
    words = input_literals(builder, circuit) if inputs is None else tuple(tuple(word) for word in inputs)
    signals: dict[Signal, int] = {0: builder.false, 1: builder.true}
    for word, literals in zip(circuit.inputs, words):
        for i, literal in enumerate(literals):
            signals[bit_name(word.name, i)] = literal
    overrides = overrides or {}
    for gate in circuit.gate_order:
        if gate.out in overrides:
            signals[gate.out] = overrides[gate.out]
        else:
            signals[gate.out] = builder.op(gate.op, [signals[source] for source in gate.inputs])
    outputs = tuple(tuple(signals[bit] for bit in word.bits) for word in circuit.outputs)
    return CircuitLiterals(words, outputs, signals)


def less_than(builder: CnfBuilder, left: Sequence[int], right: Sequence[int], signed: bool = False,
              or_equal: bool = False) -> int:
    """The literal of ``left < right`` (``<=`` with ``or_equal``) on words of literals, least significant first.

    Unsigned, or two's complement with ``signed`` (the sign bit counts the other
    way round).  A least-significant-first chain: ``lt_i = mux(l_i XOR r_i,
    lt_(i-1), r_i)``; constant words fold, so comparing with a constant costs
    one node per bit at most.

    >>> builder = CnfBuilder()
    >>> three = [builder.constant(bit) for bit in (1, 1, 0)]
    >>> five = [builder.constant(bit) for bit in (1, 0, 1)]
    >>> less_than(builder, three, five) == builder.true, less_than(builder, five, three, signed=True) == builder.true
    (True, True)
    """
    if len(left) != len(right):
        raise ValueError(f"words of {len(left)} and {len(right)} bits do not compare")
    result = builder.constant(or_equal)
    top = len(left) - 1
    for i, (l, r) in enumerate(zip(left, right)):
        if signed and i == top:
            l, r = -l, -r
        result = builder.mux(builder.xor2(l, r), result, r)
    return result


def equal_words(builder: CnfBuilder, left: Sequence[int], right: Sequence[int]) -> int:
    """The literal of ``left == right`` bit for bit."""
    if len(left) != len(right):
        raise ValueError(f"words of {len(left)} and {len(right)} bits do not compare")
    return builder.and_(-builder.xor2(l, r) for l, r in zip(left, right))


def constant_word(builder: CnfBuilder, value: int, width: int) -> tuple[int, ...]:
    """The literals of the constant ``value`` (taken modulo ``2**width``), least significant first."""
    return tuple(builder.constant((value >> i) & 1) for i in range(width))
