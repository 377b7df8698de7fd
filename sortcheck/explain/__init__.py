"""Explain: make counterexamples useful (where a network goes wrong)."""

from sortcheck.explain.diagnose import Diagnosis, diagnose_network

__all__ = ["Diagnosis", "diagnose_network"]
