"""Served dashboard sessions (issue 13): prints figures, asserts nothing. Run: python benchmarks/bench_sessions.py

One server as `cordmap serve` runs it (token, session cap, Jupyter server's culler), with a short idle timeout
(--idle, default 20 s). Memory is the RSS of the Voilà process plus its kernel processes, from /proc.

(a) one session open: kernels and memory (the reference);
(b) 20 page loads, each closed once its ranking shows, the way a tab vanishes without a word (no beforeunload
    call, the worst case: only the culler ends the kernel): kernels and memory right after the last close, and
    again after the idle timeout and the culler's next rounds (target: at most 2 kernels, within 1 GB of (a));
(d) the same 20 loads closed as a browser closes a tab (the page's beforeunload call ends its kernel at once).

Needs Voilà, the playwright package and /usr/bin/chromium. Talks only to its own server on 127.0.0.1.
"""
from __future__ import annotations

import argparse
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from tests.dashboard_page import CHROMIUM, CHROMIUM_ARGS, browser_missing, kernel_pids, rss_mb  # noqa: E402
from widgets import serve  # noqa: E402

READY_JS = ("() => { const t = document.querySelector('.cm-lead-text'); const i = document.querySelector("
            "'img.cm-section'); return t && t.offsetParent !== null && i && i.complete && i.naturalWidth > 0; }")


def memory(pid: int) -> tuple[int, float]:
    kids = kernel_pids(pid)
    return len(kids), rss_mb(pid) + sum(rss_mb(k) for k in kids)


def load(browser, url: str):
    page = browser.new_page(viewport={"width": 1366, "height": 768})
    page.goto(url, timeout=180_000)
    page.wait_for_function(READY_JS, timeout=180_000)
    return page


def wait_culled(pid: int, seconds: float) -> float:
    t0 = time.monotonic()
    while kernel_pids(pid) and time.monotonic() - t0 < seconds:
        time.sleep(1)
    return time.monotonic() - t0


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--loads", type=int, default=20)
    ap.add_argument("--idle", type=int, default=20, help="idle timeout in seconds (cordmap serve: 600)")
    a = ap.parse_args()
    if missing := browser_missing():
        print(missing, file=sys.stderr)
        return 2
    from playwright.sync_api import sync_playwright
    cdir = tempfile.mkdtemp(prefix="cordmap-bench-sessions-")
    log = open(Path(cdir) / "voila.log", "wb")  # noqa: SIM115
    port, token = serve.free_port(), serve.new_token()
    proc, _ = serve.start(port, connection_dir=cdir, stdout=log, stderr=subprocess.STDOUT, token=token,
                          idle_timeout=a.idle, cull_interval=5, max_sessions=a.loads + 2)
    url = f"http://127.0.0.1:{port}/?token={token}"
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS)
        try:
            if not serve.wait_for_port(port, timeout=60, proc=proc):
                print("the server did not start; see", Path(cdir) / "voila.log", file=sys.stderr)
                return 2
            page = load(browser, url)
            n1, one = memory(proc.pid)
            print(f"(a) one session open: {n1} kernel, {one:.0f} MB (server and kernels, RSS)")
            page.close(run_before_unload=True)
            wait_culled(proc.pid, 30)
            for label, polite in (("vanish without a word", False), ("close as a browser does", True)):
                peak = 0
                t0 = time.monotonic()
                for _ in range(a.loads):
                    pg = load(browser, url)
                    peak = max(peak, memory(proc.pid)[0])
                    pg.close(run_before_unload=polite)
                n, mem = memory(proc.pid)
                took = time.monotonic() - t0
                print(f"{'(d)' if polite else '(b)'} {a.loads} loads whose tabs {label}, {took:.0f} s:"
                      f" right after the last close {n} kernels, {mem:.0f} MB (peak {peak} kernels at once)")
                waited = wait_culled(proc.pid, a.idle + 30)
                n, mem = memory(proc.pid)
                verdict = "ok" if n <= 2 and mem <= one + 1024 else "MISSED"
                print(f"    {waited:.0f} s later (idle timeout {a.idle} s): {n} kernels, {mem:.0f} MB, "
                      f"{mem - one:+.0f} MB against one session   [target <= 2 kernels, within 1 GB] {verdict}")
        finally:
            serve.stop(proc)
            log.close()
            browser.close()
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
