"""The served dashboard's limits, in headless Chromium against servers of their own: closed tabs' kernels end,
a full server answers with a page that says so, the token and the Host header are required, no traceback reaches
the page. Settings are short here (idle timeout 10 s); `cordmap serve` uses 600 s."""
from __future__ import annotations

import http.client
import shutil
import subprocess
import tempfile
import time
from pathlib import Path

import pytest
from conftest import open_dashboard
from dashboard_page import kernel_pids

pytestmark = pytest.mark.browser

IDLE = 10  # seconds
CULL_EVERY = 2
LOADS = 20


class Server:
    def __init__(self, **kw):
        from widgets import serve

        self.serve = serve
        self.port = serve.free_port()
        self.cdir = tempfile.mkdtemp(prefix="cordmap-test-sessions-")
        self.log = open(Path(self.cdir) / "voila.log", "wb")  # noqa: SIM115 - closed in stop()
        self.token = serve.new_token()
        self.proc, _ = serve.start(self.port, connection_dir=self.cdir, stdout=self.log, stderr=subprocess.STDOUT,
                                   token=self.token, **kw)
        if not serve.wait_for_port(self.port, timeout=60, proc=self.proc):
            self.stop()
            pytest.fail(f"Voilà did not open port {self.port}", pytrace=False)
        self.url = f"http://127.0.0.1:{self.port}/?token={self.token}"

    def get(self, path: str, host: str | None = None) -> tuple[int, str]:
        c = http.client.HTTPConnection("127.0.0.1", self.port, timeout=120)
        c.request("GET", path, headers={"Host": host} if host else {})
        r = c.getresponse()
        return r.status, r.read().decode("utf-8", errors="replace")

    def log_text(self) -> str:
        self.log.flush()
        return (Path(self.cdir) / "voila.log").read_text(errors="replace")

    def stop(self):
        self.serve.stop(self.proc)
        self.log.close()
        shutil.rmtree(self.cdir, ignore_errors=True)


@pytest.fixture(scope="module")
def server(browser):
    s = Server(idle_timeout=IDLE, cull_interval=CULL_EVERY, max_sessions=LOADS + 1)
    yield s
    s.stop()


def test_twenty_loads_and_closes_leave_at_most_two_kernels(browser, server):
    """Every page load starts a kernel (about 290 MB). Half the tabs close as a browser closes them (the page's
    beforeunload call ends its kernel), half vanish without a word (their kernel is culled once idle). Every load
    shows its ranking and pictures: issue 13 saw 1 to 4 of 20 stall, the pictures then drawn by a thread of their
    own that raced the page's first fetch of the widget states; they are now drawn on the page's own click."""
    peak, times, stalled = 0, [], []
    for i in range(LOADS):
        try:
            page = open_dashboard(browser, server.url, timeout_ms=90_000)
            times.append(round(page.cm_load_seconds, 1))
        except Exception as e:  # noqa: BLE001 - once seen on a loaded 2-core machine: counted, its tab closed
            stalled.append(f"load {i + 1}: {str(e).splitlines()[0]}")
            for ctx in browser.contexts:  # the stalled page (this module keeps no other page open meanwhile)
                for pg in ctx.pages:
                    pg.close()
            continue
        peak = max(peak, len(kernel_pids(server.proc.pid)))
        page.close(run_before_unload=bool(i % 2))
    assert not stalled, f"{stalled}; load times {times}"
    deadline = time.monotonic() + IDLE + 4 * CULL_EVERY + 20
    while len(kernel_pids(server.proc.pid)) > 0 and time.monotonic() < deadline:
        time.sleep(1)
    alive = len(kernel_pids(server.proc.pid))
    assert alive <= 2, f"{alive} kernels alive {IDLE} s after {LOADS} loads and closes (peak {peak})"
    assert "Culling kernels" in server.log_text()


def test_token_and_host_header_are_required(server):
    status, _ = server.get("/")
    assert status in (302, 403)  # to the login page, never the dashboard
    status, _ = server.get("/?token=wrong")
    assert status in (302, 403)
    status, _ = server.get(f"/?token={server.token}", host="attacker.example")
    assert status == 403
    status, _ = server.get(f"/?token={server.token}", host=f"rebind.example:{server.port}")
    assert status == 403


def test_error_pages_carry_no_traceback(server):
    for path in ("/voila/templates/nothing", "/voila/files/nothing", "/voila/static/nothing.js"):
        status, body = server.get(f"{path}?token={server.token}")
        assert status >= 400 and "Traceback" not in body and 'File "' not in body, (path, status, body[:200])


@pytest.mark.xfail(strict=False, reason=(
    "open: closing the first page (run_before_unload) left its kernel alive past the 20 s wait here, so the second "
    "load got the 503 page (measured on main db16c8d too; the retry open_dashboard had until issue 16 hid it)"))
def test_full_server_answers_with_a_page_that_says_so(browser):
    s = Server(max_sessions=1)
    try:
        first = open_dashboard(browser, s.url)
        page = browser.new_page()
        resp = page.goto(s.url, timeout=60_000)
        assert resp.status == 503
        text = page.inner_text("body")
        assert "dashboard is full" in text and "Close dashboard tabs" in text and "Traceback" not in text
        page.close()
        first.close(run_before_unload=True)  # the page ends its kernel: the next load gets a session
        deadline = time.monotonic() + 20
        while kernel_pids(s.proc.pid) and time.monotonic() < deadline:
            time.sleep(0.5)
        again = open_dashboard(browser, s.url)
        assert again.is_visible(".cm-lead-text")
        again.close(run_before_unload=True)
    finally:
        s.stop()
