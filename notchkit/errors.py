"""The exception tree and exit codes.

Every error that notchkit raises on purpose derives from :class:`NotchkitError`;
the command line catches only that class, prints ``error: ...`` lines on stderr
and exits with the error's ``exit_code``. Anything else escaping is a bug.

::

    NotchkitError                  exit 2 unless stated
    ├── UsageError                 bad command-line arguments
    ├── InputError                 a file that cannot be read or written (missing, a directory, unwritable)
    ├── SiteError                  one or more problems in a site file, each with file:line:col and field
    ├── CableError                 unknown cable type, bad cable definition
    ├── MeasurementError           a Touchstone measurement that cannot be used for trimming
    └── DesignError                a request the solver refuses (e.g. pass and notch the same frequency)

A design that is computed but cannot meet its requirements is *not* an error:
it is a result with ``meets = False``; the command line maps it to exit code 1.
"""

from __future__ import annotations

from dataclasses import dataclass

EXIT_OK = 0
"""The command did its job."""
EXIT_UNMET = 1
"""A design was computed but does not meet every requirement."""
EXIT_BAD_INPUT = 2
"""Bad input or usage; nothing was written."""


class NotchkitError(Exception):
    """Base of every error notchkit raises on purpose."""

    exit_code: int = EXIT_BAD_INPUT

    def lines(self) -> list[str]:
        """The one-line messages to print, one per problem (control, bidi and line-break
        characters from a file name or a quoted value shown as escapes)."""
        from notchkit.textsafe import clean

        return [clean(str(self), one_line=True)]


class NotchkitWarning(UserWarning):
    """A result that is computed but less trustworthy than usual (e.g. a lossless cable)."""


class UsageError(NotchkitError):
    """Bad command-line arguments."""


class InputError(NotchkitError):
    """A file that cannot be read or written."""


class CableError(NotchkitError):
    """An unknown cable type or a bad cable definition."""


class MeasurementError(NotchkitError):
    """A measurement file that cannot be used for trimming."""


class DesignError(NotchkitError):
    """A design request the solver refuses outright."""


@dataclass(frozen=True, slots=True)
class Problem:
    """One problem found in a site file.

    ``line`` and ``col`` are 1-based; 0 where no position is known (a missing
    file, an empty document).
    """

    path: str
    line: int
    col: int
    field: str
    message: str

    def __str__(self) -> str:
        from notchkit.textsafe import clean

        where = f"{clean(self.path, one_line=True)}:{self.line}:{self.col}"
        text = f"{where}: {self.field}: {self.message}" if self.field else f"{where}: {self.message}"
        return clean(text, one_line=True)


class SiteError(NotchkitError):
    """One or more problems in a site file, all reported in one run."""

    def __init__(self, problems: list[Problem]):
        self.problems = list(problems)
        super().__init__("\n".join(str(p) for p in self.problems))

    def lines(self) -> list[str]:
        return [str(p) for p in self.problems]
