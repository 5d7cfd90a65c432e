"""Acknowledging a problem: who and a note, written to the history (a question: a modal).

The dialog opens on an empty "by": who acknowledges is asked every time, never taken from the
account the UI runs under (which would record a shared login, or root, as the person)."""
from __future__ import annotations

from dataclasses import dataclass

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Horizontal, Vertical
from textual.screen import ModalScreen
from textual.widgets import Button, Input, Label, Static

from tui.records import ack_problem
from tui.snapshot import Row


@dataclass(frozen=True)
class AckAnswer:
    by: str
    note: str


class AckDialog(ModalScreen[AckAnswer | None]):
    BINDINGS = [Binding("escape", "cancel", "cancel")]

    def __init__(self, row: Row, **kwargs):
        super().__init__(**kwargs)
        self.row = row

    def compose(self) -> ComposeResult:
        r = self.row
        with Vertical(id="ack-box"):
            yield Static(f"Acknowledge {r.ref}", id="ack-title", markup=False)
            yield Static(f"{r.name} — open: {', '.join(r.open_checks)}", id="ack-what", markup=False)
            yield Static("Recorded in the history (part of its hash chain) with your name and note. "
                         "The problem stays listed as acknowledged until it is fixed or gets worse. "
                         "A later acknowledgement replaces this one (both stay in the history).",
                         id="ack-explain")
            yield Label("by (your name)")
            yield Input(placeholder="who is acknowledging it", id="ack-by")
            yield Label("note (what is being done about it)")
            yield Input(placeholder="e.g. remedial work booked, job 2231", id="ack-note")
            yield Static("", id="ack-error")
            with Horizontal(id="ack-buttons"):
                yield Button("Record", variant="primary", id="ack-record", compact=True)
                yield Button("Cancel", id="ack-cancel", compact=True)

    def on_mount(self) -> None:
        self.query_one("#ack-by", Input).focus()

    def _submit(self) -> None:
        by = self.query_one("#ack-by", Input).value
        note = self.query_one("#ack-note", Input).value
        why = ack_problem(self.row, by, note)
        if why:
            self.query_one("#ack-error", Static).update(f"⚠ {why}")
            return
        self.dismiss(AckAnswer(by.strip(), note.strip()))

    def on_input_submitted(self, event: Input.Submitted) -> None:
        if event.input.id == "ack-by":
            self.query_one("#ack-note", Input).focus()
        else:
            self._submit()

    def on_button_pressed(self, event: Button.Pressed) -> None:
        if event.button.id == "ack-record":
            self._submit()
        else:
            self.dismiss(None)

    def action_cancel(self) -> None:
        self.dismiss(None)
