"""Group the bits of a bit-level circuit (AIGER, BLIF) into the words sortcheck checks.

AIGER and BLIF files carry single bits; a sorter of words needs to know which
bits form which word.  The grouping is given as a number of words ``N`` and
a width ``W`` (on the command line, or in a *grouping file* beside the
circuit, see :data:`SIDECAR_SUFFIX`).  Primary input bit ``k``, in the order
of the file, becomes bit ``k % W`` of input word ``x<k // W>`` (least
significant bit first); the outputs are grouped the same way into words
``y0``, ``y1``, ...  With neither ``N`` nor ``W`` every bit is a word of its
own (``W = 1``, a circuit that sorts single bits); with one of them the other
follows from the number of input bits.

The grouping file of ``sorter.aag`` is ``sorter.aag.words``: a JSON object
with the keys ``"words"``, ``"width"`` (positive integers, either may be
left out) and ``"property"`` (optional, the claimed property as in netlist
format version 1).  Its name does not end in ``.json`` on purpose, so that
nothing that looks for netlists (``*.json``) takes it for one.

The module also holds what both bit-level readers share: reading a file's
bytes, and finding and showing a combinational cycle.

Examples
--------
>>> grouped = group_bits(["a0", "a1", "b0", "b1"], ["lo0", "lo1", "b1", 0], width=2)
>>> grouped.inputs
(Word(name='x0', width=2), Word(name='x1', width=2))
>>> grouped.renaming["b0"], grouped.outputs[1].bits
('x1[0]', ('x1[1]', 0))
>>> group_bits(["a", "b", "c"], ["a"], words=2, width=2, source="s.blif")
Traceback (most recent call last):
...
sortcheck.errors.NetlistError: s.blif: inputs: 3 input bits cannot form 2 words of 2 bits
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path
from typing import Sequence


from sortcheck.errors import NetlistError
from sortcheck.load.decode import decode_text, load_json
from sortcheck.model import OutputWord, Property, Word, bit_name, property_from_json
from sortcheck.model.circuit import Signal

#: The grouping file of ``FILE`` is ``FILE`` followed by this suffix.
SIDECAR_SUFFIX = ".words"

#: File suffixes of the bit-level circuit formats (whose grouping files are not netlists themselves).
CIRCUIT_SUFFIXES = (".aag", ".aig", ".blif", ".bristol")

#: Limits shared with netlist format version 1 (README: the netlist format).
MAX_WORDS = 1_048_576
MAX_WIDTH = 65_536

#: Beyond this many bits the description of a circuit summarises the grouping instead of listing names.
MAX_LISTED_BITS = 64

_KEYS = ("words", "width", "property")


@dataclass(frozen=True)
class Grouping:
    """A grouping as given: words and width (None where not given) and an optional claimed property."""

    words: int | None = None
    width: int | None = None
    claim: Property | None = None


@dataclass(frozen=True)
class Grouped:
    """Bits grouped into words: the input words, the file's input names to model bit names, the output words."""

    inputs: tuple[Word, ...]
    renaming: dict[str, str]
    outputs: tuple[OutputWord, ...]


def _check_count(value: int | None, key: str, limit: int, source: str | None) -> None:
    if value is None:
        return
    if isinstance(value, bool) or not isinstance(value, int):
        raise NetlistError(f"{key} must be a positive integer, got {value!r}", source, key)
    if not 1 <= value <= limit:
        raise NetlistError(f"{key} must be from 1 to {limit}, got {value}", source, key)


def input_shape(count: int, words: int | None = None, width: int | None = None,
                source: str | None = None) -> tuple[int, int]:
    """The (words, width) that ``count`` input bits form, from what was given.

    >>> input_shape(6), input_shape(6, words=3), input_shape(6, width=3), input_shape(6, 2, 3)
    ((6, 1), (3, 2), (2, 3), (2, 3))
    """
    _check_count(words, "words", MAX_WORDS, source)
    _check_count(width, "width", MAX_WIDTH, source)
    if count == 0:
        raise NetlistError("the circuit has no input bits", source, "inputs")
    if words is None and width is None:
        width = 1
    if width is None:
        width = count // words if count % words == 0 else None
        if width is None:
            raise NetlistError(f"{count} input bits cannot form {words} words of equal width", source, "inputs")
    if words is None:
        words = count // width if count % width == 0 else None
        if words is None:
            raise NetlistError(f"{count} input bits cannot form words of {width} bits", source, "inputs")
    if words * width != count:
        raise NetlistError(f"{count} input bits cannot form {words} words of {width} bits", source, "inputs")
    _check_count(width, "width", MAX_WIDTH, source)
    return words, width


