"""A PostgreSQL server for the tests of the team history.

`IZWATCH_TEST_PG` (a connection string to a superuser, as `.ci/pg-cluster start` prints) names a
running server; without it, the session starts a throw-away cluster with `.ci/pg-cluster` where
Debian's server binaries are installed. Under CI (`CI=true`) a server that cannot be had fails the
tests with the reason; elsewhere they are skipped with it.
"""
from __future__ import annotations

import os
import shutil
import subprocess
import tempfile
import uuid
from pathlib import Path
from urllib.parse import urlencode

import pytest

ROOT = Path(__file__).resolve().parent.parent
SCRIPT = ROOT / ".ci" / "pg-cluster"


class Server:
    def __init__(self, dsn: str, folder: str | None):
        self.dsn = dsn
        self.folder = folder

    def admin(self):
        import psycopg
        return psycopg.connect(self.dsn, autocommit=True)

    def schema_dsn(self, schema: str, **params) -> str:
        """The server's connection string with the estate's schema first on the search_path."""
        extra = urlencode({"options": f"-csearch_path={schema}", **params})
        return self.dsn + ("&" if "?" in self.dsn else "?") + extra

    def stop(self) -> None:
        if self.folder:
            subprocess.run([str(SCRIPT), "stop", self.folder], capture_output=True, timeout=60)
            shutil.rmtree(self.folder, ignore_errors=True)


def _unavailable(reason: str):
    if os.environ.get("CI", "").lower() == "true":
        pytest.fail(f"PostgreSQL is needed under CI and is not available: {reason}", pytrace=False)
    pytest.skip(f"no PostgreSQL server for the team history's tests: {reason}")


def start_server() -> Server | str:
    """A Server, or the reason there is none."""
    try:
        import psycopg  # noqa: F401
    except ImportError:
        return "psycopg is not installed (pip install -e '.[test]')"
    dsn = os.environ.get("IZWATCH_TEST_PG")
    if dsn:
        return Server(dsn, None)
    folder = tempfile.mkdtemp(prefix="izwatch-pg-")
    os.chmod(folder, 0o755)
    out = subprocess.run([str(SCRIPT), "start", folder], capture_output=True, text=True, timeout=180)
    if out.returncode != 0:
        shutil.rmtree(folder, ignore_errors=True)
        return (out.stderr.strip() or out.stdout.strip() or "the throw-away cluster did not start").splitlines()[-1]
    return Server(out.stdout.strip().splitlines()[-1], folder)


@pytest.fixture(scope="session")
def pg_server():
    server = start_server()
    if isinstance(server, str):
        _unavailable(server)
    yield server
    server.stop()


@pytest.fixture
def pg_schema(pg_server):
    """A fresh schema (one estate's chain) on the server; its connection string."""
    name = "estate_" + uuid.uuid4().hex[:12]
    with pg_server.admin() as conn:
        conn.execute(f"CREATE SCHEMA {name}")
    yield pg_server.schema_dsn(name)
    with pg_server.admin() as conn:
        conn.execute(f"DROP SCHEMA {name} CASCADE")
