"""File commands of the terminal UI: save, save as, open and quit, with their questions.

A mixin of :class:`trayadvisor.tui.app.TrayApp`. Nothing is lost without asking: quitting or
opening another file with unsaved edits asks to save, discard or cancel; save refuses a
layout that would not read back; a bad file is shown as ``FILE:LINE: message`` in a dialog
and the layout on screen stays.
"""

from __future__ import annotations

import os
from collections.abc import Callable
from pathlib import Path
from typing import TYPE_CHECKING

from trayadvisor.layoutfile import LayoutError
from trayadvisor.tui.logic.document import Document
from trayadvisor.tui.screens.dialogs import (
    ConfirmDialog,
    MessageDialog,
    PathDialog,
    UnsavedDialog,
)

if TYPE_CHECKING:
    from trayadvisor.tui.app import TrayApp

    _Base = TrayApp
else:
    _Base = object


class FileCommands(_Base):
    """Save, save as, open, quit."""

    def _folder(self) -> Path:
        p = self.document.path
        return p.parent if p is not None and p.parent.is_dir() else Path.cwd()

    def save_to(self, path: Path, then: Callable[[], None] | None = None) -> bool:
        """Validate and save; a refusal or a write error is shown in a dialog."""
        try:
            target = self.document.save(path)
        except LayoutError as err:
            self.push_screen(MessageDialog("Not saved", f"{err}\n\nThe layout has a problem "
                                           "that would stop it from being read back. Fix it "
                                           "and save again; the file on disk is unchanged."))
            return False
        except OSError as err:
            self.push_screen(MessageDialog("Not saved", f"{path}: {err.strerror or err}. The "
                                           "file on disk is unchanged; try another path."))
            return False
        self.set_status(f"saved {target}")
        if then is not None:
            then()
        return True

    def action_save(self, then: Callable[[], None] | None = None) -> None:
        if self.document.path is None:
            self.action_save_as(then)
        else:
            self.save_to(self.document.path, then)

    def action_save_as(self, then: Callable[[], None] | None = None) -> None:
        initial = str(self.document.path) if self.document.path else "layout.toml"

        def chosen(path: str | None) -> None:
            if not path:
                return
            target = Path(os.path.expanduser(path))
            if target.exists() and target != self.document.path:
                self.push_screen(ConfirmDialog("Replace file?", f"{target} exists. Replace "
                                               "it with this layout?", "Replace", "Keep"),
                                 lambda yes: self.save_to(target, then) if yes else None)
            else:
                self.save_to(target, then)

        self.push_screen(PathDialog("Save as", initial, self._folder()), chosen)

    def _unsaved_then(self, then_text: str, go: Callable[[], None]) -> None:
        """Run ``go`` now, or after the user saves or discards the unsaved edits."""
        if not self.document.dirty:
            go()
            return

        def answered(answer: str | None) -> None:
            if answer == "save":
                self.action_save(then=go)
            elif answer == "discard":
                go()

        self.push_screen(UnsavedDialog(self.document.label, then_text), answered)

    def action_open(self) -> None:
        def chosen(path: str | None) -> None:
            if not path:
                return
            try:
                doc = Document.open(os.path.expanduser(path))
            except LayoutError as err:
                self.push_screen(MessageDialog("Cannot open", f"{err}\n\nThe layout on "
                                               "screen is unchanged."))
                return
            self._unsaved_then("open another file", lambda: self.load_document(doc))

        self.push_screen(PathDialog("Open layout", "", self._folder()), chosen)

    def load_document(self, doc: Document) -> None:
        """Replace the open document (no questions asked: see :meth:`action_open`)."""
        self.document = doc
        self.document_serial += 1
        self.summary, self.summary_key = None, None
        self.figures.clear()
        self.figure_keys.clear()
        self.message = (f"opened {doc.display_path}", "info")
        self.document_changed()
        view = self.current_view()
        if view is not None:
            view.refresh_view()

    async def action_quit(self) -> None:
        self._unsaved_then("quit", self.exit)
