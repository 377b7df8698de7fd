"""Explain: make counterexamples useful (smallest inputs, where a network goes wrong, traces, repairs)."""

from sortcheck.explain.diagnose import Diagnosis, diagnose_network, permutation_of
from sortcheck.explain.gate_minimal import minimize_circuit_counterexample
from sortcheck.explain.minimal import minimize_network_counterexample
from sortcheck.explain.trace import Trace, trace_network

__all__ = ["Diagnosis", "diagnose_network", "permutation_of", "minimize_circuit_counterexample",
           "minimize_network_counterexample", "Trace", "trace_network"]
