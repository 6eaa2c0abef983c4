"""Headless Chromium driven over the DevTools protocol, standard library only.

Chromium's ``--remote-debugging-pipe`` reads protocol commands on file descriptor 3 and
writes replies and events on descriptor 4, each message a JSON text ended by a NUL
byte (the protocol is documented with Chromium's DevTools protocol viewer). One
`Browser` is one Chromium process with a throw-away profile and no network (every host
name resolves nowhere); `Browser.open` gives a `Tab` that loads a page and can run
script in it, press the mouse at a point, and report the page's console errors and the
requests it tried to send over the network.
"""

from __future__ import annotations

import contextlib
import json
import os
import select
import shutil
import subprocess
import tempfile
import time
from pathlib import Path
from typing import Any

CHROMIUM = Path("/usr/bin/chromium")

#: Browser notices about its own software rendering, not problems of the page.
HARMLESS_CONSOLE = (
    "GPU stall due to ReadPixels",
    "Canvas2D: Multiple readback operations using getImageData",
    "Automatic fallback to software WebGL has been deprecated",
)


class DevToolsError(RuntimeError):
    """A protocol command failed, timed out, or the browser went away."""


class Browser:
    """One headless Chromium process spoken to over its debugging pipe."""

    def __init__(self, window: tuple[int, int] = (1400, 900), timeout_s: float = 60.0):
        if not CHROMIUM.exists():
            raise FileNotFoundError(str(CHROMIUM))
        self.timeout_s = timeout_s
        self.window = window
        self.profile = Path(tempfile.mkdtemp(prefix="optimag-chromium-"))
        to_browser_read, self._write = os.pipe()
        self._read, from_browser_write = os.pipe()

        def _plumb() -> None:  # in the child: the pipe ends become fds 3 and 4
            os.dup2(to_browser_read, 3)
            os.dup2(from_browser_write, 4)

        command = [
            str(CHROMIUM),
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--enable-unsafe-swiftshader",
            "--disable-quic",
            "--no-first-run",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--disable-extensions",
            "--host-resolver-rules=MAP * ~NOTFOUND",
            "--hide-scrollbars",
            f"--window-size={window[0]},{window[1]}",
            f"--user-data-dir={self.profile}",
            "--remote-debugging-pipe",
            "about:blank",
        ]
        self.process = subprocess.Popen(
            command,
            stdin=subprocess.DEVNULL,
            stdout=subprocess.DEVNULL,
            stderr=subprocess.DEVNULL,
            preexec_fn=_plumb,
            pass_fds=(3, 4, to_browser_read, from_browser_write),
        )
        os.close(to_browser_read)
        os.close(from_browser_write)
        self._buffer = b""
        self._next_id = 0
        self.events: list[dict[str, Any]] = []

    # -- protocol ------------------------------------------------------------------
    def _receive(self, deadline: float) -> dict[str, Any]:
        while b"\0" not in self._buffer:
            left = deadline - time.monotonic()
            if left <= 0:
                raise DevToolsError("no answer from Chromium in time")
            ready, _, _ = select.select([self._read], [], [], left)
            if not ready:
                continue
            chunk = os.read(self._read, 1 << 20)
            if not chunk:
                raise DevToolsError("Chromium closed its debugging pipe")
            self._buffer += chunk
        message, self._buffer = self._buffer.split(b"\0", 1)
        return json.loads(message)

    def send(self, method: str, params: dict[str, Any] | None = None,
             session: str | None = None, timeout_s: float | None = None) -> dict[str, Any]:
        """Send one command and wait for its reply; events met meanwhile are kept."""
        self._next_id += 1
        message: dict[str, Any] = {"id": self._next_id, "method": method,
                                   "params": params or {}}
        if session:
            message["sessionId"] = session
        os.write(self._write, json.dumps(message).encode() + b"\0")
        deadline = time.monotonic() + (timeout_s or self.timeout_s)
        while True:
            reply = self._receive(deadline)
            if reply.get("id") == self._next_id:
                if "error" in reply:
                    raise DevToolsError(f"{method}: {reply['error']}")
                return reply.get("result", {})
            self.events.append(reply)

    def open(self, url: str) -> Tab:
        """A new tab with console, network and page events on, loading ``url``."""
        target = self.send("Target.createTarget", {"url": "about:blank"})["targetId"]
        session = self.send("Target.attachToTarget",
                            {"targetId": target, "flatten": True})["sessionId"]
        tab = Tab(self, session)
        for domain in ("Page", "Runtime", "Network"):
            self.send(f"{domain}.enable", session=session)
        width, height = self.window
        self.send("Emulation.setDeviceMetricsOverride", {
            "width": width, "height": height, "deviceScaleFactor": 1, "mobile": False,
        }, session=session)
        tab.navigate(url)
        return tab

    def close(self) -> None:
        with contextlib.suppress(DevToolsError):
            self.send("Browser.close", timeout_s=10)
        try:
            self.process.wait(timeout=10)
        except subprocess.TimeoutExpired:
            self.process.kill()
            self.process.wait()
        os.close(self._write)
        os.close(self._read)
        shutil.rmtree(self.profile, ignore_errors=True)

    def __enter__(self) -> Browser:
        return self

    def __exit__(self, *_: object) -> None:
        self.close()


