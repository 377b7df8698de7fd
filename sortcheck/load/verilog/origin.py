"""What the reports say of a design read from Verilog: its origin in one paragraph, and what a verdict covers."""

from __future__ import annotations


def describe_origin(origin: dict, listed: int = 8) -> str:
    """One paragraph: top, Yosys, latency, what was held, and the port-to-word mapping."""
    parameters = ", ".join(f"{name}={value}" for name, value in origin["parameters"].items())
    text = f"Verilog module {origin['top']}" + (f" ({parameters})" if parameters else "")
    text += f", synthesized by {origin['yosys']}"
    text += "; " + latency_words(origin) + "."

    def listing(rows: list[dict]) -> str:
        shown = [f"{row['word']} = {row['bits']}" for row in rows[:listed]]
        return ", ".join(shown) + (f", ... ({len(rows)} words)" if len(rows) > listed else "")

    text += f" Words: {listing(origin['inputs'])}; outputs: {listing(origin['outputs'])}."
    side = origin["side_band"]["inputs"] + origin["side_band"]["outputs"]
    return text + (f" Left out (1-bit ports beside the words): {', '.join(side)}." if side else "")


def latency_words(origin: dict) -> str:
    """``combinational`` or ``latency 3 cycles (clock clk, rst held at 0)``."""
    if not origin["registers"]:
        return "combinational"
    held = ", ".join(f"{origin['held_roles'][name]} {name} held at {value}" for name, value in origin["held"].items())
    cycles = "cycle" if origin["latency"] == 1 else "cycles"
    return (f"latency {origin['latency']} {cycles} ({origin['registers']} flip-flops, clock {origin['clock']}"
            + (f", {held}" if held else "") + ")")


def design_scope(origin: dict) -> str:
    """What a verdict on a Verilog design covers, in words: the design, the latency and what was assumed."""
    parameters = ", ".join(f"{name}={value}" for name, value in origin["parameters"].items())
    design = f"the Verilog module {origin['top']}" + (f" ({parameters})" if parameters else "")
    text = f"{design} as synthesized by {origin['yosys']}"
    if not origin["registers"]:
        text += " (combinational, no registers)"
    else:
        cycles = "cycle" if origin["latency"] == 1 else "cycles"
        held = "".join(f", {origin['held_roles'][name]} input {name} held at {value}"
                       for name, value in origin["held"].items())
        resets = [name for name, role in origin["held_roles"].items() if role in ("reset", "set")]
        text += (f", a pipeline of latency {origin['latency']} {cycles}: checked is the function from the inputs "
                 f"to the outputs {origin['latency']} {cycles} later, clocked by {origin['clock']}{held}; not "
                 f"checked: the outputs of the first {origin['latency']} {cycles} after start-up"
                 + (f" or after {' or '.join(resets)} is released, and while it is asserted" if resets else ""))
    side = origin["side_band"]["inputs"] + origin["side_band"]["outputs"]
    if side:
        text += (f"; 1-bit ports beside the words, left out and not checked: {', '.join(side)} (no word output "
                 "depends on those inputs)")
    if origin["undriven_bits"]:
        text += f"; {origin['undriven_bits']} undriven (x) bits were read as 0"
    return text
