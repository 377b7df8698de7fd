"""The ``lift`` engine: a gate circuit proved to be a comparator network, then the network checked.

A gate circuit built from compare-and-swap blocks is, word for word, a
comparator network.  :func:`lift_circuit` finds the blocks *by what they
compute*, not by how their gates look:

1. every signal gets a signature by simulation (:func:`lift_blocks.signal_signatures`);
2. starting from the input words, for every pair of current *channel words*
   the signatures of their minimum and maximum are computed and looked up;
   when the circuit has signals for every bit of both, that is a candidate;
3. each candidate is proved by one SAT call on its cone, cut at the two
   words (:func:`lift_blocks.prove_block`); structurally identical blocks
   share one proof; only proved blocks are lifted, and their outputs become
   channel words in place of their inputs;
4. when every output word is a channel word, the min and max sides are
   assigned to channels so that output ``k`` is channel ``k`` (a small SAT
   problem); when no assignment does, the channels are relabelled, which is
   sound only for properties that do not depend on input positions.

:func:`lifted_verdict` then checks the network with the comparator engines
and turns the verdict back into one about the circuit; every counterexample
is recomputed with the circuit.  ``encodings/structural-lifting.md`` gives
the argument that the network's verdict is the circuit's.

>>> from sortcheck.model.families import merge_exchange
>>> from sortcheck.model.lowering import lower_network
>>> from sortcheck.model import Sorts
>>> lifting = lift_circuit(lower_network(merge_exchange(4), 3, style="mux"), Sorts())
>>> lifting.network.comparators == merge_exchange(4).comparators, len(lifting.blocks)
(True, 5)
"""

from __future__ import annotations

import dataclasses
import time
from collections import deque
from dataclasses import dataclass, field
from typing import Any

import numpy as np
from pysat.formula import IDPool

from sortcheck.engines.base import Budget, Options, Status, StopReason, Verdict, refused_verdict
from sortcheck.engines.gate_simulation import counterexample_of, quick_refute
from sortcheck.engines.lift_blocks import (SEED, Bits, BlockCheck, BlockOrder, Signatures, Word, cone, evaluate_local,
                                           evaluate_local_rows, gate_map, is_local, min_max_rows, min_max_values,
                                           prove_block, prove_same, signal_signatures, signals_of, simulated_inputs,
                                           single)
from sortcheck.engines.solving import Interrupted, solve_within
from sortcheck.errors import PropertyError
from sortcheck.model import (ComparatorNetwork, GateCircuit, Median, Netlist, PartialSort, Property, Selects, Sorts,
                             bit_name, check_fits)

#: A block output bit is "local" when its cone, cut at the block's words, has at most this many gates per bit.
LOCAL_GATES_PER_BIT = 32
#: Random values of two free words a candidate's signals are screened on before its SAT proof.
FREE_LANES = 256
#: Other signals with the signature of one block output bit that are proved equal to it, at most.
MAX_EQUIVALENTS = 8


@dataclass(frozen=True)
class BlockProof:
    """One lifted block: comparator ``comparator`` of the network, its words, its cone and its proof.

    ``words`` are word numbers ``(first, second, minimum, maximum)``: the input
    words are ``0..n-1``, every lifted block adds two.
    """

    comparator: int
    words: tuple[int, int, int, int]
    gates: int
    how: str
    seconds: float

    def to_json(self) -> dict[str, Any]:
        return {"comparator": self.comparator, "words": list(self.words), "gates": self.gates, "how": self.how,
                "seconds": self.seconds}


