"""Writing layout format 1: TOML text that reads back to an equal model, saved atomically."""

from __future__ import annotations

import contextlib
import os
import tempfile
from dataclasses import MISSING, fields
from typing import Any

from trayadvisor.layoutfile.schema import FORMAT, TABLES
from trayadvisor.model import PASSIVE_SYSTEMS, Layout

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
    if typ == "strs":
        return "[" + ", ".join(_toml_str(v) for v in value) + "]"
    return "{ " + ", ".join(f"{int(h)} = {float(f)!r}" for h, f in value) + " }"


def _defaults(cls: type) -> dict[str, Any]:
    return {f.name: f.default for f in fields(cls) if f.default is not MISSING}


def dumps_layout(layout: Layout) -> str:
    """Format-1 TOML text of a layout, which the reader parses back to an equal model.

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
    for kind, table in TABLES.items():
        defaults = _defaults(table.model)
        for obj in getattr(layout, table.attr):
            if kind == "plate" and obj.tray is not None:
                continue  # generated from a sheet tray: its tray's keys write it
            out += ["", f"[[{kind}]]"]
            for key, (typ, required) in table.keys.items():
                name = table.field_of(key)
                value = getattr(obj, name)
                keep = required or (kind == "circuit" and key == "current_a"
                                    and obj.system not in PASSIVE_SYSTEMS)
                if not keep and (value is None or (name in defaults
                                                   and value == defaults[name])):
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
    :func:`~trayadvisor.layoutfile.checks.validate_layout` first when only valid files may be
    written."""
    atomic_write_text(path, dumps_layout(layout))
