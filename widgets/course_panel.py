"""`CoursePanel`: follow the open patient over time inside the exam app.

"Add exam" takes a copy of the exam as entered now (the app's current `Findings`, through a callable) with the time
typed beside it; the user then changes the entry and adds it again at a later time. The panel shows the course as
text (each exam's grade, levels and scores, the alarms with what they mean) and as the course picture of
`cordmap.course_plot`, with the cautions. Every computation is a call into the core (`cordmap.course`,
`cordmap.course_report`); the panel holds the state (the `Course` so far).

The course belongs to the patient that was open when its first exam was added: "Start over" for another patient.
"""
from __future__ import annotations

import base64
import html
from collections.abc import Callable

import ipywidgets as W

from cordmap.course import TIME_UNITS, UNIT_SHORT, Course
from cordmap.errors import CordmapError

PICTURE_SIZE = (860, 600)
STEP = {"hours": 6.0, "days": 1.0}  # the time offered for the next exam, after the last one

CSS = """
<style>
.cm-course { background: #f4f6f9; border: 1px solid #d5dbe3; border-radius: 4px; padding: 4px 6px; margin-top: 6px; }
.cm-course-toggle.widget-button { font-weight: 700; color: #1f5f8b; background: #ffffff; border: 1px solid #d5dbe3; }
.cm-course-text .widget-html-content { font-size: 12px; line-height: 1.35; }
.cm-course-text table { border-collapse: collapse; margin-bottom: 6px; }
.cm-course-text td, .cm-course-text th { padding: 1px 6px; border-bottom: 1px solid #d5dbe3; text-align: left; }
.cm-course-alarm { background: #fff1d6; border-left: 5px solid #111111; padding: 2px 6px; margin: 3px 0; }
.cm-course-note { color: #5f6b78; margin: 3px 0; }
.cm-course-error .widget-html-content { color: #7a1f00; font-weight: 600; }
</style>
"""


def esc(text) -> str:
    return html.escape(str(text), quote=True)


class CoursePanel:
    """``panel.widget`` is the box to show; ``panel.course`` the course so far (None before the first exam)."""

    def __init__(self, get_findings: Callable, on_error: Callable | None = None):
        self._get_findings = get_findings
        self._on_error = on_error
        self.course: Course | None = None
        self.report = None
        self.errors: list[str] = []
        self._build()

    # ------------------------------------------------------------ actions (also called by tests)

    def add(self, time: float | None = None, unit: str | None = None) -> bool:
        """Add a copy of the current entry at `time` (default: the time field); False and a shown error if the
        course refuses it (a time not after the last exam, an acute exam after a chronic one, ...)."""
        time = self.time.value if time is None else time
        unit = unit or self.unit.value
        findings = self._get_findings()
        try:
            if self.course is None:
                course = Course([(time, findings)], time_unit=unit, since="first_exam" if time == 0 else "onset",
                                label=findings.label)
            else:
                course = self.course.add(time, findings)
            report = course.report()
        except CordmapError as e:
            self._show_error(e)
            return False
        self.course, self.report = course, report
        self.error.value = ""
        self.unit.disabled = True  # one clock per course
        self.time.value = float(time) + STEP[course.time_unit]
        self._render()
        return True

    def clear(self) -> None:
        self.course = self.report = None
        self.unit.disabled = False
        self.time.value = 0.0
        self.error.value = ""
        self._render()

    def toggle(self, show: bool | None = None) -> None:
        show = self.body.layout.display == "none" if show is None else show
        self.body.layout.display = "" if show else "none"
        self.toggle_btn.description = ("▾ " if show else "▸ ") + "Follow over time (serial exams)"

    # ------------------------------------------------------------ building and drawing

    def _build(self) -> None:
        self.toggle_btn = W.Button(description="▸ Follow over time (serial exams)", layout=W.Layout(width="300px"))
        self.toggle_btn.add_class("cm-course-toggle")
        self.toggle_btn.on_click(lambda _b: self._guard(self.toggle))
        self.time = W.BoundedFloatText(value=0.0, min=0.0, max=1e6, step=1.0, description="time",
                                       layout=W.Layout(width="170px"))
        self.time.add_class("cm-course-time")
        self.unit = W.Dropdown(options=[(u, u) for u in TIME_UNITS], value="hours", layout=W.Layout(width="90px"))
        self.unit.add_class("cm-course-unit")
        self.add_btn = W.Button(description="Add exam", tooltip="add a copy of the exam as entered now",
                                layout=W.Layout(width="100px"))
        self.add_btn.add_class("cm-course-add")
        self.add_btn.on_click(lambda _b: self._guard(self.add))
        self.clear_btn = W.Button(description="Start over", layout=W.Layout(width="100px"))
        self.clear_btn.add_class("cm-course-clear")
        self.clear_btn.on_click(lambda _b: self._guard(self.clear))
        self.save = W.HTML("")
        self.save.add_class("cm-course-save")
        hint = W.HTML("<span class='cm-course-note'>adds a copy of the exam as entered now; change the entry, then "
                      "add it again at a later time (since the first exam, or since onset)</span>")
        row = W.HBox([self.time, self.unit, self.add_btn, self.clear_btn, hint, self.save],
                     layout=W.Layout(align_items="center"))
        self.error = W.HTML("")
        self.error.add_class("cm-course-error")
        self.text = W.HTML("")
        self.text.add_class("cm-course-text")
        self.picture = W.Image(format="png", layout=W.Layout(width=f"{PICTURE_SIZE[0]}px", display="none"))
        self.picture.add_class("cm-course-pic")
        self.text.layout = W.Layout(width="440px", margin="0 0 0 8px")
        self.body = W.VBox([row, self.error, W.HBox([self.picture, self.text])], layout=W.Layout(display="none"))
        style = W.HTML(CSS, layout=W.Layout(display="none"))
        self.widget = W.VBox([style, self.toggle_btn, self.body])
        self.widget.add_class("cm-course")
        self._render()

    def _guard(self, fn) -> None:
        try:
            fn()
        except Exception as e:  # noqa: BLE001 - shown to the user, never swallowed
            self._show_error(e)

    def _show_error(self, e) -> None:
        msg = str(e).splitlines()[0] if str(e) else type(e).__name__
        self.errors.append(msg)
        self.error.value = f"⚠ {esc(msg)}"
        if self._on_error is not None:
            self._on_error(msg)

    def _render(self) -> None:
        r = self.report
        if r is None:
            self.text.value = ("<div class='cm-course-note'>No exam in the course yet. Enter the exam, type its time "
                               "and press <b>Add exam</b>.</div>")
            self.picture.layout.display = "none"
            self.save.value = ""
            return
        from cordmap.course_plot import course_png

        self.picture.value = course_png(r, size=PICTURE_SIZE)
        self.picture.layout.display = ""
        self.text.value = course_html(r)
        doc = base64.b64encode(r.course.to_json().encode("utf-8")).decode("ascii")
        self.save.value = (f"<a class='cm-course-download' download='course.json' "
                           f"href='data:application/json;base64,{doc}'>⤓ course.json</a>")


