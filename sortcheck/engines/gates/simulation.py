"""The ``simulate`` engine: gate circuits evaluated bit-parallel on many inputs at once.

A circuit is compiled once into a :class:`GateProgram`: every signal gets a
row of a table of ``uint64`` words (64 inputs per word), and the gates
become a list of instructions on row numbers: one numpy call (two for a
negated op, three for a mux) evaluates a gate on every input of a block.
Rows are reused once a signal is dead, so the table of a big circuit stays
small enough for the cache.

Up to a limit on the number of input bits (default 32) the engine evaluates
every input and so proves or refutes the property for this circuit; beyond
it, it tries corner cases and seeded random inputs, which can only refute.
Every counterexample is recomputed with :meth:`GateCircuit.evaluate` and
re-checked with :func:`sortcheck.model.semantics.violation`.
"""

from __future__ import annotations

import time
from dataclasses import dataclass

import numpy as np

from sortcheck.engines.base import Budget, Counterexample, Options, Status, StopReason, Verdict, refused_verdict
from sortcheck.engines.gates.word_blocks import (ExhaustiveInputs, SampledInputs, WordBlock, limbs_to_keys,
                                           rows_to_limbs)
from sortcheck.engines.gates.word_checks import failing_lanes
from sortcheck.errors import PropertyError
from sortcheck.model import ComparatorNetwork, GateCircuit, Netlist, Property, bit_name, check_fits
from sortcheck.model.semantics import violation

ALL_ONES = np.uint64(0xFFFFFFFFFFFFFFFF)
#: Row of the constant 0 and of the constant 1; input bits follow from row 2.
FIRST_INPUT_ROW = 2
_UFUNCS = {"and": (np.bitwise_and, False), "nand": (np.bitwise_and, True), "or": (np.bitwise_or, False),
           "nor": (np.bitwise_or, True), "xor": (np.bitwise_xor, False), "xnor": (np.bitwise_xor, True)}

#: Default limit on exhaustive simulation: inputs of at most this many bits (2^32 inputs).
MAX_EXHAUSTIVE_BITS = 32
#: Words per block are capped so that a block has at most 64 times this many inputs ...
MAX_BLOCK_WORDS = 2048
#: ... and so that the signal table stays within this many bytes (it should stay in cache).
TABLE_BYTES = 1 << 24
#: Gate evaluations (gates times inputs) the default sample count aims at: about a second on one core.
SAMPLE_GATE_EVALUATIONS = 1 << 29
MIN_SAMPLES, MAX_SAMPLES = 1 << 14, 1 << 20
SEED = 20240601

#: One instruction: (op, ufunc or None, negate, output row, input rows).
Instruction = tuple[str, "np.ufunc | None", bool, int, tuple[int, ...]]


@dataclass(frozen=True, eq=False)
class GateProgram:
    """A gate circuit compiled to row numbers of a signal table; see :func:`compile_circuit`."""

    rows: int
    input_bits: int
    instructions: tuple[Instruction, ...]
    outputs: np.ndarray  # (output words, width) rows of the output bits
    gates: int


def _last_reads(circuit: GateCircuit) -> dict:
    """For every signal, the position in ``gate_order`` of the last gate that reads it (outputs: never freed)."""
    last: dict = {}
    for position, gate in enumerate(circuit.gate_order):
        for source in gate.inputs:
            last[source] = position
    for word in circuit.outputs:
        for bit in word.bits:
            last[bit] = len(circuit.gates)
    return last


def compile_circuit(circuit: GateCircuit) -> GateProgram:
    """Number the signals' rows and list one instruction per gate, in ``gate_order``.

    A row is reused once the last gate reading its signal has run (never for
    the constants or the output bits, and never as the output of a gate that
    reads it), so the table holds only the signals live at one time.

    >>> from sortcheck.model import Gate, OutputWord, Word
    >>> circuit = GateCircuit((Word("a", 1), Word("b", 1)),
    ...     (Gate("t", "xor", ("a[0]", "b[0]")), Gate("hi", "or", ("a[0]", "b[0]")),
    ...      Gate("lo", "and", ("a[0]", "t"))),
    ...     (OutputWord("y0", ("lo",)), OutputWord("y1", ("hi",))))
    >>> program = compile_circuit(circuit)
    >>> program.rows, [(op, out, ins) for op, _, _, out, ins in program.instructions], program.outputs.tolist()
    (6, [('xor', 4, (2, 3)), ('or', 5, (2, 3)), ('and', 3, (2, 4))], [[3], [5]])
    """
    row: dict = {0: 0, 1: 1}
    for word in circuit.inputs:
        for index in range(word.width):
            row[bit_name(word.name, index)] = len(row)
    last, free, size = _last_reads(circuit), [], len(row)
    instructions = []
    for position, gate in enumerate(circuit.gate_order):
        if free:
            target = free.pop()
        else:
            target, size = size, size + 1
        ufunc, negate = _UFUNCS.get(gate.op, (None, False))
        instructions.append((gate.op, ufunc, negate, target, tuple(row[source] for source in gate.inputs)))
        row[gate.out] = target
        for source in dict.fromkeys(gate.inputs):
            if isinstance(source, str) and last[source] == position:
                free.append(row[source])
        if gate.out not in last:  # never read: its row is free at once
            free.append(target)
    outputs = np.array([[row[bit] for bit in word.bits] for word in circuit.outputs], dtype=np.intp)
    return GateProgram(size, sum(circuit.widths), tuple(instructions), outputs, len(circuit.gates))


