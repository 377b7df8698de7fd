"""Finding the comparator network a gate circuit computes, from what its signals compute.

Optimisation (synthesis, ABC, lookup-table mapping) dissolves the
compare-and-swap blocks of a sorter, but its signals still compute the same
words: the minimum and maximum of two words, or the comparison that chooses
between them.  :class:`NetworkDiscovery` finds them by simulation:

* the circuit is an and-inverter graph whose nodes carry signatures (values
  on biased random inputs); a table maps every signature, made false on
  pattern 0 by complementing when needed, to the nodes that have it, so a
  signal and its complement are found alike;
* the *current words* start as the input words; for every pair of current
  words, the signatures of the comparison ``[b < a]`` (and ``[a < b]``,
  which differs on ties) and of every bit of the minimum and the maximum are
  looked up;
* the pair whose evidence appears earliest in the circuit is taken as the
  next comparator, if its evidence is *strong* (an output bit beside the
  comparison, or two output bits); a pair with only its comparison, or only
  one output bit, in the circuit is taken only when no pair has strong
  evidence, since two comparisons of different words of a sorting network
  can be one function (and a comparator that rarely swaps on the patterns may
  show one bit); its minimum and maximum replace it among the current words
  (built as nodes of the *specification graph*, an and-inverter graph of the
  network found so far on the same inputs);
* this repeats until every output word of the circuit has the signatures of
  a distinct current word.

Signatures only suggest; :mod:`sortcheck.engines.gates.sweeping.sweep` then
proves the circuit equal to the network found, signal by signal.

>>> from sortcheck.model.families import merge_exchange
>>> from sortcheck.model.lowering import lower_network
>>> from sortcheck.engines.base import Budget
>>> from sortcheck.engines.gates.lifting.blocks import BlockOrder
>>> circuit = lower_network(merge_exchange(4), 3, style="xor")
>>> found = NetworkDiscovery(circuit, BlockOrder(), Budget()).run()
>>> found.blocks == [(0, 2, 4, 5), (1, 3, 6, 7), (4, 6, 8, 9), (5, 7, 10, 11), (9, 10, 12, 13)], found.outputs
(True, [8, 12, 13, 11])
"""

from __future__ import annotations

from dataclasses import dataclass, field

from sortcheck.engines.base import Budget
from sortcheck.engines.gates.lifting.blocks import BlockOrder
from sortcheck.engines.gates.sweeping.aig import AndInverterGraph, circuit_graph
from sortcheck.engines.gates.sweeping.signatures import PATTERNS, SEED, input_signatures
from sortcheck.model import GateCircuit

#: Output bits of a pair found in the circuit that make its evidence strong when its comparison is not found.
MIN_BIT_EVIDENCE = 2
#: A signature counts as evidence only when it is 1, and 0, on at least this many patterns.
MIN_EVIDENCE_PATTERNS = 16


@dataclass(frozen=True)
class Evidence:
    """Why a pair of current words looks like a comparator: the earliest circuit node with one of its
    signatures, how many of its signatures the circuit has, and which word is compared first."""

    position: int
    found: int
    first: int
    second: int
    strong: bool = True

    def rank(self) -> tuple[bool, int, int]:
        """Smaller is better: strong evidence first, then the earliest, then the most."""
        return (not self.strong, self.position, -self.found)


@dataclass
class Discovered:
    """What :meth:`NetworkDiscovery.run` found.

    ``blocks`` are ``(first, second, minimum, maximum)`` word numbers (inputs
    ``0..n-1``, each block adds two); ``outputs[k]`` is the word output word
    ``k`` has the signatures of (all None when ``failure`` says why not).
    """

    blocks: list[tuple[int, int, int, int]] = field(default_factory=list)
    outputs: list[int] | None = None
    failure: str | None = None


