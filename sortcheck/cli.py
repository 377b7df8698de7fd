"""The command line: parse arguments, call the library, print a report, return the exit status.

``main(argv)`` never raises for bad input or bad options; it returns the exit
status (0 proved, 1 refuted, 2 error, 3 unknown).
"""

from __future__ import annotations

import argparse
import sys
from concurrent.futures import ProcessPoolExecutor
from dataclasses import replace
from pathlib import Path
from typing import Sequence, TextIO

from sortcheck import __version__
from sortcheck.engines import ENGINE_NAMES, Options
from sortcheck.errors import SortcheckError, UsageError
from sortcheck.load import dump_netlist, parse_property, read_netlist
from sortcheck.load.config import CheckRequest, expand, read_project_config

from sortcheck.model.families import FAMILIES, build_family
from sortcheck.report import (
    EXIT_ERROR, EXIT_PROVED, FileResult, check_file, check_report, dumps, exit_status, format_text, kind_of,
    stats_report, summarise,
)
from sortcheck.report.junit import junit_report
from sortcheck.report.progress import for_file as progress_line
from sortcheck.report.sarif import sarif_report
from sortcheck.report.text import describe_netlist


class _Parser(argparse.ArgumentParser):
    """An argument parser that raises instead of exiting, so ``main`` returns the status."""

    def error(self, message: str) -> None:  # type: ignore[override]
        raise UsageError(message)


def _positive_seconds(text: str) -> float:
    try:
        value = float(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected a number of seconds, got {text!r}") from None
    if not value > 0 or value == float("inf"):
        raise argparse.ArgumentTypeError(f"expected a positive number of seconds, got {text!r}")
    return value


def _width(text: str) -> int:
    if not text.isascii() or not text.isdigit() or not 1 <= int(text) <= 4096:
        raise argparse.ArgumentTypeError(f"expected a width from 1 to 4096 bits, got {text!r}")
    return int(text)


def _words(text: str) -> int:
    if not text.isascii() or not text.isdigit() or not 1 <= int(text) <= 65536:
        raise argparse.ArgumentTypeError(f"expected a number of words from 1 to 65536, got {text!r}")
    return int(text)


def _jobs(text: str) -> int:
    if not text.isascii() or not text.isdigit() or not 1 <= int(text) <= 1024:
        raise argparse.ArgumentTypeError(f"expected a number of processes from 1 to 1024, got {text!r}")
    return int(text)


def _size(text: str) -> int:
    if not text.isdigit():
        raise argparse.ArgumentTypeError(f"expected a whole number, got {text!r}")
    return int(text)


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(prog="sortcheck", description="Prove that comparator networks and sorting circuits "
                     "sort, merge, select or take the median, or find an input that breaks them.")
    parser.add_argument("--version", action="version", version=f"sortcheck {__version__}")
    commands = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)

    check = commands.add_parser("check", help="prove a property of netlists or find a counterexample")
    check.add_argument("paths", nargs="*", metavar="PATH",
                       help="netlist files or directories (every *.json below); none: the [tool.sortcheck] "
                            "table of ./pyproject.toml")
    check.add_argument("--property", metavar="SPEC",
                       help="property to check: sorts, sorts:desc, merges:M, selects:T[:sorted], median, "
                            "partial-sort:K[:stable], or a JSON object (default: the file's own, else sorts)")
    check.add_argument("--engine", choices=ENGINE_NAMES, help="engine to use (default: auto)")
    check.add_argument("--timeout", type=_positive_seconds, metavar="SECONDS",
                       help="time budget per file; a check that runs out is 'unknown' (exit 3)")
    check.add_argument("--words", type=_words, metavar="N",
                       help="AIGER and BLIF files: group their input and output bits into N words")
    check.add_argument("--width", type=_width, metavar="BITS",
                       help="AIGER and BLIF files: bits per word; comparator networks with --engine smt: the word "
                            "width (default: the smallest that separates the channels' values)")
    check.add_argument("--count", action="store_true",
                       help="count every failing 0-1 input instead of stopping at the first (enumerate)")
    check.add_argument("--no-minimize", action="store_true",
                       help="report the engine's first counterexample instead of a provably smallest one")
    check.add_argument("--quiet", action="store_true", help="no progress display on standard error")
    check.add_argument("--jobs", type=_jobs, default=1, metavar="N", help="check N files at a time in "
                       "separate processes (default: 1)")
    check.add_argument("--format", choices=REPORT_FORMATS, default="text", help="report format")
    check.add_argument("--output", metavar="FILE", help="write the report to FILE (a text report still "
                                                        "goes to the terminal)")

    stats = commands.add_parser("stats", help="print size, depth and other figures of netlists")
    stats.add_argument("paths", nargs="+", metavar="PATH")
    stats.add_argument("--format", choices=("text", "json"), default="text")

    build = commands.add_parser("build", help="write a reference comparator network")
    build.add_argument("family", choices=sorted(FAMILIES), metavar="FAMILY",
                       help=f"one of {', '.join(sorted(FAMILIES))}")
    build.add_argument("channels", type=_size, metavar="N", help="number of channels")
    build.add_argument("--output", metavar="FILE", help="write to FILE instead of standard output")
    return parser


