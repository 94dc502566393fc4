"""A small driver for the system's headless Chromium, for the tests of the report page.

It speaks the browser's own debugging protocol over a pipe (``--remote-debugging-pipe``: the
browser reads commands from file descriptor 3 and writes answers to 4, each message JSON ended by
a NUL byte), so no driver program and no browser download are needed: only the `chromium`
package of the system. It records console messages and uncaught exceptions, evaluates script in
the page, types text as a user would (focused element, input events) and takes screenshots.
"""

from __future__ import annotations

import base64
import fcntl
import json
import os
import select
import shutil
import subprocess
import tempfile
import time
from pathlib import Path
from typing import Any

CANDIDATES = ("chromium", "chromium-browser", "google-chrome", "google-chrome-stable")


def find_chromium() -> str | None:
    """The path of a Chromium on this machine, or None."""
    configured = os.environ.get("VERTEXSMITH_CHROMIUM")
    if configured:
        return configured if Path(configured).is_file() else None
    return next((path for path in map(shutil.which, CANDIDATES) if path), None)


class Browser:
    """One headless Chromium with one page; use as a context manager."""

    def __init__(self, executable: str, width: int = 1280, height: int = 900, timeout: float = 30.0) -> None:
        self.timeout = timeout
        self._profile = tempfile.mkdtemp(prefix="vs-chromium-")
        to_browser_r, self._to_browser = os.pipe()
        self._from_browser, from_browser_w = os.pipe()

        def wire_pipes() -> None:  # in the child: the protocol wants exactly fds 3 and 4
            # move both ends out of the way first (either may be 3 or 4 already), then into place;
            # dup2 leaves the copies inheritable, so they survive the exec
            high_r = fcntl.fcntl(to_browser_r, fcntl.F_DUPFD, 10)
            high_w = fcntl.fcntl(from_browser_w, fcntl.F_DUPFD, 10)
            os.dup2(high_r, 3)
            os.dup2(high_w, 4)

        self._process = subprocess.Popen(
            [executable, "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run", "--disable-extensions",
             "--disable-background-networking", "--disable-sync", "--mute-audio", "--hide-scrollbars",
             f"--user-data-dir={self._profile}", "--remote-debugging-pipe", f"--window-size={width},{height}",
             "about:blank"],
            stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
            preexec_fn=wire_pipes, close_fds=False)
        os.close(to_browser_r)
        os.close(from_browser_w)
        self._buffer = b""
        self._next_id = 0
        self.events: list[dict[str, Any]] = []
        target = self._call("Target.createTarget", {"url": "about:blank"})["targetId"]
        self._session = self._call("Target.attachToTarget", {"targetId": target, "flatten": True})["sessionId"]
        for domain in ("Runtime", "Log", "Page"):
            self.call(f"{domain}.enable")
        self.call("Emulation.setDeviceMetricsOverride",
                  {"width": width, "height": height, "deviceScaleFactor": 1, "mobile": False})

    # ---------------------------------------------------------------- protocol
    def _send(self, message: dict[str, Any]) -> None:
        os.write(self._to_browser, json.dumps(message).encode() + b"\0")

    def _receive(self, deadline: float) -> dict[str, Any]:
        while b"\0" not in self._buffer:
            left = deadline - time.monotonic()
            if left <= 0:
                raise TimeoutError("Chromium did not answer in time")
            ready, _, _ = select.select([self._from_browser], [], [], left)
            if ready:
                chunk = os.read(self._from_browser, 1 << 20)
                if not chunk:
                    raise RuntimeError("Chromium closed the debugging pipe")
                self._buffer += chunk
        raw, self._buffer = self._buffer.split(b"\0", 1)
        message: dict[str, Any] = json.loads(raw)
        return message

    def _call(self, method: str, params: dict[str, Any] | None = None, session: str | None = None) -> dict[str, Any]:
        self._next_id += 1
        message: dict[str, Any] = {"id": self._next_id, "method": method, "params": params or {}}
        if session:
            message["sessionId"] = session
        self._send(message)
        deadline = time.monotonic() + self.timeout
        while True:
            answer = self._receive(deadline)
            if answer.get("id") == self._next_id:
                if "error" in answer:
                    raise RuntimeError(f"{method}: {answer['error']}")
                result: dict[str, Any] = answer.get("result", {})
                return result
            if "method" in answer:
                self.events.append(answer)

    def call(self, method: str, params: dict[str, Any] | None = None) -> dict[str, Any]:
        """A protocol command on the page."""
        return self._call(method, params, self._session)

    def wait_for(self, event: str) -> dict[str, Any]:
        """Wait for an event on the page (one seen earlier counts)."""
        for seen in self.events:
            if seen.get("method") == event:
                self.events.remove(seen)
                return seen
        deadline = time.monotonic() + self.timeout
        while True:
            message = self._receive(deadline)
            if message.get("method") == event:
                return message
            if "method" in message:
                self.events.append(message)

    # ---------------------------------------------------------------- page
    def open(self, url: str) -> None:
        """Navigate and wait for the load event."""
        self.call("Page.navigate", {"url": url})
        self.wait_for("Page.loadEventFired")

    def evaluate(self, expression: str) -> Any:
        """Run script in the page and return its value (JSON-like)."""
        result = self.call("Runtime.evaluate", {"expression": expression, "returnByValue": True})
        if "exceptionDetails" in result:
            raise RuntimeError(f"script failed: {result['exceptionDetails']}")
        return result["result"].get("value")

    def type_into(self, selector: str, text: str) -> None:
        """Focus an element, clear it, and type text as key input (input events fire)."""
        self.evaluate(f"(function(){{var e=document.querySelector({json.dumps(selector)});e.focus();"
                      "e.select && e.select();}())")
        self.call("Input.insertText", {"text": text})

    def screenshot(self, path: Path) -> None:
        """A PNG of the whole page."""
        data = self.call("Page.captureScreenshot", {"format": "png", "captureBeyondViewport": True})["data"]
        path.write_bytes(base64.b64decode(data))

    def problems(self) -> list[str]:
        """Console errors and warnings, uncaught exceptions and logged errors, as text."""
        self.evaluate("0")  # drain pending events
        found = []
        for event in self.events:
            method, params = event.get("method"), event.get("params", {})
            if method == "Runtime.exceptionThrown":
                found.append("exception: " + json.dumps(params.get("exceptionDetails", {}))[:500])
            elif method == "Runtime.consoleAPICalled" and params.get("type") in ("error", "warning", "assert"):
                found.append(f"console.{params.get('type')}: " + json.dumps(params.get("args", []))[:500])
            elif method == "Log.entryAdded" and params.get("entry", {}).get("level") in ("error", "warning"):
                found.append("log: " + json.dumps(params["entry"])[:500])
        return found

    def close(self) -> None:
        try:
            self._call("Browser.close")
        except (RuntimeError, TimeoutError, OSError):
            pass
        try:
            self._process.wait(timeout=10)
        except subprocess.TimeoutExpired:
            self._process.kill()
            self._process.wait()
        for fd in (self._to_browser, self._from_browser):
            try:
                os.close(fd)
            except OSError:
                pass
        shutil.rmtree(self._profile, ignore_errors=True)

    def __enter__(self) -> "Browser":
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()
