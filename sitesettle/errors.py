"""Errors raised by sitesettle.

Every problem the user can fix by editing the project raises :class:`InputError`;
the command line prints its message and exits with code 2, without a traceback
and without writing anything.
"""

from __future__ import annotations

import unicodedata


def one_line(text: str) -> str:
    """``text`` with every control character and line or paragraph separator
    written as an escape (``\\r``, ``\\x1c``, ``\\u2028``), so that a message
    quoting user data stays on one line of the terminal or log."""
    out = []
    for ch in text:
        if unicodedata.category(ch) in ("Cc", "Zl", "Zp"):
            out.append(repr(ch)[1:-1])
        else:
            out.append(ch)
    return "".join(out)


class SiteSettleError(Exception):
    """Base class of every error raised on purpose by sitesettle."""


class InputError(SiteSettleError):
    """A problem in the project's input that the user can fix.

    Parameters
    ----------
    where : str
        The place: file and row/column, or file and key
        (``'footings.csv row 12, column "width"'``).
    problem : str
        What is wrong (``'"3 kg" is a mass'``).
    expected : str, optional
        What is expected instead (``'a length such as "1.2 m" or "4 ft"'``).
    """

    def __init__(self, where: str, problem: str, expected: str = "") -> None:
        self.where = where
        self.problem = problem
        self.expected = expected
        msg = f"{where}: {problem}"
        if expected:
            msg += f"; expected {expected}"
        # user data quoted in the message (a cell, a file name) cannot break it
        # over several lines
        super().__init__(one_line(msg))


class OutputError(SiteSettleError):
    """The results folder cannot be written where asked (an existing file, no permission)."""


class AnalysisError(SiteSettleError):
    """The analysis cannot proceed with a valid input (should not happen; please report)."""


class InputWarning(UserWarning):
    """A value that is valid but suspicious (e.g. a modulus of 25 kPa); shown, not fatal."""