def run_program(program: GateProgram, rows: list[np.ndarray]) -> None:
    """Evaluate every gate; ``rows`` are the table's rows, constants and inputs filled."""
    for op, ufunc, negate, out, ins in program.instructions:
        target = rows[out]
        if ufunc is not None:
            ufunc(rows[ins[0]], rows[ins[1]], out=target)
            for extra in ins[2:]:
                ufunc(target, rows[extra], out=target)
            if negate:
                np.invert(target, out=target)
        elif op == "not":
            np.invert(rows[ins[0]], out=target)
        else:  # mux: when0 ^ ((when0 ^ when1) & select)
            when0 = rows[ins[1]]
            np.bitwise_xor(when0, rows[ins[2]], out=target)
            np.bitwise_and(target, rows[ins[0]], out=target)
            np.bitwise_xor(target, when0, out=target)


def new_table(program: GateProgram, block_words: int) -> np.ndarray:
    """A signal table with the constant rows filled."""
    table = np.empty((program.rows, block_words), dtype=np.uint64)
    table[0], table[1] = 0, ALL_ONES
    return table


def evaluate_rows(program: GateProgram, table: np.ndarray, input_rows: np.ndarray) -> np.ndarray:
    """Bit rows ``(output words * width, words)`` of the outputs for the input bit rows given."""
    table[FIRST_INPUT_ROW:FIRST_INPUT_ROW + program.input_bits] = input_rows
    run_program(program, list(table))
    return table[program.outputs.ravel()]


