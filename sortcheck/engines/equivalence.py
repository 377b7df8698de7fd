"""Whether two netlists compute the same function, and an input that tells them apart if not.

Two comparator networks on the same channels are compared on 0-1 inputs: a
comparator network commutes with every monotone map of values (a comparator
of thresholded values is the threshold of the comparator), so if two networks
agree on every 0-1 input, then for every threshold ``v`` their outputs'
``[y >= v]`` vectors agree on every input, and so do their outputs.  One SAT
call on a miter of the two networks' 0-1 circuits settles it for inputs of
any values.

Two gate circuits with the same input and output words are compared bit for
bit: random simulation first (bit-parallel), then SAT sweeping
(:mod:`sortcheck.engines.gates.sweeping.equal_outputs`: internal signals of the
second proved equal to signals of the first, in topological order, so two
netlists of one design are compared in many small SAT calls), and if that is
left undecided, a miter (the two circuits on shared input variables,
structurally hashed into one CNF, and "some output bit differs") solved by SAT.  When both circuits lift to comparator networks
(:mod:`sortcheck.engines.gates.lifting.engine`: each proved equal to a
comparator network), the two networks are compared on 0-1 inputs instead,
which scales to widths a miter never reaches.  Sweeping is tried before
lifting when the two circuits are alike (most signals of the second are
computed by the first too, as in two netlists of one design), after it
otherwise.  A network
and a gate circuit are compared at the circuit's width, the network lowered
to gates first.

Examples
--------
>>> from sortcheck.model import ComparatorNetwork
>>> same = equivalent(ComparatorNetwork(3, ((0, 1), (1, 2), (0, 1))), ComparatorNetwork(3, ((1, 2), (0, 1), (1, 2))),
...                   Budget())
>>> same.status.value, same.method
('proved', '0-1 miter (SAT)')
>>> other = equivalent(ComparatorNetwork(3, ((0, 1),)), ComparatorNetwork(3, ((1, 2),)), Budget())
>>> other.status.value, other.outputs[0] != other.outputs[1]
('refuted', True)
"""

from __future__ import annotations

import dataclasses
import time
from dataclasses import dataclass, field
from typing import Any, Sequence

import numpy as np

from sortcheck.engines.base import Budget, Status
from sortcheck.engines.gates.cnf import CnfBuilder, encode_circuit
from sortcheck.engines.gates.simulation import block_words_for, compile_circuit, evaluate_rows, new_table
from sortcheck.engines.gates.lifting.engine import lift
from sortcheck.engines.gates.sweeping.equal_outputs import CircuitPair, outputs_equal
from sortcheck.engines.solving import Interrupted, solve_within
from sortcheck.errors import UsageError
from sortcheck.model import ComparatorNetwork, GateCircuit, Netlist, Sorts
from sortcheck.model.lowering import lower_network

#: Networks on more channels than this are first checked for sorting (see :func:`_both_sort`).
SORTER_SHORTCUT_CHANNELS = 12

#: Circuits at least this alike (share of the second's signals the first computes too) are swept before lifting.
ALIKE = 0.5

#: Seconds SAT sweeping of alike circuits may take before lifting is tried (then sweeping again, unlimited).
SWEEP_FIRST_SECONDS = 20.0

#: Random simulation rounds (blocks of bit-parallel inputs) before the miter is solved.
SIMULATION_BLOCKS = 4


@dataclass(frozen=True)
class Equivalence:
    """The answer of an equivalence check.

    ``status`` is proved (the two compute the same function on every input in
    scope), refuted (``input`` tells them apart; ``outputs`` are what each
    computes on it) or unknown (the budget ran out).
    """

    status: Status
    method: str
    scope: str
    seconds: float
    input: tuple[int, ...] | None = None
    outputs: tuple[tuple[int, ...], tuple[int, ...]] | None = None
    figures: dict[str, Any] = field(default_factory=dict)

    def to_json(self) -> dict[str, Any]:
        data: dict[str, Any] = {"status": {"proved": "equal", "refuted": "different"}.get(self.status.value,
                                                                                       "unknown"),
                                "method": self.method, "scope": self.scope, "seconds": round(self.seconds, 6)}
        if self.input is not None:
            data["input"] = list(self.input)
            data["outputs"] = [list(values) for values in self.outputs or ()]
        data["figures"] = self.figures
        return data


def _shape(netlist: Netlist) -> str:
    if isinstance(netlist, ComparatorNetwork):
        return f"a comparator network of {netlist.channels} channels"
    widths = sorted(set(netlist.widths))
    width = f"{widths[0]} bits" if len(widths) == 1 else f"widths {list(netlist.widths)}"
    outputs = sorted({word.width for word in netlist.outputs})
    out_width = f"{outputs[0]} bits" if len(outputs) == 1 else f"widths {[w.width for w in netlist.outputs]}"
    return f"a gate circuit of {netlist.words} input words of {width} and {len(netlist.outputs)} output words of " \
           f"{out_width}"


