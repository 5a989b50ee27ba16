"""The user's key overrides: binding id -> keys, read from a small TOML file.

The file (``$TRAYADVISOR_KEYMAP``, else ``$XDG_CONFIG_HOME/trayadvisor/keymap.toml``, else
``~/.config/trayadvisor/keymap.toml``) holds one table::

    [keys]
    "edit.add" = "a,insert"     # binding id = comma-separated keys
    "file.save" = "ctrl+s,f2"

The binding ids are listed in the help screen and in docs/tui.md. No textual here.
"""

from __future__ import annotations

import os
import tomllib
from pathlib import Path


class KeymapError(Exception):
    """A keymap file that cannot be used; the message says what to fix."""


def default_keymap_path() -> Path:
    env = os.environ.get("TRAYADVISOR_KEYMAP")
    if env:
        return Path(env)
    base = os.environ.get("XDG_CONFIG_HOME") or os.path.join(Path.home(), ".config")
    return Path(base) / "trayadvisor" / "keymap.toml"


def load_keymap(path: str | os.PathLike[str], known: set[str] | None = None) -> dict[str, str]:
    """Read a keymap file. A missing file is an empty keymap.

    Raises
    ------
    KeymapError
        Unreadable file, TOML error, a value that is not a string, or (with ``known``) an
        id that no binding has.
    """
    p = Path(path)
    if not p.exists():
        return {}
    try:
        doc = tomllib.loads(p.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, tomllib.TOMLDecodeError) as exc:
        raise KeymapError(f"{p}: cannot read the keymap ({exc}); fix or remove it") from None
    keys = doc.get("keys", {})
    if not isinstance(keys, dict):
        raise KeymapError(f"{p}: 'keys' must be a table: [keys] then \"id\" = \"key\" lines")
    out: dict[str, str] = {}
    for binding_id, value in keys.items():
        if not isinstance(value, str) or not value.strip():
            raise KeymapError(f"{p}: keys.{binding_id} must be a string of keys, e.g. \"a\"")
        if known is not None and binding_id not in known:
            raise KeymapError(f"{p}: unknown binding id '{binding_id}'; the help screen "
                              "lists the ids")
        out[binding_id] = value
    return out
