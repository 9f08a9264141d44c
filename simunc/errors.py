"""Errors that reach the user as one line and an exit code.

Every problem with a study is raised as :class:`StudyError`, which names the
study key, what was given and what was expected.  The command line prints the
message on one line and exits with :data:`EXIT_BAD_INPUT`; it never shows a
traceback for bad input.
"""

from __future__ import annotations

EXIT_OK = 0
EXIT_INTERNAL = 1
EXIT_BAD_INPUT = 2


class SimuncError(Exception):
    """Base class of the errors simunc raises on purpose."""

    exit_code = EXIT_INTERNAL


class StudyError(SimuncError, ValueError):
    """A study file that cannot be used as written.

    Parameters
    ----------
    key : str
        Dotted study key, e.g. ``"facility.stagnation_temperature"``.
    given : object
        What the study says (shown with ``repr`` unless it is already a str).
    expected : str
        What would have been accepted.
    hint : str, optional
        A short suggestion (e.g. the nearest valid key).
    """

    exit_code = EXIT_BAD_INPUT

    def __init__(self, key: str, given: object, expected: str, hint: str = "") -> None:
        self.key = key
        self.given = given
        self.expected = expected
        self.hint = hint
        given_text = given if isinstance(given, str) else repr(given)
        msg = f"study key '{key}': given {given_text}; expected {expected}"
        if hint:
            msg += f" ({hint})"
        super().__init__(" ".join(msg.split()))

