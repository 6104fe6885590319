"""A minimal client for headless Chromium's DevTools protocol over ``--remote-debugging-pipe``.

Used by the report's browser test and its benchmark: open a page, collect console errors,
uncaught exceptions and any network request, read the load time, print to PDF. No network is
used: the pipe is a pair of file descriptors (3 and 4 in the browser process).
"""

from __future__ import annotations

import base64
import json
import os
import select
import shutil
import subprocess
import time
from pathlib import Path

CHROMIUM = "/usr/bin/chromium"
FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
         "--disable-background-networking", "--disable-component-update", "--disable-sync",
         "--hide-scrollbars"]
LOCAL_SCHEMES = ("file:", "data:", "about:", "chrome:", "devtools:")


def chromium_path() -> str | None:
    """The Chromium executable, or None when it is not installed."""
    if os.access(CHROMIUM, os.X_OK):
        return CHROMIUM
    return shutil.which("chromium")


def run_cli(args: list[str], profile: Path, timeout: float = 90) -> subprocess.CompletedProcess:
    """Run Chromium once with command-line flags (``--screenshot``, ``--print-to-pdf``)."""
    cmd = [chromium_path() or CHROMIUM, *FLAGS, f"--user-data-dir={profile}", *args]
    return subprocess.run(cmd, capture_output=True, text=True, timeout=timeout, check=False)


def pdf_pages(pdf: bytes) -> int:
    """Number of pages of a PDF written by Chromium (counts ``/Type /Page`` objects)."""
    return pdf.count(b"/Type /Page") - pdf.count(b"/Type /Pages")


class Browser:
    """Headless Chromium driven over the DevTools pipe; use as a context manager."""

    def __init__(self, profile: Path, timeout: float = 60) -> None:
        self.timeout = timeout
        to_child_r, self._w = os.pipe()
        self._r, from_child_w = os.pipe()

        def _wire() -> None:  # in the child: the pipe ends become fds 3 (in) and 4 (out)
            a, b = os.dup(to_child_r), os.dup(from_child_w)
            os.dup2(a, 3)
            os.dup2(b, 4)

        self.proc = subprocess.Popen(
            [chromium_path() or CHROMIUM, *FLAGS, f"--user-data-dir={profile}",
             "--remote-debugging-pipe", "about:blank"],
            stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
            preexec_fn=_wire, close_fds=False)
        os.close(to_child_r)
        os.close(from_child_w)
        self._buf = b""
        self._next = 0
        self.events: list[dict] = []
        self.session = None

    def __enter__(self) -> Browser:
        target = self.call("Target.createTarget", {"url": "about:blank"}, session=False)
        attached = self.call("Target.attachToTarget",
                             {"targetId": target["targetId"], "flatten": True}, session=False)
        self.session = attached["sessionId"]
        for domain in ("Page", "Runtime", "Log", "Network"):
            self.call(f"{domain}.enable")
        return self

    def __exit__(self, *exc) -> None:
        try:
            self.call("Browser.close", session=False)
        except Exception:  # noqa: BLE001 - closing anyway
            pass
        try:
            self.proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            self.proc.kill()
            self.proc.wait()
        os.close(self._w)
        os.close(self._r)

    def _read_message(self, deadline: float) -> dict:
        while b"\0" not in self._buf:
            left = deadline - time.monotonic()
            if left <= 0 or not select.select([self._r], [], [], left)[0]:
                raise TimeoutError("no answer from Chromium")
            chunk = os.read(self._r, 1 << 20)
            if not chunk:
                raise RuntimeError("Chromium closed the DevTools pipe")
            self._buf += chunk
        raw, self._buf = self._buf.split(b"\0", 1)
        return json.loads(raw)

    def call(self, method: str, params: dict | None = None, *, session: bool = True) -> dict:
        """Send one command and wait for its answer; events seen meanwhile are kept."""
        self._next += 1
        msg = {"id": self._next, "method": method, "params": params or {}}
        if session and self.session:
            msg["sessionId"] = self.session
        os.write(self._w, json.dumps(msg).encode() + b"\0")
        deadline = time.monotonic() + self.timeout
        while True:
            reply = self._read_message(deadline)
            if reply.get("id") == self._next:
                if "error" in reply:
                    raise RuntimeError(f"{method}: {reply['error']}")
                return reply.get("result", {})
            self.events.append(reply)

    def wait_for(self, method: str, since: int = 0) -> dict:
        """Wait for an event of this kind, seen at or after position ``since``."""
        deadline = time.monotonic() + self.timeout
        while True:
            for ev in self.events[since:]:
                if ev.get("method") == method:
                    return ev
            self.events.append(self._read_message(deadline))

    def open(self, url: str) -> float:
        """Navigate and wait for the load event; returns the page's load time [ms]."""
        self.events.clear()
        self.call("Page.navigate", {"url": url})
        self.wait_for("Page.loadEventFired")
        self.call("Runtime.evaluate", {"expression": "1"})  # let pending console events in
        res = self.call("Runtime.evaluate", {"expression": (
            "(() => { const n = performance.getEntriesByType('navigation')[0];"
            " return n.loadEventEnd > 0 ? n.loadEventEnd : n.duration; })()"),
            "returnByValue": True})
        return float(res["result"]["value"])

    def problems(self) -> list[str]:
        """Console errors and warnings, uncaught exceptions, log errors, network requests."""
        out = []
        for ev in self.events:
            m, p = ev.get("method"), ev.get("params", {})
            if m == "Runtime.consoleAPICalled" and p.get("type") in ("error", "warning", "assert"):
                out.append(f"console {p['type']}: {p.get('args')}")
            elif m == "Runtime.exceptionThrown":
                out.append(f"exception: {p.get('exceptionDetails', {}).get('text')}")
            elif m == "Log.entryAdded" and p.get("entry", {}).get("level") in ("error", "warning"):
                out.append(f"log {p['entry']['level']}: {p['entry'].get('text')}")
            elif m == "Network.requestWillBeSent":
                url = p.get("request", {}).get("url", "")
                if not url.startswith(LOCAL_SCHEMES):
                    out.append(f"network request: {url}")
        return out

    def print_pdf(self, paper_in: tuple[float, float]) -> bytes:
        """Print the page with its print style sheet on paper of this size [in]."""
        res = self.call("Page.printToPDF", {"paperWidth": paper_in[0],
                                            "paperHeight": paper_in[1],
                                            "printBackground": True,
                                            "preferCSSPageSize": False})
        return base64.b64decode(res["data"])
