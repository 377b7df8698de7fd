"""Verilog and SystemVerilog designs in: elaborated and synthesized by Yosys, read as gate circuits.

:func:`read_verilog_design` runs (or takes from the cache) the synthesis of
:mod:`sortcheck.load.verilog.yosys` and turns what Yosys wrote into a gate
circuit (:mod:`sortcheck.load.verilog.design`), with pipelines checked and
flattened to their combinational function (:mod:`sortcheck.load.verilog.registers`).
"""

from __future__ import annotations

from sortcheck.load.verilog.design import design_circuit
from sortcheck.load.verilog.origin import describe_origin, design_scope, latency_words
from sortcheck.load.verilog.yosys import Elaboration, VerilogError, synthesize
from sortcheck.model import GateCircuit

#: File suffixes read as Verilog or SystemVerilog.
VERILOG_SUFFIXES = (".v", ".sv")


def read_verilog_design(elaboration: Elaboration, words: int | None = None, width: int | None = None
                        ) -> GateCircuit:
    """Synthesize a design with Yosys (or take it from the cache) and read it as a gate circuit.

    Raises
    ------
    VerilogError
        A problem in the sources (``file:line: message``), or a design sortcheck cannot check.
    """
    return design_circuit(synthesize(elaboration), elaboration, words, width)


__all__ = ["Elaboration", "VERILOG_SUFFIXES", "VerilogError", "describe_origin", "design_scope", "latency_words",
           "read_verilog_design"]
