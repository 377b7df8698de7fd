"""Classic sorting network families, built on demand.

Every builder is a pure function of the channel count and returns a
:class:`~sortcheck.model.network.ComparatorNetwork` named ``"<family>-<n>"``
that claims :class:`~sortcheck.model.properties.Sorts`.  All comparators are
standard (smaller channel first), so every network sorts ascending.

:data:`FAMILIES` maps the command-line names to the builders and
:func:`build_family` is the checked entry point the command line uses.

Examples
--------
>>> net = build_family("merge-exchange", 4)
>>> net.name, net.size, net.depth
('merge-exchange-4', 5, 3)
>>> net.apply([3, 1, 4, 1])
[1, 1, 3, 4]
"""

from __future__ import annotations

from typing import Callable

from sortcheck.errors import UsageError
from sortcheck.model.network import Comparator, ComparatorNetwork, in_layer_order
from sortcheck.model.properties import Sorts

MAX_CHANNELS = 65536
"""Largest channel count :func:`build_family` accepts."""

MAX_COMPARATORS = 20_000_000
"""Largest network :func:`build_family` builds (about 2 GB as Python tuples)."""

QUADRATIC_FAMILIES = ("insertion", "odd-even-transposition")
"""Families with n(n-1)/2 comparators, for which :data:`MAX_COMPARATORS` binds first."""


def _require_channels(family: str, n: int) -> None:
    """Raise ``ValueError`` unless ``n`` is an integer of at least 1."""
    if isinstance(n, bool) or not isinstance(n, int):
        raise ValueError(f"{family} needs an integer channel count, got {n!r}")
    if n < 1:
        raise ValueError(f"{family} needs at least 1 channel, got {n}")


def _is_power_of_two(n: int) -> bool:
    return n >= 1 and n & (n - 1) == 0


def _network(family: str, n: int, comparators: list[Comparator], description: str) -> ComparatorNetwork:
    network = ComparatorNetwork(n, tuple(comparators), name=f"{family}-{n}", description=description, claim=Sorts())
    return in_layer_order(network)


def merge_exchange(n: int) -> ComparatorNetwork:
    """Batcher's merge exchange sorting network on ``n`` channels.

    The comparators are those Algorithm M (merge exchange) compares, in its
    order: with ``t = ceil(log2 n)``, for ``p = 2^(t-1), ..., 2, 1`` and then
    ``q = 2^(t-1), ..., 2p`` it compares ``(i, i + d)`` for every ``i`` with
    ``i & p == r``, where ``d = p, r = 0`` in the first pass and
    ``d = q - p, r = p`` in the later ones.

    Parameters
    ----------
    n : int
        Number of channels, at least 1 (any value, not only powers of two).

    Returns
    -------
    ComparatorNetwork

    Examples
    --------
    >>> merge_exchange(4).comparators
    ((0, 2), (1, 3), (0, 1), (2, 3), (1, 2))
    >>> merge_exchange(6).apply([5, 0, 4, 1, 3, 2])
    [0, 1, 2, 3, 4, 5]
    """
    _require_channels("merge-exchange", n)
    comparators: list[Comparator] = []
    t = (n - 1).bit_length()
    p = 1 << (t - 1) if t > 0 else 0
    while p > 0:
        q, r, d = 1 << (t - 1), 0, p
        while True:
            comparators.extend((i, i + d) for i in range(n - d) if i & p == r)
            if q == p:
                break
            q, r, d = q // 2, p, q - p
        p //= 2
    return _network("merge-exchange", n, comparators,
                    f"Batcher's merge exchange sorting network on {n} channels.")


