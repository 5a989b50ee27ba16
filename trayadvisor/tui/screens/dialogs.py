"""Small modal dialogs: yes/no, unsaved edits, a message, a file path, an output file."""

from __future__ import annotations

import os
from collections.abc import Callable
from pathlib import Path
from typing import TypeVar

from textual import on
from textual.app import App, ComposeResult
from textual.await_complete import AwaitComplete
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, OptionList, Static
from textual.widgets.option_list import Option

from trayadvisor.model import Layout

R = TypeVar("R")


class Dialog(ModalScreen[R]):
    """A modal screen that answers once: keys that arrive after the answer (a second
    Enter typed ahead) are ignored instead of closing whatever screen comes next."""

    _answered = False

    def dismiss(self, result: R | None = None) -> AwaitComplete:
        if self._answered or self.app.screen is not self:
            return AwaitComplete()
        self._answered = True
        return super().dismiss(result)


class RowMenu(Dialog[str | None]):
    """A list of rows of a layout, one picked with Enter (the result is its option id),
    Escape closes (None). Subclasses give ``HEADING``, ``LIST_ID`` and ``rows``."""

    HEADING = ""
    LIST_ID = "menu-rows"

    def __init__(self, layout: Layout, highlight: str | None = None) -> None:
        super().__init__()
        self.lay, self.highlight = layout, highlight

    @staticmethod
    def rows(layout: Layout) -> list[tuple[str, str]]:
        """(option id, text) of every row."""
        raise NotImplementedError

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog places-menu"):
            yield Static(self.HEADING, classes="form-title")
            yield OptionList(*[Option(text, id=oid) for oid, text in self.rows(self.lay)],
                             id=self.LIST_ID, markup=False)
            yield Static("↑↓ pick · Enter opens · Esc closes", classes="hint")

    def on_mount(self) -> None:
        rows = self.query_one(f"#{self.LIST_ID}", OptionList)
        ids = [oid for oid, _ in self.rows(self.lay)]
        if self.highlight in ids:
            rows.highlighted = ids.index(self.highlight)
        rows.focus()

    def action_close(self) -> None:
        self.dismiss(None)

    def on_option_list_option_selected(self, event: OptionList.OptionSelected) -> None:
        if event.option_list.id == self.LIST_ID:
            self.dismiss(event.option.id)


class ConfirmDialog(Dialog[bool]):
    """A question with two answers: True for ``yes``, False for ``no`` or Escape."""

    BINDINGS = [Binding("escape,n", "answer(False)", "No", id="dialog.no"),
                Binding("y", "answer(True)", "Yes", id="dialog.yes")]

    def __init__(self, title: str, question: str, yes: str = "Yes", no: str = "No") -> None:
        super().__init__()
        self.title_text, self.question, self.yes, self.no = title, question, yes, no

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Static(self.title_text, classes="form-title", markup=False)
            yield Static(self.question, markup=False)
            with Horizontal(classes="form-buttons"):
                yield Button(self.yes, id="yes", variant="warning", compact=True)
                yield Button(self.no, id="no", compact=True)

    def on_mount(self) -> None:
        self.query_one("#no", Button).focus()

    def action_answer(self, yes: bool) -> None:
        self.dismiss(yes)

    @on(Button.Pressed)
    def _pressed(self, event: Button.Pressed) -> None:
        self.dismiss(event.button.id == "yes")


class UnsavedDialog(Dialog[str]):
    """Unsaved edits: returns "save", "discard" or "cancel"."""

    BINDINGS = [Binding("escape,c", "answer('cancel')", "Cancel", id="unsaved.cancel"),
                Binding("s", "answer('save')", "Save", id="unsaved.save"),
                Binding("d", "answer('discard')", "Discard", id="unsaved.discard")]

    def __init__(self, label: str, then: str) -> None:
        super().__init__()
        self.label, self.then = label, then

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Static("Unsaved edits", classes="form-title")
            yield Static(f"{self.label} has edits that are not saved. Save them before "
                         f"you {self.then}?", markup=False)
            with Horizontal(classes="form-buttons"):
                yield Button("Save", id="save", variant="primary", compact=True)
                yield Button("Discard", id="discard", variant="error", compact=True)
                yield Button("Cancel", id="cancel", compact=True)
            yield Static("s save · d discard · Esc cancel", classes="hint")

    def on_mount(self) -> None:
        self.query_one("#cancel", Button).focus()

    def action_answer(self, answer: str) -> None:
        self.dismiss(answer)

    @on(Button.Pressed)
    def _pressed(self, event: Button.Pressed) -> None:
        self.dismiss(event.button.id or "cancel")


