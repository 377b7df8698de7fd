"""Shared helpers for the loader and property tests, and a real Dask cluster on loopback for the split checks."""

from __future__ import annotations

import json

import pytest

from sortcheck.errors import SortcheckError


def network_doc(**changes) -> dict:
    """A valid comparator network on 8 channels, with top-level keys changed (None deletes)."""
    doc = {"sortcheck": 1, "kind": "comparator-network", "channels": 8,
           "comparators": [[0, 1], [2, 3], [4, 5], [6, 7], [0, 2], [1, 3], [4, 6], [5, 7]]}
    return _apply(doc, changes)


def circuit_doc(**changes) -> dict:
    """A valid gate circuit on two 2-bit words a and b, with top-level keys changed (None deletes)."""
    doc = {
        "sortcheck": 1, "kind": "gate-circuit",
        "inputs": [{"name": "a", "width": 2}, {"name": "b", "width": 2}],
        "gates": [
            {"out": "lo0", "op": "and", "in": ["a[0]", "b[0]"]},
            {"out": "hi0", "op": "or", "in": ["a[0]", "b[0]"]},
            {"out": "lo1", "op": "and", "in": ["a[1]", "b[1]"]},
            {"out": "hi1", "op": "or", "in": ["a[1]", "b[1]"]},
        ],
        "outputs": [{"name": "y0", "bits": ["lo0", "lo1"]}, {"name": "y1", "bits": ["hi0", "hi1"]}],
    }
    return _apply(doc, changes)


def _apply(doc: dict, changes: dict) -> dict:
    for key, value in changes.items():
        if value is None:
            doc.pop(key, None)
        else:
            doc[key] = value
    return doc


def text_of(doc: dict) -> str:
    return json.dumps(doc)


def assert_error(call, error_type: type, source: str, where: str | None, phrase: str) -> SortcheckError:
    """Run ``call``; check the error's type, its one-line text, its source, its place and a phrase."""
    with pytest.raises(SortcheckError) as info:
        call()
    error = info.value
    assert type(error) is error_type, f"{type(error).__name__}: {error}"
    text = str(error)
    assert "\n" not in text and "\r" not in text
    assert text.startswith(f"{source}: ")
    assert error.where == where, text
    expected_prefix = f"{source}: {where}: " if where else f"{source}: "
    assert text == expected_prefix + error.message
    assert phrase in error.message, text
    return error


@pytest.fixture(scope="module")
def dask_address():
    """The address of a ``dask.distributed`` LocalCluster of 2 worker processes on 127.0.0.1 (one per module)."""
    distributed = pytest.importorskip("distributed")
    cluster = distributed.LocalCluster(processes=True, n_workers=2, threads_per_worker=1, host="127.0.0.1",
                                       dashboard_address=None)
    try:
        yield cluster.scheduler_address
    finally:
        cluster.close()
