"""Lifting: a gate circuit proved to be a comparator network, which the network engines then check.

``engine.py`` is the ``lift`` engine and the verdict of a lifted circuit; ``blocks.py``, ``search.py`` and
``channels.py`` find compare-and-swap blocks and prove each by one SAT call on its cone.
"""