class Tab:
    """One page of a `Browser`."""

    def __init__(self, browser: Browser, session: str):
        self.browser = browser
        self.session = session

    def send(self, method: str, params: dict[str, Any] | None = None,
             timeout_s: float | None = None) -> dict[str, Any]:
        return self.browser.send(method, params, self.session, timeout_s)

    def navigate(self, url: str) -> None:
        self.send("Page.navigate", {"url": url})

    def evaluate(self, expression: str, timeout_s: float | None = None) -> Any:
        """The value of a JavaScript expression (promises are awaited); a thrown error
        raises `DevToolsError`."""
        result = self.send("Runtime.evaluate", {
            "expression": expression, "returnByValue": True, "awaitPromise": True,
        }, timeout_s)
        if "exceptionDetails" in result:
            details = result["exceptionDetails"]
            text = details.get("exception", {}).get("description") or details.get("text")
            raise DevToolsError(f"script failed: {text}")
        return result["result"].get("value")

    def wait_for(self, expression: str, timeout_s: float = 60.0, poll_s: float = 0.02) -> Any:
        """Poll ``expression`` until it is truthy (a throw counts as false, as while the
        page is still loading); return its value."""
        deadline = time.monotonic() + timeout_s
        while True:
            try:
                value = self.evaluate(expression)
            except DevToolsError as error:
                if "script failed" not in str(error):
                    raise
                value = None
            if value:
                return value
            if time.monotonic() > deadline:
                raise DevToolsError(f"still false after {timeout_s} s: {expression}")
            time.sleep(poll_s)

    def click(self, x: float, y: float) -> None:
        """Press and release the left mouse button at a point of the viewport."""
        for kind in ("mouseMoved", "mousePressed", "mouseReleased"):
            self.send("Input.dispatchMouseEvent", {
                "type": kind, "x": x, "y": y, "button": "left", "clickCount": 1,
            })

    def click_element(self, selector_expression: str) -> None:
        """Scroll the element an expression returns into view and click its centre."""
        box = self.evaluate(
            f"(function () {{ var e = {selector_expression}; e.scrollIntoView({{block: "
            "'center'}); var r = e.getBoundingClientRect(); "
            "return [r.left + r.width / 2, r.top + r.height / 2]; })()"
        )
        self.click(*box)

    def _events(self, method: str) -> list[dict[str, Any]]:
        return [e.get("params", {}) for e in self.browser.events
                if e.get("method") == method and e.get("sessionId") == self.session]

    def console_problems(self) -> list[str]:
        """Console errors and uncaught exceptions of this page."""
        problems = []
        for params in self._events("Runtime.consoleAPICalled"):
            if params.get("type") in ("error", "assert"):
                text = " ".join(str(a.get("value", a.get("description", "")))
                                for a in params.get("args", []))
                if not any(ok in text for ok in HARMLESS_CONSOLE):
                    problems.append(text)
        for params in self._events("Runtime.exceptionThrown"):
            details = params.get("exceptionDetails", {})
            problems.append(details.get("exception", {}).get("description")
                            or details.get("text", "exception"))
        return problems

    def network_requests(self) -> list[str]:
        """URLs the page asked for that are not file:, data: or blob: loads."""
        urls = [p.get("request", {}).get("url", "")
                for p in self._events("Network.requestWillBeSent")]
        return [u for u in urls if not u.startswith(("file:", "data:", "blob:", "about:"))]
