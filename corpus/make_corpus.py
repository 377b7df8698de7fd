"""Regenerate the reference netlists of this folder from the sortcheck API.

Run from the repository root: ``python corpus/make_corpus.py``.  The tests
check that the committed files are what this script writes, and that each
file gets the verdict listed in ``expected-verdicts.txt``.
"""

from __future__ import annotations

from pathlib import Path

from sortcheck.load import write_netlist
from sortcheck.model import ComparatorNetwork, GateCircuit, Gate, Median, Merges, OutputWord, Selects, Sorts, Word
from sortcheck.model import restrict_to_outputs
from sortcheck.model.counting import counting_sorter
from sortcheck.model.families import build_family
from sortcheck.model.lowering import lower_network

HERE = Path(__file__).resolve().parent


def odd_even_merger(n: int) -> ComparatorNetwork:
    """Batcher's odd-even merger of two ascending runs of n/2 (n a power of two)."""

    def merge(low: int, high: int, stride: int) -> list[tuple[int, int]]:
        step = stride * 2
        if step >= high - low:
            return [(low, low + stride)]
        return (merge(low, high, step) + merge(low + stride, high, step)
                + [(i, i + stride) for i in range(low + stride, high - stride, step)])

    return ComparatorNetwork(n, tuple(merge(0, n - 1, 1)), name=f"odd-even-merger-{n}",
                             description=f"Batcher's odd-even merger of two ascending runs of {n // 2}.",
                             claim=Merges(split=n // 2))


def compare_and_swap_circuit() -> GateCircuit:
    """Two 2-bit words sorted by one compare-and-swap: a less-than test, then four multiplexers."""
    gates = (
        Gate("not_a1", "not", ("a[1]",)),
        Gate("high_less", "and", ("not_a1", "b[1]")),
        Gate("high_equal", "xnor", ("a[1]", "b[1]")),
        Gate("not_a0", "not", ("a[0]",)),
        Gate("low_less", "and", ("high_equal", "not_a0", "b[0]")),
        Gate("a_less", "or", ("high_less", "low_less")),
        Gate("min0", "mux", ("a_less", "b[0]", "a[0]")),
        Gate("min1", "mux", ("a_less", "b[1]", "a[1]")),
        Gate("max0", "mux", ("a_less", "a[0]", "b[0]")),
        Gate("max1", "mux", ("a_less", "a[1]", "b[1]")),
    )
    return GateCircuit((Word("a", 2), Word("b", 2)), gates,
                       (OutputWord("low", ("min0", "min1")), OutputWord("high", ("max0", "max1"))),
                       name="compare-and-swap-2x2",
                       description="Two 2-bit words sorted ascending by one compare-and-swap.", claim=Sorts())


def without(network: ComparatorNetwork, index: int, name: str, description: str) -> ComparatorNetwork:
    comparators = network.comparators[:index] + network.comparators[index + 1:]
    return ComparatorNetwork(network.channels, comparators, name, description, network.claim)


def reversed_at(network: ComparatorNetwork, index: int, name: str, description: str) -> ComparatorNetwork:
    a, b = network.comparators[index]
    comparators = network.comparators[:index] + ((b, a),) + network.comparators[index + 1:]
    return ComparatorNetwork(network.channels, comparators, name, description, network.claim)


def flipped_gate(circuit: GateCircuit, out: str, op: str, name: str, description: str) -> GateCircuit:
    gates = tuple(Gate(g.out, op, g.inputs) if g.out == out else g for g in circuit.gates)
    return GateCircuit(circuit.inputs, gates, circuit.outputs, name, description, circuit.claim)


def middle_flip(circuit: GateCircuit, name: str) -> GateCircuit:
    """``circuit`` with the first gate past its middle that has a twin op (and/or, xor/xnor) turned into it."""
    twin = {"and": "or", "or": "and", "xor": "xnor", "xnor": "xor", "nand": "nor", "nor": "nand"}
    position = next(i for i in range(len(circuit.gates) // 2, len(circuit.gates)) if circuit.gates[i].op in twin)
    gate = circuit.gates[position]
    op = twin[gate.op]
    return flipped_gate(circuit, gate.out, op, name, f"{circuit.description or circuit.name} Gate {gate.out!r} "
                        f"(gates[{position}]) turned from {gate.op} into {op}.")


def gate_conformance(merger: ComparatorNetwork, median: ComparatorNetwork, select: ComparatorNetwork
                     ) -> dict[str, GateCircuit]:
    """Gate circuits for every property in two independent lowerings and the counting family, with mutants."""
    files: dict[str, GateCircuit] = {}
    me6 = build_family("merge-exchange", 6)
    cases = {
        "merge-exchange-6-w4-and-or": lower_network(me6, 4, style="and-or"),
        "merge-exchange-6-w4-mux-signed": lower_network(me6, 4, style="mux", signed=True),
        "odd-even-merger-8-w3-mux": lower_network(merger, 3, style="mux"),
        "median-of-9-w3-and-or": lower_network(median, 3, style="and-or"),
        "smallest-3-of-12-w2-mux": lower_network(select, 2, style="mux"),
        "merge-exchange-5-w5-key2-and-or": lower_network(build_family("merge-exchange", 5), 5, style="and-or",
                                                         key_bits=2),
        "counting-5-w3": counting_sorter(5, 3),
    }
    for name, circuit in cases.items():
        files[f"gates/{name}.json"] = circuit
        files[f"gates/broken/{name}-flipped-gate.json"] = middle_flip(circuit, f"{name}-flipped-gate")
    return files


def corpus() -> dict[str, ComparatorNetwork | GateCircuit]:
    """Every corpus file by its path relative to this folder."""
    files: dict[str, ComparatorNetwork | GateCircuit] = {}
    for family, n in (("merge-exchange", 16), ("merge-exchange", 24), ("bitonic", 16), ("pairwise", 16),
                      ("odd-even-transposition", 10), ("insertion", 8)):
        files[f"{family}-{n}.json"] = build_family(family, n)
    median = restrict_to_outputs(build_family("merge-exchange", 9), [4])
    files["median-of-9.json"] = ComparatorNetwork(9, median.comparators, "median-of-9",
                                                  "Merge exchange on 9 channels pruned to its middle output.",
                                                  Median())
    select = restrict_to_outputs(build_family("merge-exchange", 12), range(3))
    files["smallest-3-of-12.json"] = ComparatorNetwork(12, select.comparators, "smallest-3-of-12",
                                                       "Merge exchange on 12 channels pruned to its first 3 outputs.",
                                                       Selects(count=3, sorted=True))
    merger = odd_even_merger(8)
    files["odd-even-merger-8.json"] = merger
    files["compare-and-swap-2x2.json"] = compare_and_swap_circuit()
    files["gates/merge-exchange-4-w8-mux.json"] = lower_network(build_family("merge-exchange", 4), 8, style="mux")
    files["gates/counting-6-w2.json"] = counting_sorter(6, 2)
    files["gates/bitonic-4-w3-and-or-signed.json"] = lower_network(build_family("bitonic", 4), 3, signed=True)
    files.update(gate_conformance(merger, files["median-of-9.json"], files["smallest-3-of-12.json"]))
    files["broken/compare-and-swap-2x2-flipped-gate.json"] = flipped_gate(
        compare_and_swap_circuit(), "low_less", "or", "compare-and-swap-2x2-flipped-gate",
        "The 2x2 compare-and-swap with its low-bit less-than gate turned from and into or.")
    files["broken/merge-exchange-16-missing-comparator.json"] = without(
        build_family("merge-exchange", 16), 40, "merge-exchange-16-missing-comparator",
        "Merge exchange on 16 channels with comparator 40 removed.")
    files["broken/bitonic-8-reversed-comparator.json"] = reversed_at(
        build_family("bitonic", 8), 17, "bitonic-8-reversed-comparator",
        "Bitonic sorter on 8 channels with comparator 17 reversed.")
    files["broken/insertion-6-truncated.json"] = without(
        build_family("insertion", 6), 14, "insertion-6-truncated", "Insertion network on 6 channels without its last comparator.")
    files["broken/median-of-9-missing-comparator.json"] = without(
        files["median-of-9.json"], 5, "median-of-9-missing-comparator", "The median-of-9 network with comparator 5 removed.")
    files["broken/odd-even-merger-8-missing-comparator.json"] = without(
        merger, 6, "odd-even-merger-8-missing-comparator", "The odd-even merger on 8 channels with comparator 6 removed.")
    return files


def main() -> None:
    for relative, netlist in corpus().items():
        path = HERE / relative
        path.parent.mkdir(parents=True, exist_ok=True)
        write_netlist(netlist, path)
        print(f"wrote {path.relative_to(HERE.parent)}")


if __name__ == "__main__":
    main()
