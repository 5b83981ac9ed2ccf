"""A tiny headless-Chromium driver for browser tests, over the DevTools pipe (stdlib only).

Chromium started with ``--remote-debugging-pipe`` reads DevTools Protocol messages from file
descriptor 3 and writes replies and events to descriptor 4, each message one JSON text ended by
a NUL byte. That needs no websocket library and no open port. The page's network is blocked by
intercepting every request (``Fetch`` domain): ``file://`` requests go on, anything else fails
and is recorded in ``Browser.blocked``.
"""

from __future__ import annotations

import base64
import json
import os
import select
import shutil
import subprocess
import tempfile
import time
from pathlib import Path

CHROMIUM = os.environ.get("BLOCWATCH_TEST_CHROMIUM", "/usr/bin/chromium")


def chromium_path() -> str | None:
    """The Chromium to test with, or None when there is none (browser tests then skip)."""
    if Path(CHROMIUM).is_file() and os.access(CHROMIUM, os.X_OK):
        return CHROMIUM
    return shutil.which("chromium")


class Browser:
    """One headless Chromium with one page; use as a context manager."""

    def __init__(self, executable: str, *, width: int = 800, height: int = 1000):
        self.profile = tempfile.mkdtemp(prefix="bw-chromium-")
        to_child_r, self._w = os.pipe()
        self._r, from_child_w = os.pipe()

        def wire():  # runs in the child before exec: put the pipe ends where Chromium reads
            a, b = os.dup(to_child_r), os.dup(from_child_w)  # a pipe end may already be 3 or 4
            os.dup2(a, 3)
            os.dup2(b, 4)
            os.set_inheritable(3, True)
            os.set_inheritable(4, True)

        args = [executable, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic",
                "--no-first-run", "--disable-background-networking",
                "--disable-component-update", "--disable-sync", "--disable-extensions",
                "--remote-debugging-pipe", f"--user-data-dir={self.profile}",
                f"--window-size={width},{height}", "about:blank"]
        self.proc = subprocess.Popen(args, preexec_fn=wire, close_fds=False,
                                     stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        os.close(to_child_r)
        os.close(from_child_w)
        self._buf, self._id, self.events = b"", 0, []
        self.blocked: list[str] = []
        self.session = None
        targets = self.call("Target.getTargets")["targetInfos"]
        page = next(t for t in targets if t["type"] == "page")
        self.session = self.call("Target.attachToTarget", targetId=page["targetId"],
                                 flatten=True, session=None)["sessionId"]
        for domain in ("Page", "Runtime", "Log"):
            self.call(f"{domain}.enable")
        self.call("Fetch.enable", patterns=[{"urlPattern": "*"}])
        self.call("Emulation.setDeviceMetricsOverride", width=width, height=height,
                  deviceScaleFactor=1, mobile=False)

    # -- protocol ---------------------------------------------------------------------------
    def _send(self, message: dict) -> None:
        os.write(self._w, json.dumps(message).encode() + b"\0")

    def _read(self, timeout: float) -> dict | None:
        while b"\0" not in self._buf:
            ready, _, _ = select.select([self._r], [], [], timeout)
            if not ready:
                return None
            chunk = os.read(self._r, 1 << 20)
            if not chunk:
                raise RuntimeError("Chromium closed the DevTools pipe")
            self._buf += chunk
        raw, self._buf = self._buf.split(b"\0", 1)
        return json.loads(raw)

    def _event(self, msg: dict) -> None:
        if msg.get("method") == "Fetch.requestPaused":
            p = msg["params"]
            if p["request"]["url"].startswith(("file:", "data:", "about:")):
                self._send_call("Fetch.continueRequest", {"requestId": p["requestId"]})
            else:
                self.blocked.append(p["request"]["url"])
                self._send_call("Fetch.failRequest", {"requestId": p["requestId"],
                                                      "errorReason": "BlockedByClient"})
        elif msg.get("method") == "Page.javascriptDialogOpening":
            self._send_call("Page.handleJavaScriptDialog", {"accept": False})
        self.events.append(msg)

    def _send_call(self, method: str, params: dict, session: object = "page") -> int:
        self._id += 1
        message = {"id": self._id, "method": method, "params": params}
        sid = self.session if session == "page" else session
        if sid:
            message["sessionId"] = sid
        self._send(message)
        return self._id

    def call(self, method: str, *, session: object = "page", timeout: float = 30, **params):
        """Send one command and wait for its reply, handling events meanwhile."""
        want = self._send_call(method, params, session)
        deadline = time.monotonic() + timeout
        while time.monotonic() < deadline:
            msg = self._read(max(0.05, deadline - time.monotonic()))
            if msg is None:
                break
            if msg.get("id") == want:
                if "error" in msg:
                    raise RuntimeError(f"{method}: {msg['error']}")
                return msg.get("result", {})
            if "method" in msg:
                self._event(msg)
        raise TimeoutError(f"no reply to {method} within {timeout}s")

    def pump(self, seconds: float) -> None:
        """Handle events for ``seconds`` (lets requests be answered while a page loads)."""
        end = time.monotonic() + seconds
        while (left := end - time.monotonic()) > 0:
            msg = self._read(left)
            if msg and "method" in msg:
                self._event(msg)

    # -- helpers ----------------------------------------------------------------------------
    def open(self, url: str, *, timeout: float = 60) -> None:
        start = len(self.events)
        self.call("Page.navigate", url=url)
        end = time.monotonic() + timeout
        while time.monotonic() < end:
            if any(e.get("method") == "Page.loadEventFired" for e in self.events[start:]):
                return
            self.pump(0.2)
        raise TimeoutError(f"{url} did not load within {timeout}s")

    def eval(self, expression: str):
        res = self.call("Runtime.evaluate", expression=expression, returnByValue=True,
                        awaitPromise=True)
        if "exceptionDetails" in res:
            raise RuntimeError(res["exceptionDetails"])
        return res["result"].get("value")

    def wait_for(self, expression: str, *, timeout: float = 60) -> object:
        end = time.monotonic() + timeout
        while time.monotonic() < end:
            value = self.eval(expression)
            if value:
                return value
            self.pump(0.2)
        raise TimeoutError(f"{expression} stayed false for {timeout}s")

    def errors(self) -> list[str]:
        """Console errors, uncaught exceptions, failed-load log entries and dialogs so far."""
        out = []
        for e in self.events:
            m, p = e.get("method"), e.get("params", {})
            if m == "Runtime.exceptionThrown":
                out.append(json.dumps(p["exceptionDetails"])[:500])
            elif m == "Runtime.consoleAPICalled" and p.get("type") in ("error", "assert"):
                out.append(json.dumps(p.get("args"))[:500])
            elif m == "Log.entryAdded" and p["entry"].get("level") == "error":
                out.append(p["entry"].get("text", "")[:500])
            elif m == "Page.javascriptDialogOpening":
                out.append(f"dialog: {p.get('message')}")
        return out

    def screenshot(self, path: Path) -> Path:
        """Full-page PNG (the viewport is not resized, so responsive charts keep their size)."""
        width = int(self.eval("document.documentElement.scrollWidth"))
        height = min(int(self.eval("document.documentElement.scrollHeight")), 16000)
        data = self.call("Page.captureScreenshot", format="png", captureBeyondViewport=True,
                         clip={"x": 0, "y": 0, "width": width, "height": height,
                               "scale": 1})["data"]
        path.parent.mkdir(parents=True, exist_ok=True)
        path.write_bytes(base64.b64decode(data))
        return path

    def close(self) -> None:
        try:
            self.call("Browser.close", session=None, timeout=5)
        except (RuntimeError, TimeoutError, OSError):
            pass
        try:
            self.proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            self.proc.kill()
            self.proc.wait()
        for fd in (self._r, self._w):
            try:
                os.close(fd)
            except OSError:
                pass
        shutil.rmtree(self.profile, ignore_errors=True)

    def __enter__(self) -> Browser:
        return self

    def __exit__(self, *exc) -> None:
        self.close()
