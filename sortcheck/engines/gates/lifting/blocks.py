"""Finding and proving min/max blocks of a gate circuit, for :mod:`sortcheck.engines.gates.lifting.engine`.

Three pieces, each usable on its own:

* :func:`signal_signatures` simulates a circuit on a few hundred biased random
  inputs (bit-parallel, :mod:`sortcheck.engines.gates.simulation`) and gives
  every signal a *signature*: its values on those inputs.
* :func:`min_max_rows` computes, bit-sliced, the rows the minimum and maximum
  of two words would have on the same inputs, for a :class:`BlockOrder`
  (unsigned, two's complement, or on the key bits only with a fixed tie rule).
  A block is a candidate when the circuit has signals with exactly those rows.
* :func:`prove_block` proves a candidate with one SAT call
  (:mod:`sortcheck.engines.gates.cnf`): the cone of its output signals, cut at
  the two input words (which become free variables), equals min/max for
  every value of the words.

Signatures only *suggest* blocks; only the SAT proof lifts one.
"""

from __future__ import annotations

import time
from dataclasses import dataclass
from typing import Callable, Sequence

import numpy as np

from sortcheck.engines.base import Budget
from sortcheck.engines.gates.cnf import CnfBuilder, less_than
from sortcheck.engines.gates.simulation import FIRST_INPUT_ROW, compile_circuit, evaluate_rows, new_table
from sortcheck.engines.solving import solve_within
from sortcheck.engines.gates.word_blocks import limbs_to_rows
from sortcheck.engines.gates.word_corners import random_keys
from sortcheck.model import Gate, GateCircuit, OutputWord, bit_name, evaluate_op
from sortcheck.model.circuit import Signal

#: Random inputs simulated to give signals their signatures (a multiple of 64).
SIGNATURE_LANES = 1024
SEED = 20261201

Bits = tuple[Signal, ...]
#: A channel word: for every bit, the signals proved to carry it (the first one stands for them).
Word = tuple[tuple[Signal, ...], ...]


@dataclass(frozen=True)
class BlockOrder:
    """How a block compares its two words: ``signed`` two's complement or not, on ``key_bits`` top bits or all.

    With ``key_bits`` the block compares only the key and moves whole words;
    when the keys are equal the first word stays on the minimum side.

    >>> BlockOrder(signed=True).describe(), BlockOrder(key_bits=2).describe()
    ("two's complement", 'unsigned on the 2 most significant bits (ties keep the first word on the minimum side)')
    """

    signed: bool = False
    key_bits: int | None = None

    def describe(self) -> str:
        kind = "two's complement" if self.signed else "unsigned"
        if self.key_bits is None:
            return kind
        return (f"{kind} on the {self.key_bits} most significant bits "
                "(ties keep the first word on the minimum side)")

    def low(self, width: int) -> int:
        """The lowest compared bit."""
        return 0 if self.key_bits is None else width - self.key_bits


@dataclass(frozen=True, eq=False)
class Signatures:
    """Every signal's values on the simulated inputs: ``rows[index[signal]]`` (``uint64``, 64 inputs a word).

    ``by_value`` lists the signals of each distinct row in topological order
    (constants and input bits first); ``first_words`` holds the first
    ``uint64`` of every row, a fast filter before the exact look-up.
    """

    rows: np.ndarray
    index: dict
    by_value: dict
    first_words: frozenset

    def row(self, signal: Signal) -> np.ndarray:
        return self.rows[self.index[signal]]

    def word_rows(self, bits: Bits) -> np.ndarray:
        """Rows ``(len(bits), W)`` of the signals ``bits``."""
        return self.rows[[self.index[bit] for bit in bits]]

    def signals_like(self, row: np.ndarray) -> list:
        """The signals whose signature is ``row``, in topological order."""
        return self.by_value.get(row.tobytes(), [])


def simulated_inputs(words: int, width: int, lanes: int = SIGNATURE_LANES, seed: int = SEED) -> np.ndarray:
    """Input bit rows ``(words * width, lanes // 64)``: biased random words, duplicates and near-equal values.

    >>> simulated_inputs(3, 4, 128).shape
    (12, 2)
    """
    keys = random_keys(np.random.default_rng(seed), lanes, words, width)
    return limbs_to_rows(keys, width)


