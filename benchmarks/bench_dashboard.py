"""Dashboard quality bars (issue 5): prints figures, asserts nothing. Run: python benchmarks/bench_dashboard.py

(a) click latency measured inside the page: performance.now() at the click, a MutationObserver waits until both
    the leader's text and the cross-section's img src have changed; median and quartiles over 20 clicks, each one
    a click that moves the leader (worked out in-process first), on an exam that differs from every earlier one.
(b) cold start: server start to interactive (first ranking and cross-section visible), in seconds.
(c) for each count of --sessions (5 and 10), that many browser sessions opened at once on one server: when each
    page showed its ranking and its first pictures (median, last), the CPU time the kernels, the server and the
    browser used meanwhile; each must answer a click; then the click of (a) is measured again, round-robin over
    the sessions (median and quartiles); memory per session is the RSS of the server's kernel processes
    (children of the Voilà process, read from /proc) per session, and their PSS (shared pages such as the
    memory-mapped atlas split among the kernels). One session's PSS is printed after (a).

Needs Voilà, the playwright package and /usr/bin/chromium. Talks only to its own server on 127.0.0.1.
"""
from __future__ import annotations

import argparse
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from cordmap import demo  # noqa: E402
from cordmap.anatomy import anatomy  # noqa: E402
from cordmap.rank import rank  # noqa: E402
from tests.dashboard_page import (  # noqa: E402
    CHROMIUM,
    CHROMIUM_ARGS,
    DRAWN_JS,
    browser_missing,
    cell_sel,
    click_and_wait,
    kernel_pids,
    wait_idle,
)
from widgets import serve  # noqa: E402

VIEWPORT = {"width": 1366, "height": 768}
DEMO = "thoracic-hemicord"
CYCLE = {None: 2, 2: 1, 1: 0, 0: None}  # the app's click cycle (widgets.labels.CYCLE)
# unmeasured clicks before the measured one: the demo's left dorsal-column level raised (as tests/test_browser.py)
PREFIX = [("vibration", "left", d) for d in ("T4", "T5", "T6")] + [("pinprick", "right", d) for d in ("T4", "T5")]
MEASURED = ("pinprick", "right", "T6")  # moves the demo's leader one segment up once the prefix is in
VARY = ("temperature", "left")  # one more unmeasured cell per round, so no two measured exams are the same

READY_JS = DRAWN_JS  # the leader and the first pictures shown
LOAD_TIMEOUT = 240  # s a page may take to load while all sessions start

MEASURE_JS = """([sel]) => new Promise((resolve, reject) => {
  const lead = document.querySelector('.cm-lead');
  const sec = document.querySelector('img.cm-section');
  const body = document.querySelector('img.cm-body');
  const lead0 = lead.textContent, sec0 = sec.src, body0 = body.src;
  const out = {lead: null, section: null, body: null};
  let t0 = 0;
  const check = () => {
    const now = performance.now();
    if (out.lead === null && lead.textContent !== lead0) out.lead = now - t0;
    if (out.section === null && sec.src !== sec0) out.section = now - t0;
    if (out.body === null && body.src !== body0) out.body = now - t0;
    if (out.lead !== null && out.section !== null) {
      out.both = Math.max(out.lead, out.section);
      if (out.body !== null) { obs.disconnect(); resolve(out); }
    }
  };
  const obs = new MutationObserver(check);
  obs.observe(lead, {childList: true, subtree: true, characterData: true});
  obs.observe(sec, {attributes: true, attributeFilter: ['src']});
  obs.observe(body, {attributes: true, attributeFilter: ['src']});
  setTimeout(() => { obs.disconnect(); out.lead !== null && out.section !== null ? resolve(out)
                                        : reject(new Error('no update within 15 s: ' + JSON.stringify(out))); }, 15000);
  t0 = performance.now();
  document.querySelector(sel).click();
})"""


def _click(f, key):
    v = CYCLE[f.get(key)]
    return f.replace(remove=[key]) if v is None else f.replace({key: v})


def plan(n: int) -> list[str]:
    """Dermatomes of the varying strip for which the measured click moves the leader (checked with rank())."""
    derms = anatomy().dermatomes
    out = []
    for d in derms:
        f = _click(demo.case(DEMO), ("sensory", *VARY, d))
        for key in PREFIX:
            f = _click(f, ("sensory", *key))
        before = rank(f, top=5).hypotheses[0].lesion
        after = rank(_click(f, ("sensory", *MEASURED)), top=5).hypotheses[0].lesion
        if before != after:
            out.append(d)
        if len(out) == n:
            break
    if len(out) < n:
        raise SystemExit(f"only {len(out)} rounds found in which the measured click moves the leader")
    return out


def measure(page, d: str) -> dict:
    """Back to the demo, the varying cell and the prefix clicked (unmeasured), then the measured click."""
    reset(page)
    click_and_wait(page, cell_sel(*VARY, d))
    for key in PREFIX:
        click_and_wait(page, cell_sel(*key))
    return page.evaluate(MEASURE_JS, [cell_sel(*MEASURED)])


