"""The one error hierarchy of sortcheck.

Every problem a user can cause (a bad file, a bad option, a property that does
not fit the netlist) is raised as a subclass of :class:`SortcheckError`.  Its
string form is a single line that names the file and the place::

    net.json: comparators[7]: channel 9 is out of range for 8 channels

The command line turns these into error results and exit status 2; no user
ever sees a traceback for bad input.
"""

from __future__ import annotations


class SortcheckError(Exception):
    """Root of every error sortcheck raises on purpose.

    Parameters
    ----------
    message : str
        What is wrong, in one sentence without a trailing period.
    source : str or None
        The file (or ``--property`` for the command line) the problem is in.
    where : str or None
        The place inside the source: ``comparators[7]``, ``gates[2].in[1]``,
        ``line 3, column 5``.

    Examples
    --------
    >>> str(SortcheckError("channel 9 is out of range", "net.json", "comparators[7]"))
    'net.json: comparators[7]: channel 9 is out of range'
    >>> str(SortcheckError("no such file", "missing.json"))
    'missing.json: no such file'
    """

    def __init__(self, message: str, source: str | None = None, where: str | None = None):
        super().__init__(message)
        self.message = message
        self.source = source
        self.where = where

    def __str__(self) -> str:
        parts = [part for part in (self.source, self.where) if part]
        return ": ".join(parts + [self.message])

    def located(self, source: str) -> "SortcheckError":
        """Return a copy of this error attributed to ``source`` (keeps ``where``)."""
        return type(self)(self.message, source, self.where)


class NetlistError(SortcheckError):
    """A netlist file is unreadable, malformed or meaningless."""


class PropertyError(SortcheckError):
    """A property is malformed or does not fit the netlist it is checked on."""


class UsageError(SortcheckError):
    """The command line or an API call asks for something that cannot be done."""
