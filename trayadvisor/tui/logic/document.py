"""The layout being edited: current model, file path, dirty flag, selection, undo and redo.

No textual here. The model is immutable, so undo and redo are stacks of whole ``Layout``
objects (cheap: unchanged conductors are shared between them).
"""

from __future__ import annotations

import os
from dataclasses import dataclass
from pathlib import Path

from trayadvisor.layoutfile import LayoutError, layout_problems, read_layout, write_layout
from trayadvisor.model import Layout
from trayadvisor.tui.logic.edits import new_layout

#: Undo steps kept; older ones are dropped.
MAX_UNDO = 1000


@dataclass(frozen=True)
class State:
    """What one undo step restores: the model and the selected conductor."""

    layout: Layout
    selected: str | None


@dataclass(frozen=True)
class Step:
    label: str
    before: State
    after: State


class Document:
    """One layout open in the editor.

    Parameters
    ----------
    layout : Layout
    path : path or None
        Where it is saved; ``None`` for the built-in demo and other unsaved layouts (saving
        then asks for a path).
    label : str, optional
        Name shown to the user; the file name by default.
    new : bool
        True when ``path`` does not exist yet (``edit NEWFILE``).
    """

    def __init__(self, layout: Layout, path: str | os.PathLike[str] | None = None,
                 label: str | None = None, new: bool = False) -> None:
        self.layout = layout
        self.path = Path(path) if path is not None else None
        self.label = label or (self.path.name if self.path else "untitled")
        self.new = new
        self.selected: str | None = layout.conductors[0].name if layout.conductors else None
        self.generation = 0  #: bumped on every change of the model
        self._saved: Layout | None = layout
        self._undo: list[Step] = []
        self._redo: list[Step] = []

    # -- construction ---------------------------------------------------------------------
    @classmethod
    def open(cls, path: str | os.PathLike[str]) -> Document:
        """Read a layout file. Raises LayoutError (``FILE:LINE: message``)."""
        return cls(read_layout(path), path)

    @classmethod
    def open_or_new(cls, path: str | os.PathLike[str]) -> Document:
        """Read a layout file, or start an empty layout with one tray when it does not exist
        (nothing is written until it is saved)."""
        if os.path.lexists(path):
            return cls.open(path)
        folder = os.path.dirname(os.path.abspath(path))
        if not os.path.isdir(folder):
            raise LayoutError(os.fsdecode(path), 0, f"folder {folder} does not exist; create "
                              "it first or give another path")
        return cls(new_layout(Path(path).stem), path, new=True)

    # -- state ----------------------------------------------------------------------------
    @property
    def dirty(self) -> bool:
        """True when the model differs from what was last read or saved."""
        return self.layout != self._saved

    @property
    def display_path(self) -> str:
        return str(self.path) if self.path else self.label

    @property
    def can_undo(self) -> bool:
        return bool(self._undo)

    @property
    def can_redo(self) -> bool:
        return bool(self._redo)

    @property
    def undo_label(self) -> str | None:
        return self._undo[-1].label if self._undo else None

    @property
    def redo_label(self) -> str | None:
        return self._redo[-1].label if self._redo else None

    def selected_index(self) -> int | None:
        if self.selected is None:
            return None
        try:
            return self.layout.conductor_index(self.selected)
        except KeyError:
            return None

    def problems(self) -> list[LayoutError]:
        """Every validation problem of the current model (empty when it can be saved)."""
        return layout_problems(self.layout, self.display_path)

    # -- edits ----------------------------------------------------------------------------
    def select(self, name: str | None) -> None:
        """Select a conductor by name (not an edit: no undo step)."""
        if name is None or any(c.name == name for c in self.layout.conductors):
            self.selected = name

    def select_step(self, step: int) -> str | None:
        """Select the next (+1) or previous (-1) conductor in layout order, wrapping."""
        cons = self.layout.conductors
        if not cons:
            self.selected = None
            return None
        i = self.selected_index()
        i = 0 if i is None else (i + step) % len(cons)
        self.selected = cons[i].name
        return self.selected

    def apply(self, layout: Layout, label: str, selected: str | None | bool = True) -> bool:
        """Make ``layout`` current as one undoable step.

        ``selected`` is the conductor to select afterwards (``True`` keeps the selection).
        Returns False, and records nothing, when the model does not change.
        """
        if layout == self.layout:
            return False
        sel = self.selected if selected is True else (selected or None)
        if sel is not None and not any(c.name == sel for c in layout.conductors):
            sel = layout.conductors[0].name if layout.conductors else None
        step = Step(label, State(self.layout, self.selected), State(layout, sel))
        self._undo.append(step)
        del self._undo[:-MAX_UNDO]
        self._redo.clear()
        self._set(step.after)
        return True

    def undo(self) -> str | None:
        """Undo the last edit; returns its label, or None when there is nothing to undo."""
        if not self._undo:
            return None
        step = self._undo.pop()
        self._redo.append(step)
        self._set(step.before)
        return step.label

    def redo(self) -> str | None:
        """Redo the last undone edit; returns its label, or None."""
        if not self._redo:
            return None
        step = self._redo.pop()
        self._undo.append(step)
        self._set(step.after)
        return step.label

    def _set(self, state: State) -> None:
        self.layout = state.layout
        self.selected = state.selected
        self.generation += 1

    # -- saving ---------------------------------------------------------------------------
    def save(self, path: str | os.PathLike[str] | None = None) -> Path:
        """Validate and write the model atomically to ``path`` (default: its own path).

        Raises
        ------
        LayoutError
            The first validation problem; nothing is written (the file could not be read
            back otherwise).
        ValueError
            No path (the demo or an untitled layout): ask for one.
        OSError
            The write failed; an existing file is left as it was.
        """
        target = Path(path) if path is not None else self.path
        if target is None:
            raise ValueError("no file name yet; use save as")
        problems = layout_problems(self.layout, str(target))
        if problems:
            raise problems[0]
        write_layout(self.layout, target)
        self.path = target
        self.label = target.name
        self.new = False
        self._saved = self.layout
        return target
