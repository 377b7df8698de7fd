"""Independent re-evaluation of what certificates record: enumerated 0-1 vectors, order relations, composition.

Written apart from the engines' kernels, on purpose: every channel is one
Python integer whose bit ``i`` is the channel's value in lane ``i``, a
comparator is ``&`` and ``|`` on two of them, and each property's 0-1
failure is written out here again.  The engines' numpy and compiled kernels,
their reduction of the input space and their split of the network are not
used, so a bug there cannot hide itself.

>>> from sortcheck.model import ComparatorNetwork, Sorts
>>> network = ComparatorNetwork(3, ((0, 1), (1, 2), (0, 1)))
>>> failing_lane(network.comparators, all_inputs(3, 0, 8), Sorts(), 8) is None
True
>>> failing_lane(network.comparators[:2], all_inputs(3, 0, 8), Sorts(), 8)
3
"""

from __future__ import annotations

from typing import Sequence

from sortcheck.model import Median, Merges, Property, Selects, Sorts, property_from_json

#: Re-evaluation of a whole input space works in blocks of this many lanes.
BLOCK_LANES = 1 << 22


def _repeat(unit: int, period: int, lanes: int) -> int:
    """``unit`` (``period`` bits) repeated to fill ``lanes`` bits, by doubling (shifts, no big multiplication).

    >>> bin(_repeat(0b01, 2, 6))
    '0b10101'
    """
    pattern, length = unit, period
    while length < lanes:
        pattern |= pattern << length
        length *= 2
    return pattern & ((1 << lanes) - 1)


def all_inputs(channels: int, start: int, lanes: int) -> list[int]:
    """Rows of the 0-1 inputs ``start .. start+lanes-1`` (input ``i`` has bit ``c`` of ``i`` on channel ``c``).

    ``start`` is a multiple of ``lanes``, and ``lanes`` a power of two.

    >>> [bin(row) for row in all_inputs(2, 0, 4)]
    ['0b1010', '0b1100']
    """
    rows = []
    full = (1 << lanes) - 1
    for channel in range(channels):
        half = 1 << channel
        if 2 * half <= lanes:
            rows.append(_repeat(((1 << half) - 1) << half, 2 * half, lanes))
        else:
            rows.append(full if (start >> channel) & 1 else 0)
    return rows


def sorted_groups_inputs(channels: int, groups: Sequence[tuple[Sequence[int], str]]) -> tuple[list[int], int]:
    """Rows of every 0-1 vector sorted on each group (channels in no group hold 0), and the lane count.

    Group ``g`` of ``s`` channels takes ``k`` ones from digit ``g`` of the lane
    index in radices ``s + 1``; ascending puts them last, descending first.

    >>> rows, lanes = sorted_groups_inputs(2, [((0, 1), "ascending")])
    >>> lanes, [bin(row) for row in rows]
    (3, ['0b100', '0b110'])
    """
    lanes = 1
    for members, _ in groups:
        lanes *= len(members) + 1
    rows = [0] * channels
    stride = 1
    for members, order in groups:
        size = len(members)
        period = stride * (size + 1)
        for rank, channel in enumerate(members):
            first = stride * (size - rank) if order == "ascending" else stride * (rank + 1)
            unit = ((1 << period) - 1) ^ ((1 << first) - 1)  # lanes whose digit gives this channel a 1
            rows[channel] = _repeat(unit, period, lanes)
        stride = period
    return rows, lanes


def _apply(comparators: Sequence[Sequence[int]], rows: list[int]) -> list[int]:
    rows = list(rows)
    for a, b in comparators:
        low, high = rows[a] & rows[b], rows[a] | rows[b]
        rows[a], rows[b] = low, high
    return rows


def _descents(rows: Sequence[int], descending: bool) -> int:
    fail = 0
    for first, second in zip(rows, rows[1:]):
        fail |= (second & ~first) if descending else (first & ~second)
    return fail