def _mismatch(first: Netlist, second: Netlist, sources: Sequence[str]) -> UsageError:
    return UsageError(f"{_shape(second)}, but {sources[0]} is {_shape(first)}: they cannot compute the same "
                      "function", sources[1])


def comparable(first: Netlist, second: Netlist, signed: bool = False, sources: Sequence[str] = ("first", "second")
               ) -> tuple[Netlist, Netlist]:
    """The two netlists in comparable form (a network lowered when beside a gate circuit); UsageError if none."""
    if isinstance(first, ComparatorNetwork) and isinstance(second, ComparatorNetwork):
        if first.channels != second.channels:
            raise _mismatch(first, second, sources)
        return first, second
    if isinstance(first, ComparatorNetwork) or isinstance(second, ComparatorNetwork):
        circuit = second if isinstance(first, ComparatorNetwork) else first
        network = first if isinstance(first, ComparatorNetwork) else second
        if network.channels != circuit.words or len(set(circuit.widths)) != 1 \
                or len(circuit.outputs) != circuit.words or {w.width for w in circuit.outputs} != {circuit.width}:
            raise _mismatch(first, second, sources)
        lowered = lower_network(network, circuit.width, style="mux", signed=signed)
        return (lowered, circuit) if network is first else (circuit, lowered)
    if first.widths != second.widths or [w.width for w in first.outputs] != [w.width for w in second.outputs]:
        raise _mismatch(first, second, sources)
    return first, second


def equivalent(first: Netlist, second: Netlist, budget: Budget, signed: bool = False,
               sources: Sequence[str] = ("first", "second")) -> Equivalence:
    """Whether ``first`` and ``second`` compute the same function; see the module text.

    Raises
    ------
    UsageError
        When the two do not have the same input and output words.
    """
    started = time.perf_counter()
    lowered = isinstance(first, ComparatorNetwork) != isinstance(second, ComparatorNetwork)
    first, second = comparable(first, second, signed, sources)
    if isinstance(first, ComparatorNetwork):
        return _networks(first, second, budget, started)  # type: ignore[arg-type]
    found = _simulate(first, second, budget)  # type: ignore[arg-type]
    if found is not None:
        return _differ(first, second, found, "random simulation", started, {"simulated_blocks": SIMULATION_BLOCKS})
    pair = CircuitPair.of(first, second)  # type: ignore[arg-type]
    alike = pair.likeness >= ALIKE
    if alike:  # two netlists of one design: sweeping is quick, unless they are large and lifting is quicker
        swept = _swept(first, second, budget.share(SWEEP_FIRST_SECONDS), started, pair)  # type: ignore[arg-type]
        if swept is not None:
            return swept
    lifted = _lifted(first, second, signed, budget)  # type: ignore[arg-type]
    if lifted is not None:
        answer = _networks(*lifted, budget, started)
        if answer.status is not Status.REFUTED or _differs_as_words(first, second, answer.input, signed):
            return _as_lifted(first, second, answer, lifted, signed, started, lowered)
    if not budget.expired():
        fresh = CircuitPair.of(first, second) if alike else pair  # a first sweep grew the graphs: start anew
        swept = _swept(first, second, budget, started, fresh)  # type: ignore[arg-type]
        if swept is not None:
            return swept
    return _miter(first, second, budget, started)  # type: ignore[arg-type]


def _swept(first: GateCircuit, second: GateCircuit, budget: Budget, started: float, pair: CircuitPair
           ) -> Equivalence | None:
    """The answer of SAT sweeping the second circuit into the first, or None when it was left undecided."""
    answer = outputs_equal(first, second, budget, pair)
    figures = {"sweep": answer.figures, "likeness": round(pair.likeness, 4)}
    if answer.status == "different":
        return _differ(first, second, _words_of(first, answer.input_bits), "SAT sweeping", started, figures)
    if answer.status == "equal":
        sweep = answer.figures["sweep"]
        scope = (f"the two circuits give the same output bits on every input of {first.words} words of widths "
                 f"{list(first.widths)} (all {sum(first.widths)} input bits free): proved by SAT sweeping "
                 f"({sweep['candidates_proved']} internal signals of the second proved equal to signals of the "
                 f"first, {sweep['sat_calls'] + sweep['window_calls']} SAT calls)")
        return Equivalence(Status.PROVED, "SAT sweeping", scope, time.perf_counter() - started, figures=figures)
    return None


