"""Every engine gives the same verdict, on four hundred random and mutated networks and on the corpus.

The reference is tests/reference.py (comparators applied value by value, properties judged with
Python's ``sorted``); each refutation's counterexample must replay and break the property.
"""

from __future__ import annotations

import itertools
from pathlib import Path

from hypothesis import HealthCheck, given, settings, strategies as st

from sortcheck.engines import Status, check
from sortcheck.load import read_netlist
from sortcheck.model import ComparatorNetwork
from reference import breaks, run
from strategies import nearly_sorting, networks, properties_for

ENGINES = ("enumerate", "sat", "smt")
CORPUS = Path(__file__).resolve().parent.parent / "corpus"


def expected_status(network, prop):
    for vector in itertools.product((0, 1), repeat=network.channels):
        if breaks(prop, list(vector), run(network.comparators, vector)):
            return Status.REFUTED
    return Status.PROVED


@settings(max_examples=400, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(st.one_of(networks(max_channels=6, max_size=16), nearly_sorting()), st.data())
def test_the_three_engines_agree_on_four_hundred_networks(network, data):
    prop = data.draw(st.sampled_from(properties_for(network.channels)))
    expected = expected_status(network, prop)
    for engine in ENGINES:
        verdict = check(network, prop, engine=engine)
        assert verdict.status == expected, (engine, network, prop, verdict.scope)
        if expected == Status.REFUTED:
            example = verdict.counterexample
            assert run(network.comparators, example.input) == list(example.output)
            assert breaks(prop, list(example.input), list(example.output)), engine


def test_the_engines_agree_on_the_comparator_networks_of_the_corpus():
    for path in sorted(CORPUS.rglob("*.json")):
        netlist = read_netlist(path)
        if not isinstance(netlist, ComparatorNetwork) or netlist.channels > 12:  # smt takes ~15 s at 16
            continue
        verdicts = {engine: check(netlist, engine=engine, timeout=60).status for engine in ENGINES}
        assert len(set(verdicts.values())) == 1, (path, verdicts)
