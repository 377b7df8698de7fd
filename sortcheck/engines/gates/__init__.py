"""Engines for gate circuits, a folder per technique.

* ``simulation.py`` (with ``word_blocks.py``, ``word_checks.py``, ``word_corners.py``): bit-parallel
  evaluation on every input or on corner-case and random inputs;
* ``lifting/``: the circuit proved to be a comparator network, then checked as one;
* ``sweeping/``: and-inverter graphs and SAT sweeping (equivalence signal by signal);
* ``threshold/``: threshold decomposition and SAT;
* ``bdd/``: threshold decomposition with BDDs (CUDD), fewest-ones counterexamples;
* ``smt.py``: the property on whole words with z3;
* ``cnf.py``: the Tseitin encoding every SAT technique shares;
* ``portfolio.py``: ``auto`` for gate circuits.
"""
