"""The opening screen: the problem list (newly broken first) or the estate tree, with the
counts, the filters and search, and any input-error notice."""
from __future__ import annotations

from textual.app import ComposeResult
from textual.binding import Binding
from textual.containers import Vertical
from textual.screen import Screen
from textual.widgets import ContentSwitcher, Footer, Input

from tui.components.caution_line import CautionLine
from tui.components.estate_tree import EstateTree
from tui.components.filter_bar import FilterBar
from tui.components.notice import Notice
from tui.components.problem_list import ProblemList
from tui.components.tally import Tally
from tui.components.top_bar import ESTATE, PROBLEMS, TopBar
from tui.messages import FilterChosen, ViewChosen
from tui.snapshot import EMPTY, SHOW_ALL, SHOW_FAILING, SHOW_NEW, Row, Snapshot, filter_counts, visible


class OverviewScreen(Screen):
    BINDINGS = [
        # The filter chips and the view chips show their keys, so the footer need not.
        Binding("1", "filter('new')", "new", show=False),
        Binding("2", "filter('failing')", "failing", show=False),
        Binding("3", "filter('all')", "all", show=False),
        Binding("slash", "search", "find"),
        Binding("a", "acknowledge", "ack"),
        Binding("e", "switch_view", "tree/list", show=False),
        Binding("p", "view('problems')", "problems", show=False),
        Binding("escape", "leave_search", "clear search", show=False),
    ]

    def __init__(self, estate_name: str, clock, **kwargs):
        super().__init__(**kwargs)
        self.estate_name = estate_name
        self.clock = clock
        self.which = SHOW_FAILING
        self.needle = ""
        self.view = PROBLEMS
        self.snapshot: Snapshot = EMPTY
        self.loaded = False
        self._tree_stale = True
        self._hold_position = False

    def compose(self) -> ComposeResult:
        yield TopBar(self.estate_name, id="top-bar")
        yield Tally(id="tally")
        yield Notice(id="notice")
        with ContentSwitcher(initial="problems-view", id="views"):
            with Vertical(id="problems-view"):
                yield FilterBar(id="filter-bar")
                yield ProblemList(clock=self.clock, id="problem-list")
            with Vertical(id="estate-view"):
                yield EstateTree(id="estate-tree")
        yield CautionLine(id="caution")
        yield Footer()

    def on_mount(self) -> None:
        self.query_one(TopBar).choose(PROBLEMS)
        self.query_one(FilterBar).choose(self.which)
        self.query_one(ProblemList).focus()

    # -- what is shown ------------------------------------------------------------------

    @property
    def problem_list(self) -> ProblemList:
        return self.query_one(ProblemList)

    def show_snapshot(self, snapshot: Snapshot) -> None:
        self.snapshot = snapshot
        self.loaded = True
        tally = self.query_one(Tally)
        tally.checking = False
        tally.snapshot = snapshot
        self.query_one(FilterBar).set_counts(filter_counts(snapshot))
        self.query_one(Notice).show_errors(snapshot.errors, snapshot.files_in_force, snapshot.warnings)
        self._refilter()
        if self.view == ESTATE:
            self.query_one(EstateTree).show(snapshot)
            self._tree_stale = False
        else:
            self._tree_stale = True

    def show_failure(self, text: str) -> None:
        self.query_one(Notice).show_failure(text)

    def set_status(self, text: str, more: str = "") -> None:
        self.query_one(TopBar).set_status(text, more)

    def _empty_text(self) -> str:
        if not self.loaded:
            return "Checking every circuit…"
        if self.needle:
            return f"Nothing here matches “{self.needle}”. Esc clears the search."
        if self.which == SHOW_NEW:
            return "Nothing newly broken since it was last acknowledged. 2: every failing one; 3: everything."
        if self.which == SHOW_FAILING:
            return "Nothing fails. 3 lists every circuit."
        return "No circuits in the site files."

    def hold_position(self) -> None:
        """At the next snapshot keep the cursor's place rather than its row: after an
        acknowledgement the row moves down the list and the next problem takes its place."""
        self._hold_position = True

    def _refilter(self) -> None:
        lst = self.problem_list
        keep = lst.current.ref if lst.current and not self._hold_position else None
        self._hold_position = False
        rows = visible(self.snapshot.rows, self.which, self.needle, self.snapshot.counts)
        lst.set_rows(rows, keep=keep, empty_text=self._empty_text())

    def current_row(self) -> Row | None:
        if self.view == ESTATE:
            tree = self.query_one(EstateTree)
            return tree.row_of(tree.cursor_node)
        return self.problem_list.current

    # -- actions ------------------------------------------------------------------------

    def action_filter(self, which: str) -> None:
        if which not in (SHOW_NEW, SHOW_FAILING, SHOW_ALL):
            return
        self.which = which
        self.query_one(FilterBar).choose(which)
        if self.view != PROBLEMS:
            self.action_view(PROBLEMS)
        self._refilter()

    def on_filter_chosen(self, message: FilterChosen) -> None:
        self.action_filter(message.which)

    def on_view_chosen(self, message: ViewChosen) -> None:
        self.action_view(message.which)

    def action_view(self, which: str) -> None:
        self.view = which
        self.query_one(TopBar).choose(which)
        self.query_one(ContentSwitcher).current = f"{which}-view"
        if which == ESTATE:
            tree = self.query_one(EstateTree)
            if self._tree_stale:
                tree.show(self.snapshot)
                self._tree_stale = False
            tree.focus()
        else:
            self.problem_list.focus()

    def action_switch_view(self) -> None:
        self.action_view(ESTATE if self.view == PROBLEMS else PROBLEMS)

    def action_search(self) -> None:
        if self.view != PROBLEMS:
            self.action_view(PROBLEMS)
        self.query_one("#search", Input).focus()

    def action_leave_search(self) -> None:
        search = self.query_one("#search", Input)
        if search.value:
            search.value = ""
        self.problem_list.focus()

    def on_input_changed(self, event: Input.Changed) -> None:
        if event.input.id == "search":
            self.needle = event.value
            self._refilter()

    def on_input_submitted(self, event: Input.Submitted) -> None:
        if event.input.id == "search":
            self.problem_list.focus()

    def action_acknowledge(self) -> None:
        self.app.ask_acknowledgement(self.current_row())