class NetworkDiscovery:
    """The search of the module text, on a circuit graph and a specification graph that it builds.

    Parameters
    ----------
    circuit : GateCircuit
        Input words of one width.
    order : BlockOrder
        How the comparators compare (unsigned, two's complement, key bits).
    budget : Budget
    patterns : int
        Simulated input patterns.
    """

    def __init__(self, circuit: GateCircuit, order: BlockOrder, budget: Budget, patterns: int = PATTERNS,
                 seed: int = SEED):
        self.circuit, self.order, self.budget = circuit, order, budget
        self.width = circuit.width
        signatures = input_signatures(circuit.words, self.width, patterns, seed)
        self.graph, self.literals = circuit_graph(circuit, signatures, patterns)
        self.spec = AndInverterGraph(patterns=self.graph.patterns)
        inputs = [self.spec.add_input(signature) for signature in signatures]
        self.words: list[tuple[int, ...]] = [tuple(inputs[k * self.width:(k + 1) * self.width])
                                             for k in range(circuit.words)]
        self.live: list[int] = list(range(circuit.words))
        self._index: dict[int, int] = {}  # made by run(), after any patterns learnt since
        self._evidence: dict[tuple[int, int], Evidence | None] = {}
        self._word_values: dict[int, list[int]] = {}
        #: A guard against a search that keeps finding comparators: more than every pair of words meeting
        #: n times over, or more than one per gate, is no network the circuit computes.
        self.max_blocks = max(circuit.words * circuit.words, len(circuit.gates))
        self.blocks: list[tuple[int, int, int, int]] = []
        #: The literal of every comparator's swap condition ``[second < first]``, in the specification graph.
        self.selects: list[int] = []

    def _signature_index(self) -> dict[int, int]:
        """The earliest AND node of the circuit graph with each normal signature."""
        index: dict[int, int] = {}
        graph = self.graph
        for node in range(1, len(graph)):
            if graph.fanins[node] is None:
                continue
            signature, _ = graph.normal(2 * node)
            if 0 < signature:
                index.setdefault(signature, node)
        return index

    def _normal(self, value: int) -> int:
        return value ^ self.spec.mask if value & 1 else value

    def _look(self, value: int) -> int | None:
        """The earliest circuit node with this signature or its complement, or None; also None for a
        signature that is 1 (or 0) on fewer than :data:`MIN_EVIDENCE_PATTERNS` patterns, which two
        different functions share too easily (a comparison that is rarely true, say)."""
        normal = self._normal(value)
        ones = normal.bit_count()
        if min(ones, self.spec.patterns - ones) < MIN_EVIDENCE_PATTERNS:
            return None
        return self._index.get(normal)

    # --- evidence -----------------------------------------------------------------------------

    def _bits(self, word: int) -> list[int]:
        """The signatures of a word's bits (cached: the search adds no patterns)."""
        cached = self._word_values.get(word)
        if cached is None:
            cached = self._word_values[word] = [self.spec.value(literal) for literal in self.words[word]]
        return cached

    def _less(self, left: list[int], right: list[int]) -> int:
        """The signature of ``left < right`` on the compared bits (least significant bit first)."""
        less = 0
        for i in range(self.order.low(self.width), self.width):
            differ = left[i] ^ right[i]
            smaller = left[i] if self.order.signed and i == self.width - 1 else right[i]
            less = (less & ~differ) | (smaller & differ)
        return less & self.spec.mask

    def _evidence_of(self, first: int, second: int) -> Evidence | None:
        """The evidence that ``first`` and ``second`` meet in a comparator, in the better orientation."""
        a, b = self._bits(first), self._bits(second)
        best = None
        orientations = [(first, second, a, b)]
        if self.order.key_bits is not None:  # the tie rule makes the pair ordered
            orientations.append((second, first, b, a))
        for one, other, x, y in orientations:
            swap = self._less(y, x)
            if swap == 0 or swap == self._differ(x, y):
                continue  # the pair never swaps, or always: its outputs are its inputs, no new words
            selects = [place for place in (self._look(swap), self._look(self._less(x, y))) if place is not None]
            if not selects and self.width > 1:  # most pairs are no comparator: look at the lowest bits first
                moved = (x[0] ^ y[0]) & swap
                if self._look(x[0] ^ moved) is None and self._look(y[0] ^ moved) is None:
                    continue
            bits = self._output_places(x, y, swap)
            found = selects + bits
            if found:
                # A comparison alone may be a chance likeness (in a sorting network, comparisons of
                # different words can be the same function), and so may one output bit; with an output
                # bit beside the comparison, or two bits, the pair is almost surely a comparator of the
                # circuit.  Weak evidence is taken only when no pair has strong evidence (a comparator
                # that rarely swaps on the patterns, whose other output optimisation removed).
                strong = len(bits) >= MIN_BIT_EVIDENCE or (bool(bits) and bool(selects)) or self.width == 1
                evidence = Evidence(min(found), len(found), one, other, strong)
                if best is None or evidence.rank() < best.rank():
                    best = evidence
        return best

    def _differ(self, x: list[int], y: list[int]) -> int:
        """The signature of "the two words differ on the compared bits"."""
        differ = 0
        for i in range(self.order.low(self.width), self.width):
            differ |= x[i] ^ y[i]
        return differ

    def _output_places(self, x: list[int], y: list[int], swap: int) -> list[int]:
        """Circuit nodes with the signature of a bit of the minimum or the maximum (not the top bit)."""
        own = {self._normal(value) for value in (*x, *y)}
        places = []
        # The top bit of the minimum and of the maximum is an AND or an OR of the two top bits, a function
        # too common to tell a comparator by; every other bit depends on the comparison.
        for i in range(self.width - 1):
            moved = (x[i] ^ y[i]) & swap
            for value in (x[i] ^ moved, y[i] ^ moved):
                if self._normal(value) not in own:
                    place = self._look(value)
                    if place is not None:
                        places.append(place)
        return places

    def _pair_evidence(self, first: int, second: int) -> Evidence | None:
        key = (min(first, second), max(first, second))
        if key not in self._evidence:
            self._evidence[key] = self._evidence_of(*key)
        return self._evidence[key]

    # --- the search ---------------------------------------------------------------------------

    def _add_block(self, evidence: Evidence) -> None:
        first, second = evidence.first, evidence.second
        x, y = self.words[first], self.words[second]
        spec = self.spec
        swap = FALSE_LITERAL
        for i in range(self.order.low(self.width), self.width):  # [second < first], least significant first
            differ = spec.xor(x[i], y[i])
            smaller = y[i] if self.order.signed and i == self.width - 1 else x[i]
            swap = spec.mux(differ, swap, smaller)
        top = self.width - 1
        low = [spec.mux(swap, x[i], y[i]) for i in range(top)]
        high = [spec.mux(swap, y[i], x[i]) for i in range(top)]
        # The most significant compared bit decides the order when the two differ there, so the minimum's is
        # the AND of the two (the OR for a sign bit) and the maximum's the other: built so, the top bits of
        # all words form a small AND/OR network of their own, as optimised circuits compute them.
        both, either = spec.and_(x[top], y[top]), spec.or_(x[top], y[top])
        low.append(either if self.order.signed else both)
        high.append(both if self.order.signed else either)
        low, high = tuple(low), tuple(high)
        numbers = (first, second, len(self.words), len(self.words) + 1)
        self.selects.append(swap)
        self.words += [low, high]
        self.blocks.append(numbers)
        self.live = [word for word in self.live if word not in (first, second)] + list(numbers[2:])

    def _outputs(self) -> list[int] | None:
        """The live word of every output word (by exact signatures), or None while some has none."""
        by_value = {tuple(self._bits(word)): word for word in self.live}
        matched = []
        for output in self.circuit.outputs:
            values = tuple(self.graph.value(self.literals[bit]) for bit in output.bits)
            word = by_value.get(values)
            if word is None or word in matched:
                return None
            matched.append(word)
        return matched

    def run(self) -> Discovered:
        """Take comparators until the outputs are current words (see the module text)."""
        self._index = self._signature_index()  # the graphs may have learnt patterns since they were built
        self._word_values.clear()
        self._evidence.clear()
        if len(set(self.circuit.widths)) > 1:
            return Discovered(failure="the input words have different widths")
        if any(output.width != self.width for output in self.circuit.outputs):
            return Discovered(failure="the output words are not as wide as the input words")
        while True:
            outputs = self._outputs()
            if outputs is not None:
                return Discovered(list(self.blocks), outputs)
            if self.budget.expired():
                return Discovered(list(self.blocks), failure="the time budget ran out")
            best = None
            for i, first in enumerate(self.live):
                for second in self.live[i + 1:]:
                    evidence = self._pair_evidence(first, second)
                    if evidence is not None and (best is None or evidence.rank() < best.rank()):
                        best = evidence
            if best is None:
                return Discovered(list(self.blocks), failure=self._stuck())
            if len(self.blocks) >= self.max_blocks:
                return Discovered(list(self.blocks), failure=f"the search found more than {self.max_blocks} "
                                  "comparators and stopped")
            self._add_block(best)

    def _stuck(self) -> str:
        for output in self.circuit.outputs:
            values = tuple(self.graph.value(self.literals[bit]) for bit in output.bits)
            if values not in {tuple(self._bits(word)) for word in self.live}:
                return (f"after {len(self.blocks)} comparators no pair of current words has its minimum, maximum "
                        f"or comparison computed in the circuit, and output word {output.name!r} is none of them")
        return f"after {len(self.blocks)} comparators two output words are the same current word"


FALSE_LITERAL = 0
