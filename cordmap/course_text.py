"""A course report as plain text (what `cordmap course` prints): exams, changes, alarms, the caution once."""
from __future__ import annotations

from . import cautions as C
from .course import UNIT_SHORT

SEVERITY_MARK = {"urgent": "!!", "watch": "! ", "note": "i "}
MAX_WORDS = 8
SCORES = ("uems", "lems", "light_touch", "pinprick")  # findings listed per kind and step; the rest counted


def _score(s) -> str:
    return str(s.total)


def exam_line(report, i: int) -> str:
    c = report.classifications[i]
    e = report.course.exams[i]
    sl, ml = c.sensory_level, c.motor_level
    return (f"AIS {c.ais}, NLI {c.neurological_level}; sensory L {sl.left} / R {sl.right}; motor L {ml.left} / "
            f"R {ml.right}; UEMS {_score(c.uems)}, LEMS {_score(c.lems)}, light touch {_score(c.light_touch)}, "
            f"pinprick {_score(c.pinprick)} ({e.findings.phase})")


def _listed(title: str, items, w) -> None:
    if not items:
        return
    shown = list(items[:MAX_WORDS])
    more = len(items) - len(shown)
    w(f"      {title}: {'; '.join(shown)}{f' and {more} more' if more else ''}\n")


def _step(report, st, w, title: str) -> None:
    w(f"  {title}\n")
    if st.conversion:
        w(f"      {st.conversion}\n")
    # scores by their totals only (the sides are in the JSON and the table)
    moved = [c.words for c in st.changes if c.measure != "ais" and not (c.measure in SCORES and c.side != "total")]
    if moved:
        for words in moved:
            w(f"      {words}\n")
    else:
        w("      no change in levels or scores\n")
    if st.lead:
        w(f"      leading hypothesis {st.lead}\n")
    _listed("appeared", st.appeared, w)
    _listed("resolved", st.resolved, w)
    _listed("changed", st.changed, w)
    if st.not_compared:
        w(f"      ({st.not_compared} items recorded at only one of the two exams, not compared)\n")


def report_text(report) -> str:
    out: list[str] = []
    w = out.append
    c = report.course
    u = UNIT_SHORT[c.time_unit]
    since = c.since.replace("_", " ")
    w(f"cordmap course{' - ' + c.label if c.label else ''}\n")
    w(f"{len(c)} exam{'s' * (len(c) != 1)}, times in {c.time_unit} since {since}\n\n")
    w("Exams\n")
    for i, e in enumerate(c.exams):
        w(f"  {'t=' + format(e.time, 'g') + ' ' + u:<10}{exam_line(report, i)}\n")
        lead = report.leads[i]
        if lead is not None:
            fit = f"; fit {lead.fit}" if lead.fit in ("poor", "normal") else ""
            w(f"  {'':<10}leads: {lead.words} ({lead.probability:.0%}){fit}\n")
    if report.steps:
        w("\nChanges\n")
        for st in report.steps:
            _step(report, st, w, f"{c.when(st.first)} -> {c.when(st.last)}")
        if report.overall is not None:
            st = report.overall
            _step(report, st, w, f"first to last ({c.when(st.first)} -> {c.when(st.last)})")
    w("\nAlarms\n")
    urgent = report.urgent
    if not urgent:
        w("  none raised by the rules (a level climbing, incomplete becoming complete, a worse grade, new sacral "
          "loss, power falling beyond examiner noise)\n")
    for a in report.alarms:
        w(f"  {SEVERITY_MARK.get(a.severity, '  ')} {a.severity.upper()} at {c.when(a.exam)} [{a.rule}] {a.what}\n")
        w(f"     means: {a.meaning}\n")
        w(f"     rule source: {a.source}\n")
    if report.notes:
        w("\nNotes\n")
        for n in report.notes:
            w(f"  {n}\n")
    w("\nCautions\n")
    for x in report.cautions:
        w(f"  ! {x}\n")
    w(f"\n{C.BANNER}\n")
    return "".join(out)