def _write(path: str, text: str) -> None:
    try:
        Path(path).write_text(text, encoding="utf-8")
    except OSError as error:
        raise UsageError(f"cannot write: {error.strerror or error}", path) from None


def _report_errors(results: Sequence[FileResult], stderr: TextIO) -> None:
    for result in results:
        if result.error is not None:
            print(f"error: {result.error}", file=stderr)


REPORT_FORMATS = ("text", "json", "junit", "sarif")


def _requests(args: argparse.Namespace) -> list[CheckRequest]:
    """The files to check with their settings; command-line options override the configuration."""
    if args.paths:
        requests = []
        for path in args.paths:
            files = expand(path)
            if not files:
                raise UsageError("no netlist files (*.json, *.aag, *.aig, *.blif) below this directory", path)
            requests.extend(CheckRequest(file) for file in files)
    else:
        requests = read_project_config(".")
    overrides = {"prop": parse_property(args.property) if args.property is not None else None,
                 "engine": args.engine, "timeout": args.timeout, "words": args.words, "width": args.width}
    return [replace(request, **{key: value for key, value in overrides.items() if value is not None})
            for request in requests]


def _check_request(request: CheckRequest, count: bool, minimize: bool, progress=None) -> FileResult:
    options = Options(width=request.width, count=count)
    return check_file(request.path, request.prop, request.engine or "auto", request.timeout, options, progress,
                      minimize, request.words)


def _check_all(requests: list[CheckRequest], args: argparse.Namespace, stderr: TextIO) -> list[FileResult]:
    if args.jobs > 1 and len(requests) > 1:
        with ProcessPoolExecutor(max_workers=min(args.jobs, len(requests))) as pool:
            return list(pool.map(_check_request, requests, [args.count] * len(requests),
                                 [not args.no_minimize] * len(requests)))
    results = []
    for request in requests:
        progress = progress_line(stderr, request.path, args.quiet)
        results.append(_check_request(request, args.count, not args.no_minimize, progress))
        if progress is not None:
            progress.clear()
    return results


def _formatted(results: list[FileResult], report_format: str) -> str:
    if report_format == "json":
        return dumps(check_report(results))
    if report_format == "junit":
        return junit_report(results)
    if report_format == "sarif":
        return sarif_report(results)
    return format_text(results)


def run_check(args: argparse.Namespace, stdout: TextIO, stderr: TextIO) -> int:
    results = _check_all(_requests(args), args, stderr)
    _report_errors(results, stderr)
    report = _formatted(results, args.format)
    if args.output:
        _write(args.output, report)
        stdout.write(format_text(results))
    else:
        stdout.write(report)
    return exit_status(summarise(results))


def _stats_result(path: str) -> FileResult:
    try:
        netlist = read_netlist(path)
    except SortcheckError as error:
        return FileResult(path, error=error)
    return FileResult(path, kind_of(netlist), stats=netlist.stats())


def _stats_line(result: FileResult) -> str:
    if result.error is not None:
        return f"ERROR    {result.error}"
    line = f"{result.path}: {result.kind}, {describe_netlist(result.stats, result.kind)}"
    if result.kind == "gate-circuit":
        line += " (" + ", ".join(f"{op} {count}" for op, count in result.stats["ops"].items()) + ")"
    elif result.stats["reversed_comparators"]:
        line += f" ({result.stats['reversed_comparators']} reversed)"
    return line


def run_stats(args: argparse.Namespace, stdout: TextIO, stderr: TextIO) -> int:
    results = [_stats_result(path) for path in args.paths]
    _report_errors(results, stderr)
    if args.format == "json":
        stdout.write(dumps(stats_report(results)))
    else:
        stdout.write("".join(_stats_line(result) + "\n" for result in results))
    return EXIT_ERROR if any(result.error for result in results) else EXIT_PROVED


def run_build(args: argparse.Namespace, stdout: TextIO, stderr: TextIO) -> int:
    network = build_family(args.family, args.channels)
    text = dump_netlist(network)
    if args.output:
        _write(args.output, text)
        print(f"wrote {args.output}: {network.name}, {network.channels} channels, {network.size} comparators, "
              f"depth {network.depth}", file=stderr)
    else:
        stdout.write(text)
    return EXIT_PROVED


COMMANDS = {"check": run_check, "stats": run_stats, "build": run_build}


def main(argv: Sequence[str] | None = None, stdout: TextIO | None = None, stderr: TextIO | None = None) -> int:
    """Run sortcheck with ``argv`` (default: the process arguments) and return the exit status."""
    stdout = stdout or sys.stdout
    stderr = stderr or sys.stderr
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
        if args.command is None:
            parser.print_help(stderr)
            return EXIT_ERROR
        return COMMANDS[args.command](args, stdout, stderr)
    except SystemExit as exit_request:  # --help and --version
        return int(exit_request.code or 0)
    except SortcheckError as error:
        print(f"sortcheck: error: {error}", file=stderr)
        return EXIT_ERROR
    except KeyboardInterrupt:
        print("sortcheck: interrupted", file=stderr)
        return 130


def run() -> None:
    """Entry point of the ``sortcheck`` console script."""
    sys.exit(main())
