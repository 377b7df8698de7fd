"""Gate-level circuits over words of bits: an immutable model and its metrics.

Signals are named strings.  The bits of an input word ``x0`` of width ``w``
are the signals ``"x0[0]"`` (least significant) to ``"x0[w-1]"``; every gate
defines one new signal; the integers 0 and 1 are constants.  Output words list
their bits least significant first.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field
from functools import cached_property
from typing import TYPE_CHECKING, Sequence


from sortcheck.model.graphs import topological_order

if TYPE_CHECKING:  # pragma: no cover
    import networkx

    from sortcheck.model.properties import Property

Signal = str | int

#: Number of inputs each op accepts: (fewest, most); ``None`` means no upper bound.
OP_ARITY: dict[str, tuple[int, int | None]] = {
    "and": (2, None),
    "or": (2, None),
    "nand": (2, None),
    "nor": (2, None),
    "xor": (2, None),
    "xnor": (2, None),
    "not": (1, 1),
    "mux": (3, 3),
}


def bit_name(word: str, index: int) -> str:
    """The signal name of bit ``index`` of word ``word``.

    >>> bit_name("x0", 3)
    'x0[3]'
    """
    return f"{word}[{index}]"


@dataclass(frozen=True)
class Word:
    """A named word of ``width`` bits (an input word) or of given bits (an output word)."""

    name: str
    width: int


@dataclass(frozen=True)
class OutputWord:
    """An output word: its name and its bits, least significant first."""

    name: str
    bits: tuple[Signal, ...]

    @property
    def width(self) -> int:
        return len(self.bits)


@dataclass(frozen=True)
class Gate:
    """One gate: ``out = op(*inputs)``; a ``mux`` takes ``(select, when0, when1)``."""

    out: str
    op: str
    inputs: tuple[Signal, ...]


def evaluate_op(op: str, values: Sequence[int]) -> int:
    """Evaluate one op on 0/1 values (the reference semantics of the format).

    >>> evaluate_op("mux", [1, 0, 1]), evaluate_op("nand", [1, 1, 1]), evaluate_op("xor", [1, 1, 1])
    (1, 0, 1)
    """
    if op == "not":
        return 1 - values[0]
    if op == "mux":
        select, when0, when1 = values
        return when1 if select else when0
    if op in ("and", "nand"):
        result = int(all(values))
    elif op in ("or", "nor"):
        result = int(any(values))
    elif op in ("xor", "xnor"):
        result = sum(values) % 2
    else:
        raise ValueError(f"unknown op {op!r}")
    return 1 - result if op in ("nand", "nor", "xnor") else result


@dataclass(frozen=True)
class GateCircuit:
    """A combinational circuit from input words to output words.

    The constructor trusts its arguments to be consistent (the loader checks
    them and reports problems with their place in the file); use
    :func:`sortcheck.load.parse_netlist` for untrusted data.

    Examples
    --------
    >>> circuit = GateCircuit(
    ...     inputs=(Word("a", 1), Word("b", 1)),
    ...     gates=(Gate("lo", "and", ("a[0]", "b[0]")), Gate("hi", "or", ("a[0]", "b[0]"))),
    ...     outputs=(OutputWord("y0", ("lo",)), OutputWord("y1", ("hi",))),
    ... )
    >>> circuit.evaluate([1, 0])
    [0, 1]
    >>> circuit.stats()["gates"], circuit.depth
    (2, 1)
    """

    inputs: tuple[Word, ...]
    gates: tuple[Gate, ...]
    outputs: tuple[OutputWord, ...]
    name: str | None = None
    description: str | None = None
    claim: "Property | None" = field(default=None, compare=False)
    #: Where the circuit came from when a front end made it (a Verilog design: top module, Yosys, latency,
    #: the ports of each word); None for netlist files.
    origin: dict | None = field(default=None, compare=False)
    #: The source place (``file:line``) of each gate, by gate name, when a front end knows it (Verilog).
    source_places: dict | None = field(default=None, compare=False, repr=False)

    @property
    def words(self) -> int:
        """Number of input words."""
        return len(self.inputs)

    @property
    def widths(self) -> tuple[int, ...]:
        return tuple(word.width for word in self.inputs)

    @property
    def width(self) -> int:
        """The input word width (the widest, if words differ)."""
        return max(self.widths, default=0)

    @cached_property
    def signal_graph(self) -> dict[str, list[str]]:
        """Successor lists of the signals: an edge from every gate input signal to the gate's output."""
        graph: dict[str, list[str]] = {bit_name(word.name, i): [] for word in self.inputs for i in range(word.width)}
        for gate in self.gates:
            graph.setdefault(gate.out, [])
        for gate in self.gates:
            for source in gate.inputs:
                if isinstance(source, str):
                    graph.setdefault(source, []).append(gate.out)
        return graph

    @cached_property
    def graph(self) -> "networkx.DiGraph":
        """The signal graph as a networkx graph (for the path and ancestor questions of the explanations)."""
        import networkx  # imported here: loading and checking do not need it

        graph = networkx.DiGraph()
        graph.add_nodes_from(self.signal_graph)
        graph.add_edges_from((source, target) for source, targets in self.signal_graph.items() for target in targets)
        return graph

    @cached_property
    def gate_order(self) -> tuple[Gate, ...]:
        """The gates in a topological order (every gate after the gates it reads)."""
        by_out = {gate.out: gate for gate in self.gates}
        order = topological_order(self.signal_graph)
        if order is None:
            raise ValueError("the gates form a cycle")
        return tuple(by_out[node] for node in order if node in by_out)

    @cached_property
    def signal_depth(self) -> dict[str, int]:
        """Gates on the longest path from any input to each signal (inputs: 0)."""
        depth: dict[str, int] = dict.fromkeys(self.signal_graph, 0)  # gate outputs are overwritten below
        for gate in self.gate_order:
            depth[gate.out] = 1 + max((depth[s] for s in gate.inputs if isinstance(s, str)), default=0)
        return depth

    @property
    def depth(self) -> int:
        """The most gates on any input-to-output path, every gate counting one."""
        return max(
            (self.signal_depth[bit] for word in self.outputs for bit in word.bits if isinstance(bit, str)),
            default=0,
        )

    def op_counts(self) -> dict[str, int]:
        """Number of gates of every op that occurs, by op name."""
        return dict(sorted(Counter(gate.op for gate in self.gates).items()))

    def evaluate(self, values: Sequence[int]) -> list[int]:
        """Compute the output words for one input (one integer per input word).

        Values are taken modulo ``2**width`` of their word, so two's complement
        negatives work too; outputs are unsigned.
        """
        if len(values) != self.words:
            raise ValueError(f"expected {self.words} input words, got {len(values)}")
        signals: dict[Signal, int] = {0: 0, 1: 1}
        for word, value in zip(self.inputs, values):
            for i in range(word.width):
                signals[bit_name(word.name, i)] = (value >> i) & 1
        for gate in self.gate_order:
            signals[gate.out] = evaluate_op(gate.op, [signals[s] for s in gate.inputs])
        return [sum(signals[bit] << i for i, bit in enumerate(word.bits)) for word in self.outputs]

    def stats(self) -> dict:
        """The figures ``sortcheck stats`` reports."""
        stats = {
            "words": self.words,
            "width": self.width,
            "gates": len(self.gates),
            "depth": self.depth,
            "ops": self.op_counts(),
            "output_words": len(self.outputs),
        }
        if len(set(self.widths)) > 1:
            stats["widths"] = list(self.widths)
        if self.origin is not None:
            stats["source"] = self.origin
        return stats
