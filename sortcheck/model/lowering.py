"""Comparator networks lowered to gate circuits on words of bits.

:func:`lower_network` turns every comparator into a compare-and-swap of two
``width``-bit words: one comparison signal ``c<k>_gt`` that says the word on
the comparator's first channel is greater (a swap is needed), then a select
per bit that puts the smaller word on the first channel and the larger on the
second.  Channel ``i`` reads input word ``x<i>`` and ends in output word
``y<i>``.  The comparison and the selection come in independent *styles*,
so that one network gives several structurally different circuits:

``"and-or"``
    AND, OR and NOT only.  The comparison is a most-significant-first
    equality chain, ``gt = OR_i (a_i AND NOT b_i AND eq_above_i)`` where
    ``eq_above_i`` says the bits above ``i`` are equal; the select is
    ``(gt AND b_i) OR (NOT gt AND a_i)``.
``"mux"``
    A least-significant-first ripple comparison, ``g_i = mux(a_i XOR b_i,
    g_(i-1), a_i)`` (the higher differing bit decides, equal bits pass the
    lower verdict on), and one ``mux`` gate per output bit.
``"xor"``
    Few AND gates, for secure computation where XOR is free: a
    least-significant-first carry ``c_(i+1) = a_i XOR ((a_i XOR c_i) AND
    (b_i XOR c_i))`` (one AND per compared bit) and a swap by XOR masks,
    ``m_i = gt AND (a_i XOR b_i)``, ``lo_i = a_i XOR m_i``, ``hi_i = b_i XOR
    m_i`` (one AND per bit).

``signed=True`` compares two's complement words: the sign bit counts the
other way round (a 0 there beats a 1).  ``key_bits=k`` compares only the
``k`` most significant bits and still moves whole words.

Examples
--------
>>> from sortcheck.model.families import merge_exchange
>>> circuit = lower_network(merge_exchange(4), 3, style="mux")
>>> circuit.name, circuit.claim
('merge-exchange-4-w3-mux', Sorts(signed=False, order='ascending'))
>>> circuit.evaluate([5, 7, 0, 5])
[0, 5, 5, 7]
>>> lower_network(merge_exchange(3), 4, signed=True).evaluate([-3 % 16, 2, -8 % 16])
[8, 13, 2]
"""

from __future__ import annotations

import dataclasses
from typing import Callable

from sortcheck.model.circuit import Gate, GateCircuit, OutputWord, Signal, Word, bit_name
from sortcheck.model.network import ComparatorNetwork
from sortcheck.model.properties import PartialSort, Property, Sorts

MAX_WIDTH = 65536
"""Widest word :func:`lower_network` accepts (the netlist format's limit)."""


class GateList:
    """Collects gates in order and refuses a name used twice (a helper every builder shares).

    >>> gates = GateList()
    >>> gates.add("t", "and", "a[0]", "b[0]")
    't'
    >>> gates.add("t", "or", "a[0]", "b[0]")
    Traceback (most recent call last):
    ...
    ValueError: gate name 't' is used twice
    """

    def __init__(self) -> None:
        self.gates: list[Gate] = []
        self._names: set[str] = set()

    def add(self, out: str, op: str, *inputs: Signal) -> str:
        """Append the gate ``out = op(*inputs)`` and return its signal name."""
        if out in self._names:
            raise ValueError(f"gate name {out!r} is used twice")
        self._names.add(out)
        self.gates.append(Gate(out, op, tuple(inputs)))
        return out


Bits = list[Signal]
"""The bits of one word, least significant first."""

CompareSwap = Callable[[GateList, str, Bits, Bits, int, bool], tuple[Bits, Bits]]


def _winner_loser(a: Bits, b: Bits, i: int, signed: bool) -> tuple[Signal, Signal]:
    """The bits at ``i`` of the word that is greater when they differ, and of the other word.

    Unsigned, a 1 wins, so ``a`` is greater where ``a_i = 1, b_i = 0``; at the
    sign bit of a signed word a 0 wins, so the roles of ``a`` and ``b`` swap.
    """
    if signed and i == len(a) - 1:
        return b[i], a[i]
    return a[i], b[i]


# --- style "and-or" ------------------------------------------------------------