class MessageDialog(Dialog[None]):
    """A message the user must see (a bad file, a refused save); Enter or Escape closes."""

    BINDINGS = [Binding("escape,enter", "close", "Close", id="message.close")]

    def __init__(self, title: str, message: str) -> None:
        super().__init__()
        self.title_text, self.message = title, message

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog"):
            yield Static(self.title_text, classes="form-title", markup=False)
            yield Static(self.message, id="message", markup=False)
            with Horizontal(classes="form-buttons"):
                yield Button("OK", id="ok", variant="primary", compact=True)

    def on_mount(self) -> None:
        self.query_one("#ok", Button).focus()

    def action_close(self) -> None:
        self.dismiss(None)

    @on(Button.Pressed)
    def _pressed(self) -> None:
        self.dismiss(None)


class PathDialog(Dialog[str | None]):
    """Type a file path (Enter), or pick one of the layout files in the folder."""

    BINDINGS = [Binding("escape", "cancel", "Cancel", id="path.cancel")]

    def __init__(self, title: str, initial: str = "", folder: Path | None = None, *,
                 pattern: str | None = "*.toml", hint: str = "",
                 placeholder: str = "path/to/layout.toml") -> None:
        """``pattern``: the files listed to pick from (None: no list); ``hint``: the key
        line under the field."""
        super().__init__()
        self.title_text, self.initial = title, initial
        self.folder = folder or Path.cwd()
        self.pattern, self.placeholder = pattern, placeholder
        self.hint = hint or ("Enter opens · Tab to the list · Esc cancels" if pattern
                             else "Enter accepts · Esc cancels")

    def _files(self) -> list[str]:
        if self.pattern is None:
            return []
        try:
            found = sorted(p for p in self.folder.glob(self.pattern) if p.is_file())
        except OSError:
            return []
        cwd = Path.cwd()
        out = []
        for p in found[:200]:
            try:
                out.append(str(p.relative_to(cwd)))
            except ValueError:
                out.append(str(p))
        return out

    def compose(self) -> ComposeResult:
        with Vertical(classes="dialog path"):
            yield Static(self.title_text, classes="form-title", markup=False)
            yield Input(self.initial, id="path", placeholder=self.placeholder, compact=True)
            if self.pattern is not None:
                files = self._files()
                what = "Layout files" if self.pattern == "*.toml" else f"{self.pattern} files"
                yield Static(f"{what} in {self.folder}:" if files else
                             f"No {self.pattern} files in {self.folder}", markup=False,
                             classes="hint")
                yield OptionList(*[Option(f, id=f) for f in files], id="files")
            yield Static(self.hint, classes="hint", markup=False)

    def on_mount(self) -> None:
        self.query_one("#path", Input).focus()

    def action_cancel(self) -> None:
        self.dismiss(None)

    @on(Input.Submitted, "#path")
    def _submitted(self, event: Input.Submitted) -> None:
        path = event.value.strip()
        if path:
            self.dismiss(path)

    @on(OptionList.OptionSelected, "#files")
    def _picked(self, event: OptionList.OptionSelected) -> None:
        self.dismiss(event.option.id)


def choose_output(app: App, title: str, initial: str, go: Callable[[Path], object], *,
                  folder: Path | None = None, hint: str = "", placeholder: str = "") -> None:
    """Ask for a file to write (no list to pick from), ask before replacing an existing
    file, then call ``go(path)``; Escape at either question does nothing."""

    def chosen(text: str | None) -> None:
        if not text:
            return
        target = Path(os.path.expanduser(text))
        if target.exists():
            app.push_screen(ConfirmDialog("Replace file?", f"{target} exists. Replace it?",
                                          "Replace", "Keep"),
                            lambda yes: go(target) if yes else None)
        else:
            go(target)

    app.push_screen(PathDialog(title, initial, folder, pattern=None, hint=hint,
                               placeholder=placeholder or initial), chosen)
