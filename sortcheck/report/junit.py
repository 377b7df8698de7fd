"""JUnit XML: one test case per file and property, for CI systems that read test reports.

A proved check passes; a refuted one is a ``failure`` whose message names the
violation and whose text shows the counterexample; a file that could not be
checked is an ``error``; an undecided check is ``skipped`` with the reason
(the exit status of ``sortcheck check`` still fails the job).
"""

from __future__ import annotations

import xml.etree.ElementTree as ElementTree
from typing import Sequence

from sortcheck.report.results import FileResult, summarise


def _case_name(result: FileResult) -> str:
    return f"{result.path} [{result.prop.short()}]" if result.prop else result.path


def _counterexample_text(result: FileResult) -> str:
    example = result.verdict.counterexample
    return (f"input:  {' '.join(map(str, example.input))}\n"
            f"output: {' '.join(map(str, example.output))}\n"
            f"{example.violation}\n"
            f"engine: {result.verdict.engine}")


def junit_report(results: Sequence[FileResult]) -> str:
    """The JUnit XML document for ``results``."""
    counts = summarise(results)
    total_time = sum(result.seconds for result in results)
    suites = ElementTree.Element("testsuites", name="sortcheck", tests=str(len(results)),
                                 failures=str(counts["refuted"]), errors=str(counts["error"]),
                                 skipped=str(counts["unknown"]), time=f"{total_time:.3f}")
    suite = ElementTree.SubElement(suites, "testsuite", name="sortcheck", tests=str(len(results)),
                                   failures=str(counts["refuted"]), errors=str(counts["error"]),
                                   skipped=str(counts["unknown"]), time=f"{total_time:.3f}")
    for result in results:
        case = ElementTree.SubElement(suite, "testcase", name=_case_name(result),
                                      classname=f"sortcheck.{result.kind or 'netlist'}", time=f"{result.seconds:.3f}")
        if result.status == "refuted":
            failure = ElementTree.SubElement(case, "failure", type="refuted",
                                             message=result.verdict.counterexample.violation)
            failure.text = _counterexample_text(result)
        elif result.status == "error":
            error = ElementTree.SubElement(case, "error", type="invalid", message=str(result.error))
            error.text = str(result.error)
        elif result.status == "unknown":
            ElementTree.SubElement(case, "skipped", message=f"undecided: {result.verdict.scope}")
        if result.verdict is not None:
            ElementTree.SubElement(case, "system-out").text = f"{result.verdict.engine}: {result.verdict.scope}"
    ElementTree.indent(suites)
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + ElementTree.tostring(suites, encoding="unicode") + "\n"
