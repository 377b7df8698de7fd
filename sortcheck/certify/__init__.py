"""Certificates checked without the engines: DRUP proofs, evaluation again, counterexamples run again.

A stage of its own, after ``report`` (it reads file results) and before the
command line: check.py (a certificate directory per file), gates.py (gate
circuits' threshold CNFs encoded again), drup.py (our DRUP checker),
reevaluate.py (enumerated vectors evaluated again with Python integers).
"""
