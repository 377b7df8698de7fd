"""One ``sat`` engine for the user: comparator networks to the network engine, gate circuits to the gate engine.

>>> from sortcheck.engines.base import Budget
>>> from sortcheck.engines.gates.threshold.sat import GateSatEngine
>>> from sortcheck.engines.networks.sat import SatEngine
>>> from sortcheck.model import ComparatorNetwork, Sorts
>>> from sortcheck.model.counting import counting_sorter
>>> sat = RoutedSatEngine(SatEngine(), GateSatEngine())
>>> sat.check(ComparatorNetwork(2, ((0, 1),)), Sorts(), Budget()).status.value
'proved'
>>> verdict = sat.check(counting_sorter(3, 2), Sorts(), Budget())
>>> verdict.engine, verdict.figures["method"]
('sat', 'threshold-sat')
"""

from __future__ import annotations

from sortcheck.engines.base import Budget, Options, StopReason, Verdict
from sortcheck.model import GateCircuit, Netlist, Property


class RoutedSatEngine:
    """Delegates every call to ``gates`` for a gate circuit and to ``networks`` otherwise."""

    name = "sat"
    cooperative = True
    isolate = True

    def __init__(self, networks, gates):
        self.networks, self.gates = networks, gates

    def engine_for(self, netlist: Netlist):
        """The engine that takes ``netlist``."""
        return self.gates if isinstance(netlist, GateCircuit) else self.networks

    def refusal(self, netlist: Netlist, prop: Property, options: Options = Options()
                ) -> tuple[StopReason, str] | None:
        return self.engine_for(netlist).refusal(netlist, prop, options)

    def check(self, netlist: Netlist, prop: Property, budget: Budget, options: Options = Options()) -> Verdict:
        return self.engine_for(netlist).check(netlist, prop, budget, options)

    def pieces(self, netlist: Netlist, prop: Property, options: Options = Options()) -> list[dict] | None:
        engine = self.engine_for(netlist)
        return engine.pieces(netlist, prop, options) if hasattr(engine, "pieces") else None

    def check_piece(self, netlist: Netlist, prop: Property, piece: dict, budget: Budget,
                    options: Options = Options()) -> Verdict:
        return self.engine_for(netlist).check_piece(netlist, prop, piece, budget, options)

    def whole_verdict(self, netlist: Netlist, prop: Property, verdict: Verdict, options: Options = Options()
                      ) -> Verdict:
        engine = self.engine_for(netlist)
        return engine.whole_verdict(netlist, prop, verdict, options) if hasattr(engine, "whole_verdict") else verdict
