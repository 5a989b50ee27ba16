"""The one user-facing error of the ranking."""

from __future__ import annotations


class RankError(ValueError):
    """A ranking request that cannot be run as asked, in one line.

    Parameters
    ----------
    reason : str
        What is wrong and how to fix it.
    parameter : str, optional
        The keyword argument of :func:`~trayadvisor.ranking.rank_layout` at fault (None when
        the layout itself is); front ends map it to their own name for it (a CLI flag, a
        form field).
    value : object, optional
        The value given for ``parameter``.

    ``str(err)`` is ``"parameter = value: reason"``, or just the reason.
    """

    def __init__(self, reason: str, parameter: str | None = None,
                 value: object = None) -> None:
        super().__init__(reason, parameter, value)
        self.reason, self.parameter, self.value = reason, parameter, value

    def __str__(self) -> str:
        if self.parameter is None:
            return self.reason
        return f"{self.parameter} = {self.value!r}: {self.reason}"
