"""Reading what Yosys's ``eval`` prints, for the tests that use Yosys's simulation as an outside reference.

A test logs a marker line ``CASE <design> <number>`` before each ``eval`` (``tee -q -a eval.txt log
CASE ...``, then ``tee -q -a eval.txt eval -set ... -show ...``), and reads the file back here.
"""

from __future__ import annotations

import re


def parse_evaluations(text: str) -> dict[tuple[str, int], list[str]]:
    """(design, case) -> the output port values Yosys printed, as printed.

    ``eval`` prints ``Eval result: \\port = 64'0101...`` (binary with its width), or a plain decimal
    number for ports of up to 32 bits.

    >>> parse_evaluations("CASE top 0\\nEval result: \\\\y = 4'0101.\\nEval result: \\\\z = 7.\\n")
    {('top', 0): ["4'0101", '7']}
    """
    results: dict[tuple[str, int], list[str]] = {}
    key = None
    for line in text.splitlines():
        marker = re.match(r"^CASE (\S+) (\d+)$", line.strip())
        if marker:
            key = (marker.group(1), int(marker.group(2)))
            results[key] = []
            continue
        value = re.match(r"^\s*Eval result: \\?\S+ = (\S+?)\.?$", line)
        if value and key is not None:
            results[key].append(value.group(1))
    return results


def port_value(printed: str, bits: int) -> int:
    """The value of a port of ``bits`` bits from what ``eval`` printed (every bit must be 0 or 1).

    >>> port_value("8'00000101", 8), port_value("5", 8), port_value("-1", 4)
    (5, 5, 15)
    """
    sized = re.match(r"^(\d+)'([01]+)$", printed)
    if sized:
        assert int(sized.group(1)) == bits, printed
        return int(sized.group(2), 2)
    assert re.match(r"^-?\d+$", printed), f"not a defined value: {printed}"
    return int(printed) % (1 << bits)
