"""The case sheet from the app's state: a thin front over `cordmap.report` (PDF with selectable text, or PNG)."""
from __future__ import annotations

SHEET_TOP = 5  # hypotheses on the sheet


def _ranking(findings, ranking):
    if ranking is not None:
        return ranking
    from cordmap import rank

    return rank(findings, top=SHEET_TOP)


def report_pdf(findings, ranking, selected: int = 0) -> bytes:
    """The case sheet as a PDF (A4 pages, the caution on each), the selected hypothesis' pictures on page 1."""
    from cordmap.report import report_pdf as core

    return core(findings, _ranking(findings, ranking), top=SHEET_TOP, selected=selected)


def report_png(findings, ranking, selected: int = 0) -> bytes:
    """The case sheet as one PNG (its pages one below the other)."""
    from cordmap.report import report_png as core

    return core(findings, _ranking(findings, ranking), top=SHEET_TOP, selected=selected)