def course_html(r) -> str:
    """The course report as HTML for the panel: exams, alarms with their meaning, notes, the cautions."""
    c = r.course
    u = UNIT_SHORT[c.time_unit]
    n = len(c)
    rows = []
    for e, k, lead in zip(c.exams, r.classifications, r.leads):
        who = f"{esc(lead.words)} ({lead.probability:.0%})" if lead else "–"
        rows.append(f"<tr><td>{e.time:g} {u}</td><td>{esc(k.ais)}</td><td>{esc(k.neurological_level)}</td>"
                    f"<td>{esc(k.sensory_level.left)}/{esc(k.sensory_level.right)}</td>"
                    f"<td>{esc(k.lems.total)}</td><td>{who}</td></tr>")
    parts = [f"<b>{n} exam{'s' * (n != 1)}</b>, times in {c.time_unit} since {c.since.replace('_', ' ')}",
             "<table><tr><th>t</th><th>AIS</th><th>NLI</th><th>sensory L/R</th><th>LEMS</th><th>leads</th></tr>"
             + "".join(rows) + "</table>"]
    for st in r.steps[-1:]:
        moved = [ch.words for ch in st.changes if ch.measure in ("nli", "sensory_level", "motor_level")
                 or (ch.side == "total")]
        parts.append(f"<div><b>last change ({c.when(st.first)} → {c.when(st.last)})</b>: "
                     f"{esc(st.conversion or 'grade not determinable')}; "
                     f"{esc('; '.join(moved[:6]) or 'no change in levels or scores')}"
                     f"{'; leading hypothesis ' + esc(st.lead) if st.lead else ''}</div>")
    urgent = r.urgent
    if urgent:
        for a in urgent:
            parts.append(f"<div class='cm-course-alarm'><b>⚠ {esc(a.severity.upper())} at {c.when(a.exam)}</b>: "
                         f"{esc(a.what)}<br>{esc(a.meaning)}<br><i>rule source: {esc(a.source)}</i></div>")
    elif n > 1:
        parts.append("<div class='cm-course-note'>No alarm raised by the rules (level climbing, incomplete becoming "
                     "complete, a worse grade, new sacral loss, power falling beyond examiner noise).</div>")
    for a in r.alarms:
        if a not in urgent:
            parts.append(f"<div class='cm-course-note'>ⓘ {esc(a.what)}. {esc(a.meaning)}</div>")
    for note in r.notes:
        parts.append(f"<div class='cm-course-note'>{esc(note)}</div>")
    parts.append("<div class='cm-course-caution'><b>Cautions:</b> " + " ".join(esc(x) for x in r.cautions)
                 + "</div>")
    return "".join(parts)
