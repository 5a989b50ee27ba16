"""The architecture holds: layers, no import cycles, front doors, a headless core.

The layers are written once, as import-linter contracts in pyproject.toml; these tests run
them and check what import-linter does not: cycles (function-level imports counted), that
other layers enter a folder only through its front door (``__init__`` and its ``__all__``),
and that every module imports with the UI toolkit and matplotlib blocked (the core), or at
all (the UI).
"""

from __future__ import annotations

import ast
import importlib
import json
import pkgutil
import subprocess
import sys
from pathlib import Path

import grimp
import pytest
from importlinter.cli import lint_imports

import trayadvisor

ROOT = Path(__file__).resolve().parents[1]
PACKAGE = ROOT / "trayadvisor"
MODULES = sorted(m.name for m in pkgutil.walk_packages(trayadvisor.__path__, "trayadvisor.")
                 if not m.name.endswith(".__main__"))
#: The terminal UI needs textual; everything else (core, CLI, launcher) must not.
UI = tuple(m for m in MODULES if m.startswith("trayadvisor.tui")
           and not m.startswith("trayadvisor.tui.logic"))
HEADLESS = tuple(m for m in MODULES if m not in UI and m != "trayadvisor.tui")
#: Modules other layers may import directly besides the folders' front doors.
PUBLIC_MODULES = {"trayadvisor.engine.units"}


def test_the_walk_finds_every_room():
    # A walk that found nothing would make every parametrised test below vacuous.
    rooms = {m.split(".")[1] for m in MODULES if m.count(".") >= 2}
    assert {"layoutfile", "engine", "coupling", "analysis", "ranking", "output", "cli",
            "tui"} <= rooms
    assert len(MODULES) > 60


def test_import_linter_contracts_hold(monkeypatch):
    # Source: the contracts in pyproject.toml ([tool.importlinter]), checked by import-linter.
    monkeypatch.chdir(ROOT)
    assert lint_imports(config_filename=str(ROOT / "pyproject.toml"), no_cache=True,
                        no_logo=True) == 0


def _graph() -> grimp.ImportGraph:
    return grimp.build_graph("trayadvisor", exclude_type_checking_imports=True, cache_dir=None)


def _cycles(edges: dict[str, set[str]]) -> list[list[str]]:
    """Strongly connected components with more than one module (Tarjan, iterative)."""
    index: dict[str, int] = {}
    low: dict[str, int] = {}
    stack: list[str] = []
    on: set[str] = set()
    out: list[list[str]] = []
    counter = 0
    for root in sorted(edges):
        if root in index:
            continue
        work = [(root, iter(sorted(edges[root])))]
        index[root] = low[root] = counter
        counter += 1
        stack.append(root)
        on.add(root)
        while work:
            node, it = work[-1]
            nxt = next(it, None)
            if nxt is not None:
                if nxt not in index:
                    index[nxt] = low[nxt] = counter
                    counter += 1
                    stack.append(nxt)
                    on.add(nxt)
                    work.append((nxt, iter(sorted(edges.get(nxt, ())))))
                elif nxt in on:
                    low[node] = min(low[node], index[nxt])
                continue
            work.pop()
            if work:
                low[work[-1][0]] = min(low[work[-1][0]], low[node])
            if low[node] == index[node]:
                comp = []
                while True:
                    m = stack.pop()
                    on.discard(m)
                    comp.append(m)
                    if m == node:
                        break
                if len(comp) > 1:
                    out.append(sorted(comp))
    return out


def test_cycle_finder_finds_a_cycle():
    # The finder itself: a → b → c → a is one cycle, d hangs off it.
    assert _cycles({"a": {"b"}, "b": {"c"}, "c": {"a", "d"}, "d": set()}) == [["a", "b", "c"]]


def test_no_import_cycles_function_level_imports_included():
    graph = _graph()
    edges = {m: set(graph.find_modules_directly_imported_by(m)) for m in graph.modules}
    assert _cycles(edges) == []


def _room(module: str) -> str:
    """The folder a module lives in (``trayadvisor.engine``), or the plain module itself."""
    parts = module.split(".")
    if len(parts) >= 2 and (PACKAGE / parts[1]).is_dir():
        return ".".join(parts[:2])
    return module


