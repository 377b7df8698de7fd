"""The search of the ``lift`` engine: channel words of a gate circuit and the proved min/max blocks between them.

:class:`BlockSearch` starts from the circuit's input words and, for every pair
of current channel words, looks up the signals whose signatures are those of
their minimum and maximum, screens them on random words, proves the block by
SAT (:func:`sortcheck.engines.gates.lifting.blocks.prove_block`) and makes its two
outputs channel words in place of its inputs.  :class:`BlockProof` records one
lifted block.  :mod:`sortcheck.engines.gates.lifting.engine` runs the search and turns its
blocks into a comparator network.

>>> from sortcheck.model.families import odd_even_transposition
>>> from sortcheck.model.lowering import lower_network
>>> from sortcheck.engines.base import Budget
>>> from sortcheck.engines.gates.lifting.blocks import BlockOrder, signal_signatures
>>> circuit = lower_network(odd_even_transposition(3), 2, style="mux")
>>> search = BlockSearch(circuit, signal_signatures(circuit), BlockOrder(signed=False), Budget())
>>> search.run()
>>> len(search.blocks), sorted(search.live)  # three comparators; live: the last block's two words and word 6
(3, [6, 7, 8])
"""

from __future__ import annotations

from collections import deque
from dataclasses import dataclass
from typing import Any

import numpy as np

from sortcheck.engines.base import Budget
from sortcheck.engines.gates.lifting.blocks import (SEED, Bits, BlockCheck, BlockOrder, Signatures, Word, cone, evaluate_local,
                                           evaluate_local_rows, gate_map, is_local, min_max_rows, min_max_values,
                                           prove_block, signals_of, simulated_inputs, single)
from sortcheck.engines.solving import Interrupted
from sortcheck.model import GateCircuit, bit_name

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


class BlockSearch:
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