@dataclass(frozen=True)
class Lifting:
    """What :func:`lift_circuit` found: the network (None when the circuit does not lift) and how.

    ``input_channels[i]`` is the network channel circuit input word ``i``
    enters (None: channel ``i``; a permutation only after relabelling).
    ``failure`` says where lifting stopped; ``rejected`` lists candidates whose
    proof failed, with two word values on which they are not min/max.
    """

    network: ComparatorNetwork | None
    order: BlockOrder
    blocks: tuple[BlockProof, ...]
    failure: str | None = None
    rejected: tuple[tuple[tuple[int, int], tuple[int, int] | None], ...] = ()
    input_channels: tuple[int, ...] | None = None
    timed_out: bool = False
    figures: dict[str, Any] = field(default_factory=dict)

    @property
    def lifted(self) -> bool:
        return self.network is not None


def _order_of(prop: Property, width: int) -> BlockOrder:
    key_bits = prop.key_bits if isinstance(prop, PartialSort) and prop.key_bits < width else None
    return BlockOrder(signed=prop.signed, key_bits=key_bits)


def relabelling_allowed(prop: Property) -> bool:
    """Whether ``prop`` ignores the positions of the inputs (so a circuit may permute them first)."""
    return isinstance(prop, (Sorts, Selects, Median)) or (isinstance(prop, PartialSort) and not prop.stable)


