"""Signed authorship: a change that arrives as a signed git commit records git's own verdict on
the signature (with an allowed-signers file, as `gpg.ssh.allowedSignersFile` configures it) and
the verified signer; an unsigned or unverifiable commit is marked as such; an edit not yet
committed carries no mark. Throw-away SSH keys, made offline for the test."""
from __future__ import annotations

import shutil
import subprocess

import pytest

from tracker.history import History
from tracker.history.query import revisions
from tracker.history.verify import verify
from tracker.tracking.authors import Authors
from tracker.tracking.startup import start
from tracker.tracking.signatures import Signatures

pytestmark = pytest.mark.skipif(shutil.which("ssh-keygen") is None or shutil.which("git") is None,
                                reason="needs git and ssh-keygen")

SIGNER = "ops-lead@example.invalid"


def _git(repo, *args):
    subprocess.run(["git", "-C", str(repo), *args], check=True, capture_output=True)


@pytest.fixture
def repo(demo_copy, tmp_path):
    keys = tmp_path / "keys"
    keys.mkdir()
    for name in ("trusted", "stranger"):
        subprocess.run(["ssh-keygen", "-q", "-t", "ed25519", "-N", "", "-C", name, "-f", str(keys / name)],
                       check=True)
    allowed = keys / "allowed_signers"
    allowed.write_text(f"{SIGNER} {(keys / 'trusted.pub').read_text()}")
    _git(demo_copy, "init", "-q")
    for key, value in (("user.name", "Ops Lead"), ("user.email", SIGNER), ("gpg.format", "ssh"),
                       ("user.signingkey", str(keys / "trusted.pub")),
                       ("gpg.ssh.allowedSignersFile", str(allowed)), ("commit.gpgsign", "false")):
        _git(demo_copy, "config", key, value)
    _git(demo_copy, "add", "-A")
    _git(demo_copy, "commit", "-q", "-S", "-m", "the estate as surveyed")
    return demo_copy, keys


def _edit(estate, old="power_kw: 7.5", new="power_kw: 8.5"):
    path = estate / "quill-court-2" / "site.yaml"
    path.write_text(path.read_text().replace(old, new, 1))


def test_git_verdicts(repo):
    estate, keys = repo
    marks = Signatures(estate)
    assert marks("quill-court-2/site.yaml") == ("verified", SIGNER)
    _edit(estate)
    assert marks("quill-court-2/site.yaml") is None                 # not committed: no mark
    _git(estate, "commit", "-q", "-am", "8.5 kW shower")
    assert Signatures(estate)("quill-court-2/site.yaml") == ("unsigned", None)
    _edit(estate, "power_kw: 8.5", "power_kw: 9.5")
    _git(estate, "-c", f"user.signingkey={keys / 'stranger.pub'}", "commit", "-q", "-S", "-am", "9.5 kW")
    assert Signatures(estate)("quill-court-2/site.yaml") == ("unverified", None)   # a key git does not trust
    _git(estate, "config", "--unset", "gpg.ssh.allowedSignersFile")
    _edit(estate, "power_kw: 9.5", "power_kw: 8.0")
    _git(estate, "commit", "-q", "-S", "-am", "8 kW")
    assert Signatures(estate)("quill-court-2/site.yaml") == ("unverified", None)   # nothing to verify against
    preloaded = Signatures(estate)
    preloaded.preload()
    assert preloaded("quill-court-2/site.yaml") == ("unverified", None)
    assert preloaded("orchard-end/workshop.yaml") is not None


def test_revisions_record_the_signer(repo):
    estate, _ = repo
    history = History.open(estate / ".izwatch" / "history.sqlite")
    start(estate, history, Authors(estate))
    first = revisions(history, ref="quill-court-2")[-1]
    assert first["author"] == "Ops Lead"
    assert first["signature"] == {"status": "verified", "signer": SIGNER}
    # the signer is a person outside the chain, as names are
    stored = history.db.execute("SELECT signature, signer FROM revisions WHERE file = 'quill-court-2/site.yaml'"
                                ).fetchone()
    assert stored[0] == "verified" and stored[1].startswith("actor:")
    assert verify(history).ok
    history.close()
    # an unsigned commit arriving while nothing watched is recorded as unsigned
    (estate / ".gitignore").write_text(".izwatch/\n")
    _edit(estate)
    _git(estate, "add", "-A")
    _git(estate, "commit", "-q", "-m", "8.5 kW shower, unsigned")
    history = History.open(estate / ".izwatch" / "history.sqlite")
    start(estate, history, Authors(estate))
    latest = revisions(history, ref="quill-court-2")[-1]
    assert latest["signature"] == {"status": "unsigned", "signer": None}
    assert verify(history).ok
    history.close()


def test_history_shows_the_mark(repo, capsys):
    from tracker.cli import main
    estate, _ = repo
    assert main(["history", str(estate), "--ref", "quill-court-2"]) == 0   # nothing recorded yet
    history = History.open(estate / ".izwatch" / "history.sqlite")
    start(estate, history, Authors(estate))
    history.close()
    capsys.readouterr()
    assert main(["history", str(estate), "--ref", "quill-court-2"]) == 0
    assert f"by Ops Lead  [commit verified by {SIGNER}]" in capsys.readouterr().out


def test_the_report_shows_the_mark(repo, tmp_path):
    import json

    import jsonschema

    from tracker.cli import main
    from tracker.schemas_access import schema_json
    estate, _ = repo
    history = History.open(estate / ".izwatch" / "history.sqlite")
    start(estate, history, Authors(estate))
    history.close()
    out = tmp_path / "r.json"
    assert main(["report", str(estate), "--site", "quill-court-2", "--format", "json", "-o", str(out)]) == 0
    doc = json.loads(out.read_text())
    jsonschema.validate(doc, schema_json("report.schema.json"))
    assert doc["history"]["revisions"][0]["signature"] == {"status": "verified", "signer": SIGNER}
    page = tmp_path / "r.html"
    assert main(["report", str(estate), "--site", "quill-court-2", "-o", str(page)]) == 0
    assert f"signed commit, verified ({SIGNER})" in page.read_text()
