"""One change that spans two files of a site: a board re-fed from a new sub-main (the sub-main added
and the old one's `feeds` removed in site.yaml, `fed_by` changed in the board's own file).

Found in review: each save was checked against the other file's last *good* state, so both files
stayed "input error" while both were right on disk, and a restart then took the new state
without recording it. A save is now evaluated with the site's other files as they are on disk,
and the change is recorded across both files in one transaction."""
from __future__ import annotations

from tests.watch_helpers import settle, start_watcher
from tracker.history import History
from tracker.history.query import revisions
from tracker.history.verify import verify
from tracker.loading.estate import sha256_hex
from tracker.tracking.authors import Authors
from tracker.tracking.outcome import to_revision
from tracker.tracking.startup import start
from tracker.tracking.state import EstateState

SITE, BOARD = "orchard-end/site.yaml", "orchard-end/workshop.yaml"
NEW_SUB_MAIN = '''
  - id: "7"
    board: CU1
    name: "New sub-main to workshop"
    feeds: WS1
    device: {kind: mcb, curve: B, rating_a: 63, breaking_ka: 6}
    cable: {kind: swa-90, csa_mm2: 16, cpc_mm2: 16, length_m: 26, method: D}
'''


def refeed(root):
    """The two files as the re-feed leaves them (each wrong without the other)."""
    site = (root / SITE).read_text()
    assert site.count("    feeds: WS1\n") == 1 and "\ninspections:" in site
    site = site.replace("    feeds: WS1\n", "").replace("\ninspections:", NEW_SUB_MAIN + "\ninspections:")
    board = (root / BOARD).read_text().replace("fed_by: CU1/6", "fed_by: CU1/7")
    return site, board


def recorded_as_on_disk(root, history):
    latest = history.latest_by_file()
    return {rel: (latest[rel][1] == sha256_hex((root / rel).read_bytes()), latest[rel][2]) for rel in (SITE, BOARD)}


def test_a_refeed_saved_file_by_file_is_one_change(demo_copy):
    site, board = refeed(demo_copy)
    w, h, _ = start_watcher(demo_copy)
    try:
        (demo_copy / SITE).write_text(site)                 # the sub-main first: WS1 is fed by nothing it names
        got = settle(w, until=lambda g: g)
        assert [(u.outcome.file, u.outcome.valid) for u in got] == [(SITE, False)]
        (demo_copy / BOARD).write_text(board)               # then the board: now both agree
        got = settle(w, until=lambda g: g)
        assert [(u.outcome.file, u.outcome.valid) for u in got] == [(SITE, True), (BOARD, True)]
        assert got[0].outcome.loads_again                   # the file that did not load does now
        changes = {(c.ref, c.field) for u in got for c in u.outcome.changes}
        assert ("orchard-end/WS1", "fed_by") in changes and ("orchard-end/CU1/6", "feeds") in changes
        assert ("orchard-end/CU1/7", None) in changes       # added
        assert w.state.site_by_id("orchard-end").site.board("WS1").fed_by == "CU1/7"
        assert recorded_as_on_disk(demo_copy, h) == {SITE: (True, True), BOARD: (True, True)}
        revs = revisions(h)[-2:]
        assert [r["file"] for r in revs] == [SITE, BOARD] and "one change with" in revs[0]["note"]
        assert verify(h).ok
    finally:
        w.stop()
        h.close()


def test_a_refeed_made_while_nothing_watched_is_recorded_at_start(demo_copy):
    site, board = refeed(demo_copy)
    w, h, _ = start_watcher(demo_copy)
    try:
        (demo_copy / SITE).write_text(site)
        settle(w, until=lambda g: g)                        # recorded: site.yaml does not load
    finally:
        w.stop()
        h.close()
    (demo_copy / BOARD).write_text(board)                   # the rest of the change, unwatched
    w, h, updates = start_watcher(demo_copy)
    try:
        assert {u.outcome.file for u in updates} == {SITE, BOARD}
        assert all(u.outcome.valid for u in updates)
        assert recorded_as_on_disk(demo_copy, h) == {SITE: (True, True), BOARD: (True, True)}
    finally:
        w.stop()
        h.close()


def test_a_start_never_takes_a_state_the_history_has_not_recorded(demo_copy):
    """Both files recorded as not loading (as the old deadlock left them), both right on disk:
    the start records them loading rather than taking them silently."""
    site, board = refeed(demo_copy)
    h = History.open(demo_copy / ".izwatch" / "history.sqlite")
    state, _ = start(demo_copy, h, Authors(demo_copy), jobs=1)
    for rel, text in ((SITE, site), (BOARD, board)):
        (demo_copy / rel).write_text(text)
        outcome = state.apply_bytes(rel, text.encode())     # each against the other's last good state
        assert not outcome.valid
        h.record(to_revision(outcome, "watch", "T"))
    assert recorded_as_on_disk(demo_copy, h) == {SITE: (True, False), BOARD: (True, False)}
    state, done = start(demo_copy, h, Authors(demo_copy), jobs=1)
    assert {o.file for o, _ in done} == {SITE, BOARD} and all(o.valid for o, _ in done)
    assert recorded_as_on_disk(demo_copy, h) == {SITE: (True, True), BOARD: (True, True)}
    assert verify(h).ok
    h.close()


def test_a_file_that_breaks_the_site_does_not_take_a_good_one_down_with_it(demo_copy):
    """Two files saved at once, one good alone and one that breaks the site: the good one is
    taken, the broken one is its own input error (the others wait for their own save)."""
    state = EstateState(demo_copy)
    state.seed({rel: (demo_copy / rel).read_bytes() for rel in (SITE, BOARD)})
    good_site = (demo_copy / SITE).read_text().replace("length_m: 58", "length_m: 40")
    bad_board = (demo_copy / BOARD).read_text().replace("fed_by: CU1/6", "fed_by: CU1/9")
    outcome = state.apply_bytes(SITE, good_site.encode(), alongside={BOARD: bad_board.encode()})
    assert outcome.valid and not outcome.along
    outcome = state.apply_bytes(BOARD, bad_board.encode(), alongside={SITE: good_site.encode()})
    assert not outcome.valid and "CU1/9" in str(outcome.errors)
