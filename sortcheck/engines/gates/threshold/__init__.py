"""Threshold decomposition: the property of a gate circuit as 0-1 conditions for every threshold value,
encoded in CNF (spec.py) and proved by SAT (sat.py), with certificate material (certificates.py)."""
