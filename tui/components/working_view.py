"""The working tab: state and cause, headroom and remedy, a utilisation gauge per limit, every
check with its working, and the figures behind them (currents, factors, voltage drop, loop,
adiabatic sizes, fault level). Two columns on a wide terminal, one on a narrow one."""
from __future__ import annotations

from collections.abc import Callable
from datetime import datetime

from rich.console import Group, RenderableType
from rich.table import Table
from rich.text import Text
from textual.reactive import reactive
from textual.widget import Widget

from tracker.checks.result import FAIL, NOT_ASSESSED, PASS, WARN
from tui.snapshot import Row
from tui.wording import STATE_MARK, STATE_WORDS, STATUS_MARK, STATUS_WORD, ago, utc_now
from tui.working import Gauge, Working

TWO_COLUMNS = 140
STATUS_STYLE = {FAIL: "new", WARN: "warn", NOT_ASSESSED: "not-assessed", PASS: "pass"}


def bar(ratio: float | None, width: int) -> tuple[str, bool]:
    """A bar of `width` cells filled to `ratio` (eighths of a cell); True when over the limit."""
    if ratio is None:
        return "·" * width, False
    over = ratio > 1.0
    filled = min(ratio, 1.0) * width
    full = int(filled)
    eighths = int(round((filled - full) * 8))
    if eighths == 8:
        full, eighths = full + 1, 0
    partial = " ▏▎▍▌▋▊▉"[eighths] if eighths and full < width else ""
    text = "█" * full + partial
    text = text + "░" * (width - len(text))
    if over:
        text = text[:-1] + "▶"
    return text, over


class WorkingView(Widget):
    COMPONENT_CLASSES = {"working--heading", "working--label", "working--dim", "working--new",
                         "working--acknowledged", "working--warn", "working--not-assessed", "working--pass",
                         "working--bar-free"}

    working: reactive[Working | None] = reactive(None, layout=True, always_update=True)
    remedy: reactive[str] = reactive("", layout=True)

    def __init__(self, clock: Callable[[], datetime] = utc_now, **kwargs):
        super().__init__(**kwargs)
        self.clock = clock
        self.row: Row | None = None

    def show(self, working: Working | None, row: Row | None) -> None:
        self.row = row
        self.working = working

    def _s(self, name: str):
        return self.get_component_rich_style(f"working--{name}")

    def _status(self, status: str | None):
        return self._s(STATUS_STYLE.get(status or "", "dim")) if status else self._s("dim")

    def _heading(self, title: str) -> Text:
        return Text(title, style=self._s("heading"))

    def _summary(self, working: Working) -> RenderableType:
        row = self.row
        now = self.clock()
        grid = Table.grid(padding=(0, 1))
        grid.add_column(style=self._s("label"), no_wrap=True, min_width=12)
        grid.add_column(ratio=1)
        state = Text(f"{STATE_MARK[working.state]} {STATE_WORDS[working.state]}", style=self._s(working.state))
        state.append(f"   engine status: {STATUS_MARK[working.status]} {STATUS_WORD[working.status]}", style=self._status(working.status))
        grid.add_row("state", state)
        if row is not None and row.cause is not None:
            if row.cause.kind == "first-record":
                since = f"since the first record ({ago(row.cause.at, now)}, revision {row.cause.revision})"
            else:
                since = (f"since {ago(row.cause.at, now)} (revision {row.cause.revision}): {row.cause.text}, "
                         f"by {row.cause.author}")
            grid.add_row("failing", since)
        if row is not None and row.ack is not None:
            note = f": {row.ack.note}" if row.ack.note else ""
            grid.add_row("acknowledged", f"△ {ago(row.ack.at, now)} by {row.ack.author}{note} "
                                         f"(revision {row.ack.revision}; {', '.join(row.ack.checks)})")
        grid.add_row("headroom", working.headroom)
        if working.wants_remedy:
            grid.add_row("remedy", self.remedy or "finding the smallest change that passes…")
        return grid

    def _gauges(self, gauges: tuple[Gauge, ...], width: int) -> RenderableType:
        # label 12, percentage 5, mark and word 14, figures about 28, five gaps
        bar_w = max(8, min(24, width - 66))
        grid = Table.grid(padding=(0, 1))
        grid.add_column(style=self._s("label"), no_wrap=True, min_width=12)
        grid.add_column(no_wrap=True)
        grid.add_column(no_wrap=True, justify="right", min_width=5)
        grid.add_column(no_wrap=True, min_width=14)
        grid.add_column(ratio=1)
        for g in gauges:
            drawn, over = bar(g.ratio, bar_w)
            style = self._status(g.status)
            filled = Text(drawn, style=style)
            pct = f"{g.ratio * 100:.0f} %" if g.ratio is not None else "—"
            word = Text(f"{STATUS_MARK[g.status]} {g.word}", style=style)
            grid.add_row(g.label, filled, pct, word, Text(g.text, style=self._s("dim")))
        return grid

    def _checks(self, working: Working) -> RenderableType:
        now = self.clock()
        grid = Table.grid(padding=(0, 1))
        grid.add_column(no_wrap=True, min_width=20)
        grid.add_column(ratio=1)
        for c in working.checks:
            head = Text(f"{STATUS_MARK[c.status]} {c.check_id}", style=self._status(c.status))
            figures = Text(c.figures + f"  {STATUS_WORD[c.status]}", style=self._status(c.status))
            if c.since_revision is not None:
                when = f", {ago(c.since_at, now)}" if c.since_at else ""
                figures.append(f"  (failing since revision {c.since_revision}{when})", style=self._s("dim"))
            grid.add_row(head, figures)
            grid.add_row("", Text(c.detail, style=self._s("dim") if c.status == PASS else ""))
        return grid

    def _sections(self, working: Working) -> RenderableType:
        parts = []
        for sec in working.sections:
            grid = Table.grid(padding=(0, 1))
            grid.add_column(style=self._s("label"), no_wrap=True, min_width=16)
            grid.add_column(ratio=1)
            for line in sec.lines:
                text = Text(line.text)
                if line.status is not None and line.status != PASS:
                    text.append(f"  {STATUS_MARK[line.status]} {STATUS_WORD[line.status]}",
                                style=self._status(line.status))
                grid.add_row(line.label, text)
            parts += [self._heading(sec.title), grid, Text("")]
        return Group(*parts)

    def render(self) -> RenderableType:
        working = self.working
        if working is None:
            return Text("This element is no longer in the site files.", style=self._s("dim"))
        width = self.size.width or 80
        wide = width >= TWO_COLUMNS
        left_w = int(width * 0.56) if wide else width
        left = Group(self._summary(working), Text(""), self._heading("Utilisation of each limit"),
                     self._gauges(working.gauges, left_w), Text(""), self._heading("Checks"), self._checks(working))
        right = self._sections(working)
        if wide:
            grid = Table.grid(padding=(0, 0, 0, 3))
            grid.add_column(width=left_w - 3)
            grid.add_column(ratio=1)
            grid.add_row(left, right)
            return grid
        return Group(left, Text(""), right)