def _and_or_compare_swap(gates: GateList, c: str, a: Bits, b: Bits, low: int, signed: bool) -> tuple[Bits, Bits]:
    """Compare-and-swap with AND, OR and NOT: a most-significant-first equality chain."""
    top = len(a) - 1
    terms: list[str] = []
    eq_above: str | None = None  # None: no bits above (the constant 1)
    for i in range(top, low - 1, -1):
        na, nb = gates.add(f"{c}_na{i}", "not", a[i]), gates.add(f"{c}_nb{i}", "not", b[i])
        if signed and i == top:
            wins = [na, b[i]]  # a is non-negative and b negative
        else:
            wins = [a[i], nb]
        if eq_above is not None:
            wins.append(eq_above)
        terms.append(gates.add(f"{c}_gt" if top == low else f"{c}_term{i}", "and", *wins))
        if i > low:
            both_one = gates.add(f"{c}_ones{i}", "and", a[i], b[i])
            both_zero = gates.add(f"{c}_zeros{i}", "and", na, nb)
            equal = gates.add(f"{c}_eq{i}", "or", both_one, both_zero)
            eq_above = equal if eq_above is None else gates.add(f"{c}_eqfrom{i}", "and", eq_above, equal)
    if len(terms) == 1:
        greater = terms[0]
    else:
        greater = gates.add(f"{c}_gt", "or", *terms)
    keep = gates.add(f"{c}_ngt", "not", greater)
    lo, hi = [], []
    for i in range(len(a)):
        lo_from_b = gates.add(f"{c}_lo{i}_b", "and", greater, b[i])
        lo_from_a = gates.add(f"{c}_lo{i}_a", "and", keep, a[i])
        lo.append(gates.add(f"{c}_lo{i}", "or", lo_from_b, lo_from_a))
        hi_from_a = gates.add(f"{c}_hi{i}_a", "and", greater, a[i])
        hi_from_b = gates.add(f"{c}_hi{i}_b", "and", keep, b[i])
        hi.append(gates.add(f"{c}_hi{i}", "or", hi_from_a, hi_from_b))
    return lo, hi


# --- style "mux" -----------------------------------------------------------------

def _mux_compare_swap(gates: GateList, c: str, a: Bits, b: Bits, low: int, signed: bool) -> tuple[Bits, Bits]:
    """Compare-and-swap with a least-significant-first ripple comparison and mux selection."""
    top = len(a) - 1
    greater: Signal | None = None
    for i in range(low, top + 1):
        name = f"{c}_gt" if i == top else f"{c}_gtupto{i}"
        winner, loser = _winner_loser(a, b, i, signed)
        if greater is None:
            greater = gates.add(name, "mux", loser, winner, 0)  # winner AND NOT loser
        else:
            differ = gates.add(f"{c}_ne{i}", "xor", a[i], b[i])
            greater = gates.add(name, "mux", differ, greater, winner)
    lo = [gates.add(f"{c}_lo{i}", "mux", greater, a[i], b[i]) for i in range(len(a))]
    hi = [gates.add(f"{c}_hi{i}", "mux", greater, b[i], a[i]) for i in range(len(a))]
    return lo, hi


# --- style "xor" -------------------------------------------------------------------

def _xor_compare_swap(gates: GateList, c: str, a: Bits, b: Bits, low: int, signed: bool) -> tuple[Bits, Bits]:
    """Compare-and-swap with one AND per compared bit and one AND per moved bit."""
    top = len(a) - 1
    carry: Signal | None = None  # None: the constant 0
    for i in range(low, top + 1):
        name = f"{c}_gt" if i == top else f"{c}_gtupto{i}"
        winner, loser = _winner_loser(a, b, i, signed)
        if carry is None:
            both = gates.add(f"{c}_both{i}", "and", winner, loser)
            carry = gates.add(name, "xor", winner, both)  # winner AND NOT loser
        else:
            winner_flip = gates.add(f"{c}_wc{i}", "xor", winner, carry)
            loser_flip = gates.add(f"{c}_lc{i}", "xor", loser, carry)
            both = gates.add(f"{c}_wlc{i}", "and", winner_flip, loser_flip)
            carry = gates.add(name, "xor", winner, both)
    lo, hi = [], []
    for i in range(len(a)):
        differ = gates.add(f"{c}_diff{i}", "xor", a[i], b[i])
        mask = gates.add(f"{c}_swap{i}", "and", carry, differ)
        lo.append(gates.add(f"{c}_lo{i}", "xor", a[i], mask))
        hi.append(gates.add(f"{c}_hi{i}", "xor", b[i], mask))
    return lo, hi


STYLES: dict[str, CompareSwap] = {
    "and-or": _and_or_compare_swap,
    "mux": _mux_compare_swap,
    "xor": _xor_compare_swap,
}
"""Lowering styles by name; each builds a compare-and-swap in its own way."""

STYLE_SUMMARIES = {
    "and-or": "AND/OR/NOT gates, most-significant-first equality chain",
    "mux": "least-significant-first ripple comparison, mux selection",
    "xor": "XOR-heavy with one AND per compared bit and per moved bit",
}


