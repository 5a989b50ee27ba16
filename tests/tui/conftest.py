"""Shared helpers for the terminal UI tests: a real app, driven by the Pilot."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from trayadvisor.layoutfile import demo_path


@pytest.fixture(autouse=True)
def _no_user_keymap(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    """Tests never read the user's keymap file."""
    monkeypatch.setenv("TRAYADVISOR_KEYMAP", str(tmp_path / "no-keymap.toml"))
    monkeypatch.delenv("NO_COLOR", raising=False)


@pytest.fixture
def demo_copy(tmp_path: Path) -> Path:
    """A writable copy of the built-in demo layout."""
    target = tmp_path / "demo.toml"
    shutil.copy(demo_path(), target)
    return target
