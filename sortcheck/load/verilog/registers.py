"""Flip-flops of a synthesized design: which inputs are clocks, resets and enables, and the pipeline's latency.

A pipelined sorter computes a combinational function with a delay: every
input-to-output path passes the same number of register stages, no register
feeds back into itself, and no register can hold its value.  Then, after that
many clock cycles, the outputs are the combinational function of the inputs
(with the reset inactive and every enable active); sortcheck checks that
function, and says which latency and which assumptions it took.

Yosys's flip-flop cells (``$_DFF_P_``, ``$_SDFF_PN0_``, ``$_DFFE_PP_``, ...)
name their pins: ``C`` clock, ``D`` data, ``Q`` output, ``R`` reset (a
synchronous one in ``$_SDFF*``), ``S`` set, ``E`` enable.  A control pin must be
a constant or a bit of an input port that drives control pins only (a port
that also drives logic is data, and a reset or enable made of logic holds or
forces state): clocks are recognised this way (a 1-bit input that drives only
clock pins is the clock, not data), resets and sets are held inactive, enables
active.  Everything else is a :class:`~sortcheck.load.verilog.yosys.VerilogError`
naming the register: feedback, unbalanced paths, enables or resets driven by
logic, latches, memories, several clocks, both clock edges.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from sortcheck.load.verilog.yosys import VerilogError

#: Flip-flop cell types: the letters after the name say the polarity (P, N) of each control pin in order,
#: and 0 or 1 the value a reset or set loads.  The pins each type has, in the order of its letters.
_FLIP_FLOPS = {
    "DFF": "C", "DFFE": "CE", "SDFF": "CRV", "SDFFE": "CRVE", "SDFFCE": "CRVE",
    "DFFSR": "CSR", "DFFSRE": "CSRE",
}
_ASYNC_RESET = {3: "CRV", 4: "CRVE"}  # $_DFF_PN0_ (3 letters), $_DFFE_PN0P_ (4 letters)
_CELL = re.compile(r"^\$_([A-Z]+)_([PN01]+)_$")

#: What each control pin is called in messages.
PIN_ROLES = {"C": "clock", "R": "reset", "S": "set", "E": "enable"}


@dataclass(frozen=True)
class FlipFlop:
    """One flip-flop cell: its name, source line, data and output bits, and control pins (bit, polarity)."""

    name: str
    src: str
    data: object
    output: object
    controls: dict = field(default_factory=dict)  # pin letter -> (bit, "P" or "N")


def flip_flop(name: str, cell: dict) -> FlipFlop | None:
    """The flip-flop a Yosys cell is, None if it is not one; latches and other state raise.

    >>> cell = {"type": "$_SDFF_PN0_", "connections": {"C": [2], "R": [3], "D": [7], "Q": [9]},
    ...         "attributes": {"src": "s.v:4.1-4.20"}}
    >>> ff = flip_flop("s0", cell)
    >>> ff.controls, ff.data, ff.output
    ({'C': (2, 'P'), 'R': (3, 'N')}, 7, 9)
    """
    kind = cell["type"]
    src = str(cell.get("attributes", {}).get("src", "")).split("|")[0]
    if kind.startswith(("$_DLATCH", "$_SR_")):
        raise _error(f"register '{name}' is a latch ({kind}); sortcheck checks combinational logic and "
                     "flip-flop pipelines only", src)
    if kind.startswith(("$_ALDFF", "$_FF_", "$_DFFSR_", "$_DFFSRE_")) and not _CELL.match(kind):
        raise _error(f"register '{name}' is a {kind} cell, which sortcheck does not take", src)
    if kind.startswith(("$_ALDFF", "$_FF_")):
        raise _error(f"register '{name}' is a {kind} cell (an asynchronous load, or a flip-flop without a clock), "
                     "which sortcheck does not take", src)
    match = _CELL.match(kind)
    if not match or not kind.startswith(("$_DFF", "$_SDFF")):
        return None
    family, letters = match.groups()
    pins = _FLIP_FLOPS.get(family)
    if family == "DFF" and len(letters) in _ASYNC_RESET:
        pins = _ASYNC_RESET[len(letters)]
    if family == "DFFE" and len(letters) == 4:
        pins = "CRVE"
    if pins is None or len(pins) != len(letters):
        raise _error(f"register '{name}' is a {kind} cell, which sortcheck does not take (asynchronous load or "
                     "a flip-flop without a clock)", src)
    connections = cell["connections"]
    controls = {}
    for pin, letter in zip(pins, letters):
        if pin != "V":
            controls[pin] = (connections[pin][0], letter)
    return FlipFlop(name, src, connections["D"][0], connections["Q"][0], controls)


def _error(message: str, src: str) -> VerilogError:
    file, line = split_src(src)
    return VerilogError(message, file, line)


def split_src(src: str) -> tuple[str | None, str | None]:
    """The file and the first line of a Yosys ``src`` attribute.

    >>> split_src("rtl/sorter.v:12.5-14.8")
    ('rtl/sorter.v', '12')
    """
    file, _, place = src.rpartition(":")
    if not file:
        return (src or None), None
    return file, place.split(".")[0].split("-")[0] or None


@dataclass
class ControlInputs:
    """The input port bits that drive control pins only, and the value each is held at."""

    clock: str | None = None
    held: dict = field(default_factory=dict)  # port bit name -> (value, role)


def classify_controls(flip_flops: list[FlipFlop], bit_names: dict, port_bits: set, data_readers: set
                      ) -> ControlInputs:
    """Decide what every control pin is driven by; raise where it is not a clock, a held input or a constant.

    Parameters
    ----------
    flip_flops : list of FlipFlop
    bit_names : dict
        Input port bit -> its name (``rst``, ``en[0]``).
    port_bits : set
        The bits of input ports.
    data_readers : set
        Bits read by logic or by a flip-flop's data pin or driving an output port.
    """
    controls = ControlInputs()
    clock_edges: dict = {}
    for ff in flip_flops:
        for pin, (bit, polarity) in ff.controls.items():
            role = PIN_ROLES[pin]
            if bit in ("0", "1", "x", "z"):
                _check_constant(ff, pin, bit, polarity)
                continue
            if bit not in port_bits:
                raise _error(f"register '{ff.name}': its {role} is driven by logic, not by an input port; "
                             f"{_why(pin)}", ff.src)
            name = bit_names[bit]
            if bit in data_readers:
                raise _error(f"register '{ff.name}': input '{name}' drives its {role} and also logic or data; "
                             "sortcheck cannot hold it at one value", ff.src)
            if pin == "C":
                clock_edges.setdefault(bit, set()).add(polarity)
                continue
            value = _inactive(pin, polarity)
            known = controls.held.get(name)
            if known is not None and known[0] != value:
                raise _error(f"register '{ff.name}': input '{name}' is an active-{'high' if polarity == 'P' else 'low'} "
                             f"{role} here but the opposite elsewhere, so no value keeps every register running",
                             ff.src)
            controls.held[name] = (value, role)
    if len(clock_edges) > 1:
        names = sorted(bit_names[bit] for bit in clock_edges)
        raise VerilogError(f"the registers have {len(names)} clocks ({', '.join(names)}); sortcheck checks "
                           "pipelines with one clock")
    for bit, edges in clock_edges.items():
        if len(edges) > 1:
            raise VerilogError(f"the registers use both edges of clock '{bit_names[bit]}'; sortcheck checks "
                               "pipelines clocked on one edge")
        controls.clock = bit_names[bit]
    return controls


def _inactive(pin: str, polarity: str) -> int:
    """The value of a control input that keeps a register running: reset/set inactive, enable active."""
    active = 1 if polarity == "P" else 0
    return active if pin == "E" else 1 - active


def _check_constant(ff: FlipFlop, pin: str, bit: str, polarity: str) -> None:
    if pin == "C":
        raise _error(f"register '{ff.name}' has a constant clock, so it never loads", ff.src)
    if bit in ("x", "z") or int(bit) != _inactive(pin, polarity):
        raise _error(f"register '{ff.name}': its {PIN_ROLES[pin]} is tied {'active' if bit in '01' else 'to x'}, "
                     "so it never follows its data", ff.src)


def _why(pin: str) -> str:
    if pin == "E":
        return "an enable made of logic can hold the register's value, which is state, not a pipeline stage"
    if pin == "C":
        return "a gated or derived clock is not a pipeline sortcheck can check"
    return "a reset or set made of logic forces the register's value in normal operation"
