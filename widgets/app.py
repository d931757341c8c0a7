"""`ExamApp`: the panels over one `ExamState`, laid out and wired; `dashboard()`: the app the served page shows.

Where each part of the page lives (one file per panel, each showing the state it is given):

=====================================  ================================
top bar: label, demo, open, save, sheet  `files_panel.py`
tab "Sensation"                         `sensation_panel.py`
tab "Muscles & reflexes"                `power_panel.py` (and `limb_panel.py`)
tab "Sacral & autonomic"                `sacral_panel.py`
"Worth examining next"                  `next_tests_panel.py`
"Where the lesion may be", the facts    `hypotheses_panel.py`
the cross-section and body picture      `pictures_panel.py` (drawn by `pictures.py`)
every word for an item or a grade       `labels.py`; colours and page style `style.py`
the exam, its ranking, the actions      `state.py` (the one place that re-ranks)
=====================================  ================================
"""
from __future__ import annotations

import threading

import ipywidgets as W

from cordmap import cautions, demo
from cordmap.errors import CordmapError
from cordmap.findings import Findings, item_label, parse

from . import labels
from .files_panel import FilesPanel
from .hypotheses_panel import HypothesesPanel
from .labels import esc
from .next_tests_panel import NextTestsPanel
from .pictures_panel import PicturesPanel
from .power_panel import PowerPanel
from .sacral_panel import SacralPanel
from .sensation_panel import SensationPanel
from .state import ExamState
from .style import CSS

N_ROWS = 5  # hypotheses shown
N_NEXT = 5  # next tests shown
TAB_OF_KIND = {"sensory": 0, "motor": 1, "reflex": 1, "muscle": 1, "sign": 2}
TAB_PANEL = {1: "power", 2: "sacral"}  # the tabs built when first opened