def block_words_for(program: GateProgram) -> int:
    """Words per block: at most :data:`MAX_BLOCK_WORDS`, and a table of at most :data:`TABLE_BYTES`."""
    fit = max(1, TABLE_BYTES // (8 * program.rows))
    return 1 << min(MAX_BLOCK_WORDS.bit_length() - 1, fit.bit_length() - 1)


def default_samples(program: GateProgram) -> int:
    """Random inputs for about a second of simulation: fewer for bigger circuits, the same on every machine.

    >>> default_samples(GateProgram(10, 2, (), np.zeros((0, 0), dtype=np.intp), 100000))
    16384
    >>> default_samples(GateProgram(10, 2, (), np.zeros((0, 0), dtype=np.intp), 1000))
    536870
    """
    return min(MAX_SAMPLES, max(MIN_SAMPLES, SAMPLE_GATE_EVALUATIONS // max(1, program.gates)))


@dataclass(frozen=True)
class Outcome:
    """What one run over a source found: inputs evaluated, blocks, the first failing (block, lane), time-out."""

    evaluated: int
    blocks: int
    failure: tuple[WordBlock, int] | None
    timed_out: bool


def simulate(circuit: GateCircuit, program: GateProgram, prop: Property, source: ExhaustiveInputs | SampledInputs,
             budget: Budget, phase: str = "simulate") -> Outcome:
    """Run every block of ``source`` through the circuit, stopping at the first failing lane or the deadline."""
    words, width = len(circuit.outputs), circuit.width
    table = new_table(program, source.block_words)
    evaluated = 0
    for number in range(source.blocks):
        if budget.expired():
            return Outcome(evaluated, number, None, True)
        block = source.block(number)
        if block.rows.shape[1] != table.shape[1]:
            table = new_table(program, block.rows.shape[1])
        output_rows = evaluate_rows(program, table, block.rows)
        outputs = limbs_to_keys(rows_to_limbs(output_rows, words, width), width, prop.signed)
        hits = np.flatnonzero(failing_lanes(prop, block.keys, outputs, width)[:block.valid])
        if hits.size:
            return Outcome(evaluated + int(hits[0]) + 1, number + 1, (block, int(hits[0])), False)
        evaluated += block.valid
        budget.report(evaluated, source.total, phase)
    return Outcome(evaluated, source.blocks, None, False)


def _as_signed(values: list[int] | tuple[int, ...], width: int) -> tuple[int, ...]:
    return tuple(value - (1 << width) if value >> (width - 1) else value for value in values)


def counterexample_of(circuit: GateCircuit, prop: Property, raw_input: tuple[int, ...]) -> Counterexample:
    """The counterexample for an input flagged by simulation, recomputed and re-checked by the reference.

    Raises
    ------
    AssertionError
        When the reference semantics do not confirm the failure (an internal error).
    """
    width = circuit.width
    values = _as_signed(raw_input, width) if prop.signed else tuple(raw_input)
    output = tuple(circuit.evaluate(list(values)))
    if prop.signed:
        output = _as_signed(output, width)
    reason = violation(prop, values, output, key_bits_width=width)
    if reason is None:
        raise AssertionError(f"internal error: input {values} was flagged but meets {prop.describe()}")
    return Counterexample(values, output, "words", reason)


def _fits(circuit: GateCircuit, prop: Property) -> str | None:
    try:
        check_fits(prop, circuit, None)
    except PropertyError as error:
        return error.message
    return None


def quick_refute(circuit: GateCircuit, prop: Property, budget: Budget | None = None, samples: int = 1 << 14,
                 seed: int = SEED) -> Counterexample | None:
    """Corner cases and ``samples`` random inputs; the first failing one, or None (which proves nothing).

    Meant to run before a complete engine.  Raises :class:`PropertyError`
    when the property does not fit the circuit.

    Examples
    --------
    >>> from sortcheck.model import Gate, OutputWord, Sorts, Word
    >>> broken = GateCircuit((Word("a", 1), Word("b", 1)),
    ...     (Gate("lo", "or", ("a[0]", "b[0]")), Gate("hi", "and", ("a[0]", "b[0]"))),
    ...     (OutputWord("y0", ("lo",)), OutputWord("y1", ("hi",))))
    >>> example = quick_refute(broken, Sorts())
    >>> example.input, example.output, example.violation
    ((1, 0), (1, 0), 'outputs 0 and 1 are out of order (1 then 0)')
    """
    check_fits(prop, circuit, None)
    program = compile_circuit(circuit)
    source = SampledInputs(circuit.words, circuit.width, prop, seed, samples, block_words_for(program))
    outcome = simulate(circuit, program, prop, source, budget or Budget(), "sample")
    if outcome.failure is None:
        return None
    block, lane = outcome.failure
    return counterexample_of(circuit, prop, source.input_of(block, lane))


def _power(bits: int) -> str:
    return f"2^{bits} = {1 << bits:,}" if bits > 10 else f"{1 << bits:,}"


class SimulateEngine:
    """Bit-parallel simulation of gate circuits: exhaustive up to a size, sampling beyond.

    Parameters
    ----------
    max_exhaustive_bits : int
        Circuits with at most this many input bits (words times width) are
        evaluated on every input, which proves or refutes; above it the
        engine samples and can only refute.  At most 62.
    samples : int or None
        Random inputs beyond the corner cases when sampling; None for
        :func:`default_samples` (about a second of simulation).
    seed : int
        Seed of the random inputs: the same circuit gets the same inputs,
        and the same counterexample, on every run.

    Examples
    --------
    >>> from sortcheck.model import Gate, OutputWord, Sorts, Word
    >>> circuit = GateCircuit((Word("a", 1), Word("b", 1)),
    ...     (Gate("lo", "and", ("a[0]", "b[0]")), Gate("hi", "or", ("a[0]", "b[0]"))),
    ...     (OutputWord("y0", ("lo",)), OutputWord("y1", ("hi",))))
    >>> verdict = SimulateEngine().check(circuit, Sorts(), Budget())
    >>> verdict.status.value, verdict.scope
    ('proved', 'every input of 2 words of 1 bits: all 4 inputs were evaluated')
    """

    name = "simulate"
    cooperative = True

    def __init__(self, max_exhaustive_bits: int = MAX_EXHAUSTIVE_BITS, samples: int | None = None,
                 seed: int = SEED):
        if not 0 <= max_exhaustive_bits <= 62:
            raise ValueError("max_exhaustive_bits must lie in 0..62")
        self.max_exhaustive_bits, self.samples, self.seed = max_exhaustive_bits, samples, seed

    def refusal(self, netlist: Netlist, prop: Property, options: Options = Options()
                ) -> tuple[StopReason, str] | None:
        if isinstance(netlist, ComparatorNetwork):
            return StopReason.UNSUPPORTED, "simulate checks gate circuits; comparator networks have enumerate"
        misfit = _fits(netlist, prop)
        if misfit is not None:
            return StopReason.UNSUPPORTED, misfit
        return None

    def check(self, netlist: Netlist, prop: Property, budget: Budget, options: Options = Options()) -> Verdict:
        started = time.perf_counter()
        refused = refused_verdict(self, netlist, prop, options, started)
        if refused is not None:
            return refused
        circuit: GateCircuit = netlist  # type: ignore[assignment]
        program = compile_circuit(circuit)
        if circuit.words * circuit.width <= self.max_exhaustive_bits:
            return self._exhaustive(circuit, program, prop, budget, started)
        return self._sampled(circuit, program, prop, budget, started)

    def _exhaustive(self, circuit: GateCircuit, program: GateProgram, prop: Property, budget: Budget,
                    started: float) -> Verdict:
        words, width, bits = circuit.words, circuit.width, circuit.words * circuit.width
        block_words = block_words_for(program)
        evaluated, blocks = 0, 0
        if bits > 20:  # a long enumeration: try the corner cases first
            corners = SampledInputs(words, width, prop, self.seed, 0, block_words)
            outcome = simulate(circuit, program, prop, corners, budget, "corner cases")
            evaluated, blocks = outcome.evaluated, outcome.blocks
            if outcome.failure is not None:
                return self._refuted(circuit, prop, corners, outcome, "a corner case", started)
        source = ExhaustiveInputs(words, width, prop.signed, block_words)
        outcome = simulate(circuit, program, prop, source, budget, "simulate")
        figures = self._figures("exhaustive", source.total, evaluated + outcome.evaluated,
                                blocks + outcome.blocks, started)
        if outcome.failure is not None:
            return self._refuted(circuit, prop, source, outcome, "exhaustive simulation in input index order",
                                 started, figures)
        if outcome.timed_out:
            scope = (f"{outcome.evaluated:,} of {source.total:,} inputs of {words} words of {width} bits passed "
                     f"before the time budget ran out; nothing is proved")
            return Verdict(Status.UNKNOWN, self.name, prop, StopReason.TIMEOUT, scope, figures["seconds"], None,
                           figures)
        scope = f"every input of {words} words of {width} bits: all {_power(bits)} inputs were evaluated"
        return Verdict(Status.PROVED, self.name, prop, StopReason.COVERED, scope, figures["seconds"], None,
                       figures)

    def _sampled(self, circuit: GateCircuit, program: GateProgram, prop: Property, budget: Budget,
                 started: float) -> Verdict:
        words, width, bits = circuit.words, circuit.width, circuit.words * circuit.width
        samples = self.samples if self.samples is not None else default_samples(program)
        source = SampledInputs(words, width, prop, self.seed, samples, block_words_for(program))
        outcome = simulate(circuit, program, prop, source, budget, "sample")
        figures = self._figures("sampling", source.total, outcome.evaluated, outcome.blocks, started)
        figures.update(seed=self.seed, corner_cases=source.corner_count)
        if outcome.failure is not None:
            return self._refuted(circuit, prop, source, outcome, f"sampling with seed {self.seed}", started,
                                 figures)
        limit = (f"the {bits} input bits ({words} words of {width} bits) are beyond exhaustive simulation's "
                 f"limit of {self.max_exhaustive_bits}")
        if outcome.timed_out:
            scope = (f"{outcome.evaluated:,} random and corner-case inputs passed before the time budget ran out; "
                     f"nothing is proved ({limit})")
            return Verdict(Status.UNKNOWN, self.name, prop, StopReason.TIMEOUT, scope, figures["seconds"], None,
                           figures)
        scope = f"{outcome.evaluated:,} random and corner-case inputs passed; nothing is proved ({limit})"
        return Verdict(Status.UNKNOWN, self.name, prop, StopReason.SIZE_LIMIT, scope, figures["seconds"], None,
                       figures)

    def _refuted(self, circuit: GateCircuit, prop: Property, source: ExhaustiveInputs | SampledInputs,
                 outcome: Outcome, how: str, started: float, figures: dict | None = None) -> Verdict:
        block, lane = outcome.failure  # type: ignore[misc]
        found = counterexample_of(circuit, prop, source.input_of(block, lane))
        if figures is None:
            figures = self._figures("corner cases", source.total, outcome.evaluated, outcome.blocks, started)
        scope = f"this input of {circuit.words} words of {circuit.width} bits breaks the property (found by {how})"
        return Verdict(Status.REFUTED, self.name, prop, StopReason.COUNTEREXAMPLE, scope, figures["seconds"],
                       found, figures)

    @staticmethod
    def _figures(mode: str, total: int, evaluated: int, blocks: int, started: float) -> dict:
        seconds = time.perf_counter() - started
        return {"mode": mode, "vectors_total": total, "vectors_evaluated": evaluated, "blocks": blocks,
                "seconds": seconds, "vectors_per_second": evaluated / seconds if seconds > 0 else None}
