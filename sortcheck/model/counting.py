"""A counting-sort circuit for short words: sorting without comparators.

With ``n`` words of ``w`` bits there are only ``V = 2^w`` values, so instead
of comparing words with each other the circuit counts, for every value, how
many inputs lie at or below it, and reads each output position off those
counts.  See :func:`counting_sorter` for the construction.
"""

from __future__ import annotations

from sortcheck.model.circuit import Gate, GateCircuit, OutputWord, Signal, Word, bit_name
from sortcheck.model.lowering import GateList
from sortcheck.model.properties import Sorts

MAX_WIDTH = 16
"""Widest word :func:`counting_sorter` accepts."""

MAX_CELLS = 1 << 18
"""Largest ``words * (2^width - 1)`` (thresholds times words) :func:`counting_sorter` builds."""


class FoldingGates(GateList):
    """A gate list that folds constants, drops repeated inputs and remembers negations.

    >>> gates = FoldingGates()
    >>> gates.and_("t", "a[0]", 1, "a[0]"), gates.or_("u", "a[0]", 1)
    ('a[0]', 1)
    >>> n = gates.not_("n", "a[0]")
    >>> gates.not_("nn", n), len(gates.gates)
    ('a[0]', 1)
    """

    def __init__(self) -> None:
        super().__init__()
        self._negation: dict[Signal, Signal] = {}

    def not_(self, name: str, signal: Signal) -> Signal:
        if isinstance(signal, int):
            return 1 - signal
        if signal not in self._negation:
            out = self.add(name, "not", signal)
            self._negation[signal], self._negation[out] = out, signal
        return self._negation[signal]

    def _associative(self, op: str, name: str, signals: tuple[Signal, ...]) -> Signal:
        absorbing = 0 if op == "and" else 1
        if any(isinstance(s, int) and s == absorbing for s in signals):
            return absorbing
        rest = list(dict.fromkeys(s for s in signals if not isinstance(s, int)))
        if not rest:
            return 1 - absorbing
        return rest[0] if len(rest) == 1 else self.add(name, op, *rest)

    def and_(self, name: str, *signals: Signal) -> Signal:
        return self._associative("and", name, signals)

    def or_(self, name: str, *signals: Signal) -> Signal:
        return self._associative("or", name, signals)


def greater_than_constant(gates: FoldingGates, bits: list[Signal], constant: int, name: str,
                          memo: dict[tuple[int, int], Signal]) -> Signal:
    """The signal ``[value of bits > constant]``, least significant bit first.

    With ``G_j`` saying the bits ``0..j`` exceed the low ``j+1`` bits of the
    constant, ``G_j = bit_j OR G_(j-1)`` where the constant has a 0 and
    ``bit_j AND G_(j-1)`` where it has a 1 (``G_(-1) = 0``).  ``G_j``
    depends only on the low bits of the constant, so ``memo`` (keyed by
    ``(j, low bits)``) shares it between constants of one value.  ``bits``
    must be wide enough for the constant.
    """
    greater: Signal = 0
    for j, bit in enumerate(bits):
        low = constant & ((2 << j) - 1)
        if (j, low) not in memo:
            gate = f"{name}_gt{low}" if j == len(bits) - 1 else f"{name}_low{j + 1}_gt{low}"
            if (constant >> j) & 1:
                memo[(j, low)] = gates.and_(gate, bit, greater)
            else:
                memo[(j, low)] = gates.or_(gate, bit, greater)
        greater = memo[(j, low)]
    return greater


