"""The terminal UI (watching, and writing acknowledgements) and `izwatch replace` in another
process at the same moment: every change recorded exactly once, nothing lost, the chain intact."""
from __future__ import annotations

import asyncio
import subprocess
import sys

from tests.reliability.conftest import record
from tests.tui_helpers import loaded, make_app, run, until
from tracker.history import History
from tracker.history.verify import verify

LOAD = "quill-court-2/CU1/3/shower"
FILE = "quill-court-2/site.yaml"


def _replace(root, kw: str):
    return subprocess.run([sys.executable, "-m", "tracker.cli", "replace", str(root), LOAD, "--power-kw", kw,
                           "--by", "Ruth", "--note", f"shower {kw} kW"], capture_output=True, text=True, timeout=120)


def test_ui_and_replace_at_once(demo_copy):
    values = ["8.5", "9", "7.25", "8", "9.5", "7.5"]

    async def go():
        app = make_app(demo_copy)
        async with app.run_test(size=(80, 24)) as pilot:
            await loaded(pilot)
            for kw in values:
                # an acknowledgement written by the UI while a replacement is being recorded
                ack = asyncio.to_thread(app.records.acknowledge, app.snapshot.by_ref["tansy-walk-9a/FB1/1"],
                                        "Tomas", f"booked ({kw})")
                rep = asyncio.to_thread(_replace, demo_copy, kw)
                _, out = await asyncio.gather(ack, rep)
                assert out.returncode in (0, 1), out.stderr
            final_ib = float(values[-1]) * 1000 / 230          # what the UI must end up showing

            def shows_final():
                sr = app.snapshot.sites.get("quill-court-2")
                return sr is not None and abs(sr.circuits["quill-court-2/CU1/3"].ib_a - final_ib) < 1e-9
            await until(pilot, shows_final, timeout=10)
    run(go())
    h = History.open(demo_copy / ".izwatch" / "history.sqlite")
    try:
        rows = h.db.execute("SELECT source, content_hash FROM revisions WHERE file = ? ORDER BY id", [FILE]).fetchall()
        acks = h.db.execute("SELECT count(*) FROM revisions WHERE source = 'ack'").fetchone()[0]
        replaces = [r for r in rows if r[0] == "replace"]
        assert len(replaces) == len(values)                     # every replacement once
        hashes = [r[1] for r in rows]
        assert all(a != b for a, b in zip(hashes, hashes[1:]))  # no state recorded twice in a row
        assert acks == len(values)
        assert verify(h).ok
    finally:
        h.close()
    record("UI + replace at once", f"{len(values)} replacements and {len(values)} acknowledgements, each recorded "
                                   f"once; {len(rows)} revisions of the file, chain intact")
