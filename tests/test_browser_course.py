"""The course panel in headless Chromium: add the open exam at 0 h, change the entry, add it again at 12 h; the page
shows the course picture, the exams, the alarm and the cautions. Every wait is on a condition in the page."""
from __future__ import annotations

import pytest
from dashboard_page import cell_sel, click_and_wait, wait_idle

from cordmap import cautions

pytestmark = pytest.mark.browser

# the invented demo's right pinprick level moves from T6 up to T3 when T4-T6 are graded absent: a climb of 3
CLIMB = [("pinprick", "right", d) for d in ("T4", "T5", "T6")]


def _add(page, time: str, count: int) -> None:
    page.fill(".cm-course-time input", time)
    page.press(".cm-course-time input", "Tab")  # the value reaches the kernel before the click
    page.click(".cm-course-add")
    page.wait_for_function("([n]) => (document.querySelector('.cm-course-text') || {}).textContent"
                           "?.includes(n)", arg=[f"{count} exam"])


def test_dashboard_follows_a_course(dashboard, screenshot_dir):
    page = dashboard
    page.set_viewport_size({"width": 1280, "height": 900})
    page.click(".cm-course-toggle")
    page.wait_for_selector(".cm-course-add", state="visible")
    _add(page, "0", 1)
    assert "nothing to compare" in page.inner_text(".cm-course-text")
    for mod, side, d in CLIMB:
        sel = cell_sel(mod, side, d)
        if not page.get_attribute(sel, "title").endswith(": absent"):
            for _ in range(3):  # a click cycles normal -> impaired -> absent
                click_and_wait(page, sel)
                if page.get_attribute(sel, "title").endswith(": absent"):
                    break
    wait_idle(page)
    _add(page, "12", 2)
    text = page.inner_text(".cm-course-text")
    assert "URGENT" in text and "level climbed" in text and "12 h" in text
    assert cautions.DECISION_SUPPORT in text
    page.wait_for_function("() => { const i = document.querySelector('.cm-course-pic img, img.cm-course-pic');"
                           " return i && i.complete && i.naturalWidth > 400; }")
    assert page.inner_text(".cm-course-error").strip() == ""
    # a time before the last exam is refused with one line, the course unchanged
    page.fill(".cm-course-time input", "3")
    page.press(".cm-course-time input", "Tab")
    page.click(".cm-course-add")
    page.wait_for_function("() => document.querySelector('.cm-course-error').textContent.includes('not later')")
    assert "2 exams" in page.inner_text(".cm-course-text")
    page.locator(".cm-course").scroll_into_view_if_needed()
    page.screenshot(path=str(screenshot_dir / "dashboard-course.png"), full_page=True)
