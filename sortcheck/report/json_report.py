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


def dumps(report: dict) -> str:
    return json.dumps(report, indent=2) + "\n"
