"""Where things are in a layout file: the line of each table and key of the TOML text.

``LineMap`` remembers on which line each table and key of a format-1 file was written, so
that a check on the model can point back at the text (tomllib gives no positions).
"""

from __future__ import annotations

import re
import tomllib
from collections.abc import Sequence

KeyPath = tuple[str | int, ...]


# -- line map -----------------------------------------------------------------------------
_KEY_PART = re.compile(r"""[ \t]*([A-Za-z0-9_-]+|"(?:[^"\\]|\\.)*"|'[^']*')[ \t]*""")
_TOKEN = re.compile(r"""#|'''|\"\"\"|"(?:[^"\\]|\\.)*"?|'[^']*'?|[\[\]{},]""")
_ML_END = {'"""': re.compile(r'(?:\\.|[^\\])*?"""("{0,2})'),
           "'''": re.compile(r".*?'''('{0,2})")}


def _parse_key(s: str, i: int) -> tuple[list[str], int] | None:
    """Read a (dotted) TOML key at ``s[i]``; return its parts and the index after it."""
    parts: list[str] = []
    while (m := _KEY_PART.match(s, i)) is not None:
        raw, i = m.group(1), m.end()
        if raw[0] == '"':
            try:
                raw = tomllib.loads(f"k = {raw}")["k"]
            except tomllib.TOMLDecodeError:
                return None
        elif raw[0] == "'":
            raw = raw[1:-1]
        parts.append(raw)
        if not s.startswith(".", i):
            return parts, i
        i += 1
    return None


def _close_multiline(s: str, i: int, delim: str) -> int:
    """Index past the closing ``delim`` of a multi-line string, searching from i; -1 if none."""
    m = _ML_END[delim].match(s, i)
    return -1 if m is None else m.end()


class LineMap:
    """Line of each table and key of a TOML text, keyed by path.

    Paths look like ``("frequency_hz",)``, ``("conductor", 3)`` (the header, or the inline
    table, of the fourth conductor) or ``("conductor", 3, "x_mm")``. :meth:`line` falls
    back to the longest known prefix (the table header), then to line 1.
    """

    def __init__(self, lines: dict[KeyPath, int] | None = None) -> None:
        self._lines: dict[KeyPath, int] = dict(lines or {})

    def line(self, *path: str | int) -> int:
        """1-based line of ``path`` or of its nearest known parent; 1 when none is known."""
        for k in range(len(path), 0, -1):
            got = self._lines.get(tuple(path[:k]))
            if got is not None:
                return got
        return 1

    @classmethod
    def from_text(cls, text: str) -> LineMap:
        """Scan (valid) TOML text for table headers, ``key =`` and inline tables."""
        scan = _Scanner()
        for row in text.split("\n"):  # tomllib counts lines by "\n" only
            scan.feed(row)
        return cls(scan.lines)


class _Scanner:
    """Line-by-line TOML scanner: just enough state to know where each key was written."""

    def __init__(self) -> None:
        self.lines: dict[KeyPath, int] = {}
        self.arrays: dict[KeyPath, int] = {}       # [[header]] arrays -> last index
        self.table: KeyPath = ()                   # current header table
        self.stack: list[list] = []             # open [ or {: [path, is_array, last index]
        self.pending: KeyPath = ()                 # path of the value after the last `key =`
        self.ml: str | None = None              # open multi-line string delimiter
        self.n = 0

    def _resolve(self, parts: Sequence[str]) -> KeyPath:
        cur: KeyPath = ()
        for part in parts:
            cur += (part,)
            if cur in self.arrays:
                cur += (self.arrays[cur],)
        return cur

    def _key(self, s: str, i: int, base: KeyPath) -> int:
        """Record ``key =`` at s[i] under ``base``; index after '=', or -1 if none."""
        got = _parse_key(s, i)
        if got is None or not s.startswith("=", got[1]):
            return -1
        parts = tuple(got[0])
        for k in range(1, len(parts) + 1):
            self.lines.setdefault(base + parts[:k], self.n)
        self.pending = base + parts
        return got[1] + 1

    def _header(self, s: str, i: int) -> None:
        double = s.startswith("[[", i)
        got = _parse_key(s, i + (2 if double else 1))
        if got is None:
            return
        if double:
            arr = self._resolve(got[0][:-1]) + (got[0][-1],)
            self.arrays[arr] = self.arrays.get(arr, -1) + 1
            self.lines.setdefault(arr, self.n)
            self.table = arr + (self.arrays[arr],)
            self.lines[self.table] = self.n
        else:
            self.table = self._resolve(got[0])
            self.lines.setdefault(self.table, self.n)

    def _value(self, s: str, i: int) -> None:
        while (m := _TOKEN.search(s, i)) is not None:
            tok, i = m.group(), m.end()
            if tok == "#":
                return
            if tok in ('"""', "'''"):
                i = _close_multiline(s, i, tok)
                if i < 0:
                    self.ml = tok
                    return
            elif tok in ("[", "{"):
                path = self.pending
                if self.stack and self.stack[-1][1]:  # an element of an array
                    top = self.stack[-1]
                    top[2] += 1
                    path = top[0] + (top[2],)
                    self.lines.setdefault(path, self.n)
                self.stack.append([path, tok == "[", -1])
                if tok == "{":
                    i = max(i, self._key(s, i, path))
            elif tok in ("]", "}"):
                if self.stack:
                    self.stack.pop()
            elif tok == "," and self.stack and not self.stack[-1][1]:
                i = max(i, self._key(s, i, self.stack[-1][0]))

    def feed(self, s: str) -> None:
        """Scan the next line of text."""
        self.n += 1
        i = 0
        if self.ml is not None:
            i = _close_multiline(s, 0, self.ml)
            if i < 0:
                return
            self.ml = None
        elif not self.stack:
            i = len(s) - len(s.lstrip(" \t"))
            if s.startswith("[", i):
                self._header(s, i)
                return
            i = self._key(s, i, self.table)
            if i < 0:
                return
        self._value(s, i)
