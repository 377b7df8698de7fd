"""Reports of ``sortcheck equiv``: text for people, JSON for programs, and the exit status.

>>> from sortcheck.engines import Status
>>> from sortcheck.engines.equivalence import Equivalence
>>> answer = Equivalence(Status.REFUTED, "miter (SAT)", "this input gives different outputs", 0.01, (2, 1),
...                      ((1, 2), (2, 1)))
>>> print(format_equivalence("a.json", "b.json", answer), end="")
a.json and b.json: different (miter (SAT), 0.01 s)
  this input gives different outputs
  input   2 1
  a.json  1 2
  b.json  2 1
>>> equivalence_exit(answer)
1
"""

from __future__ import annotations

from typing import Any

from sortcheck.engines import Status
from sortcheck.engines.equivalence import Equivalence

#: Exit status of ``equiv``: equal 0, different 1, undecided 3 (errors are 2, as everywhere).
EQUIVALENCE_EXIT = {Status.PROVED: 0, Status.REFUTED: 1, Status.UNKNOWN: 3}


def equivalence_exit(answer: Equivalence) -> int:
    return EQUIVALENCE_EXIT[answer.status]


def format_equivalence(first: str, second: str, answer: Equivalence) -> str:
    """The text report: one verdict line, the scope, and for different netlists the input and both outputs."""
    word = answer.to_json()["status"]
    lines = [f"{first} and {second}: {word} ({answer.method}, {answer.seconds:.2f} s)", f"  {answer.scope}"]
    if answer.input is not None and answer.outputs is not None:
        label = max(len("input"), len(first), len(second))
        lines.append(f"  {'input'.ljust(label)}  {' '.join(map(str, answer.input))}")
        for name, values in zip((first, second), answer.outputs):
            lines.append(f"  {name.ljust(label)}  {' '.join(map(str, values))}")
    return "\n".join(lines) + "\n"


def equivalence_json(first: str, second: str, answer: Equivalence) -> dict[str, Any]:
    """The JSON report: the two paths and the answer."""
    return {"sortcheck_report": 1, "equivalence": {"paths": [first, second], **answer.to_json()}}
