"""Input words of gate circuits for the explain stage: raw patterns, values, and bit-parallel failure flags.

The explain modules for gate circuits (:mod:`sortcheck.explain.gate_minimal`,
:mod:`sortcheck.explain.gate_repair`) handle inputs as *raw* words: the
unsigned bit patterns the circuit reads (two's complement for signed
properties).  :class:`CircuitFailures` says for many raw inputs at once which
ones the circuit gets wrong, evaluating 64 inputs per machine word with the
``simulate`` engine's compiled program.
"""

from __future__ import annotations

import random
from typing import Sequence

import numpy as np
from pysat.solvers import Solver

from sortcheck.engines.base import Budget
from sortcheck.engines.solving import solve_interruptibly

from sortcheck.engines.gates.simulation import compile_circuit, evaluate_rows, new_table
from sortcheck.engines.gates.word_blocks import ints_to_limbs, limbs_to_keys, limbs_to_rows, rows_to_limbs
from sortcheck.engines.gates.word_checks import failing_lanes
from sortcheck.model import GateCircuit, Property

#: Inputs evaluated per call of the compiled program.
CHUNK = 1 << 14

Raw = tuple[int, ...]


def to_raw(values: Sequence[int], width: int) -> Raw:
    """The bit patterns of values (two's complement for negative ones).

    >>> to_raw((-1, 2), 3)
    (7, 2)
    """
    mask = (1 << width) - 1
    return tuple(value & mask for value in values)


def to_values(raw: Sequence[int], width: int, signed: bool) -> tuple[int, ...]:
    """The values of bit patterns, read as two's complement when ``signed``.

    >>> to_values((7, 2), 3, True), to_values((7, 2), 3, False)
    ((-1, 2), (7, 2))
    """
    if not signed:
        return tuple(raw)
    return tuple(word - (1 << width) if word >> (width - 1) else word for word in raw)


class CircuitFailures:
    """Which raw inputs a circuit gets wrong, evaluated bit-parallel.

    Examples
    --------
    >>> from sortcheck.model import Gate, OutputWord, Sorts, Word
    >>> swapped = GateCircuit((Word("a", 1), Word("b", 1)),
    ...     (Gate("lo", "or", ("a[0]", "b[0]")), Gate("hi", "and", ("a[0]", "b[0]"))),
    ...     (OutputWord("y0", ("lo",)), OutputWord("y1", ("hi",))))
    >>> CircuitFailures(swapped, Sorts()).failing([(0, 0), (1, 0), (0, 1), (1, 1)]).tolist()
    [False, True, True, False]
    """

    def __init__(self, circuit: GateCircuit, prop: Property):
        self.circuit, self.prop = circuit, prop
        self.program = compile_circuit(circuit)
        self.words, self.width = circuit.words, circuit.width

    def failing(self, inputs: Sequence[Sequence[int]]) -> np.ndarray:
        """One boolean per raw input: whether the circuit breaks the property on it."""
        flags = [self._chunk(list(inputs[start:start + CHUNK])) for start in range(0, len(inputs), CHUNK)]
        return np.concatenate(flags) if flags else np.zeros(0, dtype=bool)

    def failing_array(self, inputs: np.ndarray) -> np.ndarray:
        """Like :meth:`failing`, for raw inputs as a ``(count, words)`` ``uint64`` array (words of at most 64 bits)."""
        flags = [self._limbs(inputs[start:start + CHUNK, :, None]) for start in range(0, len(inputs), CHUNK)]
        return np.concatenate(flags) if flags else np.zeros(0, dtype=bool)

    def _chunk(self, inputs: list[Sequence[int]]) -> np.ndarray:
        return self._limbs(ints_to_limbs([tuple(row) for row in inputs], self.words, self.width))

    def _limbs(self, limbs: np.ndarray) -> np.ndarray:
        count = len(limbs)
        lanes = -(-count // 64) * 64
        if lanes != count:
            limbs = np.concatenate([limbs, np.zeros((lanes - count, *limbs.shape[1:]), dtype=np.uint64)])
        rows = limbs_to_rows(limbs, self.width)
        table = new_table(self.program, rows.shape[1])
        output_rows = evaluate_rows(self.program, table, rows)
        outputs = rows_to_limbs(output_rows, len(self.circuit.outputs), self.width)
        signed = self.prop.signed
        keys_in = limbs_to_keys(limbs, self.width, signed)
        keys_out = limbs_to_keys(outputs, self.width, signed)
        return np.asarray(failing_lanes(self.prop, keys_in, keys_out, self.width)[:count], dtype=bool)

    def __call__(self, raw: Sequence[int]) -> bool:
        """Whether one raw input fails (the ``still_fails`` predicate of the shrink passes)."""
        return bool(self.failing([raw])[0])

    def batch(self, candidates: Sequence[Sequence[int]]) -> np.ndarray:
        """Failure flags for many candidates at once (what the shrink passes call when it exists)."""
        return self.failing(candidates)


def random_raw_inputs(words: int, width: int, count: int, seed: int) -> list[Raw]:
    """``count`` seeded random raw inputs, half of them drawn from few distinct values (duplicates matter).

    >>> len(random_raw_inputs(3, 4, 10, 0)), all(0 <= w < 16 for row in random_raw_inputs(3, 4, 10, 0) for w in row)
    (10, True)
    """
    rng = random.Random(seed)
    rows = []
    for number in range(count):
        if number % 2:
            palette = [rng.getrandbits(width) for _ in range(2)]
            rows.append(tuple(rng.choice(palette) for _ in range(words)))
        else:
            rows.append(tuple(rng.getrandbits(width) for _ in range(words)))
    return rows


def solve_in_budget(solver: Solver, assumptions: Sequence[int], budget: Budget) -> bool | None:
    """One call of an incremental python-sat solver: True, False, or None when the budget ran out first.

    >>> with Solver(name="glucose4", bootstrap_with=[[1, 2], [-1]]) as solver:
    ...     solve_in_budget(solver, [-2], Budget()), solve_in_budget(solver, [], Budget.of(5))
    (False, True)
    """
    remaining = budget.remaining()
    if remaining is not None and remaining <= 0 or budget.expired():
        return None
    return solve_interruptibly(solver, assumptions, remaining)
