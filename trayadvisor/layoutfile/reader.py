"""Layout file, format 1 (TOML): read with line numbers for errors, validate, write.

The reader turns TOML text into a :class:`~trayadvisor.model.Layout` and checks it; every
problem is one :class:`LayoutError` whose text is ``FILE:LINE: what is wrong and how to fix
it``. The writer produces text that reads back to an equal model, and saves atomically.
The keys are documented in ``docs/file-format.md``.
"""

from __future__ import annotations

import contextlib
import os
import re
import tempfile
import tomllib
from dataclasses import MISSING, fields
from typing import Any

from trayadvisor.model import (
    SYSTEMS,
    Circuit,
    Conductor,
    Layout,
    Limit,
    ObservationLine,
    ObservationPoint,
    Tray,
)
from trayadvisor.layoutfile.checks import (
    LayoutError,
    LineMap,
    did_you_mean,
    layout_problems,
    validate_layout,
)

__all__ = [
    "FORMAT",
    "LayoutError",
    "LineMap",
    "atomic_write_text",
    "dumps_layout",
    "layout_problems",
    "parse_layout",
    "read_layout",
    "validate_layout",
    "write_layout",
]

#: The value of the ``format`` key this module reads and writes.
FORMAT = "trayadvisor/1"

# Key schema per table: key -> (type, required). Order is the order the writer uses.
# Types: "str", "num" (int or float, stored as float), "int", "bool", "harm" (inline table).
_Schema = dict[str, tuple[str, bool]]
_SCHEMA: dict[str, tuple[type, str, _Schema]] = {
    "tray": (Tray, "trays", {
        "name": ("str", True), "x_mm": ("num", True), "y_mm": ("num", True),
        "width_mm": ("num", True), "depth_mm": ("num", True)}),
    "circuit": (Circuit, "circuits", {
        "name": ("str", True), "system": ("str", True), "current_a": ("num", False),
        "angle_deg": ("num", False), "harmonics": ("harm", False),
        "length_m": ("num", False)}),
    "conductor": (Conductor, "conductors", {
        "name": ("str", True), "circuit": ("str", True), "phase": ("str", True),
        "x_mm": ("num", True), "y_mm": ("num", True), "diameter_mm": ("num", True),
        "area_mm2": ("num", False), "material": ("str", False), "current_a": ("num", False),
        "angle_deg": ("num", False), "fixed": ("bool", False), "tray": ("str", False)}),
    "point": (ObservationPoint, "points", {
        "name": ("str", True), "x_mm": ("num", True), "y_mm": ("num", True)}),
    "line": (ObservationLine, "lines", {
        "name": ("str", True), "x0_mm": ("num", True), "y0_mm": ("num", True),
        "x1_mm": ("num", True), "y1_mm": ("num", True), "samples": ("int", False)}),
    "limit": (Limit, "limits", {
        "name": ("str", True), "ut": ("num", True), "source": ("str", False)}),
}
_TOP: _Schema = {"format": ("str", True), "title": ("str", False),
                 "frequency_hz": ("num", False), "earth_y_mm": ("num", False)}
_TOP_KEYS = (*_TOP, *_SCHEMA)
_EXAMPLE = {"str": '"text"', "num": "1.0", "int": "101", "bool": "true",
            "harm": "{ 3 = 0.05, 5 = 0.20 }"}
_TOML_POS = re.compile(r"\s*\(at (?:line (\d+), column (\d+)|end of document)\)\s*$")


# -- reading ------------------------------------------------------------------------------
class _Bad(Exception):
    """A problem in one table, before the line is known: message and the key it is about."""

    def __init__(self, message: str, key: str | None = None) -> None:
        super().__init__(message, key)
        self.message, self.key = message, key


def _kind_of(value: Any) -> str:
    """How a TOML value reads to a person: 'a boolean (true)', 'a string ("60")', ..."""
    if isinstance(value, bool):
        return f"a boolean ({str(value).lower()})"
    for typ, word in ((int, "a whole number"), (float, "a decimal number"), (str, "a string"),
                      (list, "an array"), (dict, "a table")):
        if isinstance(value, typ):
            shown = repr(value) if isinstance(value, int | float | str) else ""
            return f"{word} ({shown[:24]})" if shown else word
    return "a date/time"


