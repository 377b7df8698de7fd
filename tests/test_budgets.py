"""Budgets: a check that cannot finish in time comes back unknown, within the timeout plus a second."""

from __future__ import annotations

import random
import time

import pytest

from sortcheck.engines import Budget, Options, Status, StopReason, Verdict, check
from sortcheck.engines.runners.isolation import EngineFailure, check_in_child
from sortcheck.model import ComparatorNetwork, Sorts
from sortcheck.model.families import build_family


class StuckEngine:
    """Stands for a solver stuck in native code: it ignores the deadline."""

    name = "stuck"
    cooperative = False

    def refusal(self, netlist, prop, options):
        return None

    def check(self, netlist, prop, budget, options):
        time.sleep(60)
        raise AssertionError("unreachable")


class QuickEngine(StuckEngine):
    name = "quick"

    def check(self, netlist, prop, budget, options):
        return Verdict(Status.PROVED, self.name, prop, StopReason.COVERED, "everything", 0.0)


class BrokenEngine(StuckEngine):
    name = "broken"

    def check(self, netlist, prop, budget, options):
        raise ValueError("a bug inside the engine")


NET = ComparatorNetwork(2, ((0, 1),))


def test_a_stuck_engine_is_stopped_within_the_budget_plus_a_second():
    seen = []
    started = time.monotonic()
    verdict = check_in_child(StuckEngine(), NET, Sorts(), Budget.of(0.3, lambda *args: seen.append(args)), Options())
    elapsed = time.monotonic() - started
    assert verdict.status == Status.UNKNOWN and verdict.stop == StopReason.TIMEOUT
    assert "nothing is proved" in verdict.scope
    assert elapsed < 1.3
    assert seen and all(phase == "stuck: solving" for _, _, phase in seen)


def test_an_answer_from_the_child_comes_back_unchanged():
    verdict = check_in_child(QuickEngine(), NET, Sorts(), Budget.of(5), Options())
    assert verdict.status == Status.PROVED and verdict.engine == "quick"


def test_an_engine_bug_in_the_child_is_raised_in_the_parent():
    with pytest.raises(EngineFailure, match="a bug inside the engine"):
        check_in_child(BrokenEngine(), NET, Sorts(), Budget.of(5), Options())


def test_enumerate_honours_a_tiny_timeout():
    # An unstructured network on 33 channels: the prefix reduction leaves tens of millions of vectors.
    rng = random.Random(5)
    network = ComparatorNetwork(33, tuple(tuple(rng.sample(range(33), 2)) for _ in range(300)))
    started = time.monotonic()
    verdict = check(network, Sorts(), engine="enumerate", timeout=0.05)
    assert verdict.status == Status.UNKNOWN and verdict.stop == StopReason.TIMEOUT
    assert time.monotonic() - started < 1.05


def test_enumerate_reports_progress_to_the_callback():
    rng = random.Random(9)
    network = ComparatorNetwork(28, tuple(tuple(rng.sample(range(28), 2)) for _ in range(150)))
    calls = []
    check(network, Sorts(), engine="enumerate", progress=lambda *call: calls.append(call), timeout=5)
    assert calls and all(phase == "enumerate" for _, _, phase in calls)
    assert all(total and 0 <= done <= total for done, total, _ in calls)


def test_a_large_sat_check_is_stopped_within_the_budget_plus_a_second():
    # An unstructured 600-channel network: the SAT engine cannot split it and must solve it whole.
    network = build_family("odd-even-transposition", 600)
    started = time.monotonic()
    verdict = check(network, Sorts(), engine="sat", timeout=1.0)
    assert time.monotonic() - started < 2.0
    assert verdict.status in (Status.UNKNOWN, Status.PROVED)
    if verdict.status == Status.UNKNOWN:
        assert verdict.stop == StopReason.TIMEOUT
