"""Regenerate the README's pictures from the current code, so they never go stale.

    python tools/screenshots.py                 # both
    python tools/screenshots.py dashboard       # docs/dashboard.png: the dashboard on the invented demo case
    python tools/screenshots.py ranking-html    # docs/ranking-html.png: a ranking's _repr_html_ as a notebook shows it

The dashboard is served by `widgets.serve` on a free 127.0.0.1 port with a token (as tests/conftest.py serves it)
and photographed in headless Chromium (/usr/bin/chromium through playwright's executable_path) at 1366 px wide,
once the first ranking and its cross-section are drawn. The ranking view is the HTML Jupyter would render for the
invented demo case, in a page styled like a notebook cell. Needs Voilà, the playwright package and Chromium; talks
only to its own server on 127.0.0.1.
"""
from __future__ import annotations

import argparse
import subprocess
import sys
import tempfile
from html import escape
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
sys.path.insert(0, str(ROOT))

from cordmap import demo, rank  # noqa: E402
from tests.dashboard_page import CHROMIUM, CHROMIUM_ARGS, browser_missing, wait_idle  # noqa: E402
from widgets import serve  # noqa: E402

DOCS = ROOT / "docs"
WIDTH = 1280  # the notebook view
DASHBOARD = {"width": 1366, "height": 1000}  # the width the dashboard is laid out for (tests/conftest.py)

CELL_PAGE = """<!doctype html><html><head><meta charset="utf-8"><style>
body {{ font-family: system-ui, sans-serif; margin: 24px; background: #fff; color: #1d2733; }}
.cell {{ display: flex; gap: 10px; margin-bottom: 6px; }}
.prompt {{ color: #5f6b78; font-family: monospace; font-size: 13px; min-width: 64px; text-align: right;
  padding-top: 6px; }}
.input {{ flex: 1; background: #f5f6f8; border: 1px solid #dfe2e6; border-radius: 3px; padding: 6px 10px;
  font-family: monospace; font-size: 13px; white-space: pre; }}
.output {{ flex: 1; padding: 4px 2px; }}
</style></head><body>
<div class="cell"><div class="prompt">In [1]:</div><div class="input">{code}</div></div>
<div class="cell"><div class="prompt">Out[1]:</div><div class="output">{html}</div></div>
</body></html>"""


def ranking_html(out: Path, browser) -> Path:
    code = "import cordmap\nr = cordmap.rank(cordmap.demo_case(), top=5)\nr"
    r = rank(demo.case(), top=5)
    page = browser.new_page(viewport={"width": WIDTH, "height": 200})  # full_page grows it
    try:
        page.set_content(CELL_PAGE.format(code=escape(code), html=r._repr_html_()))
        page.screenshot(path=str(out), full_page=True)
    finally:
        page.close()
    return out


def dashboard(out: Path, browser) -> Path:
    port = serve.free_port()
    token = serve.new_token()
    with tempfile.TemporaryDirectory(prefix="cordmap-shot-") as cdir:
        log = open(Path(cdir) / "voila.log", "wb")  # noqa: SIM115 - closed below
        proc, _ = serve.start(port, connection_dir=cdir, stdout=log, stderr=subprocess.STDOUT, token=token)
        try:
            if not serve.wait_for_port(port, timeout=90, proc=proc):
                raise SystemExit(f"Voilà did not open port {port}; see its log")
            for attempt in (1, 2):  # one retry: about one load in ten stalls (see tests/conftest.py)
                page = browser.new_page(viewport=DASHBOARD)
                try:
                    page.set_default_timeout(60_000)
                    page.goto(f"http://127.0.0.1:{port}/?token={token}")
                    page.wait_for_selector(".cm-lead-text", state="visible")
                    page.wait_for_function("() => { const i = document.querySelector('img.cm-section');"
                                           " return i && i.complete && i.naturalWidth > 0; }")
                    wait_idle(page)
                    page.wait_for_timeout(1500)  # the deferred pictures (body map) settle
                    page.locator(".cm-app").screenshot(path=str(out))  # the app itself, no empty page below
                    break
                except Exception as e:  # noqa: BLE001 - playwright's TimeoutError; a second stall is raised
                    if attempt == 2:
                        raise
                    print(f"dashboard load stalled ({type(e).__name__}); one retry", file=sys.stderr)
                finally:
                    page.close()
        finally:
            serve.stop(proc)
            log.close()
    return out


def main(argv=None) -> int:
    p = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    p.add_argument("which", nargs="*", help="dashboard and/or ranking-html (default: both)")
    args = p.parse_args(argv)
    which = args.which or ["dashboard", "ranking-html"]
    bad = [w for w in which if w not in ("dashboard", "ranking-html")]
    if bad:
        p.error(f"unknown picture {bad[0]!r}; allowed dashboard, ranking-html")
    missing = browser_missing()
    if missing:
        print(f"cannot take screenshots: {missing}", file=sys.stderr)
        return 2
    from playwright.sync_api import sync_playwright

    DOCS.mkdir(exist_ok=True)
    with sync_playwright() as pw:
        browser = pw.chromium.launch(executable_path=CHROMIUM, args=CHROMIUM_ARGS)
        try:
            if "ranking-html" in which:
                print(f"wrote {ranking_html(DOCS / 'ranking-html.png', browser)}")
            if "dashboard" in which:
                print(f"wrote {dashboard(DOCS / 'dashboard.png', browser)}")
        finally:
            browser.close()
    return 0


if __name__ == "__main__":
    sys.exit(main())