def _lifted(first: GateCircuit, second: GateCircuit, signed: bool, budget: Budget
            ) -> tuple[ComparatorNetwork, ComparatorNetwork] | None:
    """The networks both circuits are (blocks proved to be min/max of whole words, inputs in place), or None."""
    networks = []
    for circuit in (first, second):
        if len(set(circuit.widths)) != 1 or budget.expired():
            return None
        lifting = lift(circuit, Sorts(signed=signed), budget)
        if lifting.network is None or lifting.input_channels is not None or lifting.order.key_bits is not None:
            return None
        networks.append(lifting.network)
    return networks[0], networks[1]


def _words_for(zero_one: Sequence[int], width: int, signed: bool) -> tuple[int, ...]:
    """0-1 values as words with the same order: 0 and 1, or -1 and 0 for 1-bit two's complement."""
    if signed and width == 1:
        return tuple(1 - value for value in zero_one)  # the word 1 is -1, below 0
    return tuple(zero_one)


def _differs_as_words(first: GateCircuit, second: GateCircuit, zero_one, signed: bool) -> bool:
    values = _words_for(zero_one, first.width, signed)
    return first.evaluate(values) != second.evaluate(values)


def _as_lifted(first: GateCircuit, second: GateCircuit, answer: Equivalence,
               networks: tuple[ComparatorNetwork, ComparatorNetwork], signed: bool, started: float,
               lowered: bool = False) -> Equivalence:
    """The answer about two lifted circuits (``lowered``: one of them is a given network, lowered to gates)."""
    method = f"{'lifted circuit' if lowered else 'lifted networks'}, {answer.method}"
    figures = {**answer.figures, "lifted_comparators": [networks[0].size, networks[1].size]}
    order = "two's complement" if signed else "unsigned"
    if answer.status is Status.REFUTED:
        return _differ(first, second, _words_for(answer.input, first.width, signed), method, started, figures)
    if answer.status is Status.UNKNOWN:
        return dataclasses.replace(answer, method=method, figures=figures, seconds=time.perf_counter() - started)
    proved = ("the gate circuit was proved equal to a comparator network" if lowered else
              "both circuits were proved equal to comparator networks")
    scope = (f"{proved} on every input of {first.words} words of {first.width} bits ({order} min/max; by SAT "
             f"sweeping or block by block), and the two networks compute the same function: {answer.scope}")
    return Equivalence(Status.PROVED, method, scope, time.perf_counter() - started, figures=figures)


def _network_outputs(builder: CnfBuilder, network: ComparatorNetwork, inputs: Sequence[int]) -> list[int]:
    """The output literals of ``network`` on 0-1 inputs: a comparator is an AND and an OR (hashed)."""
    wires = list(inputs)
    for a, b in network.comparators:
        wires[a], wires[b] = builder.and_([wires[a], wires[b]]), builder.or_([wires[a], wires[b]])
    return wires


def _networks(first: ComparatorNetwork, second: ComparatorNetwork, budget: Budget, started: float) -> Equivalence:
    if first.channels > SORTER_SHORTCUT_CHANNELS:
        sorted_answer = _both_sort(first, second, budget, started)
        if sorted_answer is not None:
            return sorted_answer
    return _network_miter(first, second, budget, started)


def _both_sort(first: ComparatorNetwork, second: ComparatorNetwork, budget: Budget, started: float
               ) -> Equivalence | None:
    """Settle two large networks through sorting: two sorters compute the same function (sorted order).

    A miter of two different sorting networks is as hard as proving that they
    sort, which the comparator engines do along the networks' structure.  So
    each is checked for ``sorts``: both proved means equal; one proved and the
    other refuted means different, told apart by the refuted one's
    counterexample.  Otherwise (neither sorts, or undecided) None: the miter decides.
    """
    from sortcheck.engines import check  # the registry imports this module

    verdicts = [check(network, Sorts(), timeout=budget.remaining()) for network in (first, second)]
    statuses = [verdict.status for verdict in verdicts]
    figures = {"sorts": [f"{verdict.status.value} by {verdict.engine}" for verdict in verdicts]}
    if statuses == [Status.PROVED, Status.PROVED]:
        scope = (f"both networks were proved to sort every input of {first.channels} channels "
                 f"({verdicts[0].engine}, {verdicts[1].engine}), so both compute the sorted order of any input")
        return Equivalence(Status.PROVED, "both proved to sort", scope, time.perf_counter() - started,
                           figures=figures)
    if Status.PROVED in statuses and Status.REFUTED in statuses:
        example = verdicts[statuses.index(Status.REFUTED)].counterexample
        return _differ(first, second, tuple(example.input), "one proved to sort, the other refuted", started,
                       figures)
    return None