def _failures(prop: Property, rows: Sequence[int], full: int) -> int:
    """Lanes whose 0-1 outputs break ``prop`` (comparators keep the number of ones of every lane)."""
    if isinstance(prop, (Sorts, Merges)):
        return _descents(rows, isinstance(prop, Sorts) and prop.order == "descending")
    if isinstance(prop, Selects):
        first, rest = rows[:prop.count], rows[prop.count:]
        some_one = 0
        for row in first:
            some_one |= row
        some_zero = 0
        for row in rest:
            some_zero |= full & ~row
        fail = some_one & some_zero
        return fail | _descents(first, False) if prop.sorted else fail
    if isinstance(prop, Median):
        middle = (len(rows) - 1) // 2
        at_least = [full] + [0] * (middle + 1)  # at_least[j]: lanes with at least j ones so far
        for row in rows:
            for j in range(middle + 1, 0, -1):
                at_least[j] |= at_least[j - 1] & row
        return (rows[middle] ^ at_least[middle + 1]) & full
    raise TypeError(f"no 0-1 condition for {prop.name}")


def failing_lane(comparators: Sequence[Sequence[int]], rows: list[int], target, lanes: int) -> int | None:
    """The first lane the comparators get wrong for ``target`` (a property, or ``(channels, order)``)."""
    full = (1 << lanes) - 1
    outputs = _apply(comparators, rows)
    if isinstance(target, tuple):
        channels, order = target
        fail = _descents([outputs[c] for c in channels], order == "descending")
    else:
        fail = _failures(target, outputs, full)
    fail &= full
    return None if fail == 0 else (fail & -fail).bit_length() - 1


def recheck_space(comparators: Sequence[Sequence[int]], channels: int, prop: Property, limit: int
                  ) -> tuple[bool | None, int]:
    """Evaluate every 0-1 input ``prop`` speaks about: (holds, or None beyond ``limit`` vectors; vectors).

    >>> from sortcheck.model import Merges
    >>> recheck_space([(0, 2), (1, 2)], 3, Merges(split=2), 100), recheck_space([(1, 2)], 3, Merges(split=2), 100)
    ((True, 6), (False, 6))
    """
    if isinstance(prop, Merges):
        groups = [(tuple(range(prop.split)), "ascending"), (tuple(range(prop.split, channels)), "ascending")]
        rows, lanes = sorted_groups_inputs(channels, groups)
        if lanes > limit:
            return None, lanes
        return failing_lane(comparators, rows, prop, lanes) is None, lanes
    total = 1 << channels
    if total > limit:
        return None, total
    block = min(total, BLOCK_LANES)
    for start in range(0, total, block):
        if failing_lane(comparators, all_inputs(channels, start, block), prop, block) is not None:
            return False, total
    return True, total


def recheck_claim(comparators: Sequence[Sequence[int]], channels: int, claim: dict, limit: int
                  ) -> tuple[bool | None, int]:
    """Evaluate one claim of the sat engine on every vector it speaks about: (holds or None; vectors)."""
    groups = [(tuple(members), order) for members, order in claim["groups"]]
    rows, lanes = sorted_groups_inputs(channels, groups)
    if lanes > limit:
        return None, lanes
    chosen = [comparators[index] for index in claim["comparators"]]
    target = claim["target"]
    goal = property_from_json(target["property"]) if "property" in target else (target["channels"], target["order"])
    return failing_lane(chosen, rows, goal, lanes) is None, lanes