def _convert(value: Any, typ: str, key: str, what: str) -> Any:
    """A TOML value as the model stores it; raises :class:`_Bad` on a wrong type."""
    wrong = (f"{what}: {key} must be {_TYPE_WORD[typ]}, got {_kind_of(value)}; "
             f"write for example {key} = {_EXAMPLE[typ]}")
    if typ == "str":
        if not isinstance(value, str):
            raise _Bad(wrong)
        return value
    if typ == "bool":
        if not isinstance(value, bool):
            raise _Bad(wrong)
        return value
    if typ == "int":
        if isinstance(value, bool) or not isinstance(value, int):
            raise _Bad(wrong)
        return value
    if typ == "num":
        if isinstance(value, bool) or not isinstance(value, int | float):
            raise _Bad(wrong)
        try:
            return float(value)
        except OverflowError:
            raise _Bad(f"{what}: {key} = {str(value)[:20]}... is too large; "
                       "give a realistic value") from None
    if not isinstance(value, dict):  # harmonics
        raise _Bad(wrong)
    orders: dict[int, float] = {}
    for order, frac in value.items():
        if not re.fullmatch(r"[0-9]{1,3}", order):
            raise _Bad(f"{what}: harmonics key {order!r} is not a harmonic order; keys "
                       "are whole orders 2 to 50, e.g. harmonics = { 5 = 0.2 }")
        if int(order) in orders:
            raise _Bad(f"{what}: harmonic order {int(order)} is given twice; keep one")
        if isinstance(frac, bool) or not isinstance(frac, int | float):
            raise _Bad(f"{what}: harmonic {order} must be a number (fraction of "
                       f"current_a), got {_kind_of(frac)}; e.g. harmonics = {{ 5 = 0.2 }}")
        try:
            orders[int(order)] = float(frac)
        except OverflowError:
            raise _Bad(f"{what}: harmonic {order} is far too large; give a fraction such "
                       "as 0.2") from None
    return tuple(sorted(orders.items()))


_TYPE_WORD = {"str": "a string in double quotes", "num": "a number",
              "int": "a whole number", "bool": "true or false",
              "harm": "an inline table of harmonic order = fraction"}


def _table(kind: str, i: int, raw: Any, lm: LineMap, errors: list[LayoutError],
           path: str) -> Any:
    """Build one model object from the i-th ``[[kind]]`` table; record its first error."""
    cls, _, schema = _SCHEMA[kind]
    name = raw.get("name") if isinstance(raw, dict) else None
    what = f"{kind} '{name}'" if isinstance(name, str) and name else f"[[{kind}]] #{i + 1}"
    if not isinstance(raw, dict):
        errors.append(LayoutError(path, lm.line(kind, i), f"{what} must be a table; write "
                                  f"it as a [[{kind}]] header followed by key = value lines"))
        return None
    try:
        for key in raw:
            if key not in schema:
                hint = did_you_mean(key, schema)
                if not hint and key in _TOP_KEYS:
                    hint = (f"; top-level keys such as '{key}' must come before the first "
                            "[[table]] header")
                hint = hint or f"; remove it (known keys: {', '.join(schema)})"
                raise _Bad(f"{what}: unknown key '{key}'{hint}", key)
        required = {k for k, (_, req) in schema.items() if req}
        if kind == "circuit" and raw.get("system") in SYSTEMS and raw["system"] != "signal":
            required.add("current_a")
        for key in schema:
            if key in required and key not in raw:
                raise _Bad(f"{what}: missing key '{key}'; add {key} = "
                           f"{_EXAMPLE[schema[key][0]]} to this table")
        kwargs = {}
        for key, value in raw.items():
            try:
                kwargs[key] = _convert(value, schema[key][0], key, what)
            except _Bad as exc:
                raise _Bad(exc.message, key) from None
        return cls(**kwargs)
    except _Bad as exc:
        line = lm.line(kind, i) if exc.key is None else lm.line(kind, i, exc.key)
        errors.append(LayoutError(path, line, exc.message))
        return None


