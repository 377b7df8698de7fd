"""Reports: results of checking files, written as text or JSON."""

from sortcheck.report.json_report import check_report, dumps, stats_report
from sortcheck.report.results import (
    EXIT_ERROR, EXIT_PROVED, EXIT_REFUTED, EXIT_UNKNOWN, FileResult, check_file, exit_status, kind_of, summarise,
)
from sortcheck.report.text import format_summary, format_text

__all__ = ["FileResult", "check_file", "summarise", "exit_status", "kind_of", "check_report", "stats_report",
           "dumps", "format_text", "format_summary", "EXIT_PROVED", "EXIT_REFUTED", "EXIT_ERROR", "EXIT_UNKNOWN"]
