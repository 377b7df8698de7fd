"""The reference semantics module and the 0-1 principle, checked on integer inputs."""

from __future__ import annotations

from hypothesis import given, settings, strategies as st

from sortcheck.engines import Status, check
from sortcheck.model import Median, Merges, PartialSort, Selects, Sorts
from sortcheck.model.semantics import violation
from reference import breaks, run
from strategies import networks, properties_for

values = st.integers(-4, 4)


@settings(max_examples=300, deadline=None)
@given(networks(max_channels=7), st.data())
def test_violation_agrees_with_the_definitions(network, data):
    prop = data.draw(st.sampled_from(properties_for(network.channels)))
    inputs = data.draw(st.lists(values, min_size=network.channels, max_size=network.channels))
    outputs = run(network.comparators, inputs)
    assert (violation(prop, inputs, outputs) is not None) == breaks(prop, inputs, outputs)


@settings(max_examples=200, deadline=None)
@given(networks(max_channels=7, max_size=20), st.data())
def test_verdicts_on_zero_one_inputs_extend_to_integers(network, data):
    # The 0-1 principle (Knuth, TAOCP vol. 3, 5.3.4): a network proved on 0-1 inputs holds on every input.
    prop = data.draw(st.sampled_from(properties_for(network.channels)))
    verdict = check(network, prop, engine="enumerate")
    inputs = data.draw(st.lists(st.integers(-1000, 1000) | values, min_size=network.channels,
                                max_size=network.channels))
    if verdict.status == Status.PROVED:
        assert not breaks(prop, inputs, run(network.comparators, inputs))
    else:
        # A refuted 0-1 input stays a counterexample when its 0s and 1s are any two values in order.
        low, high = sorted(data.draw(st.lists(st.integers(-50, 50), min_size=2, max_size=2, unique=True)))
        mapped = [high if bit else low for bit in verdict.counterexample.input]
        assert breaks(prop, mapped, run(network.comparators, mapped))


def test_partial_sort_by_key_bits():
    # 3-bit words, key = the top 2 bits: 5 (10|1) and 4 (10|0) share a key.
    prop = PartialSort(key_bits=2)
    assert violation(prop, [5, 4, 1], [1, 5, 4], key_bits_width=3) is None
    assert violation(PartialSort(key_bits=2, stable=True), [5, 4, 1], [1, 4, 5], key_bits_width=3) is not None
    assert violation(PartialSort(key_bits=2, stable=True), [5, 4, 1], [1, 5, 4], key_bits_width=3) is None
    assert "keys out of order" in violation(prop, [5, 1, 2], [5, 1, 2], key_bits_width=3)
    assert "permutation" in violation(prop, [5, 1, 2], [1, 2, 2], key_bits_width=3)


def test_properties_outside_their_scope_are_not_broken():
    assert violation(Merges(split=2), [3, 1, 0, 2], [3, 1, 0, 2]) is None  # first run not ascending
    assert violation(Selects(count=1), [3, 1], [3, 1]) is not None
    assert violation(Selects(count=1), [3, 1], [1, 3]) is None
    assert violation(Median(), [1], [1]) is None
    assert violation(Sorts(order="descending"), [1, 2], [2, 1]) is None
    assert violation(Sorts(), [1, 2], [2, 2]) == "the outputs are not a permutation of the inputs"
