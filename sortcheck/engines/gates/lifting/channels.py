"""Channels of a lifted network: output words matched to channel words, channels routed or relabelled.

Once :class:`sortcheck.engines.gates.lifting.search.BlockSearch` has lifted its
blocks, :func:`network_of` finds the channel word every output word is
(:func:`output_channels` says which network channel it must be), assigns the
min and max sides of the blocks to channels (:func:`greedy_channels`, else
the small SAT problem of :func:`route`), relabels the channels when no
assignment does and the property ignores input positions
(:func:`relabelling_allowed`), and checks the result with
:func:`channels_hold` before building the comparator network
(``encodings/structural-lifting.md``).

>>> greedy_channels(3, [(0, 1, 3, 4), (4, 2, 5, 6)])
[0, 1, 2, 0, 1, 1, 2]
"""

from __future__ import annotations

import numpy as np
from pysat.formula import IDPool

from sortcheck.engines.base import Budget
from sortcheck.engines.gates.lifting.blocks import Bits, cone, prove_same
from sortcheck.engines.gates.lifting.search import BlockSearch
from sortcheck.engines.solving import solve_within
from sortcheck.model import ComparatorNetwork, GateCircuit, Median, PartialSort, Property, Selects, Sorts


def relabelling_allowed(prop: Property) -> bool:
    """Whether ``prop`` ignores the positions of the inputs (so a circuit may permute them first)."""
    return isinstance(prop, (Sorts, Selects, Median)) or (isinstance(prop, PartialSort) and not prop.stable)


def output_channels(circuit: GateCircuit, prop: Property) -> list[int]:
    """The network channel each output word must be: ``k``, or the middle one for a lone median word."""
    if isinstance(prop, Median) and len(circuit.outputs) == 1:
        return [(circuit.words - 1) // 2]
    return list(range(len(circuit.outputs)))


def _output_word(search: BlockSearch, bits: Bits) -> int | None:
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


def _match_outputs(search: BlockSearch, circuit: GateCircuit) -> tuple[list[int], str | None]:
    """The channel word of every output word, or why some output is none."""
    matched: list[int] = []
    for k, output in enumerate(circuit.outputs):
        number = _output_word(search, tuple(output.bits))
        if number is None or number in matched:
            return matched, _unexplained(search, circuit, k, number is not None)
        matched.append(number)
    return matched, None


def _unexplained(search: BlockSearch, circuit: GateCircuit, k: int, repeated: bool) -> str:
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


def network_of(search: BlockSearch, circuit: GateCircuit, prop: Property, budget: Budget):
    """The network of a block search's blocks, the channel of every input word (None: the identity) and
    the failure (None when it worked)."""
    matched, failure = _match_outputs(search, circuit)
    if failure is not None:
        return None, None, failure
    return network_from_blocks(circuit, prop, [block.words for block in search.blocks], matched, budget)


def network_from_blocks(circuit: GateCircuit, prop: Property, blocks: list[tuple[int, int, int, int]],
                        matched: list[int], budget: Budget):
    """The comparator network of ``blocks`` (word numbers ``(first, second, minimum, maximum)``) whose
    channels put output word ``k`` on the word ``matched[k]``, the channel of every input word (None: the
    identity) and the failure (None when it worked).

    >>> from sortcheck.model import Sorts
    >>> from sortcheck.model.lowering import lower_network
    >>> from sortcheck.model.families import merge_exchange
    >>> circuit = lower_network(merge_exchange(2), 1)
    >>> network_from_blocks(circuit, Sorts(), [(0, 1, 2, 3)], [3, 2], Budget())[0].comparators
    ((1, 0),)
    """
    targets = dict(zip(matched, output_channels(circuit, prop)))
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
