"""Every property checked exactly on many lanes of integer words at once.

Inputs and outputs arrive as *keys* (see :mod:`sortcheck.engines.gates.word_blocks`):
arrays ``(lanes, words)`` whose unsigned order is the property's order of the
values, so one code path serves signed and unsigned words (and ``uint64`` or
Python-integer arrays alike).  The reference for each lane is ``np.sort`` of
its input keys along the word axis; each check is the definition in
:func:`sortcheck.model.semantics.violation`, restated on sorted keys:

* sorts: the outputs equal the sorted inputs (reversed when descending);
* merges: the same, on lanes whose two runs are ascending (other lanes pass);
* selects t: the first t outputs, sorted, equal the t smallest inputs (not
  sorted first when the property asks for them in order);
* median: the middle output (the only one, for one output word) equals the
  median input;
* partial-sort k: the sorted outputs equal the sorted inputs, the output keys
  ``key >> (width - k)`` ascend, and when stable the outputs equal the inputs
  stably sorted by key.  Shifting a signed key gives the floor of the signed
  value's shift with its top bit flipped, so key order is the reference order.
"""

from __future__ import annotations

import numpy as np

from sortcheck.model import Median, Merges, PartialSort, Property, Selects, Sorts


def _ascending(keys: np.ndarray) -> np.ndarray:
    """Lanes whose keys never descend."""
    return (keys[:, :-1] <= keys[:, 1:]).all(axis=1)


def _equal(left: np.ndarray, right: np.ndarray) -> np.ndarray:
    return (left == right).all(axis=1)


def _shift(keys: np.ndarray, bits: int) -> np.ndarray:
    return keys >> (np.uint64(bits) if keys.dtype == np.uint64 else bits)


def failing_lanes(prop: Property, inputs: np.ndarray, outputs: np.ndarray, width: int) -> np.ndarray:
    """A boolean array: which lanes' outputs break ``prop``.

    Parameters
    ----------
    prop : Property
    inputs, outputs : numpy.ndarray
        Keys ``(lanes, input words)`` and ``(lanes, output words)``.
    width : int
        The word width (partial-sort's keys are the top bits of a word).

    Examples
    --------
    >>> keys = np.array([[2, 1, 3], [2, 1, 3]], dtype=np.uint64)
    >>> failing_lanes(Sorts(), keys, np.array([[1, 2, 3], [1, 3, 2]], dtype=np.uint64), 2).tolist()
    [False, True]
    >>> failing_lanes(Median(), keys, np.array([[2], [3]], dtype=np.uint64), 2).tolist()
    [False, True]
    """
    ordered = np.sort(inputs, axis=1)
    if isinstance(prop, Sorts):
        return ~_equal(outputs, ordered[:, ::-1] if prop.order == "descending" else ordered)
    if isinstance(prop, Merges):
        split = prop.split
        applies = _ascending(inputs[:, :split]) & _ascending(inputs[:, split:])
        return applies & ~_equal(outputs, ordered)
    if isinstance(prop, Selects):
        first = outputs[:, :prop.count]
        return ~_equal(first if prop.sorted else np.sort(first, axis=1), ordered[:, :prop.count])
    if isinstance(prop, Median):
        return outputs[:, (outputs.shape[1] - 1) // 2] != ordered[:, (inputs.shape[1] - 1) // 2]
    if isinstance(prop, PartialSort):
        shift = width - prop.key_bits
        fail = ~_equal(np.sort(outputs, axis=1), ordered) | ~_ascending(_shift(outputs, shift))
        if prop.stable:
            order = np.argsort(_shift(inputs, shift), axis=1, kind="stable")
            fail |= ~_equal(outputs, np.take_along_axis(inputs, order, axis=1))
        return fail
    raise TypeError(f"unknown property {prop!r}")