def _check_arguments(network: ComparatorNetwork, width: int, style: str, key_bits: int | None) -> None:
    if isinstance(width, bool) or not isinstance(width, int) or not 1 <= width <= MAX_WIDTH:
        raise ValueError(f"width must be an integer from 1 to {MAX_WIDTH}, got {width!r}")
    if style not in STYLES:
        raise ValueError(f"unknown style {style!r}; known styles: {', '.join(STYLES)}")
    if key_bits is not None and (isinstance(key_bits, bool) or not isinstance(key_bits, int)
                                 or not 1 <= key_bits <= width):
        raise ValueError(f"key_bits must be an integer from 1 to the width {width}, got {key_bits!r}")
    if not isinstance(network, ComparatorNetwork):
        raise TypeError(f"expected a ComparatorNetwork, got {type(network).__name__}")


def lowered_claim(claim: Property | None, signed: bool, key_bits: int | None) -> Property | None:
    """What the lowered circuit of a network with ``claim`` can claim.

    A comparator network that has a property for values of any total order
    has it for two's complement words too, so a claim keeps its kind and
    takes ``signed``.  Compared on key bits only, a sorting network sorts by
    key (the keys go through the network like values, and whole words follow
    them); other claims have no key-only form and are dropped.

    >>> lowered_claim(Sorts(), True, None)
    Sorts(signed=True, order='ascending')
    >>> lowered_claim(Sorts(), False, 2)
    PartialSort(signed=False, key_bits=2, stable=False)
    """
    if claim is None:
        return None
    if key_bits is None:
        return dataclasses.replace(claim, signed=signed)
    if isinstance(claim, Sorts) and claim.order == "ascending":
        return PartialSort(signed=signed, key_bits=key_bits)
    return None


def lower_network(network: ComparatorNetwork, width: int, style: str = "and-or", signed: bool = False,
                  key_bits: int | None = None) -> GateCircuit:
    """The gate circuit that runs ``network`` on ``width``-bit words.

    Parameters
    ----------
    network : ComparatorNetwork
        Any network; reversed comparators ``(a, b)`` with ``a > b`` work as in
        :meth:`ComparatorNetwork.apply` (the smaller word to channel ``a``).
    width : int
        Bits per word, 1 to :data:`MAX_WIDTH`.
    style : str
        A key of :data:`STYLES` (see the module docstring).
    signed : bool
        Compare words as two's complement instead of unsigned.
    key_bits : int or None
        Compare only this many most significant bits (1 to ``width``);
        ``None`` or ``width`` compares whole words.

    Returns
    -------
    GateCircuit
        Inputs ``x0..x(n-1)``, outputs ``y0..y(n-1)``; the gates of
        comparator number ``k`` (in network order) are named ``c<k>_...``,
        with ``c<k>_gt`` the comparison and ``c<k>_lo<i>``, ``c<k>_hi<i>`` the
        output bits.  Named ``<network>-w<width>-<style>`` (with ``-signed``
        and ``-k<key_bits>`` when they apply); the claim is the network's,
        made signed or key-only by :func:`lowered_claim`.

    Raises
    ------
    ValueError
        For a width, style or key_bits out of range.

    Examples
    --------
    >>> net = ComparatorNetwork(2, ((0, 1),), name="pair")
    >>> circuit = lower_network(net, 2, style="xor", key_bits=1)
    >>> circuit.name, circuit.op_counts()
    ('pair-w2-xor-k1', {'and': 3, 'xor': 7})
    >>> circuit.evaluate([3, 1]), circuit.evaluate([2, 3])
    ([1, 3], [2, 3])
    """
    _check_arguments(network, width, style, key_bits)
    if key_bits == width:
        key_bits = None
    build = STYLES[style]
    low = 0 if key_bits is None else width - key_bits
    inputs = tuple(Word(f"x{i}", width) for i in range(network.channels))
    wires: list[Bits] = [[bit_name(word.name, j) for j in range(width)] for word in inputs]
    gates = GateList()
    for index, (a, b) in enumerate(network.comparators):
        wires[a], wires[b] = build(gates, f"c{index}", wires[a], wires[b], low, signed)
    outputs = tuple(OutputWord(f"y{i}", tuple(bits)) for i, bits in enumerate(wires))
    base = network.name or f"network-{network.channels}"
    name = f"{base}-w{width}-{style}" + ("-signed" if signed else "") + (f"-k{key_bits}" if key_bits else "")
    order = "two's complement" if signed else "unsigned"
    compared = f"on their {key_bits} most significant bits" if key_bits else "as whole words"
    description = (f"{base} on {width}-bit words: every comparator is a compare-and-swap comparing {order} "
                   f"words {compared} ({STYLE_SUMMARIES[style]}).")
    return GateCircuit(inputs, tuple(gates.gates), outputs, name=name, description=description,
                       claim=lowered_claim(network.claim, signed, key_bits))