def reset(page) -> None:
    page.select_option(".cm-demo select", DEMO)
    page.wait_for_function("() => document.querySelector('.cm-demo select').selectedIndex === 0 && "
                           "document.querySelector('.cm-cell-pinprick-right-T4').title.endsWith(': normal')")
    wait_idle(page)


def quartiles(xs):
    q = statistics.quantiles(xs, n=4)
    return q[0], statistics.median(xs), q[2]


def _proc_mb(pid: int, field: str, name: str) -> float:
    try:
        for line in Path(f"/proc/{pid}/{name}").read_text().splitlines():
            if line.startswith(field):
                return int(line.split()[1]) / 1024
    except OSError:
        pass
    return 0.0


def kernel_pss_mb(server_pid: int) -> float:
    """Summed PSS of the kernels in MB: shared pages (the memory-mapped atlas, libraries) divided among sharers."""
    return sum(_proc_mb(k, "Pss:", "smaps_rollup") for k in kernel_pids(server_pid))


def kernel_rss_mb(server_pid: int) -> tuple[int, float, float]:
    """(number of kernel processes, their summed RSS in MB, the server's own RSS in MB), from /proc."""
    def rss(pid):
        return _proc_mb(pid, "VmRSS:", "status")

    kids = kernel_pids(server_pid)
    return len(kids), sum(rss(k) for k in kids), rss(server_pid)


# set before each session's page loads: the wall-clock moments (Date.now(), the same clock as time.time()) at which
# the page first shows its ranking and has its first pictures drawn
READY_AT_JS = """(() => {
  const t = setInterval(() => {
    const lead = document.querySelector('.cm-lead-text');
    if (!window.__cm_ranked && lead && lead.offsetParent !== null) window.__cm_ranked = Date.now();
    if (!window.__cm_drawn && (%s)()) { window.__cm_drawn = Date.now(); clearInterval(t); }
  }, 50);
})();""" % DRAWN_JS


def _descendants(root: int) -> dict[int, str]:
    """pid -> kind ('kernel', 'server', 'browser', 'other') of every process under `root`, from /proc."""
    parent, cmd = {}, {}
    for p in Path("/proc").iterdir():
        if p.name.isdigit():
            try:
                parent[int(p.name)] = int((p / "stat").read_text().rsplit(")", 1)[1].split()[1])
                cmd[int(p.name)] = (p / "cmdline").read_bytes()
            except (OSError, ValueError, IndexError):
                continue
    out, todo = {}, [root]
    while todo:
        pid = todo.pop()
        for kid, par in parent.items():
            if par == pid and kid not in out:
                c = cmd[kid]
                out[kid] = ("kernel" if b"ipykernel" in c else "server" if b"run_voila" in c
                            else "browser" if b"chrom" in c else "other")
                todo.append(kid)
    return out


def cpu_seconds(root: int) -> dict[str, float]:
    """CPU time (user + system, s) used so far by the live processes under `root`, by kind."""
    tick = os.sysconf("SC_CLK_TCK")
    out: dict[str, float] = {}
    for pid, kind in _descendants(root).items():
        try:
            f = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()
        except OSError:
            continue
        out[kind] = out.get(kind, 0.0) + (int(f[11]) + int(f[12])) / tick
    return out


def wait_kernels(server_pid: int, n: int, timeout: float) -> None:
    end = time.monotonic() + timeout
    while len(kernel_pids(server_pid)) > n and time.monotonic() < end:
        time.sleep(0.5)


