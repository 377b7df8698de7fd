"""Helpers for the test suites of projects that build sorters (pytest or any runner).

>>> from sortcheck.testing import assert_holds
>>> from sortcheck import ComparatorNetwork
>>> assert_holds(ComparatorNetwork(3, ((0, 1), (1, 2), (0, 1))), "sorts").status.value
'proved'
>>> assert_holds(ComparatorNetwork(3, ((0, 1), (1, 2))), "sorts")
Traceback (most recent call last):
...
AssertionError: the netlist does not meet sorts ascending: counterexample found by enumerate
  input:  1 1 0
  output: 1 0 1
  outputs 0 and 1 are out of order (1 then 0)
"""

from __future__ import annotations

import os

from sortcheck.api import check
from sortcheck.engines import Status, Verdict
from sortcheck.model import Netlist, Property


def assert_holds(netlist: Netlist | str | os.PathLike, prop: Property | str | None = None, engine: str = "auto",
                 timeout: float | None = None) -> Verdict:
    """Assert that the netlist (or netlist file) is proved to meet the property; return the verdict.

    Raises ``AssertionError`` with the counterexample (input, output and what
    is wrong) when it is refuted, and with what was covered when the check
    was undecided: an undecided check is not a pass.
    """
    verdict = check(netlist, prop, engine=engine, timeout=timeout)
    name = f"{netlist}: " if isinstance(netlist, (str, os.PathLike)) else "the netlist "
    if verdict.status == Status.REFUTED:
        example = verdict.counterexample
        raise AssertionError(
            f"{name}does not meet {verdict.prop.describe()}: counterexample found by {verdict.engine}\n"
            f"  input:  {' '.join(map(str, example.input))}\n"
            f"  output: {' '.join(map(str, example.output))}\n"
            f"  {example.violation}")
    if verdict.status == Status.UNKNOWN:
        raise AssertionError(f"{name}was not proved to meet {verdict.prop.describe()} ({verdict.engine}): "
                             f"{verdict.scope}")
    return verdict
