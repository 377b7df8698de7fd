"""Write the Verilog sources of this folder that list their comparators one by one.

Run from the repository root: ``python corpus/rtl/write_sources.py``.  The
other sources in ``src/`` are written by hand.  The comparator lists come
from sortcheck's reference families (merge exchange) and its pruning of a
sorting network to one output (the median); what is written is ordinary
Verilog in the styles of ``src/``.  ``tests/test_rtl_corpus.py`` checks that
the committed files are what this script writes.
"""

from __future__ import annotations

import sys
from pathlib import Path

from sortcheck.model import restrict_to_outputs
from sortcheck.model.families import merge_exchange

SOURCES = Path(__file__).resolve().parent / "src"

#: The comparator left out of each broken design (its index in the list the design is written from).
MERGE_EXCHANGE_OMITTED = 33
MEDIAN_OMITTED = 12


def merge_exchange_sort(module: str, omitted: int | None = None) -> str:
    """Merge exchange on 16 words of 8 bits as an explicit list of compare-exchange steps."""
    pairs = list(merge_exchange(16).comparators)
    if omitted is None:
        title = "// Sorting unit of a packet scheduler: 16 tags of 8 bits, merge exchange, smallest first."
    else:
        title = (f"// Broken sorting unit: the 16 x 8 merge exchange with compare-exchange step {omitted} "
                 f"(words {pairs[omitted][0]} and {pairs[omitted][1]}) left out.")
    lines = [title, f"module {module} (",
             "    input  wire [127:0] tags_in,   // tag k in bits 8k+7..8k",
             "    output reg  [127:0] tags_out   // ascending: the smallest tag in bits 7..0",
             ");",
             "    // {larger, smaller} of two tags",
             "    function [15:0] order2(input [7:0] a, input [7:0] b);",
             "        order2 = (a > b) ? {a, b} : {b, a};",
             "    endfunction",
             "",
             "    reg [7:0] v [0:15];",
             "    integer i;",
             "",
             "    always @* begin",
             "        for (i = 0; i < 16; i = i + 1)",
             "            v[i] = tags_in[8*i +: 8];"]
    for index, (a, b) in enumerate(pairs):
        if index == omitted:
            lines.append(f"        // step {index} (words {a} and {b}) is missing")
            continue
        lines.append(f"        {{v[{b}], v[{a}]}} = order2(v[{a}], v[{b}]);")
    lines += ["        for (i = 0; i < 16; i = i + 1)",
              "            tags_out[8*i +: 8] = v[i];",
              "    end",
              "endmodule", ""]
    return "\n".join(lines)


def median_filter(module: str, omitted: int | None = None) -> str:
    """The median of a 3x3 window of 8-bit pixels; comparators keep only the outputs used later."""
    pairs = list(restrict_to_outputs(merge_exchange(9), [4]).comparators)
    if omitted is None:
        title = "// Median unit of a 3x3 image filter: the median of 9 pixels of 8 bits."
    else:
        title = (f"// Broken median unit: the 3x3 median filter with comparator {omitted} "
                 f"(channels {pairs[omitted][0]} and {pairs[omitted][1]}) left out.")
        pairs = pairs[:omitted] + pairs[omitted + 1:]
    used_later = []  # for each comparator: (is its smaller output used, is its larger output used)
    needed = {4}
    for a, b in reversed(pairs):
        used_later.append((a in needed, b in needed))
        needed |= {a, b}
    used_later.reverse()
    version = [0] * 9
    lines = [title, f"module {module} (",
             "    input  wire [71:0] window,  // pixel k (row-major) in bits 8k+7..8k",
             "    output wire [7:0]  center   // the median of the 9 pixels",
             ");"]
    lines += [f"    wire [7:0] p{k}_0 = window[{8 * k + 7}:{8 * k}];" for k in range(9)]
    for step, ((a, b), (low_used, high_used)) in enumerate(zip(pairs, used_later)):
        x, y = f"p{a}_{version[a]}", f"p{b}_{version[b]}"
        kept = "both outputs" if low_used and high_used else "only the smaller" if low_used else "only the larger"
        lines.append(f"    // comparator {step}: channels {a} and {b}, {kept} used later")
        lines.append(f"    wire s{step} = {x} > {y};")
        if low_used:
            version[a] += 1
            lines.append(f"    wire [7:0] p{a}_{version[a]} = s{step} ? {y} : {x};")
        if high_used:
            version[b] += 1
            lines.append(f"    wire [7:0] p{b}_{version[b]} = s{step} ? {x} : {y};")
    lines += [f"    assign center = p4_{version[4]};", "endmodule", ""]
    return "\n".join(lines)


def signed_sorter(module: str, lose_sign: bool = False) -> str:
    """Merge exchange on 6 signed words of 6 bits, one port per word, layer by layer with min/max assigns."""
    layers = merge_exchange(6).layers
    if lose_sign:
        title = ("// Broken temperature sorter: the wires after layer 1 were declared without `signed`, "
                 "so later layers compare unsigned.")
    else:
        title = "// Sorter of 6 temperature readings, 6-bit two's complement, one port per reading."
    lines = [title, f"module {module} (",
             "    input  wire signed [5:0] t0, t1, t2, t3, t4, t5,",
             "    output wire signed [5:0] u0, u1, u2, u3, u4, u5   // u0 the coldest",
             ");"]
    current = [f"t{k}" for k in range(6)]
    for number, layer in enumerate(layers, start=1):
        kind = "wire [5:0]" if lose_sign and number == 1 else "wire signed [5:0]"
        lines.append(f"    // layer {number}: " + " ".join(f"({a},{b})" for a, b in layer))
        following = [f"l{number}_{k}" for k in range(6)]
        touched = set()
        for a, b in layer:
            x, y = current[a], current[b]
            lines.append(f"    {kind} {following[a]} = ({x} < {y}) ? {x} : {y};")
            lines.append(f"    {kind} {following[b]} = ({x} < {y}) ? {y} : {x};")
            touched |= {a, b}
        for k in range(6):
            if k not in touched:
                following[k] = current[k]
        current = following
    lines += [f"    assign u{k} = {current[k]};" for k in range(6)]
    lines += ["endmodule", ""]
    return "\n".join(lines)


def sources() -> dict[str, str]:
    """File name in ``src/`` -> text, for every generated source."""
    return {
        "merge_exchange_sort16x8.v": merge_exchange_sort("merge_exchange_sort16x8"),
        "merge_exchange_sort16x8_missing.v": merge_exchange_sort("merge_exchange_sort16x8_missing",
                                                                 MERGE_EXCHANGE_OMITTED),
        "median3x3_filter.v": median_filter("median3x3_filter"),
        "median3x3_filter_missing.v": median_filter("median3x3_filter_missing", MEDIAN_OMITTED),
        "sort6_signed.v": signed_sorter("sort6_signed"),
        "sort6_signed_lost_sign.v": signed_sorter("sort6_signed_lost_sign", lose_sign=True),
    }


def main() -> int:
    for name, text in sources().items():
        (SOURCES / name).write_text(text, encoding="utf-8")
    return 0


if __name__ == "__main__":
    sys.exit(main())
