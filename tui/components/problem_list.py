"""The problem list: one row per circuit, board or origin, drawn line by line.

An estate can hold 100,000 circuits, so the list holds plain `Row`s and draws only the lines on
screen (Textual's line API) instead of building a widget or a table cell per row; a new snapshot
draws again only the lines whose rows changed. Narrow
terminals get two lines per row (what and where / since when and why); wide ones get one.
"""
from __future__ import annotations

from collections.abc import Callable
from datetime import datetime

from rich.style import Style
from rich.text import Text
from textual import events
from textual.binding import Binding
from textual.geometry import Region, Size
from textual.reactive import reactive
from textual.scroll_view import ScrollView
from textual.strip import Strip

from tui.messages import OpenElement, RowFocused
from tui.snapshot import Row
from tui.wording import ACKED, NEW, STATE_MARK, STATE_SHORT, ago, utc_now

WIDE = 120          # from this width on, one line per row
STATE_W, PLACE_W = 7, 8


def since_text(row: Row, now: datetime) -> str:
    if row.cause is None:
        return "not recorded" if row.state in (NEW, ACKED) else ""
    if row.cause.kind == "first-record":
        return "first record"
    return ago(row.cause.at, now)


def cause_text(row: Row) -> str:
    if row.cause is None:
        return ""
    if row.cause.kind == "first-record":
        return "failing when first recorded"
    return f"{row.cause.text}, by {row.cause.author}"


def ack_text(row: Row, now: datetime) -> str:
    if row.state != ACKED or row.ack is None:
        return ""
    note = f": {row.ack.note}" if row.ack.note else ""
    return f"△ ack'd {ago(row.ack.at, now)} by {row.ack.author}{note}"


def checks_text(row: Row) -> str:
    if row.failing:
        return ", ".join(row.failing)
    if row.open_checks:
        return ", ".join(row.open_checks)
    return "—"


def _same(a: Row | None, b: Row | None) -> bool:
    return a is b or (a is not None and b is not None and a == b)


def _fit(text: str, width: int) -> str:
    if width <= 0:
        return ""
    if len(text) <= width:
        return text.ljust(width)
    return text[: max(0, width - 1)] + "…"


