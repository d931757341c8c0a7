"""Page helpers shared by the browser tests and benchmarks/bench_dashboard.py: the app's CSS hooks and waits."""
from __future__ import annotations

from pathlib import Path

CHROMIUM = "/usr/bin/chromium"
# The flags Chromium needs here: headless as root, and no background traffic (this machine's network is closed).
CHROMIUM_ARGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                 "--disable-background-networking", "--disable-component-update", "--disable-sync"]


def browser_missing() -> str:
    """Why the headless browser cannot run here ('' when it can): the playwright package or Chromium missing."""
    import importlib.util
    import os

    if importlib.util.find_spec("playwright") is None:
        return "needs the playwright package (pip install playwright)"
    if not os.access(CHROMIUM, os.X_OK):
        return f"needs {CHROMIUM} (apt-get install -y chromium)"
    return ""


# The page is ready when the leader is shown; its pictures are drawn when the caption under them no longer says
# "drawing" (until then each picture's place holds an SVG placeholder, never an empty or broken image).
READY_JS = "() => { const t = document.querySelector('.cm-lead-text'); return t && t.offsetParent !== null; }"
DRAWN_JS = ("() => { const c = document.querySelector('.cm-pic-caption'); const i = document.querySelector("
            "'img.cm-section'); return c && c.textContent && !c.textContent.includes('drawing') && i && i.complete"
            " && i.naturalWidth > 0; }")
# Installed before the page loads (page.add_init_script): from the moment the page is ready, every 10 ms, each
# picture of the app is checked; an <img> that has finished loading with no picture (or has no source) is broken
# and is recorded in window.__cm_broken.
BROKEN_WATCH_JS = """(() => {
  window.__cm_broken = []; window.__cm_checks = 0;
  const tick = () => {
    const t = document.querySelector('.cm-lead-text');
    if (t && t.offsetParent !== null) {
      window.__cm_checks += 1;
      for (const img of document.querySelectorAll('img.cm-pic')) {
        if (!img.getAttribute('src') || (img.complete && img.naturalWidth === 0))
          window.__cm_broken.push([performance.now(), img.className, img.getAttribute('src') || '']);
      }
    }
  };
  setInterval(tick, 10);
})();"""


def cell_sel(mod: str, side: str, derm: str) -> str:
    """CSS selector of one dermatome cell."""
    return f".cm-cell-{mod}-{side}-{derm}"


def wait_idle(page) -> None:
    """Until the app has redrawn everything of the last change (it drops the class cm-busy at the end)."""
    page.wait_for_function("() => !document.querySelector('.cm-app').classList.contains('cm-busy')")


def click_and_wait(page, sel: str) -> None:
    """Click a cell and wait until the kernel has answered (its tooltip names the new grade) and all is redrawn."""
    before = page.get_attribute(sel, "title")
    page.click(sel)
    page.wait_for_function("([s, b]) => document.querySelector(s).title !== b", arg=[sel, before])
    wait_idle(page)


def kernel_pids(server_pid: int) -> list[int]:
    """The server's kernel processes (its children running ipykernel), from /proc."""
    kids = []
    for p in Path("/proc").iterdir():
        if not p.name.isdigit():
            continue
        try:
            stat = (p / "stat").read_text()
            ppid = int(stat.rsplit(")", 1)[1].split()[1])
            cmd = (p / "cmdline").read_bytes()
        except (OSError, ValueError, IndexError):
            continue
        if ppid == server_pid and b"ipykernel" in cmd:
            kids.append(int(p.name))
    return kids


def rss_mb(pid: int) -> float:
    """Resident memory of one process in MB (0 when it is gone)."""
    try:
        for line in Path(f"/proc/{pid}/status").read_text().splitlines():
            if line.startswith("VmRSS:"):
                return int(line.split()[1]) / 1024
    except OSError:
        pass
    return 0.0
