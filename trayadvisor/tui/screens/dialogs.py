"""Small modal dialogs: yes/no, unsaved edits, a message, a file path."""

from __future__ import annotations

from pathlib import Path
from typing import TypeVar

from textual import on
from textual.app import ComposeResult
from textual.await_complete import AwaitComplete
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, OptionList, Static
from textual.widgets.option_list import Option

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

    def __init__(self, title: str, initial: str = "", folder: Path | None = None) -> None:
        super().__init__()
        self.title_text, self.initial = title, initial
        self.folder = folder or Path.cwd()

    def _files(self) -> list[str]:
        try:
            found = sorted(p for p in self.folder.glob("*.toml") if p.is_file())
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
            yield Input(self.initial, id="path", placeholder="path/to/layout.toml",
                        compact=True)
            files = self._files()
            yield Static(f"Layout files in {self.folder}:" if files else
                         f"No .toml files in {self.folder}", markup=False, classes="hint")
            yield OptionList(*[Option(f, id=f) for f in files], id="files")
            yield Static("Enter opens · Tab to the list · Esc cancels", classes="hint")

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
