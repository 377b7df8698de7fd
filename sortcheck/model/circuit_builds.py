"""The checked entry point for building reference gate circuits (what ``sortcheck build`` calls).

:func:`build_circuit` builds either a sorting network family lowered to
words (:func:`~sortcheck.model.lowering.lower_network`) or the counting
sorter (:func:`~sortcheck.model.counting.counting_sorter`), and turns every
bad argument into a :class:`~sortcheck.errors.UsageError` with one line of
text, as :func:`~sortcheck.model.families.build_family` does for networks.
"""

from __future__ import annotations

from sortcheck.errors import UsageError
from sortcheck.model.circuit import GateCircuit
from sortcheck.model.counting import counting_sorter
from sortcheck.model.families import FAMILIES, build_family
from sortcheck.model.lowering import STYLES, lower_network

COUNTING = "counting"
"""The name of the counting sorter next to the family names."""

DEFAULT_STYLE = "and-or"

MAX_GATES = 10_000_000
"""Largest lowered circuit :func:`build_circuit` builds, estimated before building."""

GATES_PER_BIT = 13
"""An upper bound on gates per bit of one compare-and-swap in any style (and-or: 7 to compare, 6 to select)."""


def build_circuit(family: str, n: int, width: int, style: str | None = None, key_bits: int | None = None,
                  signed: bool = False) -> GateCircuit:
    """Build a gate circuit that sorts ``n`` words of ``width`` bits.

    Parameters
    ----------
    family : str
        A key of :data:`~sortcheck.model.families.FAMILIES`, lowered to
        gates, or ``"counting"`` for the counting sorter.
    n : int
        Number of words.
    width : int
        Bits per word.
    style : str or None
        Lowering style (a key of :data:`~sortcheck.model.lowering.STYLES`),
        ``"and-or"`` when None; the counting sorter takes none.
    key_bits : int or None
        Sort by the ``key_bits`` most significant bits only (families only).
    signed : bool
        Sort two's complement words.

    Raises
    ------
    UsageError
        For an unknown family or style, an option the counting sorter does
        not take, or sizes out of range.

    Examples
    --------
    >>> build_circuit("bitonic", 4, 2, style="mux").name
    'bitonic-4-w2-mux'
    >>> build_circuit("counting", 8, 3, signed=True).name
    'counting-8-w3-signed'
    >>> build_circuit("counting", 8, 3, style="mux")
    Traceback (most recent call last):
    ...
    sortcheck.errors.UsageError: the counting sorter has no style or key bits (they apply to lowered networks)
    """
    if family == COUNTING:
        if style is not None or key_bits is not None:
            raise UsageError("the counting sorter has no style or key bits (they apply to lowered networks)")
        try:
            return counting_sorter(n, width, signed=signed)
        except ValueError as error:
            raise UsageError(str(error)) from None
    if family not in FAMILIES:
        known = ", ".join(sorted(FAMILIES) + [COUNTING])
        raise UsageError(f"unknown circuit family {family!r}; known: {known}")
    style = DEFAULT_STYLE if style is None else style
    if style not in STYLES:
        raise UsageError(f"unknown style {style!r}; known styles: {', '.join(STYLES)}")
    if isinstance(width, bool) or not isinstance(width, int) or width < 1:
        raise UsageError(f"width must be an integer of at least 1, got {width!r}")
    network = build_family(family, n)
    estimate = network.size * (GATES_PER_BIT * width + 2)
    if estimate > MAX_GATES:
        raise UsageError(f"{network.name} on {width}-bit words would have up to {estimate:,} gates, more than the "
                         f"{MAX_GATES:,} supported")
    try:
        return lower_network(network, width, style=style, signed=signed, key_bits=key_bits)
    except ValueError as error:
        raise UsageError(str(error)) from None
