"""Gate circuits that lift are drawn as their comparator networks, with a counterexample's order keys on the wires.

Expectations are computed independently: the network the circuit was lowered
from applied value by value (``reference.run``) and Python's ``sorted``.
"""

from __future__ import annotations

import io
import xml.etree.ElementTree as ET

from reference import run
from sortcheck.cli import main
from sortcheck.load import write_netlist
from sortcheck.model import ComparatorNetwork
from sortcheck.model.families import merge_exchange
from sortcheck.model.lowering import lower_network

SVG = "{http://www.w3.org/2000/svg}"


def cli(*argv):
    out, err = io.StringIO(), io.StringIO()
    status = main([str(a) for a in argv], stdout=out, stderr=err)
    assert "Traceback" not in out.getvalue() + err.getvalue()
    return status, out.getvalue(), err.getvalue()


def with_class(root, name, tag=None):
    return [e for e in root.iter() if name in e.get("class", "").split() and (tag is None or e.tag == SVG + tag)]


def test_a_lowered_network_missing_a_comparator_is_drawn_as_that_network_with_its_counterexample(tmp_path):
    network = merge_exchange(8)
    broken = ComparatorNetwork(8, network.comparators[:5] + network.comparators[6:])
    path, svg = tmp_path / "gates.json", tmp_path / "gates.svg"
    write_netlist(lower_network(broken, 5, style="xor"), path)
    status, _, err = cli("draw", path, "--output", svg)
    assert status == 0 and f"{broken.size} comparators" in err
    root = ET.parse(svg).getroot()
    groups = sorted(with_class(root, "comparator", "g"), key=lambda g: int(g.get("data-index")))
    assert len(groups) == broken.size
    shown = err.split("with input ")[1].split()
    values = [int(v) for v in shown]
    assert run(broken.comparators, values) != sorted(values)  # the drawn input really breaks it
    assert "lifted to a comparator network" in root.find(SVG + "title").text
    assert with_class(root, "fault-mark")  # the place where the out-of-order values were sealed


def test_given_words_are_followed_through_the_lifted_network(tmp_path):
    path, svg = tmp_path / "gates.json", tmp_path / "gates.svg"
    write_netlist(lower_network(merge_exchange(4), 6, style="and-or"), path)
    assert cli("draw", path, "--output", svg, "--input", "40,3,63,17")[0] == 0
    texts = [t.text for t in ET.parse(svg).getroot().iter(SVG + "text")]
    assert "63" in texts and "40" in texts


def test_a_circuit_that_does_not_lift_is_an_error_with_the_reason(tmp_path):
    from sortcheck.model.counting import counting_sorter

    path = tmp_path / "counting.json"
    write_netlist(counting_sorter(4, 2), path)
    status, _, err = cli("draw", path, "--output", tmp_path / "c.svg")
    assert status == 2 and "does not lift to a comparator network" in err


def test_check_traces_a_refuted_circuit_that_lifts_on_its_lifted_network(tmp_path):
    import json

    network = merge_exchange(8)
    broken = ComparatorNetwork(8, network.comparators[:5] + network.comparators[6:])
    path = tmp_path / "gates.json"
    write_netlist(lower_network(broken, 4, style="mux"), path)
    status, out, _ = cli("check", path, "--format", "json")
    assert status == 1
    result = json.loads(out)["results"][0]
    rows = result["trace"]["values"]
    values = result["counterexample"]["input"]
    assert rows[0] == values and rows[-1] == run(broken.comparators, values)  # the reference replays the trace
    assert result["diagnosis"] is not None
    status, out, _ = cli("check", path)
    assert "where, in the lifted comparator network:" in out and "order keys after each layer" in out


def test_input_words_must_fit_the_width(tmp_path):
    path = tmp_path / "gates.json"
    write_netlist(lower_network(merge_exchange(4), 3, style="mux"), path)
    status, _, err = cli("draw", path, "--output", tmp_path / "g.svg", "--input", "1,2,3,9")
    assert status == 2 and "9 is not a word of 3 bits (0 to 7)" in err
