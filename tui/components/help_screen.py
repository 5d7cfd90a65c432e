"""Help: every key binding (read from the screens themselves, so it cannot drift), what the
marks mean, and the caution in full."""
from __future__ import annotations

from rich.console import Group
from rich.table import Table
from rich.text import Text
from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical, VerticalScroll
from textual.screen import ModalScreen
from textual.widgets import Button, Static

from tracker.output.json_out import CAUTION
from tui.wording import STATE_MARK, STATE_WORDS, STATES, STATUS_MARK, STATUS_WORD

KEY_NAMES = {"question_mark": "?", "slash": "/", "left_square_bracket": "[", "right_square_bracket": "]",
             "escape": "Esc", "enter": "Enter", "pageup": "PgUp", "pagedown": "PgDn", "home": "Home",
             "end": "End", "up": "↑", "down": "↓", "left": "←", "right": "→", "space": "Space", "tab": "Tab",
             "ctrl+q": "Ctrl+Q", "ctrl+c": "Ctrl+C", "f1": "F1", "shift+tab": "Shift+Tab"}

# Longer words for the help than the footer has room for; any binding not here shows its own.
LONGER = {
    "help": "this help", "recheck": "re-read every file and re-run every check", "quit": "quit",
    "deadlines": "the deadlines of the inspection cycle across the estate, overdue first",
    "toggle_done": "show or hide the deadlines already met",
    "filter('new')": "list only the newly broken (since their last acknowledgement)",
    "filter('failing')": "list everything that fails, newly broken first",
    "filter('all')": "list every circuit, board and origin",
    "search": "find by ref or name (Enter returns to the list, Esc clears)",
    "acknowledge": "acknowledge the problem under the cursor, with a note (written to the history)",
    "switch_view": "switch between the problem list and the estate tree",
    "view('problems')": "show the problem list", "leave_search": "clear the search",
    "cursor(-1)": "move up", "cursor(1)": "move down", "page(-1)": "page up", "page(1)": "page down",
    "to_end(0)": "first row", "to_end(1)": "last row", "open": "open the details (or click a row twice)",
    "open_details": "open the details of the node under the cursor",
    "open_branch": "open a branch", "close_branch": "close a branch, or go up to its parent",
    "toggle_node": "open or close a branch (or click it)",
    "back": "back to the list", "tab('working-tab')": "show the working",
    "tab('history-tab')": "show the history", "step(-1)": "previous element of the list",
    "step(1)": "next element of the list", "cancel": "cancel", "close": "close",
}


def key_text(binding: Binding) -> str:
    if binding.key_display:
        return binding.key_display
    return " ".join(KEY_NAMES.get(k.strip(), k.strip()) for k in binding.key.split(","))


def binding_rows(bindings) -> list[tuple[str, str]]:
    out = []
    for b in bindings:
        if isinstance(b, tuple):
            b = Binding(*b)
        out.append((key_text(b), LONGER.get(b.action, b.description or b.action)))
    return out


def binding_groups() -> list[tuple[str, list[tuple[str, str]]]]:
    from textual.widgets import Tree

    from tui.app import IzwatchApp
    from tui.components.ack_dialog import AckDialog
    from tui.components.deadlines_screen import DeadlinesScreen
    from tui.components.details_screen import DetailsScreen
    from tui.components.estate_tree import EstateTree
    from tui.components.overview import OverviewScreen
    from tui.components.problem_list import ProblemList

    tree_extra = [b for b in Tree.BINDINGS if isinstance(b, Binding) and b.action == "toggle_node"]
    return [
        ("Everywhere", binding_rows(IzwatchApp.BINDINGS)),
        ("Problem list and estate tree", binding_rows(OverviewScreen.BINDINGS)),
        ("In the problem list", binding_rows(ProblemList.BINDINGS)),
        ("In the estate tree", binding_rows(list(EstateTree.BINDINGS) + tree_extra)),
        ("Details of an element", binding_rows(DetailsScreen.BINDINGS)),
        ("Acknowledging", binding_rows(AckDialog.BINDINGS) + [("Enter", "record (in the note field)")]),
        ("Deadlines", binding_rows(DeadlinesScreen.BINDINGS)),
        ("Help", binding_rows(HelpScreen.BINDINGS)),
    ]


class HelpScreen(ModalScreen[None]):
    BINDINGS = [Binding("escape,question_mark,f1,q", "close", "close")]

    def compose(self) -> ComposeResult:
        with Vertical(id="help-box"):
            yield Static("izwatch — keys, marks and the caution", id="help-title")
            with VerticalScroll(id="help-scroll"):
                yield Static(self._body(), id="help-body")
            yield Button("Close", id="help-close", compact=True)

    def _body(self) -> Group:
        parts = [Text("Caution", style="bold"), Text(CAUTION), Text("")]
        parts.append(Text("Everything works from the keyboard; rows, tabs, filters, footer keys and buttons "
                          "also take a click. The marks below carry the meaning; colour only repeats it.\n"))
        for title, rows in binding_groups():
            grid = Table.grid(padding=(0, 2))
            grid.add_column(no_wrap=True, min_width=14, style="bold")
            grid.add_column(ratio=1)
            for key, words in rows:
                grid.add_row(key, words)
            parts += [Text(title, style="bold underline"), grid, Text("")]
        marks = Table.grid(padding=(0, 2))
        marks.add_column(no_wrap=True, min_width=14, style="bold")
        marks.add_column(ratio=1)
        for s in STATES:
            marks.add_row(STATE_MARK[s], STATE_WORDS[s])
        for status, word in STATUS_WORD.items():
            marks.add_row(STATUS_MARK[status], f"a check: {word}")
        marks.add_row("⚠", "an input error in a site file (the file's last good state is kept)")
        marks.add_row("█ ░ ▶", "utilisation of a limit; ▶ past it")
        parts += [Text("Marks", style="bold underline"), marks, Text(""),
                  Text("“Newly broken”: failing, and failing anew or worse since the last acknowledgement "
                       "(or never acknowledged). On an estate's first record every failing check counts as "
                       "newly broken, failing “since the first record”.")]
        return Group(*parts)

    def on_button_pressed(self, event: Button.Pressed) -> None:
        self.dismiss(None)

    def action_close(self) -> None:
        self.dismiss(None)