def _syntax_error(text: str, path: str, exc: Exception) -> LayoutError:
    """The LayoutError for text tomllib refused (or could not finish)."""
    line, where, hint = text.rstrip().count("\n") + 1, "", "fix the TOML syntax on this line"
    if isinstance(exc, RecursionError):
        message = "values are nested too deeply"
    elif not isinstance(exc, tomllib.TOMLDecodeError):  # Python's limit on integer digits
        big = re.search(r"[0-9_]{4000,}", text)
        line = text.count("\n", 0, big.start()) + 1 if big else 1
        message = "a number has far too many digits"
    else:
        message = str(exc)
        m = _TOML_POS.search(message)
        if m is not None:
            message = message[: m.start()]
            if m.group(1):
                line, where = int(m.group(1)), f" at column {m.group(2)}"
        if message.startswith(("Cannot overwrite", "Cannot declare")):
            hint = "a key or table is given twice; keep one (use [[name]] for repeated tables)"
    return LayoutError(path, line, f"TOML syntax error{where}: {message[:200]}; {hint}")


def parse_layout(text: str, path: str = "<layout>") -> Layout:
    """Parse and validate format-1 TOML text.

    Parameters
    ----------
    text : str
        The file's text (a leading byte-order mark is ignored).
    path : str
        File name used in error messages.

    Returns
    -------
    Layout

    Raises
    ------
    LayoutError
        The first problem: syntax, format, unknown/missing keys, types, then the checks of
        :func:`~trayadvisor.layoutfile.checks.layout_problems`.
    """
    text = text.removeprefix("\ufeff")
    try:
        doc = tomllib.loads(text)
    except (ValueError, RecursionError) as exc:  # TOMLDecodeError, or int digit limit
        raise _syntax_error(text, path, exc) from None
    lm = LineMap.from_text(text)
    fmt = doc.get("format")
    if fmt is None:
        raise LayoutError(path, 1, f'missing key \'format\'; add format = "{FORMAT}" as the '
                          "first line of a trayadvisor layout file")
    if fmt != FORMAT:
        raise LayoutError(path, lm.line("format"), f"unsupported format {fmt!r}; this "
                          f'version reads format = "{FORMAT}"')
    errors: list[LayoutError] = []
    top: dict[str, Any] = {}
    for key, value in doc.items():
        if key not in _TOP_KEYS:
            hint = did_you_mean(key, _TOP_KEYS) or f"; remove it (keys: {', '.join(_TOP_KEYS)})"
            errors.append(LayoutError(path, lm.line(key), f"unknown top-level key '{key}'"
                                      f"{hint}"))
        elif key in _TOP and key != "format":
            try:
                top[key] = _convert(value, _TOP[key][0], key, "layout")
            except _Bad as exc:
                errors.append(LayoutError(path, lm.line(key), exc.message))
    groups: dict[str, tuple[Any, ...]] = {}
    for kind, (_, attr, _) in _SCHEMA.items():
        raw = doc.get(kind, [])
        if not isinstance(raw, list):
            shape = "a single [table]" if isinstance(raw, dict) else _kind_of(raw)
            errors.append(LayoutError(path, lm.line(kind), f"'{kind}' is {shape}; write each "
                                      f"{kind} as its own [[{kind}]] table (double brackets)"))
            continue
        groups[attr] = tuple(_table(kind, i, t, lm, errors, path) for i, t in enumerate(raw))
    if errors:
        raise min(errors, key=lambda e: e.line)
    layout = Layout(**top, **groups)
    validate_layout(layout, path, lm)
    return layout


def read_layout(path: str | os.PathLike[str]) -> Layout:
    """Read and validate a format-1 layout file (UTF-8).

    Raises
    ------
    LayoutError
        Also for a missing or unreadable file (line 0) and for text that is not UTF-8 (the
        line of the first bad byte).
    """
    name = os.fsdecode(path)
    try:
        with open(name, "rb") as fh:
            data = fh.read()
    except FileNotFoundError:
        raise LayoutError(name, 0, "no such file; check the path") from None
    except IsADirectoryError:
        raise LayoutError(name, 0, "this is a folder, not a layout file") from None
    except OSError as exc:
        raise LayoutError(name, 0, f"cannot read the file ({exc.strerror or exc}); check "
                          "that it exists and that you may read it") from None
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = data.count(b"\n", 0, exc.start) + 1
        col = exc.start - (data.rfind(b"\n", 0, exc.start) + 1) + 1
        raise LayoutError(name, line, f"the file is not UTF-8 text (byte 0x{data[exc.start]:02X}"
                          f" at column {col}); save it with UTF-8 encoding") from None
    return parse_layout(text, name)


