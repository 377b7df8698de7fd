"""CNF encodings of comparator networks and of each property's 0-1 violation condition.

On 0-1 values a comparator ``(a, b)`` puts ``x_a AND x_b`` on channel ``a``
and ``x_a OR x_b`` on channel ``b`` (whichever of ``a`` and ``b`` is larger),
so a network is a circuit of AND and OR gates; the Tseitin encoding gives six
clauses per comparator.  A property's *violation condition* is a set of
clauses that some 0-1 input satisfies exactly when the network gets that input
wrong; conjoined with the network, it is unsatisfiable exactly when the
property holds for every input of any values (the 0-1 principle, see
``encodings/zero-one-conditions.md`` and ``encodings/comparator-network-cnf.md``).

Variables come from a :class:`pysat.formula.IDPool` with readable keys:

* ``("input", channel)`` -- the 0-1 input on a channel;
* ``("wire", index, "low")`` and ``("wire", index, "high")`` -- the minimum and
  maximum that comparator ``index`` (its position in ``network.comparators``)
  puts on its channels;
* ``("pair", i)``, ``("select", "first")``, ... -- auxiliaries of the
  violation conditions, and ``("guard", ...)`` selectors.

The output of a channel is the last wire on it (its input when no comparator
touches it); :attr:`NetworkEncoding.outputs` maps channels to those variables.

Examples
--------
>>> from sortcheck.model import ComparatorNetwork, Sorts
>>> enc = encode_network(ComparatorNetwork(2, ((0, 1),)))
>>> enc.outputs, len(enc.clauses)
((3, 4), 6)
>>> enc.pool.obj(3)
('wire', 0, 'low')
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Iterable, Sequence

from pysat.card import CardEnc, EncType
from pysat.formula import IDPool

from sortcheck.model import ComparatorNetwork, Median, Merges, Property, Selects, Sorts

Clause = list[int]


@dataclass
class NetworkEncoding:
    """The clauses of a network, its input and output variables, and the pool that names them."""

    pool: IDPool
    inputs: tuple[int, ...]
    outputs: tuple[int, ...]
    clauses: list[Clause] = field(default_factory=list)
    #: Variables just before each encoded comparator: (index, min-side variable, max-side variable).
    before: list[tuple[int, int, int]] = field(default_factory=list)


def comparator_clauses(x: int, y: int, low: int, high: int) -> list[Clause]:
    """Six clauses for ``low = x AND y`` and ``high = x OR y``.

    >>> comparator_clauses(1, 2, 3, 4)
    [[-3, 1], [-3, 2], [3, -1, -2], [-4, 1, 2], [4, -1], [4, -2]]
    """
    return [[-low, x], [-low, y], [low, -x, -y], [-high, x, y], [high, -x], [high, -y]]


def encode_network(network: ComparatorNetwork, pool: IDPool | None = None,
                   comparators: Iterable[int] | None = None, inputs: Sequence[int] | None = None
                   ) -> NetworkEncoding:
    """Encode the comparators of ``network`` (all, or the given indices in the given order).

    Parameters
    ----------
    network : ComparatorNetwork
    pool : IDPool or None
        Where variables come from (a new pool by default).
    comparators : iterable of int or None
        Indices into ``network.comparators`` to encode, in order of
        evaluation (default: all of them, in network order).  Any order that
        keeps the order of the comparators on each channel computes the same
        function.
    inputs : sequence of int or None
        Variables holding the channels' values before the first encoded
        comparator (default: ``("input", channel)``).

    Returns
    -------
    NetworkEncoding
    """
    pool = pool or IDPool()
    start = tuple(inputs) if inputs is not None else tuple(pool.id(("input", c)) for c in range(network.channels))
    wires = list(start)
    encoding = NetworkEncoding(pool, start, (), [])
    indices = range(network.size) if comparators is None else comparators
    for index in indices:
        a, b = network.comparators[index]
        x, y = wires[a], wires[b]
        low, high = pool.id(("wire", index, "low")), pool.id(("wire", index, "high"))
        encoding.before.append((index, x, y))
        encoding.clauses.extend(comparator_clauses(x, y, low, high))
        wires[a], wires[b] = low, high
    encoding.outputs = tuple(wires)
    return encoding


def chain_clauses(variables: Sequence[int], descending: bool = False) -> list[Clause]:
    """Clauses saying the variables ascend (0s then 1s), or descend.

    >>> chain_clauses([1, 2, 3]), chain_clauses([1, 2], descending=True)
    ([[-1, 2], [-2, 3]], [[-2, 1]])
    """
    if descending:
        return [[-variables[i + 1], variables[i]] for i in range(len(variables) - 1)]
    return [[-variables[i], variables[i + 1]] for i in range(len(variables) - 1)]


def descent_clauses(outputs: Sequence[int], pool: IDPool, descending: bool = False, tag: str = "pair"
                    ) -> tuple[list[Clause], list[int]]:
    """Clauses defining one auxiliary per adjacent pair that is out of order.

    ``(tag, i)`` implies output ``i`` is 1 and output ``i + 1`` is 0
    (ascending; the other way round for descending).  Returns the clauses and
    the auxiliaries; a clause over the auxiliaries then says some pair is out
    of order.
    """
    clauses, pairs = [], []
    for i in range(len(outputs) - 1):
        first, second = (outputs[i + 1], outputs[i]) if descending else (outputs[i], outputs[i + 1])
        pair = pool.id((tag, i))
        pairs.append(pair)
        clauses += [[-pair, first], [-pair, -second]]
    return clauses, pairs


def violation_clauses(prop: Property, inputs: Sequence[int], outputs: Sequence[int], pool: IDPool
                      ) -> list[Clause] | None:
    """Clauses satisfied exactly by the 0-1 inputs whose outputs break ``prop``.

    ``inputs`` and ``outputs`` are the variables by channel.  Returns None
    when no 0-1 input can break the property (``selects:n`` unsorted, a
    one-channel sort), so there is nothing to ask a solver.

    * sorts: some adjacent output pair is out of order;
    * merges:m: the inputs ascend on ``0..m-1`` and on ``m..n-1``, and some
      adjacent output pair is out of order;
    * selects:t: a 1 among the first t outputs and a 0 after them, or (sorted)
      a descent among the first t;
    * median (n = 2k+1): output k is 1 while at most k inputs are 1, or output k
      is 0 while at least k+1 are (comparators keep the number of ones).

    Examples
    --------
    >>> pool = IDPool(start_from=3)  # variables 1 and 2 are the outputs
    >>> violation_clauses(Sorts(), [1, 2], [1, 2], pool)
    [[-3, 1], [-3, -2], [3]]
    """
    n = len(outputs)
    if isinstance(prop, (Sorts, Merges)):
        descending = isinstance(prop, Sorts) and prop.order == "descending"
        if n < 2:
            return None
        clauses, pairs = descent_clauses(outputs, pool, descending)
        if isinstance(prop, Merges):
            clauses = chain_clauses(inputs[:prop.split]) + chain_clauses(inputs[prop.split:]) + clauses
        return clauses + [pairs]
    if isinstance(prop, Selects):
        return _selects_clauses(prop, outputs, pool)
    if isinstance(prop, Median):
        return _median_clauses(inputs, outputs, pool)
    raise TypeError(f"no 0-1 violation condition for {prop.name}")


def _selects_clauses(prop: Selects, outputs: Sequence[int], pool: IDPool) -> list[Clause] | None:
    t, n = prop.count, len(outputs)
    choices, clauses = [], []
    if t < n:
        misplaced = pool.id(("select", "misplaced"))
        choices.append(misplaced)
        clauses += [[-misplaced, *outputs[:t]], [-misplaced, *(-y for y in outputs[t:])]]
    if prop.sorted and t >= 2:
        pair_clauses, pairs = descent_clauses(outputs[:t], pool)
        unsorted = pool.id(("select", "unsorted"))
        choices.append(unsorted)
        clauses += pair_clauses + [[-unsorted, *pairs]]
    return clauses + [choices] if choices else None


def _median_clauses(inputs: Sequence[int], outputs: Sequence[int], pool: IDPool) -> list[Clause]:
    k = (len(outputs) - 1) // 2
    middle = outputs[k]
    too_large, too_small = pool.id(("median", "too-large")), pool.id(("median", "too-small"))
    clauses: list[Clause] = [[too_large, too_small], [-too_large, middle], [-too_small, -middle]]
    few = CardEnc.atmost(list(inputs), bound=k, vpool=pool, encoding=EncType.seqcounter)
    many = CardEnc.atleast(list(inputs), bound=k + 1, vpool=pool, encoding=EncType.seqcounter)
    clauses += [[-too_large, *clause] for clause in few.clauses]
    clauses += [[-too_small, *clause] for clause in many.clauses]
    return clauses


def part_clauses(network: ComparatorNetwork, groups: list, comparators: list[int], target, pool: IDPool,
                 contradiction: bool = False) -> tuple[list | None, list[int]]:
    """The CNF of a vector sorted on ``groups`` that breaks ``target`` after ``comparators``, and the input
    variables by channel (0 on channels the target does not read).

    ``target`` is a property of the whole network or ``("sorted", channels, order)``.  The clauses are None
    when no 0-1 input can break the property (with ``contradiction``: a contradiction instead).

    >>> from pysat.solvers import Solver
    >>> clauses, inputs = part_clauses(ComparatorNetwork(2, ()), [((0,), "ascending"), ((1,), "ascending")], [],
    ...                                Sorts(), IDPool())
    >>> Solver(name="minisat22", bootstrap_with=clauses).solve(), inputs
    (True, [1, 2])
    """
    channels = target[1] if isinstance(target, tuple) else tuple(range(network.channels))
    inputs = [0] * network.channels
    for channel in channels:
        inputs[channel] = pool.id(("input", channel))
    encoding = encode_network(network, pool, comparators, inputs)
    clauses = list(encoding.clauses)
    for members, order in groups:
        clauses += chain_clauses([inputs[c] for c in members], order == "descending")
    if isinstance(target, tuple):
        outputs = [encoding.outputs[c] for c in channels]
        pair_clauses, pairs = descent_clauses(outputs, pool, target[2] == "descending")
        return clauses + pair_clauses + [pairs], inputs
    condition = violation_clauses(target, inputs, encoding.outputs, pool)
    if condition is None and not contradiction:
        return None, inputs
    if condition is None:
        never = pool.id(("never",))
        condition = [[never], [-never]]
    return clauses + condition, inputs


def plain_cnf(network: ComparatorNetwork, prop: Property = Sorts()) -> NetworkEncoding:
    """The plain encoding: six clauses for every comparator, then the violation condition.

    This is the benchmark baseline and a test oracle.  When no input can
    break the property, the condition is ``v AND NOT v`` for a variable keyed
    ``("never",)``, so the CNF is unsatisfiable as it should be.

    >>> from sortcheck.model import ComparatorNetwork
    >>> enc = plain_cnf(ComparatorNetwork(2, ((0, 1),)))
    >>> len(enc.clauses), enc.pool.top
    (9, 5)
    """
    encoding = encode_network(network)
    condition = violation_clauses(prop, encoding.inputs, encoding.outputs, encoding.pool)
    if condition is None:
        never = encoding.pool.id(("never",))
        condition = [[never], [-never]]
    encoding.clauses.extend(condition)
    return encoding


def annotated_dimacs(network: ComparatorNetwork, prop: Property = Sorts()) -> str:
    """The plain encoding of ``network`` and ``prop`` as DIMACS, with comments naming channels and variables.

    >>> from sortcheck.model import ComparatorNetwork
    >>> print(annotated_dimacs(ComparatorNetwork(2, ((0, 1),))).splitlines()[3])
    c output channel 0 = var 3, output channel 1 = var 4
    """
    encoding = plain_cnf(network, prop)
    comments = [f"sortcheck plain CNF: {network.channels} channels, comparators {list(network.comparators)}",
                f"satisfiable exactly when some 0-1 input breaks: {prop.describe()}",
                "input channel c = var c+1; comparator k puts (wire k low) on its first channel, (wire k high) "
                "on its second",
                ", ".join(f"output channel {c} = var {v}" for c, v in enumerate(encoding.outputs))]
    return dimacs(encoding.clauses, encoding.pool, comments)


def dimacs(clauses: Sequence[Clause], pool: IDPool, comments: Sequence[str] = ()) -> str:
    """DIMACS text with comment lines naming every variable by its key.

    >>> pool = IDPool(); a, b = pool.id(("input", 0)), pool.id(("input", 1))
    >>> print(dimacs([[a, -b]], pool), end="")
    c var 1 = input 0
    c var 2 = input 1
    p cnf 2 1
    1 -2 0
    """
    lines = [f"c {line}" for line in comments]
    for variable in range(1, pool.top + 1):
        key = pool.obj(variable)
        name = " ".join(str(part) for part in key) if isinstance(key, tuple) else str(key)
        lines.append(f"c var {variable} = {name}")
    lines.append(f"p cnf {pool.top} {len(clauses)}")
    lines += [" ".join(str(literal) for literal in clause) + " 0" for clause in clauses]
    return "\n".join(lines) + "\n"
