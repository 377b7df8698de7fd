"""The text report, for people: the verdict first, then the counterexample, then the figures."""

from __future__ import annotations

from typing import Sequence

from sortcheck.explain import Trace
from sortcheck.load.verilog import describe_origin
from sortcheck.report.results import FileResult, summarise

INDENT = " " * 9
BITS_PER_LINE = 64


def _zero_one_rows(values: Sequence[int]) -> list[str]:
    """0-1 values as digit groups of 8, at most 64 a line.

    >>> _zero_one_rows([0, 1] * 5)
    ['01010101 01']
    """
    digits = "".join(str(v) for v in values)
    lines = []
    for start in range(0, len(digits), BITS_PER_LINE):
        chunk = digits[start:start + BITS_PER_LINE]
        lines.append(" ".join(chunk[i:i + 8] for i in range(0, len(chunk), 8)))
    return lines or [""]


def _word_rows(values: Sequence[int], width: int) -> list[str]:
    cells = [str(v).rjust(width) for v in values]
    per_line = max(1, 96 // (width + 1))
    return [" ".join(cells[i:i + per_line]) for i in range(0, len(cells), per_line)] or [""]


def value_rows(label: str, values: Sequence[int], domain: str, width: int = 1) -> list[str]:
    """Lines showing one row of values under a label, continuation lines aligned."""
    rows = _zero_one_rows(values) if domain == "0-1" else _word_rows(values, width)
    return [f"{INDENT}{label:<7} {rows[0]}"] + [f"{INDENT}{'':<7} {row}" for row in rows[1:]]


TRACE_CHANNELS = 32


def _count(number: int) -> str:
    """``65,536`` for small counts, ``2^40`` for exact large powers of two."""
    exponent = number.bit_length() - 1
    return f"2^{exponent}" if number == 1 << exponent and exponent > 20 else f"{number:,}"


def trace_rows(trace: Trace, domain: str) -> list[str]:
    """The trace as one row per layer; ``*`` marks a layer in which a comparator swapped."""
    width = max(len(str(v)) for row in trace.values for v in row)
    what = ("values after each layer" if domain == "0-1"
            else "the words' order keys after each layer of the lifted comparator network")
    lines = [f"{INDENT}trace   ({what}, * where a comparator swapped)"]
    for layer, row in enumerate(trace.values):
        label = "in" if layer == 0 else f"{layer - 1}{'*' if trace.swaps[layer - 1] else ''}"
        text = "".join(map(str, row)) if domain == "0-1" else " ".join(str(v).rjust(width) for v in row)
        lines.append(f"{INDENT}  {label:>5} {text}")
    return lines


def describe_netlist(stats: dict | None, kind: str | None) -> str:
    """``16 channels, 63 comparators, depth 10`` or ``4 words of 8 bits, 120 gates, depth 17``."""
    if not stats:
        return ""
    if kind == "comparator-network":
        return f"{stats['channels']} channels, {stats['size']} comparators, depth {stats['depth']}"
    text = f"{stats['words']} words of {stats['width']} bits, {stats['gates']} gates, depth {stats['depth']}"
    source = stats.get("source")
    if source is not None and source.get("registers"):
        text += f", latency {source['latency']} cycle{'s' if source['latency'] != 1 else ''}"
    return text


def format_result(result: FileResult) -> list[str]:
    """The lines of one result."""
    if result.verdict is None:
        return [f"{'ERROR':<8} {result.error}"]
    verdict = result.verdict
    lines = [f"{result.status.upper():<8} {result.path}",
             f"{INDENT}{verdict.prop.describe()}  [{describe_netlist(result.stats, result.kind)}]" if verdict.prop
             else f"{INDENT}not read"]
    if result.stats and result.stats.get("source"):
        lines.append(f"{INDENT}design: {describe_origin(result.stats['source'])}")
    example = verdict.counterexample
    if example is not None:
        width = max(len(str(v)) for v in (*example.input, *example.output))
        lines += value_rows("input", example.input, example.domain, width)
        lines += value_rows("output", example.output, example.domain, width)
        if example.permutation is not None:
            lines += value_rows("as", example.permutation, "words", max(len(str(v)) for v in example.permutation))
        lines.append(f"{INDENT}{example.violation}")
        if example.minimal is not None:
            side = ("one bits over all input words" if example.domain == "words"
                    else "ones or zeros, whichever are fewer")
            lines.append(f"{INDENT}{'smallest' if example.minimal else 'small (not proved smallest)'} "
                         f"counterexample: {example.ones} {side}")
        if result.diagnosis is not None:
            place = "where" if result.kind == "comparator-network" else "where, in the lifted comparator network"
            lines.append(f"{INDENT}{place}: {result.diagnosis.describe()}")
        if result.trace is not None and len(example.input) <= TRACE_CHANNELS:
            lines += trace_rows(result.trace, example.domain)
    figures = verdict.figures
    done = ""
    if "vectors_evaluated" in figures:
        noun = "0-1 inputs" if result.kind == "comparator-network" else "inputs"
        total, evaluated = figures["vectors_total"], figures["vectors_evaluated"]
        reduced = figures.get("vectors_after_reduction")
        if reduced is not None and reduced < total and verdict.status.value == "proved":
            done = f", all {_count(total)} {noun} covered by {evaluated:,} distinct vectors after reduction"
        else:
            done = f", {evaluated:,} of {_count(total)} {noun} evaluated"
    if "ran_on" in figures:  # where the work ran (see sortcheck.engines.runners.distribute)
        pieces = figures.get("pieces", 1)
        done += f", in {pieces} pieces on {figures['ran_on']}" if pieces > 1 else f", in {figures['ran_on']}"
    lines.append(f"{INDENT}{verdict.engine} in {result.seconds:.2f} s{done}")
    if verdict.engine_reason:
        lines.append(f"{INDENT}engine: {verdict.engine_reason}")
    lines.append(f"{INDENT}{'covers' if verdict.status.value == 'proved' else 'note'}: {verdict.scope}")
    if result.certification is not None:
        lines.append(f"{INDENT}{certification_line(result.certification)}")
    return lines


def certification_line(certification: dict) -> str:
    """How a verdict was certified, in one line.

    >>> certification_line({"certified": True, "certificate": {"method": "drup", "checked_by": ["x"],
    ...                     "files": ["a", "b"], "scope": "s"}})
    'certified by drup, checked by x (2 files): s'
    """
    certificate = certification["certificate"]
    if not certification["certified"]:
        return f"certificate ({certificate['method']}): {certificate['scope']}"
    return (f"certified by {certificate['method']}, checked by {', '.join(certificate['checked_by'])} "
            f"({len(certificate['files'])} files): {certificate['scope']}")


def format_summary(results: Sequence[FileResult]) -> str:
    counts = summarise(results)
    noun = "file" if len(results) == 1 else "files"
    return (f"{len(results)} {noun}: {counts['proved']} proved, {counts['refuted']} refuted, "
            f"{counts['unknown']} unknown, {counts['error']} error{'s' if counts['error'] != 1 else ''}")


def format_text(results: Sequence[FileResult]) -> str:
    """The whole text report."""
    blocks = ["\n".join(format_result(result)) for result in results]
    return "\n\n".join(blocks + [format_summary(results)]) + "\n"


#: Suspect gates the text report of a repair lists (the JSON report has them all).
TEXT_SUSPECTS = 5


def format_repair(path: str, outcome, written: str | None) -> str:
    """The text report of ``sortcheck repair``."""
    headline = {"repaired": "REPAIRED", "holds": "HOLDS", "none": "NO REPAIR", "budget": "UNKNOWN",
                "unknown": "UNKNOWN", "interrupted": "UNKNOWN"}[outcome.status]
    lines = [f"{headline:<9} {path}"]
    noun = "circuit" if hasattr(outcome, "suspects") else "network"
    for change in outcome.changes:
        lines.append(f"{INDENT}{change.describe()}")
    if outcome.status == "repaired":
        proof = outcome.verdict
        lines.append(f"{INDENT}verified: the repaired {noun} was re-checked by {proof.engine}: {proof.scope}")
        if written:
            lines.append(f"{INDENT}written to {written}")
    elif outcome.status == "holds":
        lines.append(f"{INDENT}the {noun} already meets the property; nothing to repair")
    else:
        lines.append(f"{INDENT}{outcome.reason}")
    suspects = getattr(outcome, "suspects", ())
    if suspects:
        lines.append(f"{INDENT}suspect gates, most likely first:")
        shown = enumerate(suspects[:TEXT_SUSPECTS], 1)
        lines += [f"{INDENT}  {rank}. {suspect.describe()}" for rank, suspect in shown]
    where = f" in {outcome.pieces} pieces on {outcome.ran_on}" if getattr(outcome, "pieces", 1) > 1 else ""
    lines.append(f"{INDENT}{outcome.candidates_tried:,} candidates tried, {outcome.verifications} full checks, "
                 f"{outcome.seconds:.2f} s{where}; searched {outcome.searched}")
    return "\n".join(lines) + "\n"