class _Search:
    """The channel words found so far and the blocks between them (mutable, inside :func:`lift_circuit`)."""

    def __init__(self, circuit: GateCircuit, signatures: Signatures, order: BlockOrder, budget: Budget,
                 distant: bool = False):
        self.signatures, self.order, self.budget, self.distant = signatures, order, budget, distant
        self.gates = gate_map(circuit)
        self.words: list[Word] = [single(tuple(bit_name(w.name, i) for i in range(w.width))) for w in circuit.inputs]
        self.live: set[int] = set(range(len(self.words)))
        self.owner: dict = {signal: (number, i) for number, word in enumerate(self.words)
                            for i, bits in enumerate(word) for signal in bits}
        self.blocks: list[BlockProof] = []
        self.rejected: list = []
        self.proved_forms: dict = {}
        self.sat_calls = 0
        #: Random free values of two words (bias to equal and near-equal values), to screen candidate signals.
        self.free_rows = simulated_inputs(2, circuit.width, FREE_LANES, seed=SEED + 1)

    def run(self) -> None:
        """Lift blocks until no pair of channel words has a proved min/max block in the circuit."""
        queue, checked = deque(sorted(self.live)), []
        while queue:
            if self.budget.expired():
                raise Interrupted
            word = queue.popleft()
            partners = [p for p in checked if p in self.live]
            found = self._lift_one(word, partners) if partners else None
            if found is None:
                checked.append(word)
                continue
            self.live -= {found[0], found[1]}
            self.live |= {found[2], found[3]}
            queue.extend(found[2:])

    def _rows(self, number: int) -> np.ndarray:
        return self.signatures.word_rows(tuple(bits[0] for bits in self.words[number]))

    def _candidates(self, word: int, partners: list[int]):
        """(first, second) word pairs and their min/max rows whose first row words all occur in the circuit."""
        rows = self._rows(word)[None]
        others = np.stack([self._rows(p) for p in partners])
        orientations = [(False, min_max_rows(rows, others, self.order))]
        if self.order.key_bits is not None:  # the tie rule makes the pair ordered
            orientations.append((True, min_max_rows(others, rows, self.order)))
        known = self.signatures.first_words
        for flipped, (low, high) in orientations:
            both = np.concatenate([low, high], axis=1)
            for number, values in enumerate(both[:, :, 0].tolist()):
                if all(value in known for value in values):
                    pair = (partners[number], word) if flipped else (word, partners[number])
                    yield pair, both[number]

    def _options(self, rows: np.ndarray, pair: tuple[int, int]) -> tuple[list[list], set] | None:
        """For every row, the signals with that signature that may be that bit of the block, best first.

        First the signals on no channel word that are functions of the pair's
        words alone (earliest first), then the bit at that place of one of the
        pair's words, then (only in a ``distant`` search) any signal on no
        word, whose proof then reaches back to the primary inputs.  Also the
        set of the local ones (functions of the pair's words).  None when a
        row has none.
        """
        first, second = pair
        width = len(self.words[first])
        cut = signals_of(self.words[first]) | signals_of(self.words[second])
        limit = LOCAL_GATES_PER_BIT * width
        options, every_local = [], set()
        for position, row in enumerate(rows):
            like = self.signatures.signals_like(row)
            fresh = [signal for signal in like if signal not in self.owner]
            local = [signal for signal in fresh if is_local(self.gates, signal, cut, limit)]
            places = {(word, position % width) for word in pair}
            mine = [signal for signal in like if self.owner.get(signal) in places]
            distant = [signal for signal in fresh if signal not in local] if self.distant else []
            found = local + mine + distant
            if not found:
                return None
            options.append(found)
            every_local.update(local)
        return options, every_local

    def _refine(self, options: list[list], pair: tuple[int, int], local: set, witness: tuple[int, int] | None
                ) -> bool:
        """Drop every first option that is a function of the pair's words and is wrong at ``witness``."""
        if witness is None:
            return False
        width = len(self.words[pair[0]])
        values = {signal: (word >> i) & 1 for number, word in zip(pair, witness)
                  for i, bits in enumerate(self.words[number]) for signal in bits}
        wanted = [(word >> i) & 1 for word in min_max_values(*witness, width, self.order) for i in range(width)]
        dropped = False
        for position, found in enumerate(options):
            signal = found[0]
            if signal not in local:
                continue
            if evaluate_local(self.gates, signal, values) != wanted[position]:
                found.pop(0)
                dropped = True
        return dropped

    def _screen(self, options: list[list], pair: tuple[int, int], local: set) -> None:
        """Drop the options that are functions of the pair's words but not min/max on free random words."""
        first, second = self.words[pair[0]], self.words[pair[1]]
        width = len(first)
        lanes = self.free_rows.shape[1]
        values = {signal: self.free_rows[k * width + i] for k, word in enumerate((first, second))
                  for i, bits in enumerate(word) for signal in bits}
        low, high = min_max_rows(self.free_rows[:width], self.free_rows[width:], self.order)
        wanted = np.concatenate([low, high])
        for position, found in enumerate(options):
            found[:] = [signal for signal in found if signal not in local
                        or np.array_equal(evaluate_local_rows(self.gates, signal, values, lanes), wanted[position])]

    def _lift_one(self, word: int, partners: list[int]) -> tuple[int, int, int, int] | None:
        """Lift the block of ``word`` with one of ``partners`` whose outputs come first in the circuit, if any."""
        found = []
        for pair, rows in self._candidates(word, partners):
            chosen = self._options(rows, pair)
            if chosen is not None:
                self._screen(*chosen[:1], pair, chosen[1])
                if all(chosen[0]):
                    found.append((max(self.signatures.index[bits[0]] for bits in chosen[0]), pair, *chosen))
        for _, pair, options, local in sorted(found, key=lambda item: item[0]):
            while all(options):
                picks = tuple(bits[0] for bits in options)
                if not any(signal in local for signal in picks):
                    break  # the pair is already in order, or its min/max would be computed elsewhere
                check = self._prove(*pair, picks)
                if check.proved:
                    return self._add_block(pair, options, local, check)
                if not self._refine(options, pair, local, check.witness):
                    self.rejected.append((pair, check.witness))
                    break
        return None

    def _add_block(self, pair: tuple[int, int], options: list[list], local: set, check: BlockCheck
                   ) -> tuple[int, int, int, int]:
        first, second = pair
        width = len(self.words[first])
        sides = ({found[0] for found in options[width:]}, {found[0] for found in options[:width]})
        bits = [(found[0], *self._equivalents(pair, position, [s for s in found[1:] if s in local],
                                              sides[position >= width]))
                for position, found in enumerate(options)]
        numbers = (first, second, len(self.words), len(self.words) + 1)
        for number, new in zip(numbers[2:], (tuple(bits[:width]), tuple(bits[width:]))):
            self.words.append(new)
            self.owner.update({signal: (number, i) for i, signals in enumerate(new) for signal in signals})
        self.blocks.append(BlockProof(len(self.blocks), numbers, check.gates, check.how, check.seconds))
        return numbers

    def _prove(self, first: int, second: int, outputs: Bits) -> BlockCheck:
        a, b = self.words[first], self.words[second]
        check = prove_block(self.gates, a, b, outputs, self.order, self.budget, self.proved_forms)
        self.sat_calls += check.how == "sat"
        if check.proved:
            self.proved_forms[check.canonical] = True
            return check
        _, leaves = cone(self.gates, outputs, signals_of(a) | signals_of(b))
        if not leaves:  # the cut was exact: the block is not min/max
            return check
        self.sat_calls += 1  # other leaves were free: try again with everything encoded from the inputs
        return prove_block(self.gates, a, b, outputs, self.order, self.budget, full_cone=True)

    def _equivalents(self, pair: tuple[int, int], position: int, candidates: list, other_side: set) -> list:
        """The ``candidates`` (functions of the pair's words) proved to be bit ``position`` of the block too.

        Signals that read the picks of the other output word do not count: a
        signal computed from both outputs belongs to a later block (a
        comparator on the same pair, say), not to this one.
        """
        a, b = self.words[pair[0]], self.words[pair[1]]
        cut = signals_of(a) | signals_of(b)
        proved = []
        for signal in candidates[:MAX_EQUIVALENTS]:
            if signal in self.owner:
                continue
            found, _ = cone(self.gates, (signal,), cut)
            if any(source in other_side for gate in found for source in gate.inputs):
                continue
            check = prove_block(self.gates, a, b, (signal,), self.order, self.budget, self.proved_forms,
                                positions=(position,))
            self.sat_calls += check.how == "sat"
            if check.proved:
                self.proved_forms[check.canonical] = True
                proved.append(signal)
        return proved


