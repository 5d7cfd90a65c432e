"""A small client of the Chrome DevTools Protocol over `--remote-debugging-pipe`, for the browser
test: Debian's chromium, started headless by the test itself with a fresh profile, talked to
through two pipes (no port, no network). Messages are JSON, each ended by a NUL byte; the
browser reads commands on its fd 3 and writes answers and events on its fd 4."""
from __future__ import annotations

import base64
import fcntl
import json
import os
import select
import shutil
import subprocess
import time

FLAGS = ("--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync",
         "--remote-debugging-pipe")


def chromium_path() -> str | None:
    return shutil.which("chromium")


class CDPError(Exception):
    pass


class Browser:
    def __init__(self, profile_dir, exe: str | None = None, timeout_s: float = 30.0):
        exe = exe or chromium_path()
        if exe is None:
            raise CDPError("no chromium on PATH")
        self.timeout_s = timeout_s
        cmd_r, self._cmd_w = os.pipe()      # we write, the browser reads (its fd 3)
        self._evt_r, evt_w = os.pipe()      # the browser writes (its fd 4), we read

        def child_fds():
            # Move both ends out of the way first, so neither is overwritten by the other's dup2.
            a = fcntl.fcntl(cmd_r, fcntl.F_DUPFD, 10)
            b = fcntl.fcntl(evt_w, fcntl.F_DUPFD, 10)
            os.dup2(a, 3)
            os.dup2(b, 4)

        self.proc = subprocess.Popen([exe, *FLAGS, f"--user-data-dir={profile_dir}", "about:blank"],
                                     stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL,
                                     stderr=subprocess.DEVNULL, close_fds=False, preexec_fn=child_fds)
        os.close(cmd_r)
        os.close(evt_w)
        self._buf = b""
        self._next_id = 0
        self.events: list[dict] = []

    # -- the wire ---------------------------------------------------------------------------

    def _read_message(self, deadline: float) -> dict:
        while b"\0" not in self._buf:
            left = deadline - time.monotonic()
            if left <= 0:
                raise CDPError("no answer from chromium in time")
            ready, _, _ = select.select([self._evt_r], [], [], left)
            if ready:
                chunk = os.read(self._evt_r, 1 << 16)
                if not chunk:
                    raise CDPError(f"chromium closed the pipe (exit {self.proc.poll()})")
                self._buf += chunk
        raw, self._buf = self._buf.split(b"\0", 1)
        return json.loads(raw)

    def send(self, method: str, params: dict | None = None, session: str | None = None) -> dict:
        self._next_id += 1
        msg = {"id": self._next_id, "method": method, "params": params or {}}
        if session:
            msg["sessionId"] = session
        os.write(self._cmd_w, json.dumps(msg).encode() + b"\0")
        deadline = time.monotonic() + self.timeout_s
        while True:
            answer = self._read_message(deadline)
            if answer.get("id") == self._next_id:
                if "error" in answer:
                    raise CDPError(f"{method}: {answer['error']}")
                return answer.get("result", {})
            self.events.append(answer)

    def wait_for(self, method: str, session: str | None = None) -> dict:
        deadline = time.monotonic() + self.timeout_s
        for e in self.events:
            if e.get("method") == method and (session is None or e.get("sessionId") == session):
                return e
        while True:
            e = self._read_message(deadline)
            self.events.append(e)
            if e.get("method") == method and (session is None or e.get("sessionId") == session):
                return e

    # -- a page -----------------------------------------------------------------------------

    def open_page(self, width: int, height: int) -> str:
        target = self.send("Target.createTarget", {"url": "about:blank"})["targetId"]
        session = self.send("Target.attachToTarget", {"targetId": target, "flatten": True})["sessionId"]
        for domain in ("Page", "Runtime", "Log", "Network"):
            self.send(f"{domain}.enable", session=session)
        self.send("Emulation.setDeviceMetricsOverride",
                  {"width": width, "height": height, "deviceScaleFactor": 1, "mobile": False}, session)
        return session

    def navigate(self, session: str, url: str) -> None:
        self.events = [e for e in self.events if e.get("method") != "Page.loadEventFired"]
        self.send("Page.navigate", {"url": url}, session)
        self.wait_for("Page.loadEventFired", session)

    def evaluate(self, session: str, expression: str):
        result = self.send("Runtime.evaluate", {"expression": expression, "returnByValue": True}, session)
        if "exceptionDetails" in result:
            raise CDPError(f"evaluation failed: {result['exceptionDetails']}")
        return result["result"].get("value")

    def screenshot(self, session: str) -> bytes:
        return base64.b64decode(self.send("Page.captureScreenshot", {"format": "png"}, session)["data"])

    def pdf(self, session: str) -> bytes:
        data = self.send("Page.printToPDF", {"printBackground": True, "preferCSSPageSize": True}, session)["data"]
        return base64.b64decode(data)

    def problems(self, session: str) -> list[str]:
        """Console errors and warnings, uncaught exceptions, failed or remote requests of the page."""
        out = []
        for e in self.events:
            if e.get("sessionId") != session:
                continue
            m, p = e.get("method"), e.get("params", {})
            if m == "Runtime.consoleAPICalled" and p.get("type") in ("error", "warning", "assert"):
                out.append(f"console {p['type']}: {p.get('args')}")
            elif m == "Runtime.exceptionThrown":
                out.append(f"exception: {p.get('exceptionDetails')}")
            elif m == "Log.entryAdded" and p.get("entry", {}).get("level") in ("error", "warning"):
                out.append(f"log {p['entry']['level']}: {p['entry'].get('text')} {p['entry'].get('url', '')}")
            elif m == "Network.loadingFailed":
                out.append(f"request failed: {p.get('errorText')}")
            elif m == "Network.requestWillBeSent" and not p.get("request", {}).get("url", "").startswith(
                    ("file:", "about:", "data:")):
                out.append(f"remote request: {p['request']['url']}")
        return out

    def close(self) -> None:
        try:
            self.send("Browser.close")
        except (CDPError, OSError):
            pass
        try:
            self.proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            self.proc.kill()
            self.proc.wait(timeout=10)
        for fd in (self._cmd_w, self._evt_r):
            try:
                os.close(fd)
            except OSError:
                pass