def relations_sort(channels: int, comparators: Sequence[Sequence[int]], descending: bool) -> bool:
    """Re-derive the order relations of a network: do they show every output sorted?

    The relations are one integer ``known`` of ``channels**2`` bits: bit
    ``i*n + j`` says the value on channel ``i`` is at most the one on ``j`` on
    every input.  A comparator ``(a, b)`` makes column ``a`` (what is at most
    the minimum) the AND of columns ``a`` and ``b`` and column ``b`` their OR;
    row ``a`` (what the minimum is at most) the OR of rows ``a`` and ``b``, row
    ``b`` their AND; and ``a <= b``.

    >>> relations_sort(3, [(0, 1), (1, 2), (0, 1)], False), relations_sort(3, [(0, 1), (1, 2)], False)
    (True, False)
    """
    n = channels
    row0 = (1 << n) - 1
    col0 = _repeat(1, n, n * n)
    known = 0
    for a, b in comparators:
        column_a, column_b = (known >> a) & col0, (known >> b) & col0
        row_a, row_b = (known >> (a * n)) & row0, (known >> (b * n)) & row0
        known &= ~((col0 << a) | (col0 << b) | (row0 << (a * n)) | (row0 << (b * n)))
        known |= ((column_a & column_b) << a) | ((column_a | column_b) << b)
        known |= ((row_a | row_b) << (a * n)) | ((row_a & row_b) << (b * n))
        known &= ~((1 << (a * n + a)) | (1 << (b * n + b)) | (1 << (b * n + a)))
        known |= 1 << (a * n + b)
    if descending:
        return all((known >> ((i + 1) * n + i)) & 1 for i in range(n - 1))
    return all((known >> (i * n + i + 1)) & 1 for i in range(n - 1))


def composition_problems(network_size: int, comparators: Sequence[Sequence[int]], channels: int,
                         claims: Sequence[dict]) -> list[str]:
    """What keeps the claims from adding up to the whole network (empty when they do).

    Each group a claim starts from must be a single channel, the input runs of
    a merge, or the target of another claim; groups are disjoint; a claim's
    comparators touch only its groups' channels; the property's claim covers
    every channel, and the comparators of the claims it rests on, unfolded,
    are every comparator of the network once, in an order that keeps the order
    of the comparators on each channel.
    """
    problems: list[str] = []
    proved = {}
    for number, claim in enumerate(claims):
        target = claim["target"]
        if "channels" in target:
            proved[(tuple(target["channels"]), target["order"])] = number
    roots = [claim for claim in claims if "property" in claim["target"]]
    if len(roots) != 1:
        return [f"{len(roots)} claims about the property, expected one"]
    root = roots[0]
    prop = property_from_json(root["target"]["property"])
    runs = set()
    if isinstance(prop, Merges):
        runs = {(tuple(range(prop.split)), "ascending"), (tuple(range(prop.split, channels)), "ascending")}
    sequence: list[int] = []
    stack: list[tuple[dict, bool]] = [(root, False)]
    visits = 0
    while stack:
        claim, unfolded = stack.pop()
        if unfolded:
            sequence.extend(claim["comparators"])
            continue
        visits += 1
        if visits > len(claims):
            return problems + ["the claims rest on each other in a cycle"]
        members = [c for group, _ in claim["groups"] for c in group]
        if len(set(members)) != len(members):
            problems.append("a claim starts from groups that overlap")
        inside = set(members)
        if any(a not in inside or b not in inside for a, b in (comparators[i] for i in claim["comparators"])):
            problems.append("a claim applies comparators outside its channels")
        target = claim["target"]
        if "channels" in target and sorted(target["channels"]) != sorted(inside):
            problems.append("a claim's channels are not those of its groups")
        stack.append((claim, True))
        for group, order in reversed(claim["groups"]):
            key = (tuple(group), order)
            if len(group) == 1 or key in runs:
                continue
            if key not in proved:
                problems.append(f"a claim starts from channels {group[0]}..{group[-1]} sorted {order}, "
                                f"which no claim proves")
                continue
            stack.append((claims[proved[key]], False))
    if sorted(c for group, _ in root["groups"] for c in group) != list(range(channels)):
        problems.append("the property's claim does not cover every channel")
    if sorted(sequence) != list(range(network_size)):
        problems.append("the claims do not use every comparator of the network exactly once")
    last = [-1] * channels
    for index in sequence:
        for channel in comparators[index]:
            if index < last[channel]:
                problems.append("the claims reorder comparators on a channel")
                return problems
            last[channel] = index
    return problems