def _network_miter(first: ComparatorNetwork, second: ComparatorNetwork, budget: Budget, started: float
                   ) -> Equivalence:
    builder = CnfBuilder()
    inputs = [builder.variable(("input", channel)) for channel in range(first.channels)]
    pairs = zip(_network_outputs(builder, first, inputs), _network_outputs(builder, second, inputs))
    differs = builder.or_(builder.xor2(a, b) for a, b in pairs)
    clauses = builder.clauses + [[differs]]
    method = "0-1 miter (SAT)"
    figures = {"variables": builder.pool.top, "clauses": len(clauses), "nodes_shared": builder.asked - builder.encoded}
    try:
        model = solve_within(clauses, budget)
    except Interrupted:
        return Equivalence(Status.UNKNOWN, method, "the time budget ran out before the SAT solver answered; nothing "
                           "is proved", time.perf_counter() - started, figures=figures)
    if model is None:
        scope = (f"the two networks give the same outputs on every 0-1 input of {first.channels} channels, hence "
                 "(comparator networks commute with monotone maps) on every input of any values")
        return Equivalence(Status.PROVED, method, scope, time.perf_counter() - started, figures=figures)
    true = set(literal for literal in model if literal > 0)
    values = tuple(int(variable in true) for variable in inputs)
    return _differ(first, second, values, method, started, figures)


def _simulate(first: GateCircuit, second: GateCircuit, budget: Budget, seed: int = 20261201) -> tuple[int, ...] | None:
    """An input found by random bit-parallel simulation on which the two circuits differ, or None."""
    programs = compile_circuit(first), compile_circuit(second)
    words = min(block_words_for(program) for program in programs)
    tables = [new_table(program, words) for program in programs]
    generator = np.random.default_rng(seed)
    for _ in range(SIMULATION_BLOCKS):
        if budget.expired():
            return None
        rows = generator.integers(0, 1 << 64, size=(programs[0].input_bits, words), dtype=np.uint64)
        outputs = [evaluate_rows(program, table, rows) for program, table in zip(programs, tables)]
        difference = np.bitwise_or.reduce(outputs[0] ^ outputs[1], axis=0)
        where = np.flatnonzero(difference)
        if where.size:
            column = int(where[0])
            word = int(difference[column])
            lane = (word & -word).bit_length() - 1  # the lowest differing lane
            bits = [(int(rows[row, column]) >> lane) & 1 for row in range(rows.shape[0])]
            return _words_of(first, bits)
    return None


def _words_of(circuit: GateCircuit, bits: Sequence[int]) -> tuple[int, ...]:
    values, position = [], 0
    for word in circuit.inputs:
        values.append(sum(bit << i for i, bit in enumerate(bits[position:position + word.width])))
        position += word.width
    return tuple(values)


def _miter(first: GateCircuit, second: GateCircuit, budget: Budget, started: float) -> Equivalence:
    builder = CnfBuilder()
    left = encode_circuit(builder, first)
    right = encode_circuit(builder, second, inputs=left.inputs)
    pairs = [(a, b) for word_a, word_b in zip(left.outputs, right.outputs) for a, b in zip(word_a, word_b)]
    differs = builder.or_(builder.xor2(a, b) for a, b in pairs)
    method = "miter (SAT)"
    figures = {"variables": builder.pool.top, "clauses": len(builder.clauses) + 1,
               "nodes_shared": builder.asked - builder.encoded}
    if differs == builder.false:
        scope = "the two circuits are structurally the same after hashing: every output bit is the same node"
        return Equivalence(Status.PROVED, "structural hashing", scope, time.perf_counter() - started, figures=figures)
    try:
        model = solve_within(builder.clauses + [[differs]], budget)
    except Interrupted:
        return Equivalence(Status.UNKNOWN, method, "the time budget ran out before the SAT solver answered; nothing "
                           "is proved", time.perf_counter() - started, figures=figures)
    if model is None:
        scope = (f"the two circuits give the same output bits on every input of {first.words} words of widths "
                 f"{list(first.widths)} (all {sum(first.widths)} input bits free)")
        return Equivalence(Status.PROVED, method, scope, time.perf_counter() - started, figures=figures)
    true = set(literal for literal in model if literal > 0)
    bits = [int(literal in true) for word in left.inputs for literal in word]
    return _differ(first, second, _words_of(first, bits), method, started, figures)


def _differ(first: Netlist, second: Netlist, values: tuple[int, ...], method: str, started: float,
            figures: dict[str, Any]) -> Equivalence:
    outputs = tuple(first.apply(list(values)) if isinstance(first, ComparatorNetwork) else first.evaluate(values))
    others = tuple(second.apply(list(values)) if isinstance(second, ComparatorNetwork) else second.evaluate(values))
    if outputs == others:  # the encoding and the evaluators disagree
        raise AssertionError(f"internal error: input {values} was reported to tell the netlists apart but does not")
    scope = "this input gives different outputs (both netlists were run on it)"
    return Equivalence(Status.REFUTED, method, scope, time.perf_counter() - started, values, (outputs, others),
                       figures)
