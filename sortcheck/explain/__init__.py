"""Explain: make counterexamples useful (smallest inputs, where a network goes wrong, traces)."""

from sortcheck.explain.diagnose import Diagnosis, diagnose_network, permutation_of
from sortcheck.explain.minimal import minimize_network_counterexample
from sortcheck.explain.trace import Trace, trace_network

__all__ = ["Diagnosis", "diagnose_network", "permutation_of", "minimize_network_counterexample", "Trace",
           "trace_network"]
