"""Headless Chromium for the page tests: screenshots, DOM dumps, and a DevTools-protocol run.

Chromium is Debian's package at /usr/bin/chromium (``make browser`` installs it); nothing is
downloaded at run time. :func:`inspect_page` drives the browser over the DevTools protocol on
``--remote-debugging-pipe`` (file descriptors 3 and 4, NUL-terminated JSON messages), a
pure-stdlib client: it records every network request, console message, uncaught exception and
log entry while the page loads, then evaluates a few DOM queries.
"""

from __future__ import annotations

import fcntl
import json
import os
import select
import shutil
import subprocess
import time
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

FLAGS = [
    "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
    "--disable-background-networking", "--disable-component-update", "--disable-sync",
    "--disable-default-apps", "--disable-extensions", "--hide-scrollbars",
    "--mute-audio", "--no-default-browser-check",
]


def chromium() -> str | None:
    """The Chromium executable, if installed."""
    for name in ("chromium", "chromium-browser"):
        found = shutil.which(name)
        if found:
            return found
    return "/usr/bin/chromium" if Path("/usr/bin/chromium").exists() else None


def _run(args: list[str], profile: Path, timeout: float = 90) -> subprocess.CompletedProcess:
    exe = chromium()
    assert exe is not None
    return subprocess.run([exe, *FLAGS, f"--user-data-dir={profile}", *args],
                          capture_output=True, text=True, timeout=timeout,
                          stdin=subprocess.DEVNULL)


def screenshot(page: Path, out: Path, profile: Path, size: str = "1200,3000") -> None:
    """``--screenshot`` of ``page`` at ``--window-size``."""
    run = _run([f"--screenshot={out}", f"--window-size={size}", page.as_uri()], profile)
    assert out.exists(), run.stderr[-2000:]


def dump_dom(page: Path, profile: Path) -> str:
    """The DOM after load, serialised by ``--dump-dom``."""
    run = _run(["--dump-dom", page.as_uri()], profile)
    assert run.returncode == 0, run.stderr[-2000:]
    return run.stdout


@dataclass
class PageRun:
    """What happened while a page loaded."""

    requests: list[str] = field(default_factory=list)
    console: list[dict[str, Any]] = field(default_factory=list)
    exceptions: list[dict[str, Any]] = field(default_factory=list)
    log_errors: list[dict[str, Any]] = field(default_factory=list)
    evaluated: dict[str, Any] = field(default_factory=dict)
    loaded: bool = False


class _Pipe:
    def __init__(self, profile: Path) -> None:
        exe = chromium()
        assert exe is not None
        cmd_r, self.cmd_w = os.pipe()
        self.out_r, out_w = os.pipe()

        def wire() -> None:  # in the child: the protocol wants fd 3 (in) and fd 4 (out)
            a = fcntl.fcntl(cmd_r, fcntl.F_DUPFD, 10)
            b = fcntl.fcntl(out_w, fcntl.F_DUPFD, 10)
            os.dup2(a, 3)
            os.dup2(b, 4)

        self.proc = subprocess.Popen(
            [exe, *FLAGS, f"--user-data-dir={profile}", "--remote-debugging-pipe",
             "about:blank"],
            stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL,
            preexec_fn=wire, close_fds=False)
        os.close(cmd_r)
        os.close(out_w)
        self.buffer = b""
        self.next_id = 0
        self.events: list[dict[str, Any]] = []

    def send(self, method: str, params: dict[str, Any] | None = None,
             session: str | None = None, timeout: float = 30) -> dict[str, Any]:
        self.next_id += 1
        message: dict[str, Any] = {"id": self.next_id, "method": method, "params": params or {}}
        if session:
            message["sessionId"] = session
        os.write(self.cmd_w, json.dumps(message).encode() + b"\0")
        wanted = self.next_id
        deadline = time.monotonic() + timeout
        while True:
            for msg in self.read(deadline - time.monotonic()):
                if msg.get("id") == wanted:
                    if "error" in msg:
                        raise RuntimeError(f"{method}: {msg['error']}")
                    return msg.get("result", {})
                self.events.append(msg)
            if time.monotonic() > deadline:
                raise TimeoutError(f"no answer to {method}")

    def read(self, timeout: float) -> list[dict[str, Any]]:
        ready, _, _ = select.select([self.out_r], [], [], max(timeout, 0.0))
        if ready:
            chunk = os.read(self.out_r, 1 << 16)
            if not chunk:
                raise RuntimeError("chromium closed the protocol pipe")
            self.buffer += chunk
        *messages, self.buffer = self.buffer.split(b"\0")
        return [json.loads(m) for m in messages if m]

    def wait_events(self, seconds: float) -> None:
        deadline = time.monotonic() + seconds
        while time.monotonic() < deadline:
            self.events.extend(self.read(deadline - time.monotonic()))

    def close(self) -> None:
        try:
            self.send("Browser.close", timeout=10)
        except (RuntimeError, TimeoutError, OSError):
            pass
        try:
            self.proc.wait(timeout=10)
        except subprocess.TimeoutExpired:
            self.proc.kill()
            self.proc.wait(timeout=10)
        os.close(self.cmd_w)
        os.close(self.out_r)


_QUERY = """JSON.stringify({
  title: document.title,
  scripts: document.scripts.length,
  links: document.querySelectorAll('link').length,
  pwnedElement: document.getElementById('pwned') !== null,
  images: Array.from(document.images).map(i => i.src.slice(0, 22)),
  brokenImages: Array.from(document.images).filter(i => !i.complete || i.naturalWidth === 0)
    .length,
  bodyText: document.body.innerText
})"""


def inspect_page(page: Path, profile: Path, settle: float = 1.0) -> PageRun:
    """Load ``page`` and record requests, console messages, exceptions and errors."""
    pipe = _Pipe(profile)
    run = PageRun()
    try:
        target = pipe.send("Target.createTarget", {"url": "about:blank"})["targetId"]
        session = pipe.send("Target.attachToTarget", {"targetId": target, "flatten": True})[
            "sessionId"]
        for domain in ("Network", "Runtime", "Log", "Page"):
            pipe.send(f"{domain}.enable", session=session)
        pipe.send("Page.navigate", {"url": page.as_uri()}, session=session)
        deadline = time.monotonic() + 60
        while time.monotonic() < deadline:
            if any(e.get("method") == "Page.loadEventFired" for e in pipe.events):
                break
            pipe.wait_events(0.2)
        run.loaded = any(e.get("method") == "Page.loadEventFired" for e in pipe.events)
        pipe.wait_events(settle)  # anything a script or a late load would do
        result = pipe.send("Runtime.evaluate", {"expression": _QUERY, "returnByValue": True},
                           session=session)
        run.evaluated = json.loads(result["result"]["value"])
    finally:
        pipe.close()
    for e in pipe.events:
        method, params = e.get("method"), e.get("params", {})
        if method == "Network.requestWillBeSent":
            run.requests.append(params["request"]["url"])
        elif method == "Runtime.consoleAPICalled":
            run.console.append(params)
        elif method == "Runtime.exceptionThrown":
            run.exceptions.append(params)
        elif method == "Log.entryAdded" and params.get("entry", {}).get("level") == "error":
            run.log_errors.append(params["entry"])
    return run