def popcount(gates: FoldingGates, bits: list[Signal], name: str) -> list[Signal]:
    """The number of 1s among ``bits``, in binary (least significant first), from adders.

    Column compression: while a column of equal weight holds 3 bits, a full
    adder (``s = a XOR b XOR c``, ``carry = (a AND b) OR (c AND (a XOR b))``)
    turns them into one bit there and one in the next column; 2 bits take a
    half adder (``XOR``, ``AND``).  Bits are taken from the front of a column
    and sums go to its back, which keeps the adder tree shallow.
    """
    columns: list[list[Signal]] = [list(bits)]
    result: list[Signal] = []
    adders = 0
    j = 0
    while j < len(columns):
        column = columns[j]
        while len(column) > 1:
            if j + 1 == len(columns):
                columns.append([])
            tag = f"{name}_add{adders}"
            adders += 1
            a, b = column.pop(0), column.pop(0)
            half = gates.add(f"{tag}_x", "xor", a, b)
            if len(column) >= 1:
                c = column.pop(0)
                column.append(gates.add(f"{tag}_s", "xor", half, c))
                both = gates.add(f"{tag}_ab", "and", a, b)
                through = gates.add(f"{tag}_cx", "and", c, half)
                columns[j + 1].append(gates.add(f"{tag}_c", "or", both, through))
            else:
                column.append(half)
                columns[j + 1].append(gates.add(f"{tag}_c", "and", a, b))
        result.append(column[0] if column else 0)
        j += 1
    return result


def _check_arguments(words: int, width: int) -> None:
    for label, value, most in (("words", words, None), ("width", width, MAX_WIDTH)):
        if isinstance(value, bool) or not isinstance(value, int) or value < 1 or (most and value > most):
            limit = f"from 1 to {most}" if most else "of at least 1"
            raise ValueError(f"{label} must be an integer {limit}, got {value!r}")
    cells = words * ((1 << width) - 1)
    if cells > MAX_CELLS:
        raise ValueError(f"a counting sorter of {words} words of {width} bits needs {cells:,} threshold tests, "
                         f"more than the {MAX_CELLS:,} supported")


def counting_sorter(words: int, width: int, signed: bool = False) -> GateCircuit:
    """A sorting circuit for ``words`` words of ``width`` bits that counts instead of comparing.

    Values are ranked ``t = 0 .. V-1`` (``V = 2^width``) in the order sorted
    by: the value ``t`` itself, or for two's complement the value whose code
    is ``t`` with the top bit flipped (rank 0 is the most negative value).

    1. **Thresholds.** For every input ``i`` and rank ``t < V-1``, the bit
       ``x<i>_gt<t> = [rank(x_i) > t]`` is a comparison with the constant
       ``t`` (:func:`greater_than_constant`).
    2. **Counts.** ``D_t``, the number of inputs of rank above ``t``, is the
       :func:`popcount` of those ``n`` bits; the number at or below ``t`` is
       ``C_t = n - D_t`` (``C_(V-1) = n`` needs no gates).
    3. **Positions.** Output ``p`` holds the smallest rank ``r`` with
       ``C_r > p``, that is with ``D_r <= q`` for ``q = n - 1 - p``.
       ``A_t = [D_t > q]`` (a comparison of ``D_t`` with the constant ``q``)
       is 1 for ``t < r`` and 0 from ``t = r`` on, so ``r`` lies in the
       block of ranks ``[s, e]`` exactly when ``A_(s-1) AND NOT A_e``
       (``A_(V-1) = 0``).  Bit ``j`` of ``r`` is the OR of that test over
       the blocks of ``2^j`` ranks whose bit ``j`` is 1 (a one-hot selection
       of the block; the top bit is the single test ``A_(V/2-1)``).  For two's
       complement the top bit is flipped back.

    All constant comparisons of one count share their low-bit stages, and
    gates no output needs are dropped.  The gate count grows like
    ``n * 2^width * log n``: 16 words of 2 bits take 380 gates, 8 words of 3
    bits 423 (``len(counting_sorter(16, 2).gates)``; a few NOTs more when
    signed).

    Parameters
    ----------
    words : int
        Number of input (and output) words, at least 1.
    width : int
        Bits per word, 1 to :data:`MAX_WIDTH`; ``words * (2^width - 1)`` at
        most :data:`MAX_CELLS`.
    signed : bool
        Sort two's complement words instead of unsigned ones.

    Returns
    -------
    GateCircuit
        Inputs ``x0..``, outputs ``y0..`` in ascending order, named
        ``counting-<words>-w<width>`` (``-signed``), claiming ``Sorts``.

    Raises
    ------
    ValueError
        For a word count or width out of range.

    Examples
    --------
    >>> circuit = counting_sorter(5, 2)
    >>> circuit.evaluate([3, 0, 2, 3, 1])
    [0, 1, 2, 3, 3]
    >>> counting_sorter(3, 2, signed=True).evaluate([1, 3, 2])   # 1, -1, -2
    [2, 3, 1]
    >>> len(counting_sorter(16, 2).gates), len(counting_sorter(8, 3).gates)
    (380, 423)
    """
    _check_arguments(words, width)
    gates = FoldingGates()
    values = 1 << width
    inputs = tuple(Word(f"x{i}", width) for i in range(words))
    above: list[list[Signal]] = [[] for _ in range(values - 1)]  # above[t][i] = [rank(x_i) > t]
    for i, word in enumerate(inputs):
        rank_bits: list[Signal] = [bit_name(word.name, j) for j in range(width)]
        if signed:
            rank_bits[-1] = gates.not_(f"x{i}_nsign", rank_bits[-1])
        memo: dict[tuple[int, int], Signal] = {}
        for t in range(values - 1):
            above[t].append(greater_than_constant(gates, rank_bits, t, f"x{i}", memo))
    count_width = max(words.bit_length(), (words - 1).bit_length())
    counts = []
    for t in range(values - 1):
        bits = popcount(gates, above[t], f"cgt{t}")
        counts.append(bits + [0] * (count_width - len(bits)))
    count_memos: list[dict[tuple[int, int], Signal]] = [{} for _ in counts]
    outputs = []
    for p in range(words):
        q = words - 1 - p
        below = [greater_than_constant(gates, counts[t], q, f"cgt{t}", count_memos[t]) for t in range(values - 1)]
        below.append(0)
        outputs.append(OutputWord(f"y{p}", tuple(_position_bits(gates, below, p, width, signed))))
    name = f"counting-{words}-w{width}" + ("-signed" if signed else "")
    order = "two's complement" if signed else "unsigned"
    description = (f"Counting sorter for {words} {order} words of {width} bits: per value a binary count of the "
                   "inputs at or below it, each output read off the counts; no comparators.")
    return GateCircuit(inputs, live_gates(gates.gates, outputs), tuple(outputs), name=name,
                       description=description, claim=Sorts(signed=signed))


