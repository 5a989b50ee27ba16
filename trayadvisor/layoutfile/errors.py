"""The one user-facing error of the layout reader, and the "did you mean" hint."""

from __future__ import annotations

import difflib
from collections.abc import Iterable


class LayoutError(Exception):
    """One clean user-facing error. ``str(err) == f"{path}:{line}: {message}"``.

    Parameters
    ----------
    path : str
        The file name as the user gave it (or ``"<layout>"``).
    line : int
        1-based line number; 0 when no line applies (unreadable file, edited model).
    message : str
        What is wrong and how to fix it, one line.
    """

    def __init__(self, path: str, line: int, message: str) -> None:
        message = "".join(ch if ch.isprintable() else repr(ch)[1:-1] for ch in message)
        super().__init__(path, line, message)
        self.path = path
        self.line = line
        self.message = message  # control characters (e.g. in a name) escaped: one line

    def __str__(self) -> str:
        return f"{self.path}:{self.line}: {self.message}"


def did_you_mean(word: object, choices: Iterable[str]) -> str:
    """``"; did you mean 'x'?"`` for the closest choice, or ``""`` when none is close."""
    if not isinstance(word, str):
        return ""
    close = difflib.get_close_matches(word, list(choices), n=1, cutoff=0.6)
    return f"; did you mean '{close[0]}'?" if close else ""
