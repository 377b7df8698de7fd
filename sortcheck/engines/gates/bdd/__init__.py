"""Threshold conditions as BDDs: the ``bdd`` engine for gate circuits.

* ``manager.py``: CUDD through ``dd.cudd``, or dd's pure-Python BDDs, under one interface with a node limit;
* ``orders.py``: variable orders of the input bits (word-major, interleaved, dynamic) and the attempts;
* ``build.py``: the output BDDs of a circuit, gate by gate;
* ``conditions.py``: each property's threshold conditions as BDDs;
* ``witness.py``: the satisfying input of fewest one bits, read off a BDD;
* ``attempt.py``: one order under one node limit, every threshold;
* ``engine.py``: :class:`BddEngine` and :func:`prove_with_bdds`, the plain function a portfolio calls.
"""

from sortcheck.engines.gates.bdd.engine import DEFAULT_NODE_LIMIT, BddEngine, prove_with_bdds

__all__ = ["BddEngine", "DEFAULT_NODE_LIMIT", "prove_with_bdds"]
