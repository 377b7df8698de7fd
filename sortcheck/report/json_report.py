"""The JSON reports of ``check`` and ``stats``."""

from __future__ import annotations

import json
from typing import Sequence

from sortcheck.report.results import FileResult, summarise

REPORT_VERSION = 1


def check_report(results: Sequence[FileResult]) -> dict:
    """``{"sortcheck_report": 1, "results": [...], "summary": {...}}``."""
    return {"sortcheck_report": REPORT_VERSION, "results": [result.to_json() for result in results],
            "summary": summarise(results)}


def stats_report(results: Sequence[FileResult]) -> dict:
    """``{"results": [{"path", "kind", "stats"}, ...]}`` (with ``error`` for unreadable files)."""
    rows = []
    for result in results:
        row = {"path": result.path, "kind": result.kind, "stats": result.stats}
        if result.error is not None:
            row["error"] = {"message": result.error.message, "where": result.error.where, "text": str(result.error)}
        rows.append(row)
    return {"results": rows}


def _encode(value: object, indent: int) -> str:
    """JSON with objects spread over lines and lists of plain values kept on one line."""
    pad = "  " * (indent + 1)
    if isinstance(value, dict) and value:
        items = [f"{pad}{json.dumps(key)}: {_encode(item, indent + 1)}" for key, item in value.items()]
        return "{\n" + ",\n".join(items) + "\n" + "  " * indent + "}"
    if isinstance(value, list) and any(isinstance(item, (dict, list)) for item in value):
        return "[\n" + ",\n".join(pad + _encode(item, indent + 1) for item in value) + "\n" + "  " * indent + "]"
    return json.dumps(value)


def dumps(report: dict) -> str:
    """The report as JSON text: readable, with counterexample vectors on one line each.

    >>> print(dumps({"input": [1, 0], "summary": {"proved": 1}}), end="")
    {
      "input": [1, 0],
      "summary": {
        "proved": 1
      }
    }
    """
    return _encode(report, 0) + "\n"