class ExamApp:
    """The whole app. ``app.widget`` is the box to display; ``app.state`` the exam and its ranking; the panels are
    ``app.files``, ``app.sensation``, ``app.power``, ``app.sacral``, ``app.next_tests``, ``app.hypotheses``,
    ``app.pictures``; ``app.power`` and ``app.sacral`` are built when their tab is first opened or asked for."""

    def __init__(self, findings: Findings | None = None, ranker=None, top: int = N_ROWS,
                 defer_pictures: bool = False):
        """``defer_pictures``: open with placeholders for the two pictures; ``app.pictures.draw()`` draws them."""
        self.state = st = ExamState(ranker=ranker, top=top)
        self._target = None
        self.files = FilesPanel(st, self.report_pdf)
        self.sensation = SensationPanel(st)
        # the other two entry tabs are built when first opened (or asked for): a page load then sends about 320
        # fewer widgets, which the kernel, the server and the browser each pay for (issue 16, sessions at scale)
        self._closed = {"power": PowerPanel, "sacral": SacralPanel}
        self._open: dict = {}
        self.next_tests = NextTestsPanel(st, N_NEXT)
        self.hypotheses = HypothesesPanel(st, N_ROWS)
        self.pictures = PicturesPanel(st, deferred=defer_pictures)
        self._layout()
        # what the eye goes to first is sent first: the leader and its cross-section, then the entries, then the
        # list, the next tests and the body picture
        for show in (self.hypotheses.show_head, self.pictures.show_section, self.files.show, self.sensation.show,
                     self._show_open_tabs, self.hypotheses.show_list, self.next_tests.show, self.pictures.show_body):
            st.observe(lambda _c, show=show: show(), names="revision")
        st.observe(self._on_busy, names="busy")
        st.observe(self._on_error, names="error")
        st.observe(st.guard(self._on_target), names="target")
        self.tabs.observe(st.guard(self._on_tab), names="selected_index")
        st.commit(findings if findings is not None else demo.case(),
                  reason="opened " + ("the exam" if findings is not None else f"demo case {demo.DEFAULT}"))

    # ------------------------------------------------------------ the entry tabs built when first opened

    def _panel(self, name: str):
        """The entry panel `name` ('power', 'sacral'), built and put in its tab on first use."""
        panel = self._open.get(name)
        if panel is None:
            panel = self._open[name] = self._closed[name](self.state)
            panel.show()
            self._tab_box[name].children = (panel.widget,)
        return panel

    @property
    def power(self) -> PowerPanel:
        return self._panel("power")

    @property
    def sacral(self) -> SacralPanel:
        return self._panel("sacral")

    @property
    def entry(self) -> dict:
        """Item key -> its entry widget, over all three tabs (builds the tabs not yet opened)."""
        return {**self.sensation.entry, **self.power.entry, **self.sacral.entry}

    def _show_open_tabs(self) -> None:
        for panel in self._open.values():
            panel.show()

    def _on_tab(self, change) -> None:
        name = TAB_PANEL.get(change["new"])
        if name is not None:
            self._panel(name)

    def _layout(self) -> None:
        self.log = W.Output(layout=W.Layout(max_height="80px", overflow="auto"))
        self.log.add_class("cm-log")
        self.error = W.HTML("", layout=W.Layout(display="none"))
        self.error.add_class("cm-error")
        self.caution_box = W.HTML(" ".join(f"<b>•</b> {esc(c)}" for c in cautions.GENERAL))
        self.caution_box.add_class("cm-cautions")
        self._tab_box = {name: W.VBox([W.HTML("opening…")]) for name in self._closed}
        self.tabs = W.Tab(children=[self.sensation.widget, self._tab_box["power"], self._tab_box["sacral"]],
                          titles=(labels.TAB_SENSATION, labels.TAB_POWER, labels.TAB_SACRAL))
        self.tabs.add_class("cm-tabs")
        left = W.VBox([self.tabs, self.next_tests.widget], layout=W.Layout(flex="0 0 auto"))
        left.add_class("cm-col")
        left.add_class("cm-exam")
        h = self.hypotheses
        right = W.VBox([*h.head, *h.list, self.pictures.widget, h.facts, h.specific],
                       layout=W.Layout(flex="1 1 auto"))
        right.add_class("cm-col")
        right.add_class("cm-hyps")
        body = W.HBox([left, right], layout=W.Layout(align_items="flex-start"))
        body.add_class("cm-body-row")
        style = W.HTML(CSS, layout=W.Layout(display="none"))
        from .course_panel import CoursePanel  # serial exams of the open patient

        self.course_panel = CoursePanel(lambda: self.state.findings)
        self.widget = W.VBox([style, self.files.widget, self.caution_box, self.error, body, self.course_panel.widget,
                              self.log])
        self.widget.add_class("cm-app")

    # ------------------------------------------------------------ wiring

    def _on_busy(self, change) -> None:
        (self.widget.add_class if change["new"] else self.widget.remove_class)("cm-busy")

    def _on_error(self, change) -> None:
        self.error.value = f"⚠ {esc(change['new'])}" if change["new"] else ""
        self.error.layout.display = None if change["new"] else "none"

    def _on_target(self, change) -> None:
        if change["new"] is not None:
            self.goto(change["new"])

    def goto(self, item: tuple) -> None:
        """Take the user to the entry widget of `item` and ring it."""
        tab = TAB_OF_KIND.get(item[0], 2)
        panel = self.sensation if tab == 0 else self._panel(TAB_PANEL[tab])
        w = panel.entry.get(tuple(item))
        if w is None:
            raise CordmapError(f"no entry cell for {item!r}")
        if self._target is not None:
            self._target.remove_class("cm-target")
        w.add_class("cm-target")
        self._target = w
        self.tabs.selected_index = tab
        self.files.status.value = f"next: {esc(item_label(item))} (ringed)"

    # ------------------------------------------------------------ the state, for scripts and tests

    @property
    def findings(self) -> Findings:
        return self.state.findings

    @property
    def ranking(self):
        return self.state.ranking

    @property
    def selected(self) -> int:
        return self.state.selected

    @property
    def errors(self) -> list[str]:
        return self.state.errors

    def report_png(self) -> bytes:
        """The case sheet as one PNG."""
        from .report import report_png

        return report_png(self.state.findings, self.state.ranking, self.state.selected)

    def report_pdf(self) -> bytes:
        """The case sheet as a PDF (the Case sheet button offers it)."""
        from .report import report_pdf

        return report_pdf(self.state.findings, self.state.ranking, self.state.selected)

    def __getattr__(self, name):
        """The state's actions (``app.click_cell``, ``app.load`` ...) are the app's too."""
        if name in _ACTIONS:
            return getattr(self.state, name)
        raise AttributeError(name)


_ACTIONS = ("commit", "set_item", "click_cell", "set_level", "fill_normal", "set_phase", "select", "load",
            "load_demo", "save_document", "show_error")


def dashboard(findings=None, ranker=None, pictures_in_background: bool = True) -> ExamApp:
    """Build the app for the dashboard: findings from the argument, else from $CORDMAP_FINDINGS, else a demo.

    ``pictures_in_background``: the page is served with placeholders where the two pictures go, and the pictures
    are drawn when the page has its widgets (the cordmap page template clicks the hidden button ``cm-ready`` once it
    is in the page), so the ranking shows about a second sooner on a cold start. They are drawn in the kernel's own
    thread on that click: a drawing thread of their own raced the page's first fetch of the widget states and
    sometimes left the first cross-section undrawn; a thread now only draws them into the caches meanwhile (it touches
    no widget), so the click just sends them. Without it they are drawn at once."""
    import os
    from pathlib import Path

    app = ExamApp(demo.case(), ranker=ranker, defer_pictures=True)
    path = findings or os.environ.get("CORDMAP_FINDINGS")
    if path:
        try:
            app.state.commit(parse(Path(path)), reason=f"loaded {os.path.basename(str(path))}")
        except CordmapError as e:
            app.state.show_error(e)
    if pictures_in_background:
        # matplotlib loads and the first pictures are drawn into the caches meanwhile; this thread touches no widget
        threading.Thread(target=app.pictures.prepare, name="cordmap-pictures-prepare", daemon=True).start()
    else:
        app.pictures.draw()
    return app
