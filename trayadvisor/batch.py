"""Batch runs over many layout files (expanded here; the pool lives in the CLI batch module)."""

from __future__ import annotations

from pathlib import Path


def expand_inputs(items: list[str]) -> list[str]:
    """Files as given, and every ``*.toml`` inside a folder (sorted)."""
    out: list[str] = []
    for item in items:
        p = Path(item)
        if p.is_dir():
            out.extend(str(f) for f in sorted(p.glob("*.toml")))
        else:
            out.append(item)
    return out