# -- writing ------------------------------------------------------------------------------
_ESCAPES = {'"': '\\"', "\\": "\\\\", "\b": "\\b", "\t": "\\t", "\n": "\\n", "\f": "\\f",
            "\r": "\\r"}


def _toml_str(text: str) -> str:
    """A TOML basic string; control characters escaped (TOML 1.0, section String)."""
    out = []
    for ch in text:
        if ch in _ESCAPES:
            out.append(_ESCAPES[ch])
        elif ord(ch) < 0x20 or ord(ch) == 0x7F:
            out.append(f"\\u{ord(ch):04X}")
        else:
            out.append(ch)
    return '"' + "".join(out) + '"'


def _toml_value(value: Any, typ: str) -> str:
    if typ == "str":
        return _toml_str(value)
    if typ == "bool":
        return "true" if value else "false"
    if typ == "int":
        return str(int(value))
    if typ == "num":
        return repr(float(value))  # shortest text that reads back to the same float
    return "{ " + ", ".join(f"{int(h)} = {float(f)!r}" for h, f in value) + " }"


def _defaults(cls: type) -> dict[str, Any]:
    return {f.name: f.default for f in fields(cls) if f.default is not MISSING}


def dumps_layout(layout: Layout) -> str:
    """Format-1 TOML text of a layout; :func:`parse_layout` reads it back to an equal model.

    Keys are written in the order of docs/file-format.md; optional keys only when they
    differ from their default.
    """
    out = ["# trayadvisor layout. Units: mm, A RMS, degrees, Hz. Keys: docs/file-format.md",
           f"format = {_toml_str(FORMAT)}"]
    if layout.title:
        out.append(f"title = {_toml_str(layout.title)}")
    out.append(f"frequency_hz = {_toml_value(layout.frequency_hz, 'num')}")
    if layout.earth_y_mm is not None:
        out.append(f"earth_y_mm = {_toml_value(layout.earth_y_mm, 'num')}")
    for kind, (cls, attr, schema) in _SCHEMA.items():
        defaults = _defaults(cls)
        for obj in getattr(layout, attr):
            out += ["", f"[[{kind}]]"]
            for key, (typ, required) in schema.items():
                value = getattr(obj, key)
                keep = required or (kind == "circuit" and key == "current_a"
                                    and obj.system != "signal")
                if not keep and (value is None or (key in defaults and value == defaults[key])):
                    continue
                out.append(f"{key} = {_toml_value(value, typ)}")
    return "\n".join(out) + "\n"


def _umask() -> int:
    with contextlib.suppress(OSError, ValueError), open("/proc/self/status") as fh:
        for row in fh:
            if row.startswith("Umask:"):
                return int(row.split()[1], 8)
    return 0o022


def atomic_write_text(path: str | os.PathLike[str], text: str) -> None:
    """Write UTF-8 text to ``path`` atomically: a temp file in the same folder, then
    ``os.replace``. An existing file keeps its permissions; on error it is left untouched
    and the temp file is removed.

    Raises
    ------
    OSError
        When the folder is not writable, the disk is full, ...
    """
    target = os.path.realpath(os.fsdecode(path))  # write through a symlink, keep the link
    folder, base = os.path.split(target)
    try:
        mode = os.stat(target).st_mode & 0o7777
    except OSError:
        mode = 0o666 & ~_umask()
    fd, tmp = tempfile.mkstemp(prefix=f".{base}.", suffix=".tmp", dir=folder)
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as fh:
            fh.write(text)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, mode)
        os.replace(tmp, target)
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        raise


def write_layout(layout: Layout, path: str | os.PathLike[str]) -> None:
    """Save a layout as format 1, atomically. The layout is not validated here: call
    :func:`validate_layout` first when only valid files may be written."""
    atomic_write_text(path, dumps_layout(layout))
