"""sortcheck: formal verification of comparator networks and sorting circuits.

>>> import sortcheck
>>> network = sortcheck.parse_netlist('{"sortcheck": 1, "kind": "comparator-network", '
...                                   '"channels": 3, "comparators": [[0, 1], [1, 2], [0, 1]]}')
>>> sortcheck.check(network).status.value
'proved'
"""

__version__ = "0.1.0"

from sortcheck.api import check, load  # noqa: E402
from sortcheck.engines import Counterexample, Status, Verdict  # noqa: E402
from sortcheck.errors import NetlistError, PropertyError, SortcheckError, UsageError  # noqa: E402
from sortcheck.load import dump_netlist, parse_netlist, parse_property, read_netlist, write_netlist  # noqa: E402
from sortcheck.model import ComparatorNetwork, GateCircuit  # noqa: E402


__all__ = ["__version__", "check", "load", "read_netlist", "parse_netlist", "dump_netlist", "write_netlist",
           "parse_property", "ComparatorNetwork", "GateCircuit", "Verdict", "Counterexample", "Status",
           "SortcheckError", "NetlistError", "PropertyError", "UsageError"]
