"""The dashboard fits the window at 1280, 1366 and 1920 px: every dermatome column and its name visible, every next
test's whole text shown, and never a broken image from the moment the page shows its ranking (headless Chromium,
one page per width, on the shared server)."""
from __future__ import annotations

import pytest
from conftest import open_dashboard

from cordmap import demo
from cordmap.anatomy import anatomy

pytestmark = pytest.mark.browser

WIDTHS = (1280, 1366, 1920)

# per dermatome: its header name and the cells of the first and last row; each must lie inside the window, be the
# element the eye sees at its own centre (nothing over it, not clipped by a scrolled box) and show its whole text
COLUMNS_JS = """([derms]) => {
  const W = window.innerWidth, out = [];
  const seen = (el) => {
    const r = el.getBoundingClientRect();
    if (r.width <= 0 || r.left < 0 || r.right > W) return 'outside the window ' + JSON.stringify([r.left, r.right]);
    const hit = document.elementFromPoint((r.left + r.right) / 2, (r.top + r.bottom) / 2);
    if (!hit || !(hit === el || el.contains(hit))) return 'covered or clipped';
    if (el.scrollWidth > el.clientWidth + 1) return 'text cut: ' + el.scrollWidth + ' > ' + el.clientWidth;
    return '';
  };
  for (const d of derms) {
    for (const sel of ['.cm-dh-' + d, '.cm-cell-pinprick-left-' + d, '.cm-cell-joint_position-right-' + d]) {
      const el = document.querySelector(sel);
      const why = el ? seen(el) : 'missing';
      if (why) out.push(sel + ': ' + why);
    }
    const h = document.querySelector('.cm-dh-' + d);
    if (h && h.textContent !== d) out.push('header of ' + d + ' reads ' + h.textContent);
  }
  const sw = document.documentElement.scrollWidth;
  if (sw > W) out.push('the page scrolls sideways: ' + sw);
  return out;
}"""

NEXT_JS = """() => Array.from(document.querySelectorAll('.cm-next')).filter(b => b.offsetParent !== null).map(b => {
  const r = b.getBoundingClientRect(), s = getComputedStyle(b);
  return {text: b.textContent, cut: b.scrollWidth > b.clientWidth + 1 || b.scrollHeight > b.clientHeight + 1,
          ellipsis: s.textOverflow === 'ellipsis' && s.whiteSpace === 'nowrap', right: r.right, W: window.innerWidth};
})"""


@pytest.fixture(scope="module", params=WIDTHS, ids=[f"{w}px" for w in WIDTHS])
def page_at(request, browser, voila_server, screenshot_dir):
    page = open_dashboard(browser, voila_server, viewport={"width": request.param, "height": 900})
    page.screenshot(path=str(screenshot_dir / f"dashboard-{request.param}.png"), full_page=True)
    yield page
    page.close()


def test_no_broken_image_after_the_page_is_ready(page_at):
    page = page_at
    # the pictures are redrawn by a selection and by another sensation: still never a broken image
    page.click(".cm-pick-1")
    page.wait_for_selector(".cm-hyp-1.cm-selected")
    page.select_option(".cm-map-mod select", "vibration")
    page.wait_for_function("() => document.querySelector('.cm-pic-caption').textContent.includes('vibration')")
    page.wait_for_timeout(300)
    checks = page.evaluate("window.__cm_checks")
    assert checks > 10, "the watch did not run"
    assert page.evaluate("window.__cm_broken") == []


def test_every_dermatome_column_is_visible(page_at):
    derms = anatomy().dermatomes
    assert "S4-5" in derms
    assert page_at.evaluate(COLUMNS_JS, [derms]) == []


def test_next_tests_are_shown_whole(page_at):
    from cordmap.rank import rank

    # the default demo is a full exam (imaging, not a bedside test, tells its hypotheses apart): open one with tests
    tests = rank(demo.case("sacral-saddle"), top=5).next_tests
    page_at.select_option(".cm-demo select", "sacral-saddle")
    page_at.wait_for_function(
        "([n]) => document.querySelector('.cm-demo select').selectedIndex === 0 &&"
        " Array.from(document.querySelectorAll('.cm-next')).filter(b => b.offsetParent !== null).length === n"
        " && !document.querySelector('.cm-app.cm-busy')", arg=[len(tests)], timeout=60_000)
    rows = page_at.evaluate(NEXT_JS)
    assert len(rows) == len(tests) > 0
    for row, t in zip(rows, tests):
        assert not row["cut"] and not row["ellipsis"] and row["right"] <= row["W"], row
        assert row["text"].startswith(t.finding) and row["text"].rstrip().endswith(t.why.rstrip()[-25:]), row
