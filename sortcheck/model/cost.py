"""Gate costs in a standard basis: 2-input AND, OR and XOR, and NOT.

Circuits in the netlist format use n-ary gates, negated gates and muxes; to
compare circuits by cost, every gate is counted as the 2-input gates and
NOTs it expands to (:func:`expansion`):

==================  ============================================
op (n inputs)       counted as
==================  ============================================
``and`` ``or``      n - 1 two-input gates of the same op
``xor``             n - 1 two-input XORs
``nand`` ``nor``    n - 1 two-input ANDs (ORs), then 1 NOT
``xnor``            n - 1 two-input XORs, then 1 NOT
``not``             1 NOT
``mux(s, a, b)``    ``a XOR (s AND (a XOR b))``: 1 AND, 2 XOR
==================  ============================================

The mux expansion is the one secure computation uses, where XOR and NOT are
free and the cost is the number of AND gates; an OR there costs one AND as
well (``a OR b = a XOR b XOR (a AND b)``), so such a circuit's AND count is
``and + or`` of :func:`cost_counts`.  Gates are counted as written: a gate
with a constant input is not simplified first.
"""

from __future__ import annotations

from sortcheck.model.circuit import GateCircuit

BASIS = ("and", "or", "xor", "not")
"""The ops :func:`cost_counts` counts in, in the order of its result."""


def expansion(op: str, arity: int) -> dict[str, int]:
    """The 2-input gates and NOTs one gate of ``op`` with ``arity`` inputs is counted as.

    >>> expansion("nand", 3)
    {'and': 2, 'not': 1}
    >>> expansion("mux", 3)
    {'and': 1, 'xor': 2}
    """
    if op in ("and", "or", "xor"):
        return {op: arity - 1}
    if op in ("nand", "nor", "xnor"):
        return {{"nand": "and", "nor": "or", "xnor": "xor"}[op]: arity - 1, "not": 1}
    if op == "not":
        return {"not": 1}
    if op == "mux":
        return {"and": 1, "xor": 2}
    raise ValueError(f"unknown op {op!r}")


def cost_counts(circuit: GateCircuit) -> dict[str, int]:
    """Count the circuit's gates as 2-input AND, OR, XOR and NOT gates.

    Parameters
    ----------
    circuit : GateCircuit

    Returns
    -------
    dict
        ``{"and": ..., "or": ..., "xor": ..., "not": ...}``, every key present.

    Examples
    --------
    >>> from sortcheck.model.circuit import Gate, OutputWord, Word
    >>> circuit = GateCircuit(
    ...     (Word("a", 1), Word("b", 1), Word("c", 1)),
    ...     (Gate("t", "nor", ("a[0]", "b[0]", "c[0]")), Gate("u", "mux", ("t", "a[0]", "b[0]"))),
    ...     (OutputWord("y", ("u",)),))
    >>> cost_counts(circuit)
    {'and': 1, 'or': 2, 'xor': 2, 'not': 1}
    """
    counts = dict.fromkeys(BASIS, 0)
    for gate in circuit.gates:
        for op, count in expansion(gate.op, len(gate.inputs)).items():
            counts[op] += count
    return counts
