"""The watcher looks at a save when the writer closes the file or moves it into place (no settle
wait), and reads a file that does not load once more before calling it an input error."""
from __future__ import annotations

import os

from tests.watch_helpers import start_watcher
from tracker.tracking.state import EstateState

SHOWER = "quill-court-2/site.yaml"
# the settle interval is made far longer than the waits below: an update within them can only
# have come from the close or the rename
LONG_SETTLE_S = 60.0


def _changed(root):
    path = root / SHOWER
    text = path.read_text(encoding="utf-8")
    assert "power_kw: 7.5" in text
    return path, text.replace("power_kw: 7.5", "power_kw: 8.5", 1)


def _until_update(w, tries=100):
    for _ in range(tries):
        got = w.wait_and_process(timeout=0.2)
        if got:
            return got
    return []


def test_a_plain_write_is_taken_at_its_close(demo_copy):
    w, h, _ = start_watcher(demo_copy, debounce_s=LONG_SETTLE_S)
    try:
        path, new = _changed(demo_copy)
        path.write_text(new, encoding="utf-8")
        got = _until_update(w)
        assert [u.outcome.file for u in got] == [SHOWER] and got[0].outcome.valid
    finally:
        w.stop()
        h.close()


def test_an_atomic_rename_is_taken_when_moved_into_place(demo_copy):
    w, h, _ = start_watcher(demo_copy, debounce_s=LONG_SETTLE_S)
    try:
        path, new = _changed(demo_copy)
        tmp = path.with_name(".site.yaml.new")
        tmp.write_text(new, encoding="utf-8")
        os.replace(tmp, path)
        got = _until_update(w)
        assert [u.outcome.file for u in got] == [SHOWER] and got[0].outcome.valid
    finally:
        w.stop()
        h.close()


def test_a_file_caught_half_written_is_read_again_not_an_input_error(demo_copy):
    st = EstateState(demo_copy)
    st.seed({rel: p.read_bytes() for rel, p in st.disk_files().items()})
    path, new = _changed(demo_copy)
    half = new[: new.index("power_kw: 8.5")] + "power_kw: [8"     # cut inside a flow sequence
    path.write_text(half, encoding="utf-8")
    outcome = st.apply_disk(SHOWER, settle=lambda: path.write_text(new, encoding="utf-8"))
    assert outcome.valid and not outcome.errors and SHOWER not in st.errors
    assert any(c.field == "power_kw" for c in outcome.changes)


def test_content_read_the_same_twice_is_an_input_error(demo_copy):
    st = EstateState(demo_copy)
    st.seed({rel: p.read_bytes() for rel, p in st.disk_files().items()})
    path, new = _changed(demo_copy)
    path.write_text(new.replace("power_kw: 8.5", "power_kw: [8", 1), encoding="utf-8")
    waited = []
    outcome = st.apply_disk(SHOWER, settle=lambda: waited.append(1))
    assert waited == [1] and not outcome.valid and outcome.errors and SHOWER in st.errors
