"""The model: immutable comparator networks, gate circuits and properties.

This is the vocabulary every stage shares; it does no input or output.
"""

from sortcheck.model.circuit import GateCircuit, Gate, OutputWord, Word, OP_ARITY, bit_name, evaluate_op
from sortcheck.model.network import ComparatorNetwork, in_layer_order, restrict_to_outputs
from sortcheck.model.properties import (
    DEFAULT_PROPERTY, PROPERTY_NAMES, Median, Merges, PartialSort, Property, Selects, Sorts,
    check_fits, property_from_json,
)

Netlist = ComparatorNetwork | GateCircuit

__all__ = [
    "ComparatorNetwork", "GateCircuit", "Gate", "OutputWord", "Word", "Netlist", "OP_ARITY",
    "Property", "PROPERTY_NAMES", "Sorts", "Merges", "Selects", "Median", "PartialSort", "DEFAULT_PROPERTY",
    "bit_name", "evaluate_op", "check_fits", "in_layer_order", "property_from_json", "restrict_to_outputs",
]