def input_words(count: int, words: int | None = None, width: int | None = None,
                source: str | None = None) -> tuple[tuple[Word, ...], list[str]]:
    """The input words for ``count`` bits and the model bit name of each input bit, in order.

    >>> input_words(4, width=2)
    ((Word(name='x0', width=2), Word(name='x1', width=2)), ['x0[0]', 'x0[1]', 'x1[0]', 'x1[1]'])
    """
    words, width = input_shape(count, words, width, source)
    names = [bit_name(f"x{k // width}", k % width) for k in range(count)]
    return tuple(Word(f"x{index}", width) for index in range(words)), names


def output_words(bits: Sequence[Signal], width: int, source: str | None = None) -> tuple[OutputWord, ...]:
    """Output words ``y0``, ``y1``, ... of ``width`` bits each, least significant first.

    >>> output_words(["p", "q", 1, "r"], 2)
    (OutputWord(name='y0', bits=('p', 'q')), OutputWord(name='y1', bits=(1, 'r')))
    """
    if not bits:
        raise NetlistError("the circuit has no output bits", source, "outputs")
    if len(bits) % width:
        raise NetlistError(f"{len(bits)} output bits cannot form words of {width} bits", source, "outputs")
    return tuple(OutputWord(f"y{index}", tuple(bits[index * width:(index + 1) * width]))
                 for index in range(len(bits) // width))


def group_bits(input_names: Sequence[str], output_bits: Sequence[Signal], words: int | None = None,
               width: int | None = None, source: str | None = None) -> Grouped:
    """Group input and output bits into words.

    Parameters
    ----------
    input_names : sequence of str
        The file's primary input signals, in the order of the file (distinct).
    output_bits : sequence of signals
        The output bits in order: input names (renamed here), other model signals, or 0 and 1.
    words, width : int or None
        The grouping asked for; see the module documentation.
    source : str or None
        The file, for error messages.
    """
    inputs, names = input_words(len(input_names), words, width, source)
    renaming = dict(zip(input_names, names))
    bits = [renaming.get(bit, bit) if isinstance(bit, str) else bit for bit in output_bits]
    return Grouped(inputs, renaming, output_words(bits, inputs[0].width, source))


def describe_grouping(fmt: str, input_names: Sequence[str], output_names: Sequence[str], width: int) -> str:
    """A description of how a circuit's bits became words, for the model's ``description``.

    >>> describe_grouping("BLIF", ["a0", "a1", "b0", "b1"], ["lo0", "lo1", "hi0", "hi1"], 2)
    'BLIF bits a0 a1 | b0 b1 are words x0 | x1, outputs lo0 lo1 | hi0 hi1 are y0 | y1 (low bit first).'
    """
    def listing(names: Sequence[str], prefix: str) -> str:
        groups = [" ".join(names[start:start + width]) for start in range(0, len(names), width)]
        return f"{' | '.join(groups)} are {'words ' if prefix == 'x' else ''}" + \
            " | ".join(f"{prefix}{index}" for index in range(len(groups)))

    if len(input_names) + len(output_names) > MAX_LISTED_BITS:
        return (f"{fmt} bits in file order, {width} to a word, low bit first: {len(input_names)} inputs are "
                f"words x0..x{len(input_names) // width - 1}, {len(output_names)} outputs are "
                f"y0..y{len(output_names) // width - 1}.")
    return f"{fmt} bits {listing(input_names, 'x')}, outputs {listing(output_names, 'y')} (low bit first)."


def parse_grouping(text: str | bytes, source: str = "<grouping>") -> Grouping:
    """Parse the text of a grouping file: a JSON object with ``words``, ``width``, ``property``.

    >>> parse_grouping('{"words": 2, "width": 2, "property": {"name": "sorts"}}')
    Grouping(words=2, width=2, claim=Sorts(signed=False, order='ascending'))
    >>> parse_grouping('{"words": 2, "wdith": 2}', "s.aag.words")
    Traceback (most recent call last):
    ...
    sortcheck.errors.NetlistError: s.aag.words: wdith: unknown key (expected words, width, property)
    """
    data = load_json(decode_text(text, source), source)
    if not isinstance(data, dict):
        raise NetlistError("a grouping file must hold a JSON object with \"words\" and \"width\"", source)
    for key in data:
        if key not in _KEYS:
            raise NetlistError(f"unknown key (expected {', '.join(_KEYS)})", source, key)
    _check_count(data.get("words"), "words", MAX_WORDS, source)
    _check_count(data.get("width"), "width", MAX_WIDTH, source)
    claim = property_from_json(data["property"], source, "property") if "property" in data else None
    return Grouping(data.get("words"), data.get("width"), claim)


def sidecar_paths(path: str | os.PathLike) -> tuple[Path, ...]:
    """The grouping files that may belong to a circuit file, in the order they are looked for.

    >>> [p.as_posix() for p in sidecar_paths("corpus/compare-and-swap-2x2.aag")]
    ['corpus/compare-and-swap-2x2.aag.words', 'corpus/compare-and-swap-2x2.aag.json', 'corpus/compare-and-swap-2x2.json']
    """
    file = Path(path)
    return (Path(str(path) + SIDECAR_SUFFIX), Path(str(path) + ".json"), file.with_suffix(".json"))


def _is_netlist(path: Path) -> bool:
    """Whether a ``.json`` file is a format version 1 netlist (it has a ``"sortcheck"`` key), not a grouping."""
    try:
        head = path.read_bytes()[:4096]
    except OSError:
        return False
    return b'"sortcheck"' in head


def is_sidecar(path: str | os.PathLike) -> bool:
    """Whether ``path`` is the grouping file of a circuit file beside it (so it is not a netlist itself).

    A ``.json`` file with the stem of a circuit beside it is a grouping file
    unless it is a netlist itself (it holds the ``"sortcheck"`` version key).
    """
    file = Path(path)
    if file.suffix == SIDECAR_SUFFIX:
        return True
    if file.suffix != ".json" or _is_netlist(file):
        return False
    stem = file.with_suffix("")
    return stem.suffix in CIRCUIT_SUFFIXES or any(stem.with_suffix(s).exists() for s in CIRCUIT_SUFFIXES)


def read_sidecar(path: str | os.PathLike) -> Grouping | None:
    """Read the first grouping file of the circuit file ``path`` that exists, or None when there is none."""
    for sidecar in sidecar_paths(path):
        if sidecar.suffix == ".json" and _is_netlist(sidecar):
            continue  # a netlist of the same name, not a grouping file
        try:
            data = sidecar.read_bytes()
        except FileNotFoundError:
            continue
        except OSError as error:
            raise NetlistError(f"cannot read: {error.strerror or error}", str(sidecar)) from None
        return parse_grouping(data, str(sidecar))
    return None


def choose_grouping(sidecar: Grouping | None, words: int | None, width: int | None) -> Grouping:
    """The grouping to use: the command line's words and width, when it gives either, replace the file's.

    The grouping file's property is kept either way (``--property`` overrides it later, as for any claim).

    >>> choose_grouping(Grouping(2, 2), None, 4)
    Grouping(words=None, width=4, claim=None)
    >>> choose_grouping(Grouping(2, 2), None, None)
    Grouping(words=2, width=2, claim=None)
    """
    sidecar = sidecar or Grouping()
    if words is None and width is None:
        return sidecar
    return Grouping(words, width, sidecar.claim)


# --- shared by the bit-level readers ---------------------------------------------------------

def show_cycle(names: list[str], limit: int = 8) -> str:
    """``a -> b -> a``, shortened to its first ``limit`` names for long cycles.

    >>> show_cycle(["a", "b"]), show_cycle([str(k) for k in range(20)], 3)
    ('a -> b -> a', '0 -> 1 -> 2 -> ... -> 0 (a cycle of 20)')
    """
    if len(names) <= limit:
        return " -> ".join(names + [names[0]])
    return " -> ".join(names[:limit]) + f" -> ... -> {names[0]} (a cycle of {len(names)})"
