"""Page helpers shared by the browser tests and benchmarks/bench_dashboard.py: the app's CSS hooks and waits."""
from __future__ import annotations


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