def output_channels(circuit: GateCircuit, prop: Property) -> list[int]:
    """The network channel each output word must be: ``k``, or the middle one for a lone median word."""
    if isinstance(prop, Median) and len(circuit.outputs) == 1:
        return [(circuit.words - 1) // 2]
    return list(range(len(circuit.outputs)))


def _output_word(search: _Search, bits: Bits) -> int | None:
    """The live channel word whose bits ``bits`` are (by proved equivalence, or by a proof now), or None."""
    owners = {search.owner.get(bit) for bit in bits}
    numbers = {owner[0] for owner in owners if owner is not None}
    if None not in owners and len(numbers) == 1 and [owner[1] for owner in map(search.owner.get, bits)] == \
            list(range(len(bits))):
        number = numbers.pop()
        return number if number in search.live else None
    rows = search.signatures.word_rows(bits)
    for number in sorted(search.live):
        if np.array_equal(search._rows(number), rows) and \
                prove_same(search.gates, search.words[number], bits, search.budget).proved:
            return number
    return None


def _match_outputs(search: _Search, circuit: GateCircuit) -> tuple[list[int], str | None]:
    """The channel word of every output word, or why some output is none."""
    matched: list[int] = []
    for k, output in enumerate(circuit.outputs):
        number = _output_word(search, tuple(output.bits))
        if number is None or number in matched:
            return matched, _unexplained(search, circuit, k, number is not None)
        matched.append(number)
    return matched, None


def _unexplained(search: _Search, circuit: GateCircuit, k: int, repeated: bool) -> str:
    output = circuit.outputs[k]
    lifted = f"{len(search.blocks)} blocks lifted"
    if repeated:
        return f"output word {output.name!r} repeats a channel word another output already holds ({lifted})"
    found, _ = cone(search.gates, output.bits, set(search.owner))
    if not found:
        return f"output word {output.name!r} is made of constants or of bits of different channel words ({lifted})"
    names = ", ".join(gate.out for gate in found[:3])
    return (f"output word {output.name!r} is not a channel word: {len(found)} gates before it are in no proved "
            f"min/max block (first: {names}); {lifted}" + (f", {len(search.rejected)} candidates failed their proof"
                                                          if search.rejected else ""))


def route(words: int, blocks: list[tuple[int, int, int, int]], targets: dict[int, int], budget: Budget
          ) -> list[int] | None:
    """A channel for every word so that each block keeps its two channels and ``targets`` hold; None if none.

    Input word ``i`` is on channel ``i``; a block ``(a, b, low, high)`` puts
    ``low`` and ``high`` on the channels of ``a`` and ``b``, either way round.

    >>> route(2, [(0, 1, 2, 3)], {3: 0, 2: 1}, Budget())
    [0, 1, 1, 0]
    """
    count = words + 2 * len(blocks)
    pool = IDPool()

    def on(word: int, channel: int) -> int:
        return pool.id((word, channel))

    clauses = [[on(i, i)] for i in range(words)] + [[-on(i, c)] for i in range(words) for c in range(words) if c != i]
    for number, (a, b, low, high) in enumerate(blocks):
        swap = pool.id(("swap", number))
        for c in range(words):
            clauses += [[swap, -on(a, c), on(low, c)], [swap, -on(b, c), on(high, c)],
                        [-swap, -on(a, c), on(high, c)], [-swap, -on(b, c), on(low, c)],
                        [-on(low, c), on(a, c), on(b, c)], [-on(high, c), on(a, c), on(b, c)],
                        [-on(low, c), -on(high, c)]]
    clauses += [[on(word, channel)] for word, channel in targets.items()]
    model = solve_within(clauses, budget)
    if model is None:
        return None
    true = {literal for literal in model if literal > 0}
    return [next((c for c in range(words) if on(w, c) in true), -1) for w in range(count)]


def greedy_channels(words: int, blocks: list[tuple[int, int, int, int]]) -> list[int]:
    """Channels with every block's minimum on the lower of its two channels.

    >>> greedy_channels(2, [(1, 0, 2, 3)])
    [0, 1, 0, 1]
    """
    channel = list(range(words)) + [0] * (2 * len(blocks))
    for a, b, low, high in blocks:
        channel[low], channel[high] = sorted((channel[a], channel[b]))
    return channel


def _relabel(words: int, blocks: list[tuple[int, int, int, int]], targets: dict[int, int]
             ) -> tuple[list[int], tuple[int, ...]]:
    """Greedy channels renamed so that ``targets`` hold, and the channel every input word is renamed to."""
    channel = greedy_channels(words, blocks)
    rename = {channel[word]: target for word, target in targets.items()}
    spare = iter(sorted(set(range(words)) - set(rename.values())))
    rename.update({c: next(spare) for c in range(words) if c not in rename})
    return [rename[c] for c in channel], tuple(rename[i] for i in range(words))


def channels_hold(channel: list[int], inputs: tuple[int, ...], blocks: list[tuple[int, int, int, int]],
                  targets: dict[int, int]) -> bool:
    """Whether ``channel`` puts input word ``i`` on ``inputs[i]``, keeps every block on its two channels and meets
    ``targets``; then the network of the blocks computes the circuit (``encodings/structural-lifting.md``).

    >>> channels_hold([0, 1, 1, 0], (0, 1), [(0, 1, 2, 3)], {3: 0})
    True
    >>> channels_hold([0, 1, 1, 1], (0, 1), [(0, 1, 2, 3)], {})
    False
    """
    if sorted(inputs) != list(range(len(inputs))) or any(channel[i] != c for i, c in enumerate(inputs)):
        return False
    if any(sorted((channel[a], channel[b])) != sorted((channel[low], channel[high])) for a, b, low, high in blocks):
        return False
    return all(channel[word] == target for word, target in targets.items())


def lift_circuit(circuit: GateCircuit, prop: Property | None = None, budget: Budget = Budget()) -> Lifting:
    """Find the comparator network ``circuit`` is, block by proved block (see the module docstring).

    ``prop`` (default: the circuit's claim, else ``sorts``) fixes the order
    the blocks must compare in (signed, key bits) and whether channels may be
    relabelled.  A circuit that does not lift gives a :class:`Lifting` with
    ``network`` None, the reason, and the blocks lifted before it stopped.
    """
    started = time.perf_counter()
    prop = prop or circuit.claim or Sorts()
    order = _order_of(prop, circuit.width)
    signatures = signal_signatures(circuit)
    figures: dict[str, Any] = {"signature_seconds": time.perf_counter() - started, "gates": len(circuit.gates)}
    search = _Search(circuit, signatures, order, budget)
    timed_out, network, channels_in, failure = False, None, None, None
    try:
        if isinstance(prop, PartialSort) and prop.stable:
            failure = "a stable partial sort depends on the tie rule and input positions; it is not lifted"
        elif len(set(circuit.widths)) > 1:
            failure = "the input words have different widths"
        else:
            search.run()
            network, channels_in, failure = _network_of(search, circuit, prop, budget)
            if failure is not None:  # once more, letting block bits be computed anywhere
                distant = _Search(circuit, signatures, order, budget, distant=True)
                distant.run()
                found = _network_of(distant, circuit, prop, budget)
                if found[2] is None:
                    search, (network, channels_in, failure) = distant, found
            if failure is not None and not search.blocks:
                failure += _other_order_hint(circuit, signatures, order, prop, budget)
    except Interrupted:
        timed_out, failure = True, f"the time budget ran out after {len(search.blocks)} blocks"
    figures.update(seconds=time.perf_counter() - started, blocks=len(search.blocks), sat_calls=search.sat_calls,
                   shared_proofs=sum(block.how == "shared" for block in search.blocks),
                   block_gates=sum(block.gates for block in search.blocks), rejected=len(search.rejected),
                   distant=search.distant)
    return Lifting(network, order, tuple(search.blocks), failure, tuple(search.rejected), channels_in, timed_out,
                   figures)


def _other_order_hint(circuit: GateCircuit, signatures: Signatures, order: BlockOrder, prop: Property,
                      budget: Budget) -> str:
    """A note when the circuit lifts with blocks of the other signedness (which says nothing about ``prop``)."""
    other = dataclasses.replace(order, signed=not order.signed)
    search = _Search(circuit, signatures, other, budget)
    search.run()
    if _network_of(search, circuit, prop, budget)[2] is not None:
        return ""
    return (f"; the circuit does lift with blocks comparing {other.describe()} words, but a verdict under that "
            f"order says nothing about {prop.describe()}")


def _network_of(search: _Search, circuit: GateCircuit, prop: Property, budget: Budget):
    matched, failure = _match_outputs(search, circuit)
    if failure is not None:
        return None, None, failure
    targets = dict(zip(matched, output_channels(circuit, prop)))
    blocks = [block.words for block in search.blocks]
    channels_in = None
    channel = greedy_channels(circuit.words, blocks)
    if any(channel[word] != target for word, target in targets.items()):
        channel = route(circuit.words, blocks, targets, budget)
    if channel is None:
        if not relabelling_allowed(prop):
            return None, None, (f"the outputs are the channel words in an order no comparator network on the input "
                                f"positions gives, and {prop.describe()} depends on input positions")
        channel, channels_in = _relabel(circuit.words, blocks, targets)
    if not channels_hold(channel, channels_in or tuple(range(circuit.words)), blocks, targets):
        return None, None, "internal error: the channel assignment breaks its own conditions"
    comparators = tuple((channel[low], channel[high]) for _, _, low, high in blocks)
    network = ComparatorNetwork(circuit.words, comparators, name=f"lifted {circuit.name or 'circuit'}")
    return network, channels_in, None


def network_property(prop: Property) -> Property:
    """The question for the lifted network: the same property on any total order (key-only: ``sorts``)."""
    if isinstance(prop, PartialSort):
        return Sorts()
    return dataclasses.replace(prop, signed=False)


def _word_of(rank: int, width: int, order: BlockOrder) -> int:
    """The raw word with order rank ``rank`` among the smallest values (on the key bits, low bits zero)."""
    bits = order.key_bits or width
    flip = 1 << (bits - 1) if order.signed else 0
    return (rank ^ flip) << (width - bits)


def circuit_input(lifting: Lifting, values: tuple[int, ...], width: int) -> tuple[int, ...] | None:
    """The circuit's input words for a network input (values of order ranks), or None when they do not fit."""
    if max(values, default=0) >= 1 << (lifting.order.key_bits or width):
        return None
    channels = lifting.input_channels or range(len(values))
    return tuple(_word_of(values[channel], width, lifting.order) for channel in channels)


def _describe_lifting(lifting: Lifting, circuit: GateCircuit, prop: Property) -> str:
    width, n = circuit.width, circuit.words
    text = (f"lifted to a comparator network of {n} channels: {len(lifting.blocks)} blocks of 2 x {width} bits "
            f"proved to be min/max ({lifting.order.describe()}) by SAT")
    if lifting.input_channels is not None:
        text += (f" (the circuit is the network after a fixed permutation of its input words, which "
                 f"{prop.describe()} does not depend on)")
    return text


def lifted_verdict(lifting: Lifting, circuit: GateCircuit, prop: Property, budget: Budget = Budget(),
                   engine: str = "auto", started: float | None = None) -> Verdict:
    """Check the lifted network with the comparator engines and give the verdict for ``circuit``.

    A refutation is mapped back to input words (the network's input of
    distinct values when it has one and it fits, else its 0-1 input), then
    recomputed with the circuit and re-checked by the reference semantics.
    """
    from sortcheck.engines import (
        check as check_netlist,  # the registry imports this module
    )

    started = time.perf_counter() if started is None else started
    assert lifting.network is not None, "the circuit did not lift"
    found = check_netlist(lifting.network, network_property(prop), engine=engine, timeout=budget.remaining())
    lifted = _describe_lifting(lifting, circuit, prop)
    figures = {"lift": lifting.figures, "blocks": [block.to_json() for block in lifting.blocks],
               "network_engine": found.engine, "network": found.figures,
               "comparators": [list(pair) for pair in lifting.network.comparators]}
    cover = f"covers every input of {circuit.words} words of {circuit.width} bits"
    seconds = time.perf_counter() - started
    if found.status is Status.PROVED:
        scope = f"{lifted}; the network proved by {found.engine} ({found.scope}); {cover}"
        return Verdict(Status.PROVED, "lift", prop, StopReason.COVERED, scope, seconds, None, figures)
    if found.status is Status.UNKNOWN:
        scope = f"{lifted}; the network check by {found.engine} did not finish ({found.scope}); nothing is proved"
        return Verdict(Status.UNKNOWN, "lift", prop, found.stop, scope, seconds, None, figures)
    example = found.counterexample
    for values in (example.permutation, example.input):
        raw = None if values is None else circuit_input(lifting, tuple(values), circuit.width)
        if raw is None:
            continue
        try:
            mapped = counterexample_of(circuit, prop, raw)
        except AssertionError:
            continue
        scope = (f"{lifted}; the network refuted by {found.engine}; this input of {circuit.words} words of "
                 f"{circuit.width} bits, recomputed with the circuit, breaks the property")
        return Verdict(Status.REFUTED, "lift", prop, StopReason.COUNTEREXAMPLE, scope, seconds, mapped, figures)
    scope = (f"{lifted}; the network was refuted but its counterexample {example.input} does not break the "
             "circuit (an internal inconsistency); nothing is proved or refuted")
    return Verdict(Status.UNKNOWN, "lift", prop, StopReason.UNSUPPORTED, scope, seconds, None, figures)


class LiftEngine:
    """Gate circuits lifted to comparator networks block by proved block, then checked as networks.

    A circuit that does not lift is tried on corner-case and random inputs
    (:func:`sortcheck.engines.gate_simulation.quick_refute`), which can only
    refute; otherwise the verdict is ``unknown`` and says why it did not lift.

    Parameters
    ----------
    network_engine : str
        The engine for the lifted network (``auto``: enumerate, else sat).
    min_input_bits : int
        Circuits with fewer input bits (words times width) are refused: an
        engine that simulates every input is the better choice there.
    samples : int
        Random inputs tried on a circuit that does not lift.

    Examples
    --------
    >>> from sortcheck.model.families import odd_even_transposition
    >>> from sortcheck.model.lowering import lower_network
    >>> verdict = LiftEngine().check(lower_network(odd_even_transposition(5), 4, style="xor"), Sorts(), Budget())
    >>> verdict.status.value, verdict.figures["network_engine"]
    ('proved', 'enumerate')
    """

    name = "lift"
    cooperative = True

    def __init__(self, network_engine: str = "auto", min_input_bits: int = 0, samples: int = 1 << 14):
        self.network_engine, self.min_input_bits, self.samples = network_engine, min_input_bits, samples

    def refusal(self, netlist: Netlist, prop: Property, options: Options = Options()
                ) -> tuple[StopReason, str] | None:
        if isinstance(netlist, ComparatorNetwork):
            return StopReason.UNSUPPORTED, "lift turns gate circuits into comparator networks; this is one already"
        try:
            check_fits(prop, netlist, None)
        except PropertyError as error:
            return StopReason.UNSUPPORTED, error.message
        if isinstance(prop, PartialSort) and prop.stable:
            return StopReason.UNSUPPORTED, "lift does not take stable partial sorts (they depend on the tie rule)"
        bits = netlist.words * netlist.width
        if bits < self.min_input_bits:
            return StopReason.UNSUPPORTED, (f"the circuit has {bits} input bits, few enough to simulate every input; "
                                            f"lift takes circuits of {self.min_input_bits} input bits or more")
        return None

    def check(self, netlist: Netlist, prop: Property, budget: Budget, options: Options = Options()) -> Verdict:
        started = time.perf_counter()
        refused = refused_verdict(self, netlist, prop, options, started)
        if refused is not None:
            return refused
        circuit: GateCircuit = netlist  # type: ignore[assignment]
        lifting = lift_circuit(circuit, prop, budget)
        if lifting.lifted:
            return lifted_verdict(lifting, circuit, prop, budget, self.network_engine, started)
        figures = {"lift": lifting.figures, "blocks": [block.to_json() for block in lifting.blocks],
                   "rejected": [list(pair) for pair, _ in lifting.rejected]}
        not_lifted = (f"the circuit does not lift to a comparator network with blocks comparing "
                      f"{lifting.order.describe()} words: {lifting.failure}")
        found = None if lifting.timed_out else quick_refute(circuit, prop, budget, self.samples)
        seconds = time.perf_counter() - started
        if found is not None:
            scope = (f"{not_lifted}; this input of {circuit.words} words of {circuit.width} bits, found among "
                     f"corner-case and random inputs and recomputed with the circuit, breaks the property")
            return Verdict(Status.REFUTED, self.name, prop, StopReason.COUNTEREXAMPLE, scope, seconds, found, figures)
        stop = StopReason.TIMEOUT if lifting.timed_out or budget.expired() else StopReason.UNSUPPORTED
        tried = "" if lifting.timed_out else f"; {self.samples:,} random and corner-case inputs passed"
        return Verdict(Status.UNKNOWN, self.name, prop, stop, f"nothing was proved: {not_lifted}{tried}", seconds,
                       None, figures)