def sessions(browser, url: str, server_pid: int, n_sessions: int, rounds: list[str], one_med: float) -> None:
    """`n_sessions` pages opened at once: when each showed its ranking and its pictures, the measured click
    round-robin over them, memory and CPU per session."""
    cpu0 = cpu_seconds(os.getpid())
    t1 = time.time()
    pages = []
    for _ in range(n_sessions):
        ctx = browser.new_context(viewport=VIEWPORT)
        ctx.add_init_script(READY_AT_JS)
        pg = ctx.new_page()
        pg.set_default_timeout(LOAD_TIMEOUT * 1000)
        pg.goto(url, wait_until="commit", timeout=LOAD_TIMEOUT * 1000)
        pages.append(pg)
    ok, loaded, ranked, drawn = 0, [], [], []
    for pg in pages:
        try:
            pg.wait_for_function(READY_JS, timeout=max(1000, (t1 + LOAD_TIMEOUT - time.time()) * 1000))
            loaded.append(pg)
            ranked.append(pg.evaluate("window.__cm_ranked") / 1000 - t1)
            drawn.append(pg.evaluate("window.__cm_drawn") / 1000 - t1)
        except Exception as e:  # noqa: BLE001 - counted and reported
            print("    a session did not load:", str(e).splitlines()[0])
    cpu1 = cpu_seconds(os.getpid())
    t_all = time.time() - t1
    for pg in loaded:
        try:
            click_and_wait(pg, cell_sel("pinprick", "right", "T4"))
            if pg.inner_text(".cm-lead-text") and pg.locator(".cm-error:visible").count() == 0:
                ok += 1
        except Exception as e:  # noqa: BLE001
            print("    a session did not answer a click:", str(e).splitlines()[0])
    many = [measure(loaded[i % len(loaded)], d)["both"] for i, d in enumerate(rounds)] if loaded else [0.0]
    mq1, mmed, mq3 = quartiles(many)
    print(f"(c) {n_sessions} sessions opened at once: {len(loaded)}/{n_sessions} loaded within {LOAD_TIMEOUT} s, "
          f"{ok}/{n_sessions} answered a click")
    if ranked:
        print(f"    ranking shown after {statistics.median(ranked):.1f} s median (first {min(ranked):.1f}, last "
              f"{max(ranked):.1f} s); pictures drawn after {statistics.median(drawn):.1f} s median (last "
              f"{max(drawn):.1f} s); all loaded {t_all:.1f} s")
    used = {k: cpu1.get(k, 0.0) - cpu0.get(k, 0.0) for k in ("kernel", "server", "browser", "other")}
    print("    CPU while they loaded: " + ", ".join(f"{k} {v:.0f} s" for k, v in used.items())
          + f" (2 cores x {t_all:.0f} s = {2 * t_all:.0f} s)")
    print(f"    the click round-robin over them, {len(many)} clicks: median {mmed:.0f} ms (quartiles {mq1:.0f}-"
          f"{mq3:.0f} ms, max {max(many):.0f} ms); one session {one_med:.0f} ms: ratio {mmed / one_med:.2f}")
    n, rss, server = kernel_rss_mb(server_pid)
    pss = kernel_pss_mb(server_pid)
    print(f"    {n} kernel processes: RSS {rss / n if n else 0:.0f} MB, proportional set size "
          f"{pss / n if n else 0:.0f} MB per session ({pss:.0f} MB in all; server process {server:.0f} MB)")
    for pg in pages:
        pg.close(run_before_unload=True)  # Voila's beforeunload shuts the kernel down
        pg.context.close()


def main() -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--clicks", type=int, default=20)
    ap.add_argument("--sessions", type=lambda t: [int(x) for x in t.split(",")], default=[5, 10],
                    help="session counts opened at once, comma-separated (default 5,10)")
    ap.add_argument("--session-clicks", type=int, default=12, help="measured clicks with the sessions open")
    a = ap.parse_args()
    if missing := browser_missing():
        print(missing, file=sys.stderr)
        return 2
    from playwright.sync_api import sync_playwright
    rounds = plan(a.clicks)
    cdir = tempfile.mkdtemp(prefix="cordmap-bench-voila-")
    log = open(Path(cdir) / "voila.log", "wb")  # noqa: SIM115
    with sync_playwright() as p:
        browser = p.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS)
        port = serve.free_port()
        t0 = time.monotonic()
        proc, _ = serve.start(port, connection_dir=cdir, stdout=log, stderr=subprocess.STDOUT,
                              max_sessions=sum(a.sessions) + 2)
        try:
            if not serve.wait_for_port(port, timeout=60, proc=proc):
                print("the server did not start; see", Path(cdir) / "voila.log", file=sys.stderr)
                return 1
            t_port = time.monotonic() - t0
            url = f"http://127.0.0.1:{port}/"
            page = browser.new_page(viewport=VIEWPORT)
            page.set_default_timeout(90_000)
            page.goto(url, timeout=90_000)
            page.wait_for_function(READY_JS, timeout=90_000)
            t_ready = time.monotonic() - t0
            print(f"(b) cold start: server start to interactive {t_ready:.1f} s (port open {t_port:.1f} s)"
                  f"   [target <= 8 s] {'ok' if t_ready <= 8 else 'MISSED'}")

            res = [measure(page, d) for d in rounds]
            both = [r["both"] for r in res]
            q1, med, q3 = quartiles(both)
            print(f"(a) click -> new leader and cross-section, in page, {len(both)} clicks: median {med:.0f} ms "
                  f"(quartiles {q1:.0f}-{q3:.0f} ms, first {both[0]:.0f} ms, max {max(both):.0f} ms)"
                  f"   [target <= 80 ms] {'ok' if med <= 80 else 'MISSED'}")
            lq1, lmed, lq3 = quartiles([r["lead"] for r in res])
            print(f"    leader text alone: median {lmed:.0f} ms (quartiles {lq1:.0f}-{lq3:.0f} ms)")
            bodies = [r["body"] for r in res if r.get("body") is not None]
            if len(bodies) >= 2:
                bq1, bmed, bq3 = quartiles(bodies)
                print(f"    body map too (drawn after them): median {bmed:.0f} ms (quartiles {bq1:.0f}-{bq3:.0f} ms)")

            # (c) sessions at once, for each count asked
            one_pss = kernel_pss_mb(proc.pid)
            print(f"    one session: {one_pss:.0f} MB proportional set size (its kernel)")
            page.close(run_before_unload=True)  # Voila's beforeunload shuts its kernel down
            page.context.close()
            for n_sessions in a.sessions:
                wait_kernels(proc.pid, 0, timeout=60)
                sessions(browser, url, proc.pid, n_sessions, rounds[:a.session_clicks], med)
        finally:
            serve.stop(proc)
            log.close()
            browser.close()
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
