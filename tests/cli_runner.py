"""Running the command line in tests: ``main`` called in-process with captured streams."""

from __future__ import annotations

import io

from sortcheck.cli import main


def run(*argv):
    """``(status, stdout, stderr)`` of ``main`` on ``argv`` (paths and numbers as strings); no traceback allowed."""
    out, err = io.StringIO(), io.StringIO()
    status = main([str(a) for a in argv], stdout=out, stderr=err)
    assert "Traceback" not in out.getvalue() + err.getvalue()
    return status, out.getvalue(), err.getvalue()
