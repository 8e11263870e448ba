"""The one error type a user sees.

Every mistake in what the user gave us (a house file, a forecast, a crop name, a
command-line value, an unreachable forecast service) is raised as `InputError` with a
one-line message that says *what* is wrong and *where*. The command line prints it as
``Error: <message>`` on stderr and exits with status 2; nothing else is printed.

The exit statuses live here too, so commands and tests need not import the command line.
"""

from __future__ import annotations

import datetime as dt
import difflib
from collections.abc import Iterable

#: the command did its job (or the crop is safe)
EXIT_OK = 0
#: bad input: one line on stderr says what and where
EXIT_INPUT = 2
#: ``tonight --alert-status``: action needed tonight, and the installed heater holds the alarm
#: (or, the plants below it at the start, brings them back before damage and holds them)
EXIT_ACTION = 3
#: ``tonight --alert-status``: damage expected even with the installed heat (too small, none
#: installed, or the plants are below the alarm already and the heater cannot bring them back)
EXIT_DAMAGE = 4


class InputError(ValueError):
    """A problem with the user's input, reported in one line (exit status 2)."""

    def __init__(self, message: str, *, where: str | None = None) -> None:
        text = " ".join(str(message).split())  # always one line
        if where:
            text = f"{where}: {text}"
        super().__init__(text)


def message_time(t: dt.datetime) -> str:
    """`t` for a message: ISO 8601 to the nearest minute, with its UTC offset
    ("2026-12-05T09:26-05:00"); a message never shows seconds or microseconds."""
    minute = (t + dt.timedelta(seconds=30)).replace(second=0, microsecond=0)
    return minute.isoformat(timespec="minutes")


def did_you_mean(word: str, choices: Iterable[str]) -> str:
    """Return ``' (did you mean "x"?)'`` for the closest choice, or ``''``."""
    close = difflib.get_close_matches(word, list(choices), n=1, cutoff=0.6)
    return f' (did you mean "{close[0]}"?)' if close else ""


class InputWarning(UserWarning):
    """Something in the input is possible but unusual, or was repaired: the run goes on.

    The command line prints each as one line on stderr, ``Warning: <message>``.
    """


class InputNote(UserWarning):
    """How an input was read (a bare number's unit): ``Note: <message>`` on stderr."""


def _one_line(message: str, where: str | None) -> str:
    text = " ".join(str(message).split())
    return f"{where}: {text}" if where else text


def warn(message: str, *, where: str | None = None) -> None:
    """Issue an `InputWarning` (one line naming `where`)."""
    import warnings

    warnings.warn(InputWarning(_one_line(message, where)), stacklevel=2)


def note(message: str, *, where: str | None = None) -> None:
    """Issue an `InputNote` (one line naming `where`)."""
    import warnings

    warnings.warn(InputNote(_one_line(message, where)), stacklevel=2)
