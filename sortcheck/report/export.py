"""Verification conditions for other tools: a CNF or an SMT-LIB 2 script that is unsatisfiable exactly when
the property holds, with comments that map variables back to channels (or words and bits).

* comparator networks, DIMACS: the plain Tseitin encoding of the network and
  the property's 0-1 violation condition
  (:func:`sortcheck.engines.networks.cnf.annotated_dimacs`); by the 0-1
  principle it is unsatisfiable exactly when the property holds for every
  input of any values;
* comparator networks, SMT-LIB 2: the ``smt`` engine's bit-vector formula
  (:func:`sortcheck.engines.smt.smtlib_text`) at the smallest width that
  holds a distinct value per channel, which covers inputs of any values;
* gate circuits, DIMACS: the CNF of :mod:`sortcheck.engines.gates.threshold.spec`, when
  that module is present;
* gate circuits, SMT-LIB 2: the ``smt`` engine's gate-by-gate bit-vector
  formula (:mod:`sortcheck.engines.gates.smt`) on the circuit's own words.

It also writes the netlist itself for other tools (:data:`NETLIST_FORMATS`):
Bristol Fashion (:mod:`sortcheck.load.bristol`; a comparator network is
lowered to gates on words of ``width`` bits first, in the ``xor`` style unless
another is asked for) and Verilog (:mod:`sortcheck.load.verilog.write`).

>>> from sortcheck.model import ComparatorNetwork, Sorts
>>> text = export_text(ComparatorNetwork(2, ((0, 1),)), Sorts(), "smtlib")
>>> text.splitlines()[0]
'; sortcheck SMT-LIB 2 script: unsat exactly when the netlist meets: sorts ascending'
"""

from __future__ import annotations

from sortcheck.engines.networks.cnf import annotated_dimacs, dimacs
from sortcheck.engines.smt import default_width, smtlib_text
from sortcheck.engines.gates.smt import circuit_refusal, circuit_smtlib_text
from sortcheck.errors import UsageError
from sortcheck.load.bristol import dump_bristol
from sortcheck.load.verilog.write import dump_verilog
from sortcheck.model import ComparatorNetwork, GateCircuit, Netlist, PartialSort, Property

NETLIST_FORMATS = ("bristol", "verilog")
"""Formats that write the netlist itself rather than a verification condition."""

FORMATS = ("dimacs", "smtlib") + NETLIST_FORMATS


def export_text(netlist: Netlist, prop: Property, to: str, source: str | None = None, width: int | None = None,
                style: str | None = None) -> str:
    """The verification condition of ``netlist`` and ``prop`` in format ``to`` (``dimacs`` or ``smtlib``), or
    the netlist itself (``bristol``, ``verilog``; words compare as two's complement when ``prop`` is signed).

    ``width`` and ``style`` lower a comparator network to gates for Bristol Fashion (the width is needed)
    and give a network's Verilog module its default word width.

    Raises
    ------
    UsageError
        For a combination that cannot be exported (the message says why).
    """
    if to not in FORMATS:
        raise UsageError(f"unknown export format {to!r} (one of {', '.join(FORMATS)})", "--to")
    if to in NETLIST_FORMATS:
        return netlist_text(netlist, prop, to, source, width, style)
    if isinstance(netlist, ComparatorNetwork):
        if isinstance(prop, PartialSort):
            raise UsageError("partial-sort applies to gate circuits only", source, "--property")
        return _network_dimacs(netlist, prop) if to == "dimacs" else _network_smtlib(netlist, prop)
    if to == "dimacs":
        return _circuit_dimacs(netlist, prop, source)
    return _circuit_smtlib(netlist, prop, source)


def _network_dimacs(network: ComparatorNetwork, prop: Property) -> str:
    text = annotated_dimacs(network, prop)
    header = (f"c unsatisfiable exactly when the network meets: {prop.describe()} (for inputs of any values, "
              f"by the 0-1 principle); a model's input variables give a failing 0-1 input\n")
    return header + text


def _network_smtlib(network: ComparatorNetwork, prop: Property) -> str:
    width = default_width(network.channels)
    kind = "two's complement" if prop.signed else "unsigned"
    lines = [f"; sortcheck SMT-LIB 2 script: unsat exactly when the netlist meets: {prop.describe()}",
             f"; {network.channels} channels, {network.size} comparators; x<c> is the input word on channel c "
             f"({width}-bit {kind}); {width} bits hold a distinct value per channel, so unsat covers inputs of "
             f"any values",
             "; sat: the model's x<c> are a failing input"]
    return "\n".join(lines) + "\n" + smtlib_text(network, prop, width)


def _circuit_smtlib(circuit: GateCircuit, prop: Property, source: str | None) -> str:
    refused = circuit_refusal(circuit, prop, max_gates=len(circuit.gates))
    if refused is not None:
        raise UsageError(f"no SMT-LIB export for this circuit: {refused[1]}", source)
    kind = "two's complement" if prop.signed else "unsigned"
    lines = [f"; sortcheck SMT-LIB 2 script: unsat exactly when the netlist meets: {prop.describe()}",
             f"; {circuit.words} words of {circuit.width} bits ({kind}), {len(circuit.gates)} gates",
             *(f"; x{index} is input word {word.name} (bit 0 least significant)"
               for index, word in enumerate(circuit.inputs)),
             "; sat: the model's x<i> are a failing input"]
    return "\n".join(lines) + "\n" + circuit_smtlib_text(circuit, prop)


def _circuit_dimacs(circuit: Netlist, prop: Property, source: str | None) -> str:
    try:
        from sortcheck.engines.gates.threshold.spec import gate_violation_cnf
    except ImportError:
        raise UsageError("DIMACS export of gate circuits is not available in this version (it needs the gate "
                         "circuit CNF of sortcheck.engines.gates.threshold.spec)", source) from None
    clauses, pool, comments = gate_violation_cnf(circuit, prop)
    return dimacs(clauses, pool, [*comments, "unsatisfiable exactly when the circuit meets: " + prop.describe()])


def netlist_text(netlist: Netlist, prop: Property, to: str, source: str | None = None, width: int | None = None,
                 style: str | None = None) -> str:
    """The netlist as Bristol Fashion or Verilog (see :func:`export_text`).

    >>> from sortcheck.model import ComparatorNetwork, Sorts
    >>> netlist_text(ComparatorNetwork(2, ((0, 1),)), Sorts(), "bristol").strip()
    Traceback (most recent call last):
    ...
    sortcheck.errors.UsageError: --width: a comparator network needs a word width to become Bristol Fashion gates
    """
    if to == "verilog":
        return dump_verilog(netlist, width=width, signed=prop.signed)
    if isinstance(netlist, ComparatorNetwork) and width is None:
        raise UsageError("a comparator network needs a word width to become Bristol Fashion gates", source, "--width")
    try:
        return dump_bristol(netlist, width=width, style=style or "xor", signed=prop.signed)
    except ValueError as error:
        raise UsageError(str(error), source) from None
