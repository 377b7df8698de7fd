"""Loading: netlist files in, models out (and back).

``parse_netlist`` is pure; ``read_netlist`` reads a file; ``dump_netlist``
and ``write_netlist`` write format version 1.
"""

from sortcheck.load.netlist import parse_netlist, read_netlist
from sortcheck.load.property_text import parse_property
from sortcheck.load.schema import FORMAT_VERSION, netlist_schema
from sortcheck.load.write import dump_netlist, write_netlist

__all__ = ["parse_netlist", "parse_property", "read_netlist", "dump_netlist", "write_netlist", "netlist_schema", "FORMAT_VERSION"]
