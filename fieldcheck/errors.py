"""One error hierarchy for the whole package.

Every error a user can cause derives from :class:`FieldcheckError` and from the
matching builtin, so library callers may catch either.  Messages name the file
(and line, where there is one) and say what to do; the command line prints
them as one line on stderr and exits with code 2.
"""

from __future__ import annotations


class FieldcheckError(Exception):
    """Base class of every error fieldcheck raises on purpose."""


class InputError(FieldcheckError, ValueError):
    """A file or value supplied by the user cannot be used as it is.

    Parameters
    ----------
    message : str
        What is wrong and what to do about it.
    path : str, optional
        The file concerned.
    line : int, optional
        1-based line number in ``path``.
    """

    def __init__(self, message: str, path: str | None = None, line: int | None = None):
        self.path = path
        self.line = line
        self.reason = message
        where = ""
        if path is not None:
            where = f"{path}:{line}: " if line is not None else f"{path}: "
        super().__init__(where + message)


class SpecError(InputError):
    """An antenna description, limits file or option is missing a field or has a bad one."""


class FitError(FieldcheckError, RuntimeError):
    """The model cannot be fitted to the measurement, or the fit cannot be trusted."""


class AdviceRefused(FieldcheckError, RuntimeError):
    """A decision (for example a cut) is refused because the evidence does not support it."""
