"""The product's own reference (docs/, README, DEVELOPERS.md) stays true to the code."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
DOCS = sorted((ROOT / "docs").glob("*.md")) + [ROOT / "README.md", ROOT / "DEVELOPERS.md"]
_CELL = re.compile(r"`((?:tests/)?(?:tui/)?test_\w+\.py)?(?:::(\w+))?`")


def _test_files() -> dict[str, Path]:
    return {p.name: p for p in (ROOT / "tests").rglob("test_*.py")}


def _named_tests(text: str) -> list[tuple[str, str | None]]:
    """(file name, test name or None) for every `file.py::name`, `::name` and `file.py`
    cell; a bare `::name` belongs to the file named last before it in the same row."""
    out = []
    for row in text.splitlines():
        last = None
        for m in _CELL.finditer(row):
            path, name = m.groups()
            if path:
                last = Path(path).name
            if last and (name or path):
                out.append((last, name))
    return out


def test_the_reference_finder_sees_the_validation_table():
    named = _named_tests((ROOT / "docs" / "validation.md").read_text(encoding="utf-8"))
    assert len(named) > 150  # the finder works, so the test below is not vacuous
    assert ("test_field.py", "test_mu0_is_codata") in named


@pytest.mark.parametrize("doc", DOCS, ids=lambda p: p.name)
def test_every_test_named_in_the_docs_exists(doc: Path):
    files = _test_files()
    missing = []
    for name, test in _named_tests(doc.read_text(encoding="utf-8")):
        if name not in files:
            missing.append(name)
        elif test and not re.search(rf"^(async )?def {test}\(", files[name].read_text(
                encoding="utf-8"), flags=re.M):
            missing.append(f"{name}::{test}")
    assert missing == []


@pytest.mark.parametrize("doc", DOCS, ids=lambda p: p.name)
def test_every_code_path_named_in_the_docs_exists(doc: Path):
    text = doc.read_text(encoding="utf-8")
    paths = set(re.findall(r"`((?:trayadvisor|tests|bench|layouts|docs)/[\w/.-]*)`", text))
    missing = sorted(p for p in paths if not (ROOT / p.rstrip("/")).exists())
    assert missing == []


def _unresolved(names: set[str]) -> list[str]:
    import importlib

    missing = []
    for dotted in sorted(names):
        parts = dotted.split(".")
        for cut in range(len(parts), 0, -1):
            try:
                obj = importlib.import_module(".".join(parts[:cut]))
            except ImportError:
                continue
            try:
                for attr in parts[cut:]:
                    obj = getattr(obj, attr)
            except AttributeError:
                missing.append(dotted)
            break
        else:
            missing.append(dotted)
    return missing


@pytest.mark.parametrize("doc", DOCS, ids=lambda p: p.name)
def test_every_dotted_name_in_the_docs_imports(doc: Path):
    names = set(re.findall(r"`(trayadvisor(?:\.\w+)+)", doc.read_text(encoding="utf-8")))
    assert _unresolved(names) == []


def test_every_dotted_name_in_the_code_comments_resolves():
    # Docstrings and comments name functions as `trayadvisor.x.y`: after a move they must
    # still point at something that exists (the UI's modules are left out: textual).
    names: set[str] = set()
    for path in (ROOT / "trayadvisor").rglob("*.py"):
        text = path.read_text(encoding="utf-8")
        names |= {n.rstrip(".") for n in re.findall(r"`~?(trayadvisor(?:\.\w+)+)", text)}
    assert len(names) > 20
    assert _unresolved(names) == []
