"""Reading layout format 1 (TOML) with line numbers for every error.

The reader turns TOML text into a :class:`~trayadvisor.model.Layout` and checks it
(:func:`~trayadvisor.layoutfile.checks.validate_layout`); every problem is one
:class:`~trayadvisor.layoutfile.errors.LayoutError` whose text is ``FILE:LINE: what is wrong
and how to fix it``. The keys are in :mod:`trayadvisor.layoutfile.schema` and documented in
``docs/file-format.md``.
"""

from __future__ import annotations

import os
import re
import tomllib
from importlib import resources
from pathlib import Path
from typing import Any

from trayadvisor.layoutfile.checks import validate_layout
from trayadvisor.layoutfile.errors import LayoutError, did_you_mean
from trayadvisor.layoutfile.linemap import LineMap
from trayadvisor.layoutfile.schema import EXAMPLES, FORMAT, TABLES, TOP, TOP_LEVEL_NAMES
from trayadvisor.model import PASSIVE_SYSTEMS, SYSTEMS, Layout

_TOML_POS = re.compile(r"\s*\(at (?:line (\d+), column (\d+)|end of document)\)\s*$")


def demo_path() -> Path:
    """Path of the built-in demo layout shipped in the package."""
    return Path(str(resources.files("trayadvisor") / "data" / "demo.toml"))


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
             f"write for example {key} = {EXAMPLES[typ]}")
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
    if typ == "strs":
        if not isinstance(value, list) or not all(isinstance(v, str) for v in value):
            raise _Bad(wrong)
        return tuple(value)
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
              "harm": "an inline table of harmonic order = fraction",
              "strs": "an array of names in double quotes"}


def _table(kind: str, i: int, raw: Any, lm: LineMap, errors: list[LayoutError],
           path: str) -> Any:
    """Build one model object from the i-th ``[[kind]]`` table; record its first error."""
    table = TABLES[kind]
    schema = table.keys
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
                if not hint and key in TOP_LEVEL_NAMES:
                    hint = (f"; top-level keys such as '{key}' must come before the first "
                            "[[table]] header")
                hint = hint or f"; remove it (known keys: {', '.join(schema)})"
                raise _Bad(f"{what}: unknown key '{key}'{hint}", key)
        required = {k for k, (_, req) in schema.items() if req}
        if kind == "circuit" and raw.get("system") in SYSTEMS \
                and raw["system"] not in PASSIVE_SYSTEMS:
            required.add("current_a")
        for key in schema:
            if key in required and key not in raw:
                raise _Bad(f"{what}: missing key '{key}'; add {key} = "
                           f"{EXAMPLES[schema[key][0]]} to this table")
        kwargs = {}
        for key, value in raw.items():
            try:
                kwargs[table.field_of(key)] = _convert(value, schema[key][0], key, what)
            except _Bad as exc:
                raise _Bad(exc.message, key) from None
        return table.model(**kwargs)
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
        if key not in TOP_LEVEL_NAMES:
            hint = (did_you_mean(key, TOP_LEVEL_NAMES)
                    or f"; remove it (keys: {', '.join(TOP_LEVEL_NAMES)})")
            errors.append(LayoutError(path, lm.line(key), f"unknown top-level key '{key}'"
                                      f"{hint}"))
        elif key in TOP and key != "format":
            try:
                top[key] = _convert(value, TOP[key][0], key, "layout")
            except _Bad as exc:
                errors.append(LayoutError(path, lm.line(key), exc.message))
    groups: dict[str, tuple[Any, ...]] = {}
    for kind, table in TABLES.items():
        raw = doc.get(kind, [])
        if not isinstance(raw, list):
            shape = "a single [table]" if isinstance(raw, dict) else _kind_of(raw)
            errors.append(LayoutError(path, lm.line(kind), f"'{kind}' is {shape}; write each "
                                      f"{kind} as its own [[{kind}]] table (double brackets)"))
            continue
        groups[table.attr] = tuple(_table(kind, i, t, lm, errors, path) for i, t in enumerate(raw))
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
