"""Variable orders for the input bits of word circuits, and the schedule in which the engine tries them.

The size of a BDD depends on the order of its variables, often
exponentially.  Word circuits have two natural orders:

* **word-major**: every bit of word 0, most significant first, then word 1,
  and so on.  Functions that look at one word at a time and then count
  (counting sorters, ``[x_j >= v]`` and any symmetric function of them) stay
  small: a BDD reading the words one by one only has to remember a count.
* **interleaved**: the most significant bit of every word, then the next bit
  of every word, and so on.  Comparisons of whole words (compare-and-swap
  blocks, lowered comparator networks) stay small: reading from the top bit
  down, a comparison is decided at the first bit where the words differ.

A third order, **dynamic**, starts from word-major and lets CUDD reorder
variables while it works (group sifting, the bits of a word kept together).
It is tried only when asked for: reordering runs inside a BDD operation, which
cannot be interrupted, and on a counting sorter of 64 x 2 bits one operation
took 79 s (loaded 2-core machine) before the attempt reached 463,000 nodes.

:func:`first_round` and :func:`second_round` list the attempts: every fixed
order under a small node limit first, then every order under the full limit,
the one that got furthest first; the first attempt that completes decides.
A cheap order that fails is thus left early and an order that needs the full
limit still gets it.

>>> from sortcheck.model.counting import counting_sorter
>>> circuit = counting_sorter(2, 2)
>>> word_major(circuit), interleaved(circuit)
(('x0[1]', 'x0[0]', 'x1[1]', 'x1[0]'), ('x0[1]', 'x1[1]', 'x0[0]', 'x1[0]'))
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable, Sequence

from sortcheck.model import GateCircuit, bit_name

#: Orders by name; ``dynamic`` starts from ``word-major`` (see the module text).
ORDER_NAMES = ("word-major", "interleaved", "dynamic")

#: The orders tried when none are asked for.
DEFAULT_ORDERS = ("word-major", "interleaved")

#: The first round's node limit is the full limit divided by this.
FIRST_ROUND_DIVISOR = 16


def word_major(circuit: GateCircuit) -> tuple[str, ...]:
    """Every bit of input word 0 (most significant first), then of word 1, ..."""
    return tuple(bit_name(word.name, i) for word in circuit.inputs for i in reversed(range(word.width)))


def interleaved(circuit: GateCircuit) -> tuple[str, ...]:
    """The most significant bit of every word (in word order), then the next bit of every word, ...

    Words of different widths are aligned at their most significant bit.
    """
    width = circuit.width
    names = []
    for level in range(width):
        for word in circuit.inputs:
            i = word.width - 1 - level
            if i >= 0:
                names.append(bit_name(word.name, i))
    return tuple(names)


_STATIC: dict[str, Callable[[GateCircuit], tuple[str, ...]]] = {
    "word-major": word_major, "interleaved": interleaved, "dynamic": word_major,
}


def variable_order(circuit: GateCircuit, name: str) -> tuple[str, ...]:
    """The starting order of the input bits for the order called ``name`` (a key of :data:`ORDER_NAMES`)."""
    try:
        return _STATIC[name](circuit)
    except KeyError:
        raise ValueError(f"unknown variable order {name!r} (expected one of {', '.join(ORDER_NAMES)})") from None


def word_groups(circuit: GateCircuit, name: str) -> list[tuple[str, int]]:
    """Blocks that dynamic reordering keeps together: each word's bits (first variable, width) in word-major."""
    if name != "dynamic":
        return []
    return [(bit_name(word.name, word.width - 1), word.width) for word in circuit.inputs]


@dataclass(frozen=True)
class Attempt:
    """One try: a variable order under a node limit."""

    order: str
    node_limit: int

    @property
    def reorder(self) -> bool:
        """Whether the manager reorders variables dynamically in this attempt."""
        return self.order == "dynamic"


def first_round(node_limit: int, orders: Sequence[str] | None = None) -> list[Attempt]:
    """The first attempts: every fixed order under a small node limit (one order given: that order, full limit).

    ``orders`` defaults to :data:`DEFAULT_ORDERS`.

    >>> [(a.order, a.node_limit) for a in first_round(1000)]
    [('word-major', 62), ('interleaved', 62)]
    >>> [(a.order, a.node_limit) for a in first_round(1000, ["interleaved"])]
    [('interleaved', 1000)]
    """
    names = _checked(orders)
    if len(names) == 1:
        return [Attempt(names[0], node_limit)]
    small = max(1, node_limit // FIRST_ROUND_DIVISOR)
    return [Attempt(name, small) for name in names if name != "dynamic"]


def second_round(node_limit: int, orders: Sequence[str] | None = None, progress: dict[str, float] | None = None
                 ) -> list[Attempt]:
    """The attempts under the full limit after a first round that did not complete.

    The fixed orders go first, the one that got furthest in the first round
    (``progress``, by order name: the share of the work done) leading;
    dynamic reordering, the slowest, comes last.  Empty when only one order
    was given (the first round already had the full limit).

    >>> [a.order for a in second_round(1000, progress={"word-major": 0.2, "interleaved": 0.7})]
    ['interleaved', 'word-major']
    >>> [a.order for a in second_round(1000, ORDER_NAMES)]
    ['word-major', 'interleaved', 'dynamic']
    """
    names = _checked(orders)
    if len(names) == 1:
        return []
    progress = progress or {}
    fixed = sorted((name for name in names if name != "dynamic"), key=lambda name: -progress.get(name, 0.0))
    return [Attempt(name, node_limit) for name in fixed + [name for name in names if name == "dynamic"]]


def _checked(orders: Sequence[str] | None) -> list[str]:
    names = list(DEFAULT_ORDERS if orders is None else orders)
    for name in names:
        if name not in ORDER_NAMES:
            raise ValueError(f"unknown variable order {name!r} (expected one of {', '.join(ORDER_NAMES)})")
    if not names:
        raise ValueError("no variable order to try")
    return names
