"""Reading revisions back by id (for the terminal UI's "what caused it")."""
from __future__ import annotations

from tests.watch_helpers import settle, start_watcher
from tracker.history.query import failing_since, revisions_by_id

SHOWER = "quill-court-2/site.yaml"


def test_revisions_by_id_gives_the_cause_of_a_newly_failing_check(demo_copy):
    w, h, first = start_watcher(demo_copy)
    try:
        path = demo_copy / SHOWER
        path.write_text(path.read_text().replace("power_kw: 7.5", "power_kw: 8.5"))
        settle(w, until=lambda g: g)
        since = failing_since(h)[("quill-court-2/CU1/3", "capacity")]
        first_ids = [u.recorded.id for u in first]
        got = revisions_by_id(h, [since["revision"], first_ids[0], 0, 999_999])
        assert set(got) == {since["revision"], first_ids[0]}   # 0 and unknown ids are left out
        edit = got[since["revision"]]
        assert edit["source"] == "watch" and edit["file"] == SHOWER and not edit["first_of_file"]
        assert edit["changes"] == [{"ref": "quill-court-2/CU1/3/shower", "field": "power_kw", "old": 7.5,
                                    "new": 8.5, "change": "modified"}]
        assert got[first_ids[0]]["first_of_file"] and got[first_ids[0]]["changes"] == []
    finally:
        w.stop()
        h.close()


def test_revisions_by_id_reads_many_ids_in_chunks(demo_copy):
    w, h, first = start_watcher(demo_copy)
    try:
        ids = [u.recorded.id for u in first]
        assert sorted(revisions_by_id(h, ids * 300)) == sorted(ids)
        assert revisions_by_id(h, []) == {}
    finally:
        w.stop()
        h.close()