def bitonic(n: int) -> ComparatorNetwork:
    """Batcher's bitonic sorter on ``n`` channels, all comparators ascending.

    This is the variant without reversed comparators: instead of sorting one
    half descending, each merge of a block of ``k`` channels starts by
    comparing channel ``i`` with its mirror ``k - 1 - i`` in the block, then
    finishes with half-cleaners at distances ``k/4, ..., 2, 1``.

    Parameters
    ----------
    n : int
        Number of channels, a power of two.

    Returns
    -------
    ComparatorNetwork

    Raises
    ------
    ValueError
        If ``n`` is not a power of two.

    Examples
    --------
    >>> bitonic(4).comparators
    ((0, 1), (2, 3), (0, 3), (1, 2), (0, 1), (2, 3))
    >>> bitonic(8).size, bitonic(8).depth
    (24, 6)
    """
    _require_channels("bitonic", n)
    if not _is_power_of_two(n):
        raise ValueError(f"bitonic needs a power of two, got {n}")
    comparators: list[Comparator] = []
    block = 2
    while block <= n:
        comparators.extend((start + i, start + block - 1 - i)
                           for start in range(0, n, block) for i in range(block // 2))
        distance = block // 4
        while distance >= 1:
            comparators.extend((i, i + distance) for i in range(n) if i & distance == 0)
            distance //= 2
        block *= 2
    return _network("bitonic", n, comparators, f"Batcher's bitonic sorter on {n} channels.")


def odd_even_transposition(n: int) -> ComparatorNetwork:
    """The odd-even transposition sorting network on ``n`` channels.

    It has ``n`` rounds; round ``r`` compares the adjacent channels
    ``(i, i + 1)`` for every ``i`` of the same parity as ``r``.

    Parameters
    ----------
    n : int
        Number of channels, at least 1.

    Returns
    -------
    ComparatorNetwork

    Examples
    --------
    >>> odd_even_transposition(3).comparators
    ((0, 1), (1, 2), (0, 1))
    >>> odd_even_transposition(5).apply([5, 4, 3, 2, 1])
    [1, 2, 3, 4, 5]
    """
    _require_channels("odd-even-transposition", n)
    comparators = [(i, i + 1) for round_index in range(n) for i in range(round_index % 2, n - 1, 2)]
    return _network("odd-even-transposition", n, comparators,
                    f"Odd-even transposition sorting network on {n} channels, {n} rounds.")


def insertion(n: int) -> ComparatorNetwork:
    """The insertion sorting network on ``n`` channels.

    For ``i = 1, ..., n - 1`` it sinks the value on channel ``i`` into the
    sorted prefix with the comparators ``(j - 1, j)`` for ``j = i, ..., 1``.

    Parameters
    ----------
    n : int
        Number of channels, at least 1.

    Returns
    -------
    ComparatorNetwork

    Examples
    --------
    >>> insertion(3).comparators
    ((0, 1), (1, 2), (0, 1))
    >>> insertion(4).size, insertion(4).depth
    (6, 5)
    """
    _require_channels("insertion", n)
    comparators = [(j - 1, j) for i in range(1, n) for j in range(i, 0, -1)]
    return _network("insertion", n, comparators, f"Insertion sorting network on {n} channels.")


def _pairwise_comparators(channels: list[int]) -> list[Comparator]:
    """Pairwise sorting network on ``channels`` (a power-of-two count), in that order.

    Compare the pairs ``(x_i, y_i) = (channels[2i], channels[2i+1])``, sort
    the ``x`` and the ``y`` recursively (which keeps ``x_i <= y_i``), then
    compare ``y_i`` with ``x_(i+d)`` for ``d = m/2, m/4, ..., 1`` where ``m``
    is the number of pairs.
    """
    count = len(channels)
    if count < 2:
        return []
    comparators = [(channels[2 * i], channels[2 * i + 1]) for i in range(count // 2)]
    comparators += _pairwise_comparators(channels[0::2])
    comparators += _pairwise_comparators(channels[1::2])
    pairs = count // 2
    distance = pairs // 2
    while distance >= 1:
        comparators.extend((channels[2 * i + 1], channels[2 * (i + distance)]) for i in range(pairs - distance))
        distance //= 2
    return comparators


def pairwise(n: int) -> ComparatorNetwork:
    """Parberry's pairwise sorting network on ``n`` channels, any ``n >= 1``.

    For ``n`` not a power of two, the network is the one for the next power
    of two ``N`` without the comparators that touch a channel ``>= n``.  That
    is the ``N``-channel network fed ``+infinity`` on channels ``n..N-1``:
    every comparator is standard, so those channels keep ``+infinity``
    throughout, the dropped comparators never exchange anything, and
    channels ``0..n-1`` end with the ``n`` real values in order.

    Parameters
    ----------
    n : int
        Number of channels, at least 1.

    Returns
    -------
    ComparatorNetwork

    Examples
    --------
    >>> pairwise(4).comparators
    ((0, 1), (2, 3), (0, 2), (1, 3), (1, 2))
    >>> pairwise(16).size, pairwise(16).depth
    (63, 10)
    >>> pairwise(6).apply([6, 5, 4, 3, 2, 1])
    [1, 2, 3, 4, 5, 6]
    """
    _require_channels("pairwise", n)
    padded = 1 << (n - 1).bit_length()
    comparators = [(a, b) for a, b in _pairwise_comparators(list(range(padded))) if b < n]
    return _network("pairwise", n, comparators, f"Parberry's pairwise sorting network on {n} channels.")


def _odd_even_merge(first: int, length: int, stride: int, out: list[Comparator]) -> None:
    """Batcher's odd-even merge of the channels ``first, first + stride, ...`` (``length`` of them in all)."""
    step = stride * 2
    if step < length:
        _odd_even_merge(first, length, step, out)
        _odd_even_merge(first + stride, length, step, out)
        out.extend((i, i + stride) for i in range(first + stride, first + length - stride, step))
    else:
        out.append((first, first + stride))


def _odd_even_merge_sort(first: int, length: int, out: list[Comparator]) -> None:
    if length > 1:
        half = length // 2
        _odd_even_merge_sort(first, half, out)
        _odd_even_merge_sort(first + half, half, out)
        _odd_even_merge(first, length, 1, out)


def odd_even_merge(n: int) -> ComparatorNetwork:
    """Batcher's odd-even merge sort on ``n`` channels.

    Sort both halves, then merge them: the runs' even-indexed and odd-indexed
    members are merged recursively and a last layer compares neighbours.
    For ``n`` not a power of two the network on the next power of two is
    built and the comparators that reach past channel ``n - 1`` are left out
    (those channels would hold values larger than any other, which such a
    comparator never moves).

    Examples
    --------
    >>> odd_even_merge(4).comparators
    ((0, 1), (2, 3), (0, 2), (1, 3), (1, 2))
    >>> odd_even_merge(8).size, odd_even_merge(8).depth
    (19, 6)
    >>> odd_even_merge(6).apply([6, 5, 4, 3, 2, 1])
    [1, 2, 3, 4, 5, 6]
    """
    _require_channels("odd-even-merge", n)
    comparators: list[Comparator] = []
    _odd_even_merge_sort(0, 1 << (n - 1).bit_length(), comparators)
    return _network("odd-even-merge", n, [(a, b) for a, b in comparators if b < n],
                    f"Batcher's odd-even merge sort on {n} channels.")


FAMILIES: dict[str, Callable[[int], ComparatorNetwork]] = {
    "merge-exchange": merge_exchange,
    "bitonic": bitonic,
    "odd-even-transposition": odd_even_transposition,
    "insertion": insertion,
    "pairwise": pairwise,
    "odd-even-merge": odd_even_merge,
}
"""Command-line family names and their builders."""


def build_family(name: str, n: int) -> ComparatorNetwork:
    """Build the network of family ``name`` on ``n`` channels.

    Parameters
    ----------
    name : str
        A key of :data:`FAMILIES`.
    n : int
        Number of channels, from 1 to :data:`MAX_CHANNELS`.

    Returns
    -------
    ComparatorNetwork

    Raises
    ------
    UsageError
        For an unknown family, a channel count out of range or one the
        family cannot take.

    Examples
    --------
    >>> build_family("bitonic", 8).name
    'bitonic-8'
    >>> build_family("bitonic", 12)
    Traceback (most recent call last):
    ...
    sortcheck.errors.UsageError: bitonic needs a power of two, got 12
    """
    if name not in FAMILIES:
        known = ", ".join(sorted(FAMILIES))
        raise UsageError(f"unknown family {name!r}; known families: {known}")
    if isinstance(n, int) and not isinstance(n, bool) and n > MAX_CHANNELS:
        raise UsageError(f"{name} is limited to {MAX_CHANNELS} channels, got {n}")
    if name in QUADRATIC_FAMILIES and isinstance(n, int) and n * (n - 1) // 2 > MAX_COMPARATORS:
        raise UsageError(f"{name} on {n} channels would have {n * (n - 1) // 2:,} comparators, more than the "
                         f"{MAX_COMPARATORS:,} supported")
    try:
        return FAMILIES[name](n)
    except ValueError as error:
        raise UsageError(str(error)) from None