def signal_signatures(circuit: GateCircuit, lanes: int = SIGNATURE_LANES, seed: int = SEED) -> Signatures:
    """Simulate ``circuit`` on ``lanes`` biased random inputs and record every signal's values.

    >>> from sortcheck.model import Gate, OutputWord, Word
    >>> circuit = GateCircuit((Word("a", 1), Word("b", 1)),
    ...     (Gate("lo", "and", ("a[0]", "b[0]")), Gate("hi", "or", ("a[0]", "b[0]")),
    ...      Gate("lo2", "nor", ("a[0]", "b[0]")), Gate("lo3", "not", ("lo2",))),
    ...     (OutputWord("y0", ("lo",)), OutputWord("y1", ("hi",))))
    >>> signatures = signal_signatures(circuit, 128)
    >>> signatures.signals_like(signatures.row("hi"))
    ['hi', 'lo3']
    """
    every_gate = OutputWord("signals", tuple(gate.out for gate in circuit.gate_order))
    program = compile_circuit(GateCircuit(circuit.inputs, circuit.gates, (every_gate,)))
    table = new_table(program, lanes // 64)
    inputs = simulated_inputs(circuit.words, circuit.width, lanes, seed)
    gate_rows = evaluate_rows(program, table, inputs) if circuit.gates else np.zeros((0, lanes // 64), np.uint64)
    rows = np.concatenate([table[:FIRST_INPUT_ROW], inputs, gate_rows])
    names: list[Signal] = [0, 1]
    names += [bit_name(word.name, i) for word in circuit.inputs for i in range(word.width)]
    names += list(every_gate.bits)
    by_value: dict[bytes, list] = {}
    for number, name in enumerate(names):
        by_value.setdefault(rows[number].tobytes(), []).append(name)
    first_words = frozenset(rows[:, 0].tolist())
    return Signatures(rows, {name: number for number, name in enumerate(names)}, by_value, first_words)


def _less_rows(left: np.ndarray, right: np.ndarray, order: BlockOrder) -> np.ndarray:
    """Bit-sliced ``left < right`` on the compared bits; ``left``, ``right`` are ``(..., width, W)`` rows."""
    width = left.shape[-2]
    less = np.zeros(np.broadcast_shapes(left.shape, right.shape)[:-2] + left.shape[-1:], dtype=np.uint64)
    for i in range(order.low(width), width):
        differ = left[..., i, :] ^ right[..., i, :]
        # Where the bits differ, left is smaller when right has the 1 (unsigned) or left has it (sign bit).
        smaller = left[..., i, :] if order.signed and i == width - 1 else right[..., i, :]
        less ^= (less ^ smaller) & differ
    return less


def min_max_values(first: int, second: int, width: int, order: BlockOrder) -> tuple[int, int]:
    """The minimum and maximum of two raw words, by the same rule as :func:`min_max_rows`.

    >>> min_max_values(3, 12, 4, BlockOrder(signed=True)), min_max_values(5, 4, 3, BlockOrder(key_bits=1))
    ((12, 3), (5, 4))
    """
    low = order.low(width)
    flip = 1 << (width - low - 1) if order.signed else 0

    def key(value: int) -> int:
        return (value >> low) ^ flip

    return (second, first) if key(second) < key(first) else (first, second)


def evaluate_local(gates: dict, signal: Signal, values: dict) -> int:
    """The value of ``signal`` given the values of the signals its cone is cut at (``values``, filled as a memo).

    >>> from sortcheck.model import Gate
    >>> evaluate_local({"t": Gate("t", "xor", ("a[0]", 1))}, "t", {"a[0]": 1})
    0
    """
    return _evaluate_cone(gates, signal, values, evaluate_op, int)


def _evaluate_cone(gates: dict, signal: Signal, values: dict, apply: Callable, constant: Callable):
    """The value of ``signal`` from ``values`` (filled as a memo), each gate by ``apply(op, inputs)``.

    ``constant`` turns a constant source (0 or 1) into a value; the cone is
    walked with an explicit stack, so deep cones need no recursion.
    """
    stack = [signal]
    while stack:
        current = stack[-1]
        if isinstance(current, int) or current in values:
            stack.pop()
            continue
        gate = gates[current]
        missing = [source for source in gate.inputs if not isinstance(source, int) and source not in values]
        if missing:
            stack.extend(missing)
            continue
        values[current] = apply(gate.op, [constant(source) if isinstance(source, int) else values[source]
                                          for source in gate.inputs])
        stack.pop()
    return constant(signal) if isinstance(signal, int) else values[signal]


def _rows_of_op(op: str, rows: list[np.ndarray]) -> np.ndarray:
    """One gate on bit rows (64 inputs a word)."""
    if op == "not":
        return ~rows[0]
    if op == "mux":
        select, when0, when1 = rows
        return when0 ^ ((when0 ^ when1) & select)
    ufunc = {"and": np.bitwise_and, "nand": np.bitwise_and, "or": np.bitwise_or, "nor": np.bitwise_or}.get(
        op, np.bitwise_xor)
    result = ufunc.reduce(rows)
    return ~result if op in ("nand", "nor", "xnor") else result


def evaluate_local_rows(gates: dict, signal: Signal, values: dict, lanes: int) -> np.ndarray:
    """The rows of ``signal`` given the rows of the signals its cone is cut at (``values``, filled as a memo).

    >>> from sortcheck.model import Gate
    >>> rows = {"a[0]": np.array([5], dtype=np.uint64)}
    >>> int(evaluate_local_rows({"t": Gate("t", "nand", ("a[0]", 1))}, "t", rows, 1)[0]) == (~5) % 2**64
    True
    """
    constants = {0: np.zeros(lanes, dtype=np.uint64), 1: np.full(lanes, ~np.uint64(0))}
    return _evaluate_cone(gates, signal, values, _rows_of_op, constants.__getitem__)


def min_max_rows(first: np.ndarray, second: np.ndarray, order: BlockOrder) -> tuple[np.ndarray, np.ndarray]:
    """Rows of the minimum and maximum words of ``first`` and ``second`` (``(..., width, W)``, broadcast).

    The minimum is ``second`` exactly where it compares smaller, so with key
    bits the first word stays on the minimum side on equal keys.

    >>> words = np.array([[[5]], [[3]]], dtype=np.uint64)  # one lane-word: bit 0 of two words
    >>> low, high = min_max_rows(words[0:1], words[1:2], BlockOrder())
    >>> int(low[0, 0, 0]), int(high[0, 0, 0])
    (1, 7)
    """
    swap = _less_rows(second, first, order)[..., None, :]
    mask = (first ^ second) & swap
    return first ^ mask, second ^ mask


def gate_map(circuit: GateCircuit) -> dict:
    """Each gate by its output signal."""
    return {gate.out: gate for gate in circuit.gates}


def cone(gates: dict, outputs: Sequence[Signal], cut: set) -> tuple[list[Gate], list[Signal]]:
    """The gates between ``cut`` and ``outputs`` and the leaves outside ``cut`` (input bits), topologically.

    >>> from sortcheck.model import Gate
    >>> gates = {"t": Gate("t", "and", ("a[0]", "b[0]")), "u": Gate("u", "or", ("t", "c[0]"))}
    >>> found, leaves = cone(gates, ["u"], {"a[0]", "b[0]"})
    >>> [gate.out for gate in found], leaves
    (['t', 'u'], ['c[0]'])
    """
    found: list[Gate] = []
    leaves: list[Signal] = []
    seen: set = set()
    stack = [(signal, False) for signal in reversed(outputs)]
    while stack:
        signal, expanded = stack.pop()
        if expanded:
            found.append(gates[signal])
            continue
        if signal in seen or isinstance(signal, int) or signal in cut:
            continue
        seen.add(signal)
        gate = gates.get(signal)
        if gate is None:
            leaves.append(signal)
            continue
        stack.append((signal, True))
        stack.extend((source, False) for source in reversed(gate.inputs))
    return found, leaves


def is_local(gates: dict, signal: Signal, cut: set, limit: int) -> bool:
    """Whether ``signal`` is a function of the signals ``cut`` through at most ``limit`` gates.

    >>> from sortcheck.model import Gate
    >>> gates = {"t": Gate("t", "and", ("a[0]", "b[0]")), "u": Gate("u", "or", ("t", "c[0]"))}
    >>> is_local(gates, "t", {"a[0]", "b[0]"}, 10), is_local(gates, "u", {"a[0]", "b[0]"}, 10)
    (True, False)
    """
    seen: set = set()
    stack = [signal]
    while stack:
        current = stack.pop()
        if isinstance(current, int) or current in cut or current in seen:
            continue
        gate = gates.get(current)
        if gate is None or len(seen) >= limit:
            return False
        seen.add(current)
        stack.extend(gate.inputs)
    return True


def canonical_form(found: Sequence[Gate], leaves: Sequence[Signal], first: Word, second: Word,
                   outputs: Sequence[Signal]) -> tuple:
    """A key that determines the cone's function of its cut words: equal keys, equal functions.

    Every signal of bit ``i`` of the first word becomes ``("a", i)`` (of the
    second, ``("b", i)``), other leaves ``("leaf", k)`` and gates their
    position in the cone, so structurally identical blocks share one key.
    """
    names: dict = {}
    for tag, word in (("b", second), ("a", first)):
        names.update({signal: (tag, i) for i, bits in enumerate(word) for signal in bits})
    names.update({leaf: ("leaf", k) for k, leaf in enumerate(leaves)})
    shape = []
    for number, gate in enumerate(found):
        shape.append((gate.op, tuple(source if isinstance(source, int) else names[source] for source in gate.inputs)))
        names[gate.out] = ("g", number)
    # Which variable stands for every bit of the two words (a signal may sit in both words).
    words = tuple(bits[0] if isinstance(bits[0], int) else names[bits[0]] for bits in (*first, *second))
    return tuple(shape), tuple(bit if isinstance(bit, int) else names[bit] for bit in outputs), words


def signals_of(word: Word) -> set:
    """Every signal of a word (all the equivalent signals of every bit)."""
    return {signal for bits in word for signal in bits}


def single(bits: Bits) -> Word:
    """A word whose bits are one signal each.

    >>> single(("a[0]", "a[1]"))
    (('a[0]',), ('a[1]',))
    """
    return tuple((bit,) for bit in bits)


def _encode(builder: CnfBuilder, found: Sequence[Gate], literals: dict) -> None:
    for gate in found:
        literals[gate.out] = builder.op(gate.op, [_literal(literals, builder, source) for source in gate.inputs])


def _literal(literals: dict, builder: CnfBuilder, signal: Signal) -> int:
    return builder.constant(signal) if isinstance(signal, int) else literals[signal]


def min_max_literals(builder: CnfBuilder, first: Sequence[int], second: Sequence[int], order: BlockOrder
                     ) -> tuple[list[int], list[int]]:
    """Literals of the minimum and maximum words, by the same rule as :func:`min_max_rows`."""
    low = order.low(len(first))
    swap = less_than(builder, second[low:], first[low:], signed=order.signed)
    return ([builder.mux(swap, a, b) for a, b in zip(first, second)],
            [builder.mux(swap, b, a) for a, b in zip(first, second)])


@dataclass(frozen=True)
class BlockCheck:
    """The outcome of one block proof: proved or not, how, the gates of the cone, seconds, a failing input."""

    proved: bool
    how: str
    gates: int
    seconds: float
    canonical: tuple | None = None
    witness: tuple[int, int] | None = None  # values of the two words on which the block is not min/max


def prove_block(gates: dict, first: Word, second: Word, outputs: Bits, order: BlockOrder, budget: Budget,
                proved_forms: dict | None = None, full_cone: bool = False,
                positions: tuple[int, ...] | None = None) -> BlockCheck:
    """Prove that signals ``outputs`` are the min then the max of words ``first``, ``second`` for every value.

    ``outputs`` lists the minimum's bits then the maximum's (``2 * width``
    signals), or with ``positions`` the bits at those positions of that list.
    The cone of ``outputs`` is cut at every signal of ``first`` and
    ``second`` (the equivalent signals of one bit share a free variable);
    any other leaf (a primary input bit outside the two words) is free as
    well, which only makes the claim stronger.  With ``full_cone`` nothing
    is cut: the words (their first signal per bit) and the outputs are
    encoded from the primary inputs.  ``proved_forms`` holds the canonical
    forms proved so far; a block with a known form needs no call.  Raises
    :class:`sortcheck.engines.solving.Interrupted` at the deadline.

    >>> from sortcheck.model import Gate
    >>> gates = {"lo": Gate("lo", "and", ("a[0]", "b[0]")), "hi": Gate("hi", "or", ("a[0]", "b[0]"))}
    >>> a, b = single(("a[0]",)), single(("b[0]",))
    >>> prove_block(gates, a, b, ("lo", "hi"), BlockOrder(), Budget()).proved
    True
    >>> prove_block(gates, a, b, ("hi", "lo"), BlockOrder(), Budget()).witness
    (1, 0)
    """
    chosen = tuple(range(2 * len(first))) if positions is None else positions
    if len(chosen) != len(outputs):
        raise ValueError(f"{len(outputs)} output signals for {len(chosen)} positions")

    def expected(builder: CnfBuilder, first_literals: list[int], second_literals: list[int]) -> list[int]:
        low_literals, high_literals = min_max_literals(builder, first_literals, second_literals, order)
        both = low_literals + high_literals
        return [both[position] for position in chosen]

    return _prove_cone(gates, first, second, outputs, expected, budget, proved_forms, full_cone, (order, positions))


def prove_same(gates: dict, word: Word, outputs: Bits, budget: Budget) -> BlockCheck:
    """Prove that signals ``outputs`` equal the bits of ``word`` for every value of the word (cone cut at it).

    >>> from sortcheck.model import Gate
    >>> gates = {"n": Gate("n", "not", ("a[0]",)), "nn": Gate("nn", "nor", ("n", "n"))}
    >>> prove_same(gates, single(("a[0]",)), ("nn",), Budget()).proved
    True
    """
    return _prove_cone(gates, word, (), outputs, lambda builder, first, second: list(first), budget, None, False,
                       "same")


def _prove_cone(gates: dict, first: Word, second: Word, outputs: Bits, expected, budget: Budget,
                proved_forms: dict | None, full_cone: bool, spec_key: object) -> BlockCheck:
    started = time.perf_counter()
    builder = CnfBuilder()
    literals: dict = {}
    if full_cone:
        found, leaves = cone(gates, (*(bits[0] for bits in (*first, *second)), *outputs), set())
        canonical = None
    else:
        found, leaves = cone(gates, outputs, signals_of(first) | signals_of(second))
        canonical = (spec_key, canonical_form(found, leaves, first, second, outputs))
        if proved_forms is not None and canonical in proved_forms:
            return BlockCheck(True, "shared", len(found), time.perf_counter() - started, canonical)
        for tag, word in (("a", first), ("b", second)):
            for i, bits in enumerate(word):
                variable = builder.variable((tag, i))
                literals.update({signal: variable for signal in bits if signal not in literals})
    literals.update({leaf: builder.variable(("leaf", leaf)) for leaf in leaves})
    _encode(builder, found, literals)
    first_literals = [_literal(literals, builder, bits[0]) for bits in first]
    second_literals = [_literal(literals, builder, bits[0]) for bits in second]
    wanted = expected(builder, first_literals, second_literals)
    differences = [builder.xor2(_literal(literals, builder, bit), want) for bit, want in zip(outputs, wanted)]
    differences = [literal for literal in differences if literal != builder.false]
    if not differences:  # the cone hashed onto the wanted function itself
        return BlockCheck(True, "hashing", len(found), time.perf_counter() - started, canonical)
    how = "sat-full-cone" if full_cone else "sat"
    model = solve_within(builder.clauses + [differences], budget)
    if model is None:
        return BlockCheck(True, how, len(found), time.perf_counter() - started, canonical)
    true = {literal for literal in model if literal > 0}

    def value(word: list[int]) -> int:
        return sum(1 << i for i, literal in enumerate(word) if (abs(literal) in true) != (literal < 0))

    witness = (value(first_literals), value(second_literals))
    return BlockCheck(False, how, len(found), time.perf_counter() - started, canonical, witness)
