"""The course panel in process (widgets.course_panel): adding copies of the open exam, refusals, escaping."""
from __future__ import annotations

from cordmap import cautions
from widgets import ExamApp
from widgets.course_panel import CoursePanel, course_html


def test_panel_adds_copies_of_the_open_exam_and_raises_the_alarm():
    app = ExamApp()
    p = app.course_panel
    assert p.add(0)
    first = p.course.exams[0].findings
    for d in ("T4", "T5", "T6"):
        app.set_item(("sensory", "pinprick", "right", d), 0)
    assert p.course.exams[0].findings == first  # a copy: editing the entry does not change the course
    assert p.add(12)
    assert len(p.course) == 2 and p.time.value == 18  # the next time offered: 6 h later
    assert [a.rule for a in p.report.urgent] == ["level_ascent"]
    assert "URGENT at 12 h" in p.text.value and cautions.DECISION_SUPPORT in p.text.value
    assert p.picture.value[:4] == b"\x89PNG"
    assert not p.add(5) and "not later than" in p.errors[-1] and len(p.course) == 2
    app.set_phase("acute")
    assert not p.add(20) and "'acute' after a 'chronic'" in p.errors[-1]
    p.clear()
    assert p.course is None and "No exam in the course yet" in p.text.value and not p.unit.disabled


def test_panel_escapes_labels():
    from cordmap.findings import parse

    hostile = parse({"format": "cordmap-findings/1", "label": "<script>x()</script>",
                     "sensory": {"pinprick": {"left": {"C2-T9": "normal", "T10-S4-5": "absent"}}}})
    p = CoursePanel(lambda: hostile)
    assert p.add(0) and p.add(3)
    html = course_html(p.report)
    assert "<script>" not in html and "<script>" not in p.text.value