def live_gates(gates: list[Gate], outputs: list[OutputWord]) -> tuple[Gate, ...]:
    """The gates some output depends on, in their order (constant folding can leave others unused).

    >>> live_gates([Gate("t", "not", ("a[0]",)), Gate("u", "not", ("t",))], [OutputWord("y", ("t",))])
    (Gate(out='t', op='not', inputs=('a[0]',)),)
    """
    needed = {bit for word in outputs for bit in word.bits if isinstance(bit, str)}
    kept = []
    for gate in reversed(gates):  # every gate comes after the gates it reads
        if gate.out in needed:
            kept.append(gate)
            needed.update(s for s in gate.inputs if isinstance(s, str))
    return tuple(reversed(kept))


def _position_bits(gates: FoldingGates, below: list[Signal], p: int, width: int, signed: bool) -> list[Signal]:
    """The bits of output ``p`` from ``below[t] = A_t = [t < r]`` (step 3 of :func:`counting_sorter`)."""
    values = len(below)
    bits: list[Signal] = []
    for j in range(width):
        size = 1 << j
        starts = range(size, values, 2 * size)
        terms = []
        for start in starts:
            end = start + size - 1
            term = f"y{p}_bit{j}" if len(starts) == 1 else f"y{p}_bit{j}_in{start}_{end}"
            reached = gates.not_(f"y{p}_upto{end}", below[end])  # r <= end
            terms.append(gates.and_(term, below[start - 1], reached))
        bit = gates.or_(f"y{p}_bit{j}", *terms)
        if signed and j == width - 1:
            bit = gates.not_(f"y{p}_bit{j}_signed", bit)
        bits.append(bit)
    return bits