def _is_module(name: str) -> bool:
    parts = name.split(".")
    if parts[0] != "trayadvisor" or len(parts) < 2:
        return False
    p = PACKAGE.joinpath(*parts[1:])
    return p.with_suffix(".py").is_file() or (p / "__init__.py").is_file()


def _imports(path: Path, module: str) -> list[tuple[int, str, tuple[str, ...]]]:
    """(line, imported module, names) for every import in a file, in functions too."""
    tree = ast.parse(path.read_text(encoding="utf-8"))
    package = module if path.name == "__init__.py" else module.rsplit(".", 1)[0]
    out = []
    for node in ast.walk(tree):
        if isinstance(node, ast.Import):
            out += [(node.lineno, a.name, ()) for a in node.names]
        elif isinstance(node, ast.ImportFrom):
            base = node.module or ""
            if node.level:
                base = ".".join(package.split(".")[: len(package.split(".")) - node.level + 1]
                                + ([base] if base else []))
            names = tuple(a.name for a in node.names)
            subs = [n for n in names if _is_module(f"{base}.{n}")]  # from pkg import module
            out += [(node.lineno, f"{base}.{n}", ()) for n in subs]
            out.append((node.lineno, base, tuple(n for n in names if n not in subs)))
    return [(ln, m, names) for ln, m, names in out if m.split(".")[0] == "trayadvisor"]


def test_other_layers_enter_a_folder_only_by_its_front_door():
    problems = []
    for module in MODULES:
        spec = importlib.util.find_spec(module)
        path = Path(spec.origin)
        for line, target, names in _imports(path, module):
            room = _room(target)
            if room == _room(module) or room == target or target in PUBLIC_MODULES:
                if room == target and room != "trayadvisor" and room != _room(module) \
                        and (PACKAGE / room.split(".")[1]).is_dir():
                    exported = set(importlib.import_module(room).__all__)
                    problems += [f"{module}:{line}: {room} does not export {n}"
                                 for n in names if n not in exported]
                continue
            problems.append(f"{module}:{line}: imports {target}; use the front door {room}")
    assert problems == []


def test_front_doors_export_what_exists():
    for room in sorted({_room(m) for m in MODULES if (PACKAGE / m.split(".")[1]).is_dir()}):
        front = importlib.import_module(room)
        assert front.__doc__ and len(front.__doc__) > 80, room
        if room in ("trayadvisor.cli", "trayadvisor.tui"):
            continue
        assert front.__all__, room
        missing = [n for n in front.__all__ if not hasattr(front, n)]
        assert missing == [], room


_PROBE = r"""
import importlib, importlib.abc, json, sys, traceback
BLOCKED = {"textual", "rich", "matplotlib"}
class Block(importlib.abc.MetaPathFinder):
    def find_spec(self, name, path=None, target=None):
        if name.split(".")[0] in BLOCKED:
            raise ImportError(f"{name} is blocked while the headless modules are imported")
        return None
if sys.argv[1] == "block":
    sys.meta_path.insert(0, Block())
result = {}
for m in sys.argv[2:]:
    try:
        importlib.import_module(m)
        result[m] = ""
    except BaseException:
        result[m] = traceback.format_exc(limit=3)
result["__loaded__"] = sorted({k.split(".")[0] for k in sys.modules} & BLOCKED)
print(json.dumps(result))
"""


def _probe(mode: str, modules: tuple[str, ...]) -> dict:
    out = subprocess.run([sys.executable, "-c", _PROBE, mode, *modules], capture_output=True,
                         text=True, check=True, timeout=120, cwd=ROOT)
    return json.loads(out.stdout)


@pytest.fixture(scope="module")
def headless_imports() -> dict:
    return _probe("block", HEADLESS)


@pytest.fixture(scope="module")
def ui_imports() -> dict:
    return _probe("allow", UI)


@pytest.mark.parametrize("module", HEADLESS)
def test_headless_module_imports_with_textual_rich_and_matplotlib_blocked(module,
                                                                          headless_imports):
    assert headless_imports[module] == ""


def test_nothing_headless_loaded_a_blocked_package(headless_imports):
    assert headless_imports["__loaded__"] == []


@pytest.mark.parametrize("module", UI)
def test_ui_module_imports(module, ui_imports):
    assert ui_imports[module] == ""