class ProblemList(ScrollView, can_focus=True):
    """Rows of the current filter; the cursor row can be opened (Enter, or a click on it)."""

    BINDINGS = [
        Binding("up,k", "cursor(-1)", "up", show=False),
        Binding("down,j", "cursor(1)", "down", show=False),
        Binding("pageup", "page(-1)", "page up", show=False),
        Binding("pagedown", "page(1)", "page down", show=False),
        Binding("home", "to_end(0)", "first", show=False),
        Binding("end", "to_end(1)", "last", show=False),
        Binding("enter", "open", "details", show=True),
    ]

    COMPONENT_CLASSES = {
        "problem-list--header", "problem-list--cursor", "problem-list--dim", "problem-list--empty",
        "problem-list--new", "problem-list--acknowledged", "problem-list--warn", "problem-list--not-assessed",
        "problem-list--pass",
    }

    cursor: reactive[int] = reactive(0, always_update=True, repaint=False, init=False)

    def __init__(self, clock: Callable[[], datetime] = utc_now, **kwargs):
        super().__init__(**kwargs)
        self.rows: list[Row] = []
        self.clock = clock
        self.empty_text = "Checking every circuit…"

    AGES_REDRAWN_S = 30.0   # lines not changed by a snapshot are drawn again this often, for their ages

    def on_mount(self) -> None:
        self.set_interval(self.AGES_REDRAWN_S, self.refresh)

    # -- content ------------------------------------------------------------------------

    @property
    def row_height(self) -> int:
        return 1 if self.size.width >= WIDE else 2

    @property
    def current(self) -> Row | None:
        return self.rows[self.cursor] if 0 <= self.cursor < len(self.rows) else None

    def set_rows(self, rows: list[Row], keep: str | None = None, empty_text: str | None = None) -> None:
        """Show `rows`; the cursor stays on the row with ref `keep` where it is still listed.
        Where the cursor stays on the same line, only the lines whose rows changed are drawn again."""
        old_rows, old_index = self.rows, self.cursor
        self.rows = rows
        text_changed = empty_text is not None and empty_text != self.empty_text
        if empty_text is not None:
            self.empty_text = empty_text
        index = None
        if keep is not None:
            if 0 <= old_index < len(rows) and rows[old_index].ref == keep:
                index = old_index                   # still where it was: no need to look further
            else:
                index = next((i for i, r in enumerate(rows) if r.ref == keep), None)
        if index is None:
            index = min(old_index, len(rows) - 1) if rows else 0
        self._update_size()
        index = max(0, index)
        if index != old_index or not rows or not old_rows or text_changed:
            self.cursor = index
            self.refresh()
            return
        if not _same(old_rows[old_index] if old_index < len(old_rows) else None, rows[index]):
            self.post_message(RowFocused(self.current))
        self._refresh_changed(old_rows)

    def _refresh_changed(self, old_rows: list[Row]) -> None:
        """Draw again the lines on screen whose row is not the one drawn there before."""
        h = self.row_height
        width = self.size.width
        top = self.scroll_offset.y
        start = None
        for y in range(1, self.size.height):
            index = (top + y - 1) // h
            before = old_rows[index] if index < len(old_rows) else None
            now = self.rows[index] if index < len(self.rows) else None
            changed = not _same(before, now)
            if changed and start is None:
                start = y
            elif not changed and start is not None:
                self.refresh(Region(0, start, width, y - start))
                start = None
        if start is not None:
            self.refresh(Region(0, start, width, self.size.height - start))

    def _update_size(self) -> None:
        self.virtual_size = Size(self.size.width, len(self.rows) * self.row_height + 1)

    def on_resize(self, event: events.Resize) -> None:
        self._update_size()
        self._show_cursor()

    # -- cursor -------------------------------------------------------------------------

    def watch_cursor(self, value: int) -> None:
        self._show_cursor()
        self.refresh()
        self.post_message(RowFocused(self.current))

    def _body_height(self) -> int:
        return max(1, self.size.height - 1)

    def _show_cursor(self) -> None:
        if not self.rows:
            return
        h = self.row_height
        top = self.cursor * h
        y = self.scroll_offset.y
        if top < y:
            self.scroll_to(y=top, animate=False)
        elif top + h > y + self._body_height():
            self.scroll_to(y=top + h - self._body_height(), animate=False)

    def action_cursor(self, step: int) -> None:
        if self.rows:
            self.cursor = min(len(self.rows) - 1, max(0, self.cursor + step))

    def action_page(self, direction: int) -> None:
        per_page = max(1, self._body_height() // self.row_height)
        self.action_cursor(direction * per_page)

    def action_to_end(self, last: int) -> None:
        if self.rows:
            self.cursor = len(self.rows) - 1 if last else 0

    def action_open(self) -> None:
        row = self.current
        if row is not None:
            self.post_message(OpenElement(row))

    def move_to(self, ref: str) -> bool:
        for i, r in enumerate(self.rows):
            if r.ref == ref:
                self.cursor = i
                return True
        return False

    def on_click(self, event: events.Click) -> None:
        if event.y < 1 or not self.rows:
            return
        index = (self.scroll_offset.y + event.y - 1) // self.row_height
        if not 0 <= index < len(self.rows):
            return
        if index == self.cursor or event.chain >= 2:
            self.cursor = index
            self.action_open()
        else:
            self.cursor = index

    # -- drawing ------------------------------------------------------------------------

    def _style(self, name: str) -> Style:
        return self.get_component_rich_style(f"problem-list--{name}")

    def _columns(self, width: int) -> dict[str, int]:
        if width >= WIDE:
            extra = min(8, (width - WIDE) // 8)
            cols = {"state": STATE_W, "site": 18, "place": PLACE_W, "name": 26 + extra, "checks": 24 + extra // 2,
                    "since": 13}
        else:
            checks = 22 if width >= 72 else 14
            site = 16 if width >= 72 else 12
            cols = {"state": STATE_W, "site": site, "place": PLACE_W, "checks": checks}
            cols["name"] = width - sum(cols.values()) - len(cols) - 1
            return cols
        cols["cause"] = width - sum(cols.values()) - len(cols) - 1
        return cols

    def _header(self, width: int) -> Text:
        cols = self._columns(width)
        heads = {"state": "state", "site": "site", "place": "circuit", "name": "name",
                 "checks": "failing checks", "since": "since", "cause": "what caused it"}
        order = (["state", "site", "place", "name", "checks", "since", "cause"] if width >= WIDE
                 else ["state", "site", "place", "name", "checks"])
        text = Text(" ", style=self._style("header"))
        text.append(" ".join(_fit(heads[k], cols[k]) for k in order), style=self._style("header"))
        return text

    def _row_lines(self, row: Row, width: int, selected: bool) -> list[Text]:
        cols = self._columns(width)
        now = self.clock()
        state_style = self._style(row.state)
        pointer = "›" if selected else " "
        state = _fit(f"{STATE_MARK[row.state]} {STATE_SHORT[row.state]}", cols["state"])
        first = Text(pointer)
        first.append(state, style=state_style)
        first.append(" " + _fit(row.site_id, cols["site"]) + " " + _fit(row.place, cols["place"]) + " "
                     + _fit(row.name, cols["name"]) + " ")
        first.append(_fit(checks_text(row), cols["checks"]), style=state_style)
        extra = ack_text(row, now)
        if width >= WIDE:
            cause = cause_text(row)
            if extra:
                cause = f"{cause} · {extra}" if cause else extra
            first.append(" " + _fit(since_text(row, now), cols["since"]) + " ")
            first.append(_fit(cause, cols["cause"]), style=self._style("dim"))
            return [first]
        since = since_text(row, now)
        words = []
        if since:
            words.append(f"since {since}" if since != "first record" else "since the first record")
        if row.cause is not None and row.cause.kind != "first-record":
            words.append(cause_text(row))
        if extra:
            words.append(extra)
        if not words and row.open_checks:
            words.append("open: " + ", ".join(row.open_checks))
        second = Text(" " * (cols["state"] + 2))
        second.append(_fit(" · ".join(words), width - cols["state"] - 2), style=self._style("dim"))
        return [first, second]

    def _strip(self, text: Text, width: int, style: Style) -> Strip:
        segments = list(text.render(self.app.console))
        strip = Strip(segments).crop_extend(0, width, style)
        return strip.apply_style(style)

    def render_line(self, y: int) -> Strip:
        width = self.size.width
        base = self.rich_style
        if y == 0:
            return self._strip(self._header(width), width, base + self._style("header"))
        if not self.rows:
            if y == 2:
                return self._strip(Text("  " + self.empty_text), width, base + self._style("empty"))
            return Strip.blank(width, base)
        h = self.row_height
        line = self.scroll_offset.y + y - 1
        index, part = divmod(line, h)
        if index >= len(self.rows):
            return Strip.blank(width, base)
        selected = index == self.cursor
        style = base + self._style("cursor") if selected else base
        if selected and not self.has_focus:
            style = base + self._style("cursor") + Style(dim=True)
        lines = self._row_lines(self.rows[index], width, selected)
        return self._strip(lines[part] if part < len(lines) else Text(""), width, style)

    def on_focus(self) -> None:
        self.refresh()

    def on_blur(self) -> None:
        self.refresh()

