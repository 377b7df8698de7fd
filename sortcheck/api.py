"""The public Python API: ``load`` a netlist, ``check`` it, read the ``Verdict``.

>>> import sortcheck
>>> verdict = sortcheck.check("corpus/broken/insertion-6-truncated.json")  # doctest: +SKIP
>>> network = sortcheck.ComparatorNetwork(3, ((0, 1), (1, 2)))
>>> verdict = sortcheck.check(network, "sorts")
>>> verdict.status.value, verdict.counterexample.input, verdict.counterexample.output
('refuted', (1, 1, 0), (1, 0, 1))
"""

from __future__ import annotations

import os

from sortcheck.engines import Options, Verdict
from sortcheck.engines import check as check_netlist
from sortcheck.load import parse_property, read_netlist
from sortcheck.model import Netlist, Property


def load(path: str | os.PathLike) -> Netlist:
    """Read a netlist file (format version 1) into a model; errors name the file and the place."""
    return read_netlist(path)


def check(netlist: Netlist | str | os.PathLike, prop: Property | str | None = None, engine: str = "auto",
          timeout: float | None = None, width: int | None = None) -> Verdict:
    """Check a netlist (or the netlist file at a path) for a property.

    Parameters
    ----------
    netlist : ComparatorNetwork, GateCircuit or path
    prop : Property, str or None
        A property object, its command-line short form (``"merges:4"``), or
        None for the property the netlist claims (else ``sorts``).
    engine : str
        ``"auto"`` or an engine name.
    timeout : float or None
        Seconds; when they run out the verdict is ``unknown``.
    width : int or None
        Word width for word-level engines.

    Returns
    -------
    Verdict
    """
    source = None
    if isinstance(netlist, (str, os.PathLike)):
        source = str(netlist)
        netlist = read_netlist(netlist)
    if isinstance(prop, str):
        prop = parse_property(prop)
    return check_netlist(netlist, prop, engine=engine, timeout=timeout, source=source, options=Options(width=width))
